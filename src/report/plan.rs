//! The test plan as a terminal table and as the `swingfit.plan.v1` JSON document.
//!
//! ## Wire format `swingfit.plan.v1`
//! ```text
//! { "schema": "swingfit.plan.v1",
//!   "damping": ["viscous", "coulomb"],
//!   "design": { "releases": [V], "record": V | "until_rest", "rate": V, "sensor_noise": V,
//!               "counts_per_rev": n | null, "encoder_step": V | null,
//!               "effective_noise": V, "noise_model": "…" },
//!   "runs": [ { "release": V, "record": V, "fitted": V, "samples", "fitted_samples",
//!               "independent_samples", "sticks" } ],
//!   "predicted": { "omega_n": U, "viscous": U, … },          per unit inertia
//!   "physical": { "inertia_pivot": U, …, "viscous": U, … },   only with mass data
//!   "correlation": { "names": […], "matrix": [[…]] },
//!   "condition_number": x,
//!   "inseparable": [ { "a", "b", "r" } ], "unresolved": ["…"], "notes": ["…"],
//!   "search": { … } }                                          only with targets
//! V = { "value": x, "unit": "…" }
//! U = { "value": x, "std": u, "relative": u/|x|, "unit": "…" }
//! ```

use std::fmt::Write as _;

use serde::Serialize;

use crate::plan::search::{Blocked, Bounds, Found, SearchOutcome, Target};
use crate::plan::{Plan, Prediction, Record};
use crate::report::typeset::num;

/// Schema tag of the plan JSON.
pub const PLAN_SCHEMA: &str = "swingfit.plan.v1";

/// A value with its unit.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct V {
    /// Value.
    pub value: f64,
    /// Unit.
    pub unit: &'static str,
}

fn v(value: f64, unit: &'static str) -> V {
    V { value, unit }
}

/// A predicted value.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct U {
    /// Expected value.
    pub value: f64,
    /// Predicted standard uncertainty.
    pub std: f64,
    /// std / |value|, unit 1.
    pub relative: f64,
    /// Unit of value and std.
    pub unit: &'static str,
}

/// The design on the wire.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct DesignDoc {
    /// Release angles from the hanging position.
    pub releases: Vec<V>,
    /// Record length, or `"until_rest"`.
    pub record: serde_json::Value,
    /// Sample rate.
    pub rate: V,
    /// Sensor noise (standard deviation).
    pub sensor_noise: V,
    /// Encoder counts per revolution.
    pub counts_per_rev: Option<f64>,
    /// Encoder step.
    pub encoder_step: Option<V>,
    /// √(σ_n² + q²/12).
    pub effective_noise: V,
    /// How the noise and the encoder are modelled, in words.
    pub noise_model: String,
}

/// One release on the wire.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct RunDoc {
    /// Release angle.
    pub release: V,
    /// Recorded span.
    pub record: V,
    /// Span the fit uses.
    pub fitted: V,
    /// Samples recorded.
    pub samples: usize,
    /// Samples fitted.
    pub fitted_samples: usize,
    /// Independent observations among them.
    pub independent_samples: f64,
    /// Whether Coulomb friction stops the swing within the record.
    pub sticks: bool,
}

/// A pair the design cannot separate.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct PairDoc {
    /// First.
    pub a: &'static str,
    /// Second.
    pub b: &'static str,
    /// Predicted correlation, unit 1.
    pub r: f64,
}

/// Correlation matrix with its labels.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct CorrelationDoc {
    /// Names.
    pub names: Vec<&'static str>,
    /// Rows.
    pub matrix: Vec<Vec<f64>>,
}

/// The plan document.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct PlanDoc {
    /// `swingfit.plan.v1`.
    pub schema: &'static str,
    /// Terms the fit will have.
    pub damping: Vec<&'static str>,
    /// The design.
    pub design: DesignDoc,
    /// Each release.
    pub runs: Vec<RunDoc>,
    /// Per unit inertia.
    pub predicted: serde_json::Map<String, serde_json::Value>,
    /// Physical values (with mass data).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub physical: Option<serde_json::Map<String, serde_json::Value>>,
    /// Predicted correlations.
    pub correlation: CorrelationDoc,
    /// Condition number of the scaled normal equations.
    pub condition_number: f64,
    /// Pairs the design cannot separate.
    pub inseparable: Vec<PairDoc>,
    /// Terms the design does not resolve (95 % half-width above the value).
    pub unresolved: Vec<&'static str>,
    /// Notes in words.
    pub notes: Vec<String>,
    /// The design search, when targets were given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub search: Option<serde_json::Value>,
}

/// How the noise is modelled, in words.
pub fn noise_model(plan: &Plan) -> String {
    match plan.design.step() {
        None => "independent Gaussian sensor noise".to_string(),
        Some(_) => "sensor noise plus encoder quantisation counted as uniform noise of variance step^2/12; the fit, and so the prediction, stops at the first swing below 10 encoder steps".to_string(),
    }
}

