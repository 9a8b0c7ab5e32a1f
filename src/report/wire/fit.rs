//! The fit document `swingfit.fit.v1` (`fit --json`, embedded in the sheet): coefficients with
//! their uncertainties, per run, fit statistics, correlations, the GUM budget and the adequacy
//! verdict. Built from a `FitOutcome` by [`fit_doc`]; read back by `serde` (and, in part, by
//! [`super::params`]).
//!
//! ## Wire format `swingfit.fit.v1`
//! ```text
//! { "schema": "swingfit.fit.v1",
//!   "damping": ["viscous", "coulomb"],            fitted terms, canonical order
//!   "normalized": { "omega_n": P, "viscous": P, "coulomb": P, "quadratic": P },   per unit inertia
//!   "physical":   { "inertia_pivot": P, "inertia_cg": P, "radius_gyration_pivot": P,
//!                   "radius_gyration_cg": P, "equivalent_length": P,
//!                   "viscous": P, "coulomb": P, "quadratic": P },  only with mass and pivot-to-CG
//!   "gravity": { "value": g, "std": u, "source": "…" },           only with `physical`
//!   "runs": [ { "file", "samples", "equilibrium": P, "initial_angle": P, "initial_velocity": P,
//!               "rms_residual", "noise_floor", "ljung_box_p" } ],
//!   "fit": { "converged", "iterations", "iterations_total", "rss", "dof", "samples",
//!            "convergence", "condition_number", "interval_method", "t95" },
//!   "correlation": { "names": […], "matrix": [[…]] },
//!   "vector": { "fitted": […], "start": […] },      parameter vectors in correlation.names order
//!   "flags": ["…"],
//!   "budget": [ { "quantity", "value", "unit", "std",                 only with `physical`
//!                 "inputs": [ { "input", "value", "unit", "std", "sensitivity",
//!                               "sensitivity_unit", "contribution", "share" } ],
//!                 "correlations": [ { "a", "b", "r", "term", "term_unit", "share" } ] } ],
//!   "adequacy": { "verdict": "explained" | "approximate" | "not_explained", "sensor_like",
//!                 "time_base_slips", "summary", "noise_ratio", "whiteness_p", "swing_locked", "amplitude_error",
//!                 "duration_error", "runs": [ { same figures per run, "lag1", "half_cycles" } ] },
//!   "damping_choice": "…",                         how the set was chosen, in words
//!   "inputs": { "mass": I, "pivot_to_cg": I, "gravity": I } }   only with `physical`
//! I = { "value", "std", "unit", "stated": bool, "note": "taken as exact…" | null }
//! P = { "value": x, "std": u, "ci95": [lo, hi], "unit": "…" }   (physical P also has "expanded_k2")
//! ```
//! Units: omega_n rad/s; normalized viscous 1/s, coulomb rad/s², quadratic 1/rad; physical inertia
//! kg·m², viscous N·m·s/rad, coulomb N·m, quadratic N·m·s²/rad²; angles rad; velocity rad/s; rss rad².
//! Terms not fitted are absent. `swingfit simulate --params` reads this file back.

use serde::{Deserialize, Serialize};

use crate::fit::{Estimate, FitOutcome};
use crate::model::Term;
use crate::physical::PhysicalCoefficients;

/// Schema tag of the fit JSON.
pub const FIT_SCHEMA: &str = "swingfit.fit.v1";

/// A value with its uncertainty, on the wire.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct P {
    /// Best estimate.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Standard uncertainty.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// 95 % interval (for physical values: value ± expanded uncertainty, k = 2).
    pub ci95: [f64; 2],
    /// SI unit.
    pub unit: String,
    /// Expanded uncertainty U = k·u with k = 2 (physical values only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub expanded_k2: Option<f64>,
}

impl From<&Estimate> for P {
    fn from(e: &Estimate) -> P {
        P {
            value: e.value,
            std: e.std,
            ci95: [e.ci95.0, e.ci95.1],
            unit: e.unit.to_string(),
            expanded_k2: None,
        }
    }
}

