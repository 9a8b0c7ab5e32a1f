//! The fit document `swingfit.fit.v1` (`fit --json`, embedded in the sheet): coefficients with
//! their uncertainties, per run, fit statistics, correlations, the GUM budget and the adequacy
//! verdict. Built from a `FitOutcome` by [`fit_doc`]; read back by `serde` (and, in part, by
//! [`super::params`]).
//!
//! ## Wire format `swingfit.fit.v2`
//! ```text
//! { "schema": "swingfit.fit.v2",
//!   "damping": ["viscous", "coulomb"],            fitted terms, canonical order
//!   "normalized": { "omega_n": E, "viscous": E, "coulomb": E, "quadratic": E, "presliding": E },
//!   "physical":   { "inertia_pivot": X, "inertia_cg": X, "radius_gyration_pivot": X, …,
//!                   "viscous": X, "coulomb": X, … },            only with mass and pivot-to-CG
//!   "gravity": { "value": g, "std": u, "source": "…" },           only with `physical`
//!   "runs": [ { "file", "samples", "equilibrium": E, "initial_angle": E, "initial_velocity": E,
//!               "rms_residual", "noise_floor", "ljung_box_p" } ],
//!   "fit": { … }, "correlation": { "names", "matrix" }, "vector": { "fitted", "start" },
//!   "flags": ["…"], "budget": [ … ], "adequacy": { … }, "damping_choice": "…",
//!   "inputs": { "mass": I, "pivot_to_cg": I, "gravity": I } }
//! E = { "value", "std", "ci95": [lo, hi], "unit" }                        (`Estimated`)
//! X = { "value", "std", "expanded", "coverage_factor", "unit" }           (`Expanded`, U = k·u_c)
//! ```
//! Every key, with its unit, is in docs/schemas.md. Terms not fitted are absent. v1 wrote the
//! physical values as `{ "value", "std", "ci95", "unit", "expanded_k2" }`, with a `ci95` that
//! was value ± U; [`super::params`] still reads v1 files.

use serde::{Deserialize, Serialize};

use crate::fit::{Estimate, FitOutcome};
use crate::model::Term;
use crate::physical::PhysicalCoefficients;

/// Schema tag of the fit JSON.
pub const FIT_SCHEMA: &str = "swingfit.fit.v2";

/// The previous fit schema, still read by [`super::params`] (`physical` values carried `ci95`
/// and `expanded_k2` where v2 has `expanded` and `coverage_factor`).
pub const FIT_SCHEMA_V1: &str = "swingfit.fit.v1";

/// A fitted value with its standard uncertainty and its 95 % interval (the fit's coverage
/// factor `t95`, or the bootstrap's percentiles): every per-unit-inertia and per-run value.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Estimated {
    /// Best estimate.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Standard uncertainty.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// 95 % interval [lo, hi].
    pub ci95: [f64; 2],
    /// SI unit.
    pub unit: String,
}

impl From<&Estimate> for Estimated {
    fn from(e: &Estimate) -> Estimated {
        Estimated {
            value: e.value,
            std: e.std,
            ci95: [e.ci95.0, e.ci95.1],
            unit: e.unit.to_string(),
        }
    }
}

/// A physical value with its GUM combined standard uncertainty and its expanded uncertainty
/// U = k·u_c (k = 2; the interval is value ± U): every value of the `physical` block.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Expanded {
    /// Best estimate.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Combined standard uncertainty u_c.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// Expanded uncertainty U = k·u_c.
    #[serde(deserialize_with = "super::real")]
    pub expanded: f64,
    /// Coverage factor k.
    pub coverage_factor: f64,
    /// SI unit.
    pub unit: String,
}

impl From<&crate::physical::Quantity> for Expanded {
    fn from(q: &crate::physical::Quantity) -> Expanded {
        Expanded {
            value: q.value,
            std: q.u_c,
            expanded: q.expanded,
            coverage_factor: q.k,
            unit: q.unit.to_string(),
        }
    }
}

/// The coefficients per unit inertia, as the free decay identifies them.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Normalized {
    /// Natural frequency ωn (small amplitude) [rad/s].
    pub omega_n: Estimated,
    /// Viscous b1 = c/J [1/s].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub viscous: Option<Estimated>,
    /// Coulomb b0 = τc/J [rad/s²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coulomb: Option<Estimated>,
    /// Quadratic b2 = cq/J [1/rad].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quadratic: Option<Estimated>,
    /// Pre-sliding stiffness σ of the Coulomb friction [1/s²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub presliding: Option<Estimated>,
    /// Stribeck excess bs of the friction at rest over b0 [rad/s²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck: Option<Estimated>,
    /// Stribeck velocity vs [rad/s].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck_velocity: Option<Estimated>,
}