/// Notes in words: what the design cannot separate or resolve.
pub fn notes(pred: &Prediction) -> Vec<String> {
    let mut n = Vec::new();
    for p in &pred.inseparable {
        n.push(format!(
            "{} and {} are predicted {:.3} correlated: this design cannot separate them; add a release at a clearly different angle",
            p.a, p.b, p.r
        ));
    }
    for t in &pred.unresolved {
        n.push(format!(
            "{t}: the predicted 95 % interval is wider than the expected value; this design would not resolve {t} damping (record longer, add releases, or lower the noise)"
        ));
    }
    n
}

fn u_json(value: f64, std: f64, unit: &'static str) -> serde_json::Value {
    serde_json::to_value(U { value, std, relative: std / value.abs(), unit })
        .unwrap_or(serde_json::Value::Null)
}

/// Build the plan document.
pub fn plan_doc(plan: &Plan, pred: &Prediction, search: Option<serde_json::Value>) -> PlanDoc {
    let d = &plan.design;
    let mut predicted = serde_json::Map::new();
    for c in &pred.coefficients {
        predicted.insert(c.key.to_string(), u_json(c.value, c.std, c.unit));
    }
    let physical = pred.physical.as_ref().map(|p| {
        let mut m = serde_json::Map::new();
        for b in &p.budgets {
            m.insert(b.key.to_string(), u_json(b.value, b.u_c, b.unit));
        }
        m
    });
    PlanDoc {
        schema: PLAN_SCHEMA,
        damping: pred.damping.names(),
        design: DesignDoc {
            releases: d.releases.iter().map(|a| v(a.to_degrees(), "deg")).collect(),
            record: match d.record {
                Record::Seconds(s) => serde_json::to_value(v(s, "s")).unwrap_or_default(),
                Record::UntilRest => serde_json::Value::String("until_rest".into()),
            },
            rate: v(d.rate_hz, "Hz"),
            sensor_noise: v(d.noise_rad, "rad"),
            counts_per_rev: d.counts_per_rev,
            encoder_step: d.step().map(|q| v(q, "rad")),
            effective_noise: v(pred.sigma_rad, "rad"),
            noise_model: noise_model(plan),
        },
        runs: pred
            .runs
            .iter()
            .map(|r| RunDoc {
                release: v(r.angle.to_degrees(), "deg"),
                record: v(r.record_s, "s"),
                fitted: v(r.fitted_s, "s"),
                samples: r.samples,
                fitted_samples: r.fitted_samples,
                independent_samples: r.independent,
                sticks: r.sticks,
            })
            .collect(),
        predicted,
        physical,
        correlation: CorrelationDoc {
            names: pred.coefficients.iter().map(|c| c.key).collect(),
            matrix: (0..pred.correlation.nrows())
                .map(|i| pred.correlation.row(i).iter().copied().collect())
                .collect(),
        },
        condition_number: pred.condition,
        inseparable: pred.inseparable.iter().map(|p| PairDoc { a: p.a, b: p.b, r: p.r }).collect(),
        unresolved: pred.unresolved.iter().map(|t| t.name()).collect(),
        notes: notes(pred),
        search,
    }
}

fn pct(x: f64) -> String {
    if x >= 0.1 { format!("{:.1} %", 100.0 * x) } else { format!("{} %", num(100.0 * x, 2)) }
}