impl From<&crate::physical::Quantity> for P {
    fn from(q: &crate::physical::Quantity) -> P {
        P {
            value: q.value,
            std: q.u_c,
            ci95: [q.value - q.expanded, q.value + q.expanded],
            unit: q.unit.to_string(),
            expanded_k2: Some(q.expanded),
        }
    }
}

/// Per-unit-inertia block.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Normalized {
    /// ωn.
    pub omega_n: P,
    /// b1.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub viscous: Option<P>,
    /// b0.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coulomb: Option<P>,
    /// b2.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quadratic: Option<P>,
    /// Pre-sliding stiffness σ of the Coulomb friction [1/s²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub presliding: Option<P>,
    /// Stribeck excess bs of the friction at rest over b0 [rad/s²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck: Option<P>,
    /// Stribeck velocity vs [rad/s].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck_velocity: Option<P>,
}

/// Physical block.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Physical {
    /// J about the pivot.
    pub inertia_pivot: P,
    /// J about the centre of gravity.
    pub inertia_cg: P,
    /// √(J/m).
    pub radius_gyration_pivot: P,
    /// √(Jcg/m) (absent when J_cg comes out negative: d or m inconsistent with the fit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub radius_gyration_cg: Option<P>,
    /// Small-amplitude period T0.
    pub period: P,
    /// Viscous damping ratio ζ = b1/(2ωn).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub damping_ratio: Option<P>,
    /// Logarithmic decrement of the viscous term.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub log_decrement: Option<P>,
    /// Quality factor 1/(2ζ).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quality_factor: Option<P>,
    /// J/(m d).
    pub equivalent_length: P,
    /// c.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub viscous: Option<P>,
    /// τc.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coulomb: Option<P>,
    /// cq.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quadratic: Option<P>,
    /// k = σ·J, pre-sliding stiffness of the pivot friction [N·m/rad].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub presliding: Option<P>,
    /// τs − τc = bs·J, Stribeck excess torque [N·m].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck: Option<P>,
    /// Stribeck velocity vs [rad/s] (not scaled by J).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck_velocity: Option<P>,
}

/// Gravity used.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Gravity {
    /// g [m/s²].
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Standard uncertainty [m/s²].
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// Where it came from, in words.
    pub source: String,
}

/// One run.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Run {
    /// Log file.
    pub file: String,
    /// Samples fitted.
    pub samples: usize,
    /// θeq.
    pub equilibrium: P,
    /// θ at the first sample.
    pub initial_angle: P,
    /// ω at the first sample.
    pub initial_velocity: P,
    /// RMS residual [rad].
    #[serde(deserialize_with = "super::real")]
    pub rms_residual: f64,
    /// Survey noise floor [rad].
    #[serde(deserialize_with = "super::real")]
    pub noise_floor: f64,
    /// Ljung–Box p-value of the residuals.
    #[serde(deserialize_with = "super::real")]
    pub ljung_box_p: f64,
}

/// Fit statistics.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct FitStats {
    /// Always true: a failed fit writes no JSON.
    pub converged: bool,
    /// Iterations of the final stage.
    pub iterations: usize,
    /// Iterations over all continuation stages.
    pub iterations_total: usize,
    /// Residual sum of squares [rad²].
    #[serde(deserialize_with = "super::real")]
    pub rss: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Samples.
    pub samples: usize,
    /// Criterion that ended the fit.
    pub convergence: String,
    /// Condition number of the scaled normal equations.
    #[serde(deserialize_with = "super::real")]
    pub condition_number: f64,
    /// How the intervals were made.
    pub interval_method: String,
    /// Coverage factor used for the 95 % intervals.
    #[serde(deserialize_with = "super::real")]
    pub t95: f64,
}

/// Correlation matrix with its labels.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Correlation {
    /// Parameter names.
    pub names: Vec<String>,
    /// Rows of the matrix.
    pub matrix: Vec<Vec<f64>>,
}

/// Fitted and start parameter vectors.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Vector {
    /// At the minimum.
    pub fitted: Vec<f64>,
    /// Where the optimiser started (from the survey alone).
    pub start: Vec<f64>,
}

