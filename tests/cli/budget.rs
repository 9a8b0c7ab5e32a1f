//! `fit --budget`: the GUM budget of every physical value on the demo article.

use crate::common::{demo_data, swingfit};
use serde_json::Value;

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

#[test]
fn demo_budget_terms_add_up_to_the_combined_variance() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("fit.json");
    let out = swingfit()
        .args(["fit", "--counts-per-rev", "10000", "--damping", "viscous,coulomb,quadratic"])
        .args(["--mass", "2.4", "--mass-std", "0.002", "--pivot-to-cg", "0.215"])
        .args(["--pivot-to-cg-std", "0.0005", "--gravity", "9.8123", "--gravity-std", "0.0004"])
        .arg(demo_data("ba7_release60_counts.csv"))
        .arg(demo_data("ba7_release15_deg.csv"))
        .arg("--budget")
        .arg("--json")
        .arg(&json)
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("Uncertainty budget"), "{stdout}");
    assert!(stdout.contains("largest contribution: pivot_to_cg"), "{stdout}");
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let budgets = doc["budget"].as_array().expect("budget array");
    // J, J_cg, k_O, k_cg, L, three damping coefficients, T0, zeta, delta, Q.
    assert_eq!(budgets.len(), 12);
    let mut correlation_terms = 0;
    for b in budgets {
        let key = b["quantity"].as_str().unwrap();
        let u_c = f(&b["std"]);
        let variance: f64 =
            b["inputs"].as_array().unwrap().iter().map(|l| f(&l["contribution"]).powi(2)).sum();
        let corr: f64 = b["correlations"].as_array().unwrap().iter().map(|c| f(&c["term"])).sum();
        correlation_terms += b["correlations"].as_array().unwrap().len();
        let sum = variance + corr;
        assert!((sum - u_c * u_c).abs() <= 1e-10 * u_c * u_c, "{key}: {sum} vs {}", u_c * u_c);
        // The budget's u_c is the one the physical block reports.
        let reported = f(&doc["physical"][key]["std"]);
        assert!((u_c - reported).abs() <= 1e-12 * reported, "{key}: {u_c} vs {reported}");
        let shares: f64 =
            b["inputs"].as_array().unwrap().iter().map(|l| f(&l["share"])).sum::<f64>()
                + b["correlations"].as_array().unwrap().iter().map(|c| f(&c["share"])).sum::<f64>();
        assert!((shares - 1.0).abs() < 1e-9, "{key}: shares sum to {shares}");
    }
    // The fitted ωn and damping coefficients are correlated: the damping budgets show it.
    assert!(correlation_terms > 0);
    // J = m g d/ωn²: relative sensitivities are 1 for m, d, g; with ωn's share negligible the
    // mass share is (u_m/m)² / ((u_m/m)² + (u_d/d)² + (u_g/g)²).
    let j = budgets.iter().find(|b| b["quantity"] == "inertia_pivot").unwrap();
    let rel = [0.002 / 2.4, 0.0005 / 0.215, 0.0004 / 9.8123].map(|x: f64| x * x);
    let expected_mass_share = rel[0] / rel.iter().sum::<f64>();
    let mass = &j["inputs"][0];
    assert_eq!(mass["input"], "mass");
    assert!((f(&mass["share"]) - expected_mass_share).abs() < 1e-4, "{}", mass["share"]);
    assert_eq!(mass["sensitivity_unit"], "(kg*m^2)/kg");
    let d = &j["inputs"][1];
    assert!((f(&d["sensitivity"]) - f(&j["value"]) / 0.215).abs() < 1e-9);
}

#[test]
fn budget_without_mass_data_is_refused() {
    swingfit()
        .args(["fit", "--budget"])
        .arg(demo_data("ba7_release15_deg.csv"))
        .assert()
        .code(2)
        .stderr(predicates::str::contains("--budget needs the physical inputs"));
}
