//! Test planning: the uncertainties a free-decay test will give, predicted before it is run.
//!
//! A plan is the expected dynamics (per unit inertia, as `simulate` takes them) and a design:
//! release angles, record length (or "until rest"), sample rate, sensor noise and encoder
//! resolution. The prediction is the inverse Fisher information of the estimator's own
//! output-error model over the design's sample times: the noise-free trajectory of each release
//! is integrated with the forward sensitivities the estimator uses
//! ([`crate::fit::problem::TrajectoryProblem`], whose normal equations JᵀWJ are exactly the
//! Fisher information times σ² for independent errors of variance σ²), so the predicted
//! covariance is σ²(JᵀWJ)⁻¹ over every fitted parameter — the physics (ωn and the chosen damping
//! terms) and each release's nuisance parameters (θeq, θ0, ω0), which are estimated too and cost
//! information. No Monte-Carlo is needed to predict; a test checks the prediction against the
//! scatter of real fits of simulated logs.
//!
//! Encoder quantisation is treated the way the estimator treats it:
//! - its error is counted as uniform noise of variance q²/12 (q = 2π/counts per revolution)
//!   added to the sensor noise variance, σ² = σ_n² + q²/12. This is only honest where the swing
//!   spans many steps per sample, which the next rule ensures;
//! - the record is fitted only up to the first half-cycle peak smaller than
//!   [`crate::fit::RESOLVED_STEPS`] steps ([`crate::fit::resolved_end`]), so the prediction
//!   uses the same samples the fit will;
//! - when the sensor noise is below a quarter step (too little to dither the readings), runs of
//!   identical readings of the noise-free quantised trajectory get weight 1/L, as
//!   [`crate::fit::problem::repeat_weights`] gives them in the fit.
//!
//! [`search`] finds the least test effort that meets target uncertainties.

pub mod search;

use nalgebra::{DMatrix, DVector};

use crate::fit::lm::LeastSquares;
use crate::fit::problem::{Layout, RunData, TrajectoryProblem, repeat_weights};
use crate::fit::{RESOLVED_STEPS, uncertainty};
use crate::integrate::{self, Event, Method};
use crate::model::{DampingSet, Physics, Release, Term};
use crate::physical::{self, ArticleInputs, FittedDynamics, PhysicalCoefficients};

/// Longest record "until rest" may reach [s].
pub const MAX_RECORD_S: f64 = 3600.0;
/// Most samples a planned record may have (per release).
pub const MAX_SAMPLES: usize = 2_000_000;
/// Fewest samples per small-amplitude period a design may take.
pub const MIN_SAMPLES_PER_PERIOD: f64 = 8.0;

/// How long each release is recorded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Record {
    /// A fixed length [s] from the release.
    Seconds(f64),
    /// Until the article comes to rest: the stick of Coulomb friction, or the swing falling
    /// below the noise (2σ) or, with an encoder, below the resolved swing of
    /// [`RESOLVED_STEPS`] steps; at most [`MAX_RECORD_S`].
    UntilRest,
}

/// A test design.
#[derive(Clone, Debug, PartialEq)]
pub struct Design {
    /// Release angles from the hanging position [rad], each released from rest.
    pub releases: Vec<f64>,
    /// Record length of every release.
    pub record: Record,
    /// Sample rate [Hz].
    pub rate_hz: f64,
    /// Sensor noise, standard deviation [rad].
    pub noise_rad: f64,
    /// Encoder counts per revolution (counting edges), when the angle comes from an encoder.
    pub counts_per_rev: Option<f64>,
}

impl Design {
    /// Encoder step q = 2π/N [rad], when an encoder is used.
    pub fn step(&self) -> Option<f64> {
        self.counts_per_rev.map(|n| std::f64::consts::TAU / n)
    }

    /// Effective noise variance σ² = σ_n² + q²/12 [rad²].
    pub fn variance(&self) -> f64 {
        self.noise_rad * self.noise_rad + self.step().map_or(0.0, |q| q * q / 12.0)
    }
}

