//! End-to-end tests of `swingfit compare` on the demo article (true set: all three terms,
//! data/README.md) and its refusals.

use serde_json::Value;

use crate::common::{demo_data, swingfit};

#[test]
fn demo_article_needs_all_three_terms() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("compare.json");
    let out = swingfit()
        .args(["compare", "--counts-per-rev", "10000"])
        .arg(demo_data("ba7_release60_counts.csv"))
        .arg(demo_data("ba7_release15_deg.csv"))
        .arg("--json")
        .arg(&json)
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("Verdict: viscous+coulomb+quadratic explains the decay"), "{stdout}");
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(doc["schema"], "swingfit.compare.v2");
    assert_eq!(doc["best"], serde_json::json!(["viscous", "coulomb", "quadratic"]));
    assert_eq!(doc["explained"], true);
    let cands = doc["candidates"].as_array().unwrap();
    // The seven rate-dependent sets and the four Coulomb sets with pre-sliding and with the
    // Stribeck excess (docs/compare.md).
    assert_eq!(cands.len(), 15);
    for c in cands {
        for k in ["damping", "rss", "aic", "bic", "ljung_box_p", "rms_residual", "explains_decay"] {
            assert!(c.get(k).is_some(), "candidate lacks {k}: {c}");
        }
    }
    // Only the true set explains it, with or without an (unresolved) pre-sliding spring or
    // Stribeck excess.
    let explaining: Vec<&Value> = cands.iter().filter(|c| c["explains_decay"] == true).collect();
    assert!(!explaining.is_empty() && explaining.len() <= 3);
    for c in explaining {
        let d = c["damping"].as_array().unwrap();
        assert_eq!(
            &d[..3],
            &serde_json::json!(["viscous", "coulomb", "quadratic"]).as_array().unwrap()[..]
        );
    }
    assert!(!doc["period_points"][0].as_array().unwrap().is_empty());
}

#[test]
fn selected_candidates_only() {
    // Neither candidate describes the demo article (it has Coulomb and quadratic damping too):
    // the least bad is not_explained, and compare exits with status 3.
    let out = swingfit()
        .args(["compare", "--candidates", "viscous;viscous,quadratic"])
        .arg(demo_data("ba7_release15_deg.csv"))
        .assert()
        .code(3);
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("viscous+quadratic") && !stdout.contains("coulomb+"), "{stdout}");
    assert!(stdout.contains("not_explained"), "{stdout}");
    assert!(stdout.contains("No candidate explains the decay"), "{stdout}");
}

#[test]
fn bad_candidate_list_is_refused() {
    let out = swingfit()
        .args(["compare", "--candidates", "viscous;drag"])
        .arg(demo_data("ba7_release15_deg.csv"))
        .assert()
        .code(2);
    let err = String::from_utf8_lossy(&out.get_output().stderr).to_string();
    assert!(err.contains("--candidates") && err.contains("drag"), "{err}");
}
