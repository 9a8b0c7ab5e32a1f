//! `swingfit plan`: the table and JSON of a prediction, and the refusals of impossible designs.

use crate::common::{demo_data, swingfit};
use serde_json::Value;

#[test]
fn plan_from_params_writes_every_figure_with_its_unit() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("plan.json");
    let out = swingfit()
        .args(["plan", "--params"])
        .arg(demo_data("ba7_release60_true.json"))
        .args(["--release-deg", "60,15", "--record", "40", "--rate", "50", "--noise-deg", "0.01"])
        .args(["--mass", "2.4", "--mass-std", "0.002", "--pivot-to-cg", "0.215"])
        .args(["--pivot-to-cg-std", "0.0005", "--json"])
        .arg(&json)
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("Predicted per unit inertia"), "{stdout}");
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(doc["schema"], "swingfit.plan.v1");
    // The params file implies all three terms.
    assert_eq!(doc["damping"], serde_json::json!(["viscous", "coulomb", "quadratic"]));
    for k in ["omega_n", "viscous", "coulomb", "quadratic"] {
        let p = &doc["predicted"][k];
        let (v, s, r) = (
            p["value"].as_f64().unwrap(),
            p["std"].as_f64().unwrap(),
            p["relative"].as_f64().unwrap(),
        );
        assert!(s > 0.0 && (r - s / v).abs() < 1e-12 * r, "{k}: {p}");
        assert!(p["unit"].is_string());
    }
    assert_eq!(doc["predicted"]["omega_n"]["unit"], "rad/s");
    assert_eq!(doc["physical"]["inertia_pivot"]["unit"], "kg*m^2");
    // With u(d)/d = 0.23 % dominating, u(J)/J is about that, whatever the swing gives.
    let rj = doc["physical"]["inertia_pivot"]["relative"].as_f64().unwrap();
    assert!((rj - (0.0005f64 / 0.215).hypot(0.002 / 2.4)).abs() < 1e-4, "{rj}");
    assert_eq!(doc["design"]["rate"]["unit"], "Hz");
    assert_eq!(doc["design"]["releases"][1]["unit"], "deg");
    assert_eq!(doc["runs"].as_array().unwrap().len(), 2);
    assert_eq!(doc["runs"][0]["samples"], 2001);
}

#[test]
fn one_release_cannot_separate_quadratic_from_viscous_and_says_so() {
    let out = swingfit()
        .args(["plan", "--omega-n", "5", "--viscous", "0.03", "--quadratic", "0.01"])
        .args(["--release-deg", "10", "--record", "20", "--rate", "25", "--noise-deg", "0.05"])
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("cannot separate them"), "{stdout}");
}

#[test]
fn impossible_designs_are_refused_with_what_to_change() {
    let base = ["plan", "--omega-n", "5", "--viscous", "0.03", "--rate", "50"];
    let cases: [(&[&str], &str); 6] = [
        (&["--release-deg", "190", "--record", "10", "--noise-deg", "0.01"], "below 180 deg"),
        (
            &["--release-deg", "20", "--record", "1", "--noise-deg", "0.01"],
            "shorter than one period",
        ),
        (&["--release-deg", "20", "--record", "10"], "give the sensor noise"),
        (
            &[
                "--release-deg",
                "20",
                "--record",
                "10",
                "--noise-deg",
                "0.01",
                "--damping",
                "viscous,coulomb",
            ],
            "cannot be predicted without an expected magnitude",
        ),
        (&["--record", "10", "--noise-deg", "0.01"], "no release angle"),
        (&["--release-deg", "20", "--noise-deg", "0.01"], "--record S or --until-rest"),
    ];
    for (extra, msg) in cases {
        swingfit().args(base).args(extra).assert().code(2).stderr(predicates::str::contains(msg));
    }
}

#[test]
fn target_search_reports_the_design_or_what_blocks_it() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("search.json");
    let base = ["plan", "--omega-n", "5", "--viscous", "0.03", "--coulomb", "0.02"];
    swingfit()
        .args(base)
        .args(["--rate", "50", "--noise-deg", "0.01", "--target", "viscous=1%,coulomb=2%"])
        .arg("--json")
        .arg(&json)
        .assert()
        .success()
        .stdout(predicates::str::contains("Least test effort meeting"));
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(doc["search"]["met"], true);
    assert_eq!(doc["search"]["effort"]["unit"], "s");
    assert!(doc["predicted"]["viscous"]["relative"].as_f64().unwrap() <= 0.01);
    assert!(doc["predicted"]["coulomb"]["relative"].as_f64().unwrap() <= 0.02);
    swingfit()
        .args(base)
        .args(["--rate", "50", "--noise-deg", "0.01", "--target", "viscous=0.0001%"])
        .args(["--max-record", "20", "--max-releases", "1"])
        .assert()
        .code(1)
        .stderr(predicates::str::contains("viscous blocks it"));
}