/// What to predict: the expected dynamics, the terms to fit, the design, and optionally the
/// article's mass data for physical values.
#[derive(Clone, Debug, PartialEq)]
pub struct Plan {
    /// Expected dynamics per unit inertia.
    pub physics: Physics,
    /// Terms the fit will have.
    pub damping: DampingSet,
    /// The design.
    pub design: Design,
    /// Mass, pivot-to-CG and gravity with their uncertainties.
    pub article: Option<ArticleInputs>,
}

/// Why a plan cannot be predicted; each message says what to change.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// No release angle given.
    #[error("no release angle: give at least one release angle")]
    NoRelease,
    /// A release angle outside (0°, 180°).
    #[error(
        "release angle {deg} deg is impossible: give release angles above 0 and below 180 deg from the hanging position"
    )]
    ReleaseAngle {
        /// The angle [deg].
        deg: f64,
    },
    /// Record shorter than one period.
    #[error(
        "a record of {record_s} s is shorter than one period ({period_s:.4} s): record at least one period, better many"
    )]
    RecordTooShort {
        /// Record [s].
        record_s: f64,
        /// Small-amplitude period [s].
        period_s: f64,
    },
    /// Sample rate too low for the period.
    #[error(
        "sample rate {rate_hz} Hz gives {per_period:.2} samples per period: sample at least {min} times per period ({need:.3} Hz)"
    )]
    RateTooLow {
        /// Rate [Hz].
        rate_hz: f64,
        /// Samples per period.
        per_period: f64,
        /// Minimum per period.
        min: f64,
        /// Rate needed [Hz].
        need: f64,
    },
    /// Neither noise nor encoder: the prediction would be zero.
    #[error(
        "sensor noise is zero and no encoder is given: a perfect sensor has no uncertainty to predict; give the sensor noise (deg) or the encoder's counts per revolution"
    )]
    NoNoise,
    /// A value of the design is not a finite positive number.
    #[error("{field}: expected {expected}, found {value}")]
    Input {
        /// Which value.
        field: &'static str,
        /// What was expected.
        expected: &'static str,
        /// Found.
        value: f64,
    },
    /// A term to fit has no expected magnitude.
    #[error(
        "the {term} coefficient's uncertainty cannot be predicted without an expected magnitude: give its expected value (--{term} VALUE, or in the params file), or leave {term} out of the damping set"
    )]
    NoMagnitude {
        /// The term.
        term: Term,
    },
    /// The expected dynamics are not physical.
    #[error("expected dynamics: {0}")]
    Physics(String),
    /// Too many samples.
    #[error(
        "{samples} samples per release is more than {max}: lower the rate or shorten the record"
    )]
    TooManySamples {
        /// Samples.
        samples: usize,
        /// Limit.
        max: usize,
    },
    /// The encoder cut leaves too little to fit.
    #[error(
        "release {angle_deg} deg: the swing is below {steps} encoder steps after {fitted:.3} s, leaving {samples} samples to fit: release higher or use a finer encoder"
    )]
    Unresolved {
        /// Release [deg].
        angle_deg: f64,
        /// RESOLVED_STEPS.
        steps: f64,
        /// Fitted span [s].
        fitted: f64,
        /// Samples left.
        samples: usize,
    },
    /// The design gives singular normal equations.
    #[error(
        "this design cannot determine the parameters ({detail}): add a release at a clearly different angle, record longer, or fit fewer terms"
    )]
    Singular {
        /// Detail.
        detail: String,
    },
    /// Integration failed.
    #[error("integration of the expected swing failed: {0}")]
    Integrate(String),
}

/// One release as the fit will see it.
#[derive(Clone, Debug, PartialEq)]
pub struct RunPlan {
    /// Release angle [rad].
    pub angle: f64,
    /// Recorded span [s].
    pub record_s: f64,
    /// Span the fit uses [s] (shorter with an encoder, see the module doc).
    pub fitted_s: f64,
    /// Samples recorded.
    pub samples: usize,
    /// Samples fitted.
    pub fitted_samples: usize,
    /// Independent observations among them (sum of the weights).
    pub independent: f64,
    /// Whether the article sticks (Coulomb friction) within the record.
    pub sticks: bool,
}