/// The adequacy verdict with its figures (see `fit::adequacy`).
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct AdequacyDoc {
    /// `explained`, `approximate` or `not_explained`.
    pub verdict: String,
    /// The residual structure looks like sensor noise (coloured or drifting), not a missing term.
    pub sensor_like: bool,
    /// Time-base slips left in the fitted samples (named as a cause when not explained).
    pub time_base_slips: usize,
    /// The verdict in words.
    pub summary: String,
    /// Worst RMS residual / survey noise floor.
    #[serde(deserialize_with = "super::real")]
    pub noise_ratio: f64,
    /// Smallest Ljung–Box p.
    #[serde(deserialize_with = "super::real")]
    pub whiteness_p: f64,
    /// Worst swing-locked over off-swing residual power (κ).
    #[serde(deserialize_with = "super::real")]
    pub swing_locked: f64,
    /// Worst relative RMS error of half-cycle peak-to-peak amplitudes.
    #[serde(deserialize_with = "super::real")]
    pub amplitude_error: f64,
    /// Worst RMS error of cycle durations relative to the period.
    #[serde(deserialize_with = "super::real")]
    pub duration_error: f64,
    /// Per run.
    pub runs: Vec<AdequacyRunDoc>,
}

/// The adequacy figures of one run.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct AdequacyRunDoc {
    /// RMS residual / survey noise floor.
    #[serde(deserialize_with = "super::real")]
    pub noise_ratio: f64,
    /// Ljung–Box p.
    #[serde(deserialize_with = "super::real")]
    pub whiteness_p: f64,
    /// Lag-1 autocorrelation of the residuals.
    #[serde(deserialize_with = "super::real")]
    pub lag1: f64,
    /// κ.
    #[serde(deserialize_with = "super::real")]
    pub swing_locked: f64,
    /// Relative RMS error of half-cycle peak-to-peak amplitudes.
    #[serde(deserialize_with = "super::real")]
    pub amplitude_error: f64,
    /// RMS error of cycle durations relative to the period.
    #[serde(deserialize_with = "super::real")]
    pub duration_error: f64,
    /// Half cycles compared.
    pub half_cycles: usize,
}

/// The adequacy block of a fit.
pub fn adequacy_doc(a: &crate::fit::adequacy::AdequacyReport) -> AdequacyDoc {
    AdequacyDoc {
        verdict: a.verdict.name().into(),
        sensor_like: a.sensor_like,
        time_base_slips: a.time_base_slips,
        summary: crate::report::verdict::adequacy_line(a),
        noise_ratio: a.worst(|r| r.noise_ratio),
        whiteness_p: a.whiteness_p(),
        swing_locked: a.worst(|r| r.swing_locked),
        amplitude_error: a.worst(|r| r.amplitude_error),
        duration_error: a.worst(|r| r.duration_error),
        runs: a
            .runs
            .iter()
            .map(|r| AdequacyRunDoc {
                noise_ratio: r.noise_ratio,
                whiteness_p: r.whiteness_p,
                lag1: r.lag1,
                swing_locked: r.swing_locked,
                amplitude_error: r.amplitude_error,
                duration_error: r.duration_error,
                half_cycles: r.half_cycles,
            })
            .collect(),
    }
}

/// An input of the physical coefficients as the user stated it.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct InputDoc {
    /// Value.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Standard uncertainty (0 when none was given).
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// SI unit.
    pub unit: String,
    /// Whether an uncertainty was given.
    pub stated: bool,
    /// "taken as exact …" when none was given.
    pub note: Option<String>,
}

/// The stated inputs.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct InputsDoc {
    /// Mass.
    pub mass: InputDoc,
    /// Pivot-to-CG distance.
    pub pivot_to_cg: InputDoc,
    /// Gravity.
    pub gravity: InputDoc,
}

/// The inputs block for the article's mass properties and gravity.
pub fn inputs_doc(a: &crate::physical::ArticleInputs) -> InputsDoc {
    let one = |value: f64, u: f64, unit: &'static str| InputDoc {
        value,
        std: u,
        unit: unit.into(),
        stated: u > 0.0,
        note: (u <= 0.0).then(|| "taken as exact: no uncertainty given".to_string()),
    };
    let mut gravity = one(a.gravity.value, a.gravity.u, "m/s^2");
    if a.gravity.u <= 0.0 && a.gravity.source == crate::physical::GravitySource::Standard {
        gravity.note = Some(
            "standard gravity taken as exact; the local value differs from it by up to 0.3 %"
                .into(),
        );
    }
    InputsDoc {
        mass: one(a.mass.value, a.mass.u, "kg"),
        pivot_to_cg: one(a.pivot_to_cg.value, a.pivot_to_cg.u, "m"),
        gravity,
    }
}

