//! The GUM uncertainty budget as a terminal table (`swingfit fit --budget`).
//!
//! One block per physical value: each input with its value, standard uncertainty, sensitivity
//! coefficient, contribution u_i(y) and share of u_c², then the correlation terms, then the sum,
//! which is u_c². The numbers come from [`crate::physical::budget`].

use std::fmt::Write as _;

use crate::physical::budget::Budget;
use crate::report::typeset::num;

/// Words for a value's key.
fn label(key: &str) -> &str {
    match key {
        "inertia_pivot" => "moment of inertia about pivot J",
        "inertia_cg" => "moment of inertia about CG J_cg",
        "radius_gyration_pivot" => "radius of gyration about pivot k_O",
        "radius_gyration_cg" => "radius of gyration about CG k_cg",
        "equivalent_length" => "equivalent pendulum length L",
        "viscous" => "viscous coefficient c",
        "coulomb" => "Coulomb friction torque tau_c",
        "quadratic" => "quadratic coefficient c_q",
        "period" => "small-amplitude period T0",
        "damping_ratio" => "viscous damping ratio zeta",
        "log_decrement" => "logarithmic decrement delta",
        "quality_factor" => "quality factor Q",
        other => other,
    }
}

fn pct(x: f64) -> String {
    format!("{:.2} %", 100.0 * x)
}

/// The budget tables of `budgets`.
pub fn budget_table(budgets: &[Budget]) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "Uncertainty budget (GUM, JCGM 100:2008: u_c^2 = sum c_i^2 u(x_i)^2 + sum 2 c_i c_j u(x_i, x_j))"
    );
    for b in budgets {
        let _ = writeln!(o);
        let _ = writeln!(
            o,
            "  {} = {} {}, u_c = {} {}",
            label(b.key),
            num(b.value, 6),
            b.unit,
            num(b.u_c, 3),
            b.unit
        );
        let _ = writeln!(
            o,
            "    {:<12} {:>14} {:<8} {:>11} {:>14} {:>11} {:>9}",
            "input x_i", "value", "unit", "u(x_i)", "c_i", "u_i(y)", "share"
        );
        for l in &b.inputs {
            let _ = writeln!(
                o,
                "    {:<12} {:>14} {:<8} {:>11} {:>14} {:>11} {:>9}",
                l.key,
                num(l.value, 7),
                l.unit,
                if l.u == 0.0 { "exact".to_string() } else { num(l.u, 3) },
                num(l.sensitivity, 4),
                num(l.contribution, 3),
                pct(l.share)
            );
        }
        for c in &b.correlations {
            let _ = writeln!(
                o,
                "    {:<40} {:>14} {:>11} {:>9}",
                format!("r({}, {}) = {}", c.a, c.b, num(c.r, 3)),
                "2 c_i c_j u_ij",
                num(c.term, 3),
                pct(c.share)
            );
        }
        let dominant = b.dominant().filter(|l| l.contribution > 0.0);
        let _ = writeln!(
            o,
            "    sum of terms {} = u_c^2{}",
            num(b.sum_of_terms(), 4),
            dominant.map(|l| format!("; largest contribution: {}", l.key)).unwrap_or_default()
        );
    }
    o
}