/// A predicted per-unit-inertia parameter.
#[derive(Clone, Debug, PartialEq)]
pub struct Predicted {
    /// Machine name (`omega_n`, `viscous`, …).
    pub key: &'static str,
    /// Expected value.
    pub value: f64,
    /// Predicted standard uncertainty.
    pub std: f64,
    /// std / |value|.
    pub relative: f64,
    /// SI unit.
    pub unit: &'static str,
}

/// A pair of parameters the design cannot separate.
#[derive(Clone, Debug, PartialEq)]
pub struct Inseparable {
    /// First parameter.
    pub a: &'static str,
    /// Second parameter.
    pub b: &'static str,
    /// Predicted correlation.
    pub r: f64,
}

/// The prediction of a plan.
#[derive(Clone, Debug, PartialEq)]
pub struct Prediction {
    /// Fitted terms.
    pub damping: DampingSet,
    /// Effective noise standard deviation σ = √(σ_n² + q²/12) [rad].
    pub sigma_rad: f64,
    /// Quantisation part q/√12 [rad] (0 without an encoder).
    pub quantisation_rad: f64,
    /// ωn and each fitted term, in layout order.
    pub coefficients: Vec<Predicted>,
    /// Predicted covariance of (ωn, fitted terms).
    pub covariance: DMatrix<f64>,
    /// Its correlation matrix.
    pub correlation: DMatrix<f64>,
    /// Condition number of the scaled normal equations.
    pub condition: f64,
    /// Each release.
    pub runs: Vec<RunPlan>,
    /// Pairs with |r| above [`uncertainty::CORRELATION_LIMIT`].
    pub inseparable: Vec<Inseparable>,
    /// Terms whose predicted 95 % half-width (1.96 u) exceeds their value.
    pub unresolved: Vec<Term>,
    /// Physical values with their predicted GUM uncertainties (with mass data).
    pub physical: Option<PhysicalCoefficients>,
}

impl Prediction {
    /// The prediction of `key` (`omega_n` or a term name).
    pub fn get(&self, key: &str) -> Option<&Predicted> {
        self.coefficients.iter().find(|c| c.key == key)
    }
}

fn positive(field: &'static str, expected: &'static str, v: f64) -> Result<(), PlanError> {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        Err(PlanError::Input { field, expected, value: v })
    }
}

/// Check a plan before any integration: every refusal says what to change.
pub fn validate(plan: &Plan) -> Result<(), PlanError> {
    plan.physics.validate().map_err(PlanError::Physics)?;
    for t in plan.damping.iter() {
        if plan.physics.coef(t) <= 0.0 {
            return Err(PlanError::NoMagnitude { term: t });
        }
    }
    let d = &plan.design;
    if d.releases.is_empty() {
        return Err(PlanError::NoRelease);
    }
    for &a in &d.releases {
        if !(a.is_finite() && a > 0.0 && a < std::f64::consts::PI) {
            return Err(PlanError::ReleaseAngle { deg: a.to_degrees() });
        }
    }
    positive("sample rate", "a positive rate in Hz", d.rate_hz)?;
    if !(d.noise_rad.is_finite() && d.noise_rad >= 0.0) {
        return Err(PlanError::Input {
            field: "sensor noise",
            expected: "a non-negative standard deviation",
            value: d.noise_rad,
        });
    }
    if let Some(n) = d.counts_per_rev {
        positive("counts per revolution", "a positive count", n)?;
    }
    if d.variance() <= 0.0 {
        return Err(PlanError::NoNoise);
    }
    let period = std::f64::consts::TAU / plan.physics.omega_n;
    let per_period = d.rate_hz * period;
    if per_period < MIN_SAMPLES_PER_PERIOD {
        return Err(PlanError::RateTooLow {
            rate_hz: d.rate_hz,
            per_period,
            min: MIN_SAMPLES_PER_PERIOD,
            need: MIN_SAMPLES_PER_PERIOD / period,
        });
    }
    if let Record::Seconds(s) = d.record {
        positive("record length", "a positive length in s", s)?;
        if s < period {
            return Err(PlanError::RecordTooShort { record_s: s, period_s: period });
        }
        let n = (s * d.rate_hz).floor() as usize + 1;
        if n > MAX_SAMPLES {
            return Err(PlanError::TooManySamples { samples: n, max: MAX_SAMPLES });
        }
    }
    if let Some(a) = &plan.article {
        physical::check_article(a).map_err(|e| PlanError::Physics(e.to_string()))?;
    }
    Ok(())
}

