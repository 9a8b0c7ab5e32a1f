//! Plain-text tables for the terminal and for lab notebooks.
//!
//! Every number carries its unit and, where it is an estimate, its ± 95 % half-width. Numbers
//! and units are written as on the sheet ([`crate::report::typeset`]): unit symbols (kg·m²,
//! N·m·s/rad, rad/s²), the minus sign U+2212, "not available" instead of `NaN`.

use std::fmt::Write as _;

use crate::fit::{Estimate, FitOutcome};
use crate::model::Term;
use crate::physical::{PhysicalCoefficients, Quantity};
use crate::report::sheet::model::{physical_quantity, physical_symbol};
use crate::report::typeset::unit;
pub use crate::report::typeset::{num, sig_for};

fn row(out: &mut String, label: &str, e: &Estimate) {
    let half = 0.5 * (e.ci95.1 - e.ci95.0);
    let sig = sig_for(e.value, half);
    let _ = writeln!(
        out,
        "  {:<34} {:>16}  ± {:<10} {}",
        label,
        num(e.value, sig),
        num(half, 2),
        unit(e.unit)
    );
}

fn qrow(out: &mut String, label: &str, q: &Quantity) {
    let sig = sig_for(q.value, q.expanded);
    let _ = writeln!(
        out,
        "  {:<34} {:>16}  ± {:<10} {:<14} (u = {})",
        label,
        num(q.value, sig),
        num(q.expanded, 2),
        unit(q.unit),
        num(q.u_c, 2)
    );
}

/// What the user stated about one input of the physical coefficients, in words: its standard
/// uncertainty, or that it was taken as exact.
pub fn stated(value: f64, u_x: f64, unit_text: &str, what: &str) -> String {
    let u = unit(unit_text);
    if u_x > 0.0 {
        format!(
            "{what} {} {u} (standard uncertainty {} {u})",
            num(value, sig_for(value, u_x)),
            num(u_x, 2)
        )
    } else {
        format!(
            "{what} {} {u} (taken as exact: no uncertainty given)",
            crate::report::typeset::minus(&value.to_string())
        )
    }
}

/// The inputs line of the physical block: mass, pivot-to-CG and gravity with their stated
/// uncertainties, or "taken as exact".
pub fn inputs_line(a: &crate::physical::ArticleInputs) -> String {
    let g = if a.gravity.u > 0.0 {
        format!(
            "{} (standard uncertainty {} m/s²)",
            unit(&a.gravity.describe()),
            num(a.gravity.u, 2)
        )
    } else if a.gravity.source == crate::physical::GravitySource::Standard {
        format!(
            "{} (taken as exact; the local value differs from it by up to 0.3 %, give --gravity or --latitude)",
            unit(&a.gravity.describe())
        )
    } else {
        format!("{} (taken as exact: no uncertainty given)", unit(&a.gravity.describe()))
    };
    format!(
        "  inputs: {}; {}; gravity: {g}",
        stated(a.mass.value, a.mass.u, "kg", "mass"),
        stated(a.pivot_to_cg.value, a.pivot_to_cg.u, "m", "pivot-to-CG"),
    )
}