/// The whole fit document.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct FitDoc {
    /// `swingfit.fit.v1`.
    pub schema: String,
    /// Fitted terms.
    pub damping: Vec<String>,
    /// Per unit inertia.
    pub normalized: Normalized,
    /// Physical, when mass and pivot-to-CG were given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub physical: Option<Physical>,
    /// Gravity, with `physical`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gravity: Option<Gravity>,
    /// Runs.
    pub runs: Vec<Run>,
    /// Statistics.
    pub fit: FitStats,
    /// Correlations.
    pub correlation: Correlation,
    /// Parameter vector at the minimum and the start vector, in `correlation.names` order.
    pub vector: Vector,
    /// Warnings in words.
    pub flags: Vec<String>,
    /// GUM budget of every physical value (with `physical`).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub budget: Vec<BudgetDoc>,
    /// The adequacy verdict.
    pub adequacy: AdequacyDoc,
    /// How the damping set was chosen, in words (set by the caller).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub damping_choice: Option<String>,
    /// The stated inputs of the physical coefficients (set by the caller, with `physical`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub inputs: Option<InputsDoc>,
}

/// One input of a budget on the wire.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct BudgetInputDoc {
    /// Input key (`mass`, `pivot_to_cg`, `gravity`, `omega_n`, `viscous`, …).
    pub input: String,
    /// Value of the input.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Unit of the input.
    pub unit: String,
    /// Standard uncertainty u(x_i), unit of the input.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// Sensitivity coefficient c_i = dy/dx_i.
    #[serde(deserialize_with = "super::real")]
    pub sensitivity: f64,
    /// Unit of c_i.
    pub sensitivity_unit: String,
    /// u_i(y) = |c_i| u(x_i), unit of y.
    #[serde(deserialize_with = "super::real")]
    pub contribution: f64,
    /// c_i² u²(x_i) / u_c², unit 1.
    #[serde(deserialize_with = "super::real")]
    pub share: f64,
}

/// One correlation term of a budget on the wire.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct BudgetCorrelationDoc {
    /// First input key.
    pub a: String,
    /// Second input key.
    pub b: String,
    /// r(x_a, x_b), unit 1.
    #[serde(deserialize_with = "super::real")]
    pub r: f64,
    /// 2 c_a c_b u(x_a, x_b), unit of y squared.
    #[serde(deserialize_with = "super::real")]
    pub term: f64,
    /// Unit of `term`.
    pub term_unit: String,
    /// term / u_c², unit 1 (negative: the correlation lowers u_c).
    #[serde(deserialize_with = "super::real")]
    pub share: f64,
}

/// The GUM budget of one physical value on the wire.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct BudgetDoc {
    /// Key of the value in `physical`.
    pub quantity: String,
    /// Value.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Unit.
    pub unit: String,
    /// Combined standard uncertainty u_c.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// The inputs.
    pub inputs: Vec<BudgetInputDoc>,
    /// The non-zero correlation terms.
    pub correlations: Vec<BudgetCorrelationDoc>,
}

fn unit_ratio(y: &str, x: &str) -> String {
    let wrap = |u: &str| if u.contains(['*', '/']) { format!("({u})") } else { u.to_string() };
    if y == "1" { format!("1/{}", wrap(x)) } else { format!("{}/{}", wrap(y), wrap(x)) }
}