/// The record length "until rest" of a release from `angle`: the stick time, or the first
/// turning point below `floor`, plus one period; at most [`MAX_RECORD_S`].
fn until_rest(physics: &Physics, angle: f64, floor: f64) -> Result<f64, PlanError> {
    let period = std::f64::consts::TAU / physics.omega_n;
    let dt = period / 16.0;
    let n = (MAX_RECORD_S / dt) as usize + 1;
    let times: Vec<f64> = (0..n).map(|i| i as f64 * dt).collect();
    let release = Release { equilibrium: 0.0, angle, velocity: 0.0 };
    let tr =
        integrate::simulate(physics, &release, &times, Method::Rk4 { max_step: period / 250.0 })
            .map_err(|e| PlanError::Integrate(e.to_string()))?;
    let end = tr.events.iter().find_map(|e| match *e {
        Event::Stick { t, .. } => Some(t),
        Event::Reversal { t, angle } if angle.abs() < floor => Some(t),
        _ => None,
    });
    Ok(end.map_or(MAX_RECORD_S, |t| (t + period).min(MAX_RECORD_S)))
}

/// The sample times, the noise-free angles and the weights the fit will use for one release,
/// and its [`RunPlan`].
struct RunSamples {
    times: Vec<f64>,
    angles: Vec<f64>,
    weights: Vec<f64>,
    plan: RunPlan,
}

fn run_samples(plan: &Plan, angle: f64) -> Result<RunSamples, PlanError> {
    let d = &plan.design;
    let physics = &plan.physics;
    let period = std::f64::consts::TAU / physics.omega_n;
    let q = d.step();
    let record = match d.record {
        Record::Seconds(s) => s,
        Record::UntilRest => {
            let floor = (2.0 * d.variance().sqrt()).max(q.map_or(0.0, |q| RESOLVED_STEPS * q));
            until_rest(physics, angle, floor)?
        }
    };
    let n = (record * d.rate_hz).floor() as usize + 1;
    if n > MAX_SAMPLES {
        return Err(PlanError::TooManySamples { samples: n, max: MAX_SAMPLES });
    }
    let times: Vec<f64> = (0..n).map(|i| i as f64 / d.rate_hz).collect();
    let release = Release { equilibrium: 0.0, angle, velocity: 0.0 };
    let tr =
        integrate::simulate(physics, &release, &times, Method::Rk4 { max_step: period / 250.0 })
            .map_err(|e| PlanError::Integrate(e.to_string()))?;
    let sticks = tr.events.iter().any(|e| matches!(e, Event::Stick { .. }));
    // The estimator's fitted-region rule for encoder logs (fit::resolved_end).
    let mut used = n;
    if let Some(q) = q {
        let limit = RESOLVED_STEPS * q;
        let cut = tr.events.iter().find_map(|e| match *e {
            Event::Reversal { t, angle } if angle.abs() < limit => Some(t),
            Event::Stick { t, angle } if angle.abs() < limit => Some(t),
            _ => None,
        });
        if let Some(t) = cut {
            used = times.partition_point(|s| *s <= t).clamp(crate::data::MIN_SAMPLES.min(n), n);
        }
    }
    let min_fit = crate::data::MIN_SAMPLES.max(2 * MIN_SAMPLES_PER_PERIOD as usize);
    if used < min_fit || times[used - 1] < period {
        return Err(PlanError::Unresolved {
            angle_deg: angle.to_degrees(),
            steps: RESOLVED_STEPS,
            fitted: times[used - 1],
            samples: used,
        });
    }
    let angles = tr.angle[..used].to_vec();
    let weights = match q {
        Some(q) if d.noise_rad < 0.25 * q => {
            let readings: Vec<f64> = angles.iter().map(|a| (a / q).round() * q).collect();
            repeat_weights(&readings)
        }
        _ => vec![1.0; used],
    };
    let independent = weights.iter().sum();
    Ok(RunSamples {
        plan: RunPlan {
            angle,
            record_s: times[n - 1],
            fitted_s: times[used - 1],
            samples: n,
            fitted_samples: used,
            independent,
            sticks,
        },
        times: times[..used].to_vec(),
        angles,
        weights,
    })
}