/// The plan table printed by `swingfit plan`.
pub fn plan_table(plan: &Plan, pred: &Prediction) -> String {
    let d = &plan.design;
    let mut o = String::new();
    let _ = writeln!(
        o,
        "Plan: damping {}, {} release{}, {} Hz",
        pred.damping,
        d.releases.len(),
        if d.releases.len() == 1 { "" } else { "s" },
        num(d.rate_hz, 4)
    );
    let _ = writeln!(
        o,
        "Noise: {} rad effective (sensor {} rad{}); {}",
        num(pred.sigma_rad, 3),
        num(d.noise_rad, 3),
        match d.step() {
            Some(q) => format!(
                ", encoder step {} rad, q/sqrt(12) = {} rad",
                num(q, 3),
                num(pred.quantisation_rad, 3)
            ),
            None => String::new(),
        },
        noise_model(plan)
    );
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "  {:>11} {:>10} {:>10} {:>9} {:>9} {:>12} {:>7}",
        "release deg", "record s", "fitted s", "samples", "fitted", "independent", "sticks"
    );
    for r in &pred.runs {
        let _ = writeln!(
            o,
            "  {:>11} {:>10} {:>10} {:>9} {:>9} {:>12} {:>7}",
            num(r.angle.to_degrees(), 4),
            num(r.record_s, 5),
            num(r.fitted_s, 5),
            r.samples,
            r.fitted_samples,
            num(r.independent, 6),
            if r.sticks { "yes" } else { "no" }
        );
    }
    let _ = writeln!(o);
    let _ =
        writeln!(o, "Predicted per unit inertia (expected value, standard uncertainty u, u/value)");
    for c in &pred.coefficients {
        let _ = writeln!(
            o,
            "  {:<12} {:>14} {:<8} u = {:<10} {:>9}",
            c.key,
            num(c.value, 6),
            c.unit,
            num(c.std, 2),
            pct(c.relative)
        );
    }
    if let Some(p) = &pred.physical {
        let _ = writeln!(o);
        let _ = writeln!(o, "Predicted physical values (GUM, with the mass data given)");
        for b in &p.budgets {
            let _ = writeln!(
                o,
                "  {:<22} {:>14} {:<14} u = {:<10} {:>9}",
                b.key,
                num(b.value, 6),
                b.unit,
                num(b.u_c, 2),
                pct(b.u_c / b.value.abs())
            );
        }
    }
    if pred.coefficients.len() > 1 {
        let _ = writeln!(o);
        let _ = writeln!(o, "Predicted correlations");
        let _ = write!(o, "  {:<12}", "");
        for c in &pred.coefficients {
            let _ = write!(o, " {:>10}", c.key);
        }
        let _ = writeln!(o);
        for (i, c) in pred.coefficients.iter().enumerate() {
            let _ = write!(o, "  {:<12}", c.key);
            for j in 0..pred.coefficients.len() {
                let _ = write!(o, " {:>10.3}", pred.correlation[(i, j)]);
            }
            let _ = writeln!(o);
        }
    }
    for n in notes(pred) {
        let _ = writeln!(o, "Note: {n}");
    }
    o
}

fn targets_text(targets: &[Target]) -> String {
    targets.iter().map(|t| format!("{} {}", t.key, pct(t.relative))).collect::<Vec<_>>().join(", ")
}

fn angles_text(d: &crate::plan::Design) -> String {
    d.releases.iter().map(|a| num(a.to_degrees(), 3)).collect::<Vec<_>>().join(", ")
}

fn record_of(d: &crate::plan::Design) -> f64 {
    match d.record {
        Record::Seconds(s) => s,
        Record::UntilRest => f64::NAN,
    }
}

/// The search's answer in words, printed above the plan table of the design found.
pub fn found_text(targets: &[Target], f: &Found) -> String {
    format!(
        "Least test effort meeting {}: {} release{} at {} deg, {} s each ({} s of rig time with set-up); worst target ratio {}\n",
        targets_text(targets),
        f.design.releases.len(),
        if f.design.releases.len() == 1 { "" } else { "s" },
        angles_text(&f.design),
        num(record_of(&f.design), 4),
        num(f.effort_s, 4),
        num(f.worst_ratio, 3)
    )
}

/// The refusal when no design within the bounds meets the targets.
pub fn blocked_text(targets: &[Target], bounds: &Bounds, b: &Blocked) -> String {
    format!(
        "no design within the bounds meets {}: {} blocks it; its best predicted relative uncertainty is {} ({} x its target) with {} release{} at {} deg recorded {} s each; widen the bounds (--max-releases {}, --max-record {} s, --max-angle-deg {}), lower the noise, or relax the target",
        targets_text(targets),
        b.key,
        pct(b.relative),
        num(b.ratio, 3),
        b.design.releases.len(),
        if b.design.releases.len() == 1 { "" } else { "s" },
        angles_text(&b.design),
        num(record_of(&b.design), 4),
        bounds.max_releases,
        num(bounds.max_record_s, 4),
        num(bounds.max_angle.to_degrees(), 3)
    )
}

/// The search block of the plan JSON.
pub fn search_doc(
    targets: &[Target],
    bounds: &Bounds,
    outcome: &SearchOutcome,
) -> serde_json::Value {
    let targets: Vec<serde_json::Value> = targets
        .iter()
        .map(|t| serde_json::json!({ "key": t.key, "relative": t.relative, "unit": "1" }))
        .collect();
    let bounds = serde_json::json!({
        "max_releases": bounds.max_releases,
        "min_angle": { "value": bounds.min_angle.to_degrees(), "unit": "deg" },
        "max_angle": { "value": bounds.max_angle.to_degrees(), "unit": "deg" },
        "max_record": { "value": bounds.max_record_s, "unit": "s" },
        "release_cost": { "value": bounds.release_cost_s, "unit": "s" },
    });
    match outcome {
        SearchOutcome::Found(f) => serde_json::json!({
            "targets": targets, "bounds": bounds, "met": true,
            "effort": { "value": f.effort_s, "unit": "s" },
            "worst_ratio": f.worst_ratio,
            "method": "Nelder-Mead (argmin) over the release angles for each number of releases, bisection on the record length",
        }),
        SearchOutcome::Blocked(b) => serde_json::json!({
            "targets": targets, "bounds": bounds, "met": false,
            "blocking": b.key, "ratio": b.ratio, "relative": b.relative,
        }),
    }
}