/// The fit table printed by `swingfit fit`: the adequacy verdict first (with the
/// not-a-calibration banner when the model does not explain the log), then `choice` (how the
/// damping was chosen), then the coefficients.
pub fn fit_table(
    fit: &FitOutcome,
    physical: Option<&PhysicalCoefficients>,
    inputs: Option<&crate::physical::ArticleInputs>,
    choice: Option<&str>,
) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}", crate::report::verdict::adequacy_line(&fit.adequacy));
    if let Some(c) = choice {
        let _ = writeln!(o, "{c}");
    }
    if fit.adequacy.verdict == crate::fit::adequacy::Adequacy::NotExplained {
        let _ = writeln!(o);
        let _ = writeln!(o, "{}", crate::report::verdict::NOT_A_CALIBRATION);
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "Damping model: {}   ({} run{}, {} samples)",
        fit.damping,
        fit.runs.len(),
        if fit.runs.len() == 1 { "" } else { "s" },
        fit.n_obs
    );
    let _ = writeln!(o);
    let _ = writeln!(o, "Per unit inertia (value ± 95 % interval half-width)");
    row(&mut o, "natural frequency ωn", &fit.omega_n);
    for (t, e) in &fit.terms {
        row(&mut o, &format!("{} coefficient {}", t.name(), t.symbol()), e);
    }
    // T0 = 2π/ωn: its interval is ωn's, mapped through (relative widths are equal).
    let w = &fit.omega_n;
    let tau = 2.0 * std::f64::consts::PI;
    let period = Estimate {
        value: tau / w.value,
        std: tau / w.value * w.std / w.value,
        ci95: (tau / w.ci95.1, tau / w.ci95.0),
        unit: "s",
    };
    row(&mut o, "small-amplitude period T0", &period);
    if let Some(p) = physical {
        let _ = writeln!(o);
        let _ = writeln!(o, "Physical (value ± expanded uncertainty U, k = 2; GUM, JCGM 100:2008)");
        qrow(&mut o, "moment of inertia about pivot J", &p.inertia_pivot);
        qrow(&mut o, "moment of inertia about CG Jcg", &p.inertia_cg);
        qrow(&mut o, "radius of gyration about pivot", &p.gyration_pivot);
        match &p.gyration_cg {
            Some(q) => qrow(&mut o, "radius of gyration about CG", q),
            None => {
                let _ = writeln!(
                    o,
                    "  radius of gyration about CG        undefined: J_cg < 0 (check mass and pivot-to-CG)"
                );
            }
        }
        qrow(&mut o, "equivalent pendulum length", &p.equivalent_length);
        for t in Term::ALL {
            if let Some(q) = p.damping.get(t.index()).and_then(Option::as_ref) {
                let label = format!("{} {}", physical_quantity(t), physical_symbol(t));
                qrow(&mut o, &label, q);
            }
        }
        if let Some(q) = &p.damping_ratio {
            qrow(&mut o, "viscous damping ratio ζ", q);
        }
        if let Some(q) = &p.log_decrement {
            qrow(&mut o, "logarithmic decrement δ", q);
        }
        if let Some(q) = &p.quality_factor {
            qrow(&mut o, "quality factor Q", q);
        }
        match inputs {
            Some(a) => {
                let _ = writeln!(o, "{}", inputs_line(a));
            }
            None => {
                let _ = writeln!(o, "  gravity: {}", unit(&p.gravity.describe()));
            }
        }
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "Runs");
    let _ = writeln!(
        o,
        "  {:<28} {:>8} {:>14} {:>14} {:>14} {:>11} {:>11} {:>8}",
        "file",
        "samples",
        "equilib. deg",
        "release deg",
        "ω0 deg/s",
        "RMS rad",
        "noise rad",
        "LB p"
    );
    for r in &fit.runs {
        let name = std::path::Path::new(&r.source)
            .file_name()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| r.source.clone());
        let _ = writeln!(
            o,
            "  {:<28} {:>8} {:>14} {:>14} {:>14} {:>11} {:>11} {:>8}",
            name,
            r.samples,
            num(r.equilibrium.value.to_degrees(), 6),
            num(r.initial_angle.value.to_degrees(), 6),
            num(r.initial_velocity.value.to_degrees(), 5),
            num(r.rms_residual, 3),
            num(r.noise_floor, 3),
            num(r.ljung_box_p, 2)
        );
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "Fit: converged ({} criterion) after {} iterations ({} over all continuation stages); RSS {} rad², dof {}",
        format!("{:?}", fit.convergence).to_lowercase(),
        fit.iterations,
        fit.iterations_total,
        num(fit.rss, 4),
        fit.dof
    );
    let _ = writeln!(
        o,
        "     RMS residual {} rad; condition number {}",
        num(fit.rms_residual(), 3),
        num(fit.condition, 3)
    );
    let _ = writeln!(
        o,
        "Intervals: {} (coverage factor t = {})",
        interval_method_text(&fit.interval_method),
        num(fit.t95, 4)
    );
    for f in &fit.flags {
        let _ = writeln!(o, "Note: {f}");
    }
    o
}

/// The comparison table printed by `swingfit compare`.
pub fn compare_table(c: &crate::fit::compare::Comparison) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "Candidates (ranked; BIC = n ln(RSS/n) + p ln n, lower is better)");
    let _ = writeln!(
        o,
        "  {:<28} {:>7} {:>12} {:>14} {:>14} {:>9} {:>8} {:>6} {:>14}",
        "damping", "status", "RMS rad", "AIC", "BIC", "x noise", "LB p", "sig.", "adequacy"
    );
    for e in &c.candidates {
        if let Err(err) = &e.fit {
            let _ = writeln!(o, "  {:<28} {:>7}  {}", e.damping.to_string(), "failed", err);
            continue;
        }
        let _ = writeln!(
            o,
            "  {:<28} {:>7} {:>12} {:>14} {:>14} {:>9} {:>8} {:>6} {:>14}",
            e.damping.to_string(),
            "ok",
            num(e.rms_residual, 3),
            crate::report::typeset::minus(&format!("{:.1}", e.aic)),
            crate::report::typeset::minus(&format!("{:.1}", e.bic)),
            format!("{:.2}", e.noise_ratio),
            num(e.ljung_box_p, 2),
            if e.all_significant { "yes" } else { "no" },
            e.outcome().map_or("–", |f| f.adequacy.verdict.name())
        );
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "Envelope laws on the measured half-cycle peaks (RMS misfit in amplitude)");
    for (law, rms) in &c.envelope.laws {
        let _ = writeln!(o, "  {:<12} {} rad", law.name(), num(*rms, 3));
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "Verdict: {}", crate::report::verdict::comparison(c));
    o
}

/// The interval method in words.
pub fn interval_method_text(m: &crate::fit::uncertainty::IntervalMethod) -> String {
    use crate::fit::uncertainty::IntervalMethod as M;
    match m {
        M::Plain => "Student-t on s² (JᵀJ)⁻¹; residuals pass the Ljung–Box whiteness test".into(),
        M::Hac { rho1, bandwidth, dof } => format!(
            "HAC sandwich covariance for correlated residuals (Ljung–Box rejects whiteness; lag-1 autocorrelation {}), Bartlett weights over {bandwidth} samples, t on {dof:.0} degrees of freedom (never narrower than s² (JᵀJ)⁻¹)",
            crate::report::typeset::minus(&format!("{rho1:.2}"))
        ),
        M::Bootstrap { replicates, block_length, seed } => format!(
            "moving-block bootstrap, {replicates} refits, blocks of {block_length} samples, seed {seed} (never narrower than the analytic interval)"
        ),
    }
}