/// The wire form of a budget.
pub fn budget_doc(b: &crate::physical::budget::Budget) -> BudgetDoc {
    let squared = if b.unit == "1" { "1".to_string() } else { format!("({})^2", b.unit) };
    BudgetDoc {
        quantity: b.key.into(),
        value: b.value,
        unit: b.unit.into(),
        std: b.u_c,
        inputs: b
            .inputs
            .iter()
            .map(|l| BudgetInputDoc {
                input: l.key.into(),
                value: l.value,
                unit: l.unit.into(),
                std: l.u,
                sensitivity: l.sensitivity,
                sensitivity_unit: unit_ratio(b.unit, l.unit),
                contribution: l.contribution,
                share: l.share,
            })
            .collect(),
        correlations: b
            .correlations
            .iter()
            .map(|c| BudgetCorrelationDoc {
                a: c.a.into(),
                b: c.b.into(),
                r: c.r,
                term: c.term,
                term_unit: squared.clone(),
                share: c.share,
            })
            .collect(),
    }
}

/// Build the wire document of a fit.
pub fn fit_doc(fit: &FitOutcome, physical: Option<&PhysicalCoefficients>) -> FitDoc {
    let term = |t: Term| fit.term(t).map(P::from);
    FitDoc {
        schema: FIT_SCHEMA.into(),
        damping: super::names(fit.damping),
        normalized: Normalized {
            omega_n: P::from(&fit.omega_n),
            viscous: term(Term::Viscous),
            coulomb: term(Term::Coulomb),
            quadratic: term(Term::Quadratic),
            presliding: term(Term::Presliding),
            stribeck: term(Term::Stribeck),
            stribeck_velocity: term(Term::StribeckVelocity),
        },
        physical: physical.map(|p| Physical {
            inertia_pivot: P::from(&p.inertia_pivot),
            inertia_cg: P::from(&p.inertia_cg),
            radius_gyration_pivot: P::from(&p.gyration_pivot),
            radius_gyration_cg: p.gyration_cg.as_ref().map(P::from),
            equivalent_length: P::from(&p.equivalent_length),
            period: P::from(&p.period),
            damping_ratio: p.damping_ratio.as_ref().map(P::from),
            log_decrement: p.log_decrement.as_ref().map(P::from),
            quality_factor: p.quality_factor.as_ref().map(P::from),
            viscous: p.damping[Term::Viscous.index()].as_ref().map(P::from),
            coulomb: p.damping[Term::Coulomb.index()].as_ref().map(P::from),
            quadratic: p.damping[Term::Quadratic.index()].as_ref().map(P::from),
            presliding: p.damping[Term::Presliding.index()].as_ref().map(P::from),
            stribeck: p.damping[Term::Stribeck.index()].as_ref().map(P::from),
            stribeck_velocity: p.damping[Term::StribeckVelocity.index()].as_ref().map(P::from),
        }),
        gravity: physical.map(|p| Gravity {
            value: p.gravity.value,
            std: p.gravity.u,
            source: p.gravity.describe(),
        }),
        runs: fit
            .runs
            .iter()
            .map(|r| Run {
                file: r.source.clone(),
                samples: r.samples,
                equilibrium: P::from(&r.equilibrium),
                initial_angle: P::from(&r.initial_angle),
                initial_velocity: P::from(&r.initial_velocity),
                rms_residual: r.rms_residual,
                noise_floor: r.noise_floor,
                ljung_box_p: r.ljung_box_p,
            })
            .collect(),
        fit: FitStats {
            converged: true,
            iterations: fit.iterations,
            iterations_total: fit.iterations_total,
            rss: fit.rss,
            dof: fit.dof,
            samples: fit.n_obs,
            convergence: format!("{:?}", fit.convergence).to_lowercase(),
            condition_number: fit.condition,
            interval_method: crate::report::table::interval_method_text(&fit.interval_method),
            t95: fit.t95,
        },
        correlation: Correlation {
            names: fit.names.clone(),
            matrix: (0..fit.correlation.nrows())
                .map(|i| fit.correlation.row(i).iter().copied().collect())
                .collect(),
        },
        vector: Vector {
            fitted: fit.x.iter().copied().collect(),
            start: fit.start.iter().copied().collect(),
        },
        flags: fit.flags.clone(),
        budget: physical.map(|p| p.budgets.iter().map(budget_doc).collect()).unwrap_or_default(),
        adequacy: adequacy_doc(&fit.adequacy),
        damping_choice: None,
        inputs: None,
    }
}