/// Predict the uncertainties of `plan`.
pub fn predict(plan: &Plan) -> Result<Prediction, PlanError> {
    validate(plan)?;
    let period = std::f64::consts::TAU / plan.physics.omega_n;
    let runs: Vec<RunSamples> =
        plan.design.releases.iter().map(|&a| run_samples(plan, a)).collect::<Result<_, _>>()?;
    let layout = Layout { damping: plan.damping, n_runs: runs.len() };
    let problem = TrajectoryProblem {
        layout,
        runs: runs
            .iter()
            .map(|r| RunData {
                times: &r.times,
                angles: &r.angles,
                weights: &r.weights,
                max_step: period / 250.0,
            })
            .collect(),
    };
    let releases: Vec<Release> = runs
        .iter()
        .map(|r| Release { equilibrium: 0.0, angle: r.plan.angle, velocity: 0.0 })
        .collect();
    let x: DVector<f64> = layout.pack(&plan.physics, &releases);
    let lin = problem.linearize(&x).map_err(PlanError::Integrate)?;
    let (inv, condition) = uncertainty::scaled_inverse(&lin.jtj)
        .map_err(|e| PlanError::Singular { detail: e.to_string() })?;
    let variance = plan.design.variance();
    let k = layout.n_physics();
    let cov = inv.view((0, 0), (k, k)).into_owned() * variance;
    let std: Vec<f64> = (0..k).map(|i| cov[(i, i)].max(0.0).sqrt()).collect();
    let correlation = DMatrix::from_fn(k, k, |i, j| {
        if i == j {
            1.0
        } else if std[i] > 0.0 && std[j] > 0.0 {
            (cov[(i, j)] / (std[i] * std[j])).clamp(-1.0, 1.0)
        } else {
            0.0
        }
    });
    let keys: Vec<&'static str> =
        std::iter::once("omega_n").chain(plan.damping.iter().map(Term::name)).collect();
    let units: Vec<&'static str> =
        std::iter::once("rad/s").chain(plan.damping.iter().map(Term::normalized_unit)).collect();
    let values: Vec<f64> = std::iter::once(plan.physics.omega_n)
        .chain(plan.damping.iter().map(|t| plan.physics.coef(t)))
        .collect();
    let coefficients: Vec<Predicted> = (0..k)
        .map(|i| Predicted {
            key: keys[i],
            value: values[i],
            std: std[i],
            relative: std[i] / values[i].abs(),
            unit: units[i],
        })
        .collect();
    let mut inseparable = Vec::new();
    for i in 0..k {
        for j in i + 1..k {
            if correlation[(i, j)].abs() > uncertainty::CORRELATION_LIMIT {
                inseparable.push(Inseparable { a: keys[i], b: keys[j], r: correlation[(i, j)] });
            }
        }
    }
    let unresolved: Vec<Term> = plan
        .damping
        .iter()
        .enumerate()
        .filter(|(i, _)| 1.96 * coefficients[1 + i].relative > 1.0)
        .map(|(_, t)| t)
        .collect();
    let physical = match &plan.article {
        Some(a) => Some(
            physical::physical_coefficients(
                a,
                &FittedDynamics {
                    omega_n: plan.physics.omega_n,
                    terms: plan.damping,
                    damping: plan.physics.damping,
                    cov: cov.clone(),
                },
            )
            .map_err(|e| PlanError::Physics(e.to_string()))?,
        ),
        None => None,
    };
    Ok(Prediction {
        damping: plan.damping,
        sigma_rad: variance.sqrt(),
        quantisation_rad: plan.design.step().map_or(0.0, |q| q / 12f64.sqrt()),
        coefficients,
        covariance: cov,
        correlation,
        condition,
        runs: runs.into_iter().map(|r| r.plan).collect(),
        inseparable,
        unresolved,
        physical,
    })
}