/// The physical coefficients, with the stated mass, pivot-to-CG distance and gravity.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Physical {
    /// J about the pivot [kg·m²].
    pub inertia_pivot: Expanded,
    /// Jcg = J − m d² about the centre of gravity [kg·m²].
    pub inertia_cg: Expanded,
    /// Radius of gyration about the pivot √(J/m) [m].
    pub radius_gyration_pivot: Expanded,
    /// Radius of gyration about the CG √(Jcg/m) [m] (absent when J_cg comes out negative: d or m inconsistent with the fit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub radius_gyration_cg: Option<Expanded>,
    /// Small-amplitude period T0 [s].
    pub period: Expanded,
    /// Viscous damping ratio ζ = b1/(2ωn) [1].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub damping_ratio: Option<Expanded>,
    /// Logarithmic decrement of the viscous term [1].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub log_decrement: Option<Expanded>,
    /// Quality factor 1/(2ζ) [1].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quality_factor: Option<Expanded>,
    /// Equivalent simple-pendulum length J/(m d) [m].
    pub equivalent_length: Expanded,
    /// Viscous c [N·m·s/rad].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub viscous: Option<Expanded>,
    /// Coulomb friction torque τc [N·m].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coulomb: Option<Expanded>,
    /// Quadratic cq [N·m·s²/rad²].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quadratic: Option<Expanded>,
    /// k = σ·J, pre-sliding stiffness of the pivot friction [N·m/rad].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub presliding: Option<Expanded>,
    /// τs − τc = bs·J, Stribeck excess torque [N·m].
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck: Option<Expanded>,
    /// Stribeck velocity vs [rad/s] (not scaled by J).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stribeck_velocity: Option<Expanded>,
}

impl Normalized {
    /// The block's value of a damping term, if fitted.
    pub fn term(&self, t: Term) -> Option<&Estimated> {
        match t {
            Term::Viscous => self.viscous.as_ref(),
            Term::Coulomb => self.coulomb.as_ref(),
            Term::Quadratic => self.quadratic.as_ref(),
            Term::Presliding => self.presliding.as_ref(),
            Term::Stribeck => self.stribeck.as_ref(),
            Term::StribeckVelocity => self.stribeck_velocity.as_ref(),
        }
    }
}

impl Physical {
    /// The block's value of a damping term, if fitted.
    pub fn term(&self, t: Term) -> Option<&Expanded> {
        match t {
            Term::Viscous => self.viscous.as_ref(),
            Term::Coulomb => self.coulomb.as_ref(),
            Term::Quadratic => self.quadratic.as_ref(),
            Term::Presliding => self.presliding.as_ref(),
            Term::Stribeck => self.stribeck.as_ref(),
            Term::StribeckVelocity => self.stribeck_velocity.as_ref(),
        }
    }
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
    pub equilibrium: Estimated,
    /// θ at the first sample.
    pub initial_angle: Estimated,
    /// ω at the first sample.
    pub initial_velocity: Estimated,
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
    /// `swingfit.fit.v2`.
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

/// The `physical` block of the physical coefficients.
pub fn physical_doc(p: &PhysicalCoefficients) -> Physical {
    let damping = |t: Term| p.damping[t.index()].as_ref().map(Expanded::from);
    Physical {
        inertia_pivot: Expanded::from(&p.inertia_pivot),
        inertia_cg: Expanded::from(&p.inertia_cg),
        radius_gyration_pivot: Expanded::from(&p.gyration_pivot),
        radius_gyration_cg: p.gyration_cg.as_ref().map(Expanded::from),
        equivalent_length: Expanded::from(&p.equivalent_length),
        period: Expanded::from(&p.period),
        damping_ratio: p.damping_ratio.as_ref().map(Expanded::from),
        log_decrement: p.log_decrement.as_ref().map(Expanded::from),
        quality_factor: p.quality_factor.as_ref().map(Expanded::from),
        viscous: damping(Term::Viscous),
        coulomb: damping(Term::Coulomb),
        quadratic: damping(Term::Quadratic),
        presliding: damping(Term::Presliding),
        stribeck: damping(Term::Stribeck),
        stribeck_velocity: damping(Term::StribeckVelocity),
    }
}

/// Build the wire document of a fit.
pub fn fit_doc(fit: &FitOutcome, physical: Option<&PhysicalCoefficients>) -> FitDoc {
    let term = |t: Term| fit.term(t).map(Estimated::from);
    FitDoc {
        schema: FIT_SCHEMA.into(),
        damping: super::names(fit.damping),
        normalized: Normalized {
            omega_n: Estimated::from(&fit.omega_n),
            viscous: term(Term::Viscous),
            coulomb: term(Term::Coulomb),
            quadratic: term(Term::Quadratic),
            presliding: term(Term::Presliding),
            stribeck: term(Term::Stribeck),
            stribeck_velocity: term(Term::StribeckVelocity),
        },
        physical: physical.map(physical_doc),
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
                equilibrium: Estimated::from(&r.equilibrium),
                initial_angle: Estimated::from(&r.initial_angle),
                initial_velocity: Estimated::from(&r.initial_velocity),
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
