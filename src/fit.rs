//! The estimator: fit free-decay logs of one article and report coefficients with intervals.
//!
//! Output-error least squares on the trajectory: the shared physics (ωn and the per-unit-inertia
//! coefficient of each chosen damping term) and, per run, the equilibrium angle, the angle and
//! the velocity at the first sample. Several logs of one article are fitted jointly.
//!
//! The fit proceeds by continuation: start values from the survey ([`start`]), a fit of the
//! first few cycles, then of a window three times as long, and so on to the whole record, so a
//! long log cannot slip a cycle into a false minimum. The last stage is the fit; its normal
//! equations give the covariance ([`uncertainty`]).
//!
//! A fit that does not converge, ends with a damping term pinned at zero, or has singular normal
//! equations is returned as a [`FitError`] with its diagnosis; no coefficients escape from it.

pub mod adequacy;
pub mod bootstrap;
pub mod compare;
pub mod lm;
pub mod problem;
pub mod robust;
pub mod start;
pub mod uncertainty;
pub mod workflow;

use nalgebra::{DMatrix, DVector};

use crate::data::AngleLog;
use crate::data::survey::{Survey, survey};
use crate::model::{DampingSet, Physics, Release, Term};
use crate::stats;
use lm::{Convergence, LmError, LmSettings};
use problem::{Layout, RunData, TrajectoryProblem};

/// The default damping set: viscous plus Coulomb, the two mechanisms nearly every pivot shows
/// (bearing or knife-edge losses and dry friction); `compare` tells when air drag matters.
pub fn default_damping() -> DampingSet {
    DampingSet::from_terms(&[Term::Viscous, Term::Coulomb])
}

/// How to fit.
#[derive(Clone, Debug, PartialEq)]
pub struct FitOptions {
    /// The damping terms to fit.
    pub damping: DampingSet,
    /// Moving-block bootstrap replicates for the intervals (`None`: analytic intervals).
    pub bootstrap: Option<usize>,
    /// Seed of the bootstrap.
    pub seed: u64,
    /// Most optimiser iterations per continuation stage.
    pub max_iter: usize,
}

impl Default for FitOptions {
    fn default() -> FitOptions {
        FitOptions { damping: default_damping(), bootstrap: None, seed: 1, max_iter: 200 }
    }
}

/// A fitted value with its uncertainty.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    /// Best estimate.
    pub value: f64,
    /// Standard uncertainty (after any widening).
    pub std: f64,
    /// 95 % interval.
    pub ci95: (f64, f64),
    /// SI unit.
    pub unit: &'static str,
}

/// The fitted release of one run and how well the model follows it.
#[derive(Clone, Debug, PartialEq)]
pub struct RunFit {
    /// The log's source.
    pub source: String,
    /// Samples fitted.
    pub samples: usize,
    /// Equilibrium angle [rad].
    pub equilibrium: Estimate,
    /// Angle at the first sample [rad].
    pub initial_angle: Estimate,
    /// Velocity at the first sample [rad/s].
    pub initial_velocity: Estimate,
    /// RMS of model − measured [rad].
    pub rms_residual: f64,
    /// Noise floor of the log from the survey [rad].
    pub noise_floor: f64,
    /// Ljung–Box p-value of this run's residuals.
    pub ljung_box_p: f64,
    /// Residuals model − measured [rad], one per sample.
    pub residuals: Vec<f64>,
    /// The model's angle at every sample [rad].
    pub model_angle: Vec<f64>,
    /// The model's angular velocity at every sample [rad/s].
    pub model_velocity: Vec<f64>,
}

/// A converged, accepted fit.
#[derive(Clone, Debug, PartialEq)]
pub struct FitOutcome {
    /// The fitted damping set.
    pub damping: DampingSet,
    /// Best-estimate physics (terms not fitted are zero).
    pub physics: Physics,
    /// ωn [rad/s].
    pub omega_n: Estimate,
    /// Each fitted term's per-unit-inertia coefficient, in canonical order.
    pub terms: Vec<(Term, Estimate)>,
    /// Per run.
    pub runs: Vec<RunFit>,
    /// Parameter names in vector order (see [`problem::Layout::names`]).
    pub names: Vec<String>,
    /// Parameter vector at the minimum.
    pub x: DVector<f64>,
    /// Start vector of the first continuation stage (from the survey, or from a warm start).
    pub start: DVector<f64>,
    /// Covariance of the parameter vector (after any widening).
    pub covariance: DMatrix<f64>,
    /// Correlation matrix.
    pub correlation: DMatrix<f64>,
    /// Condition number of the scaled normal equations.
    pub condition: f64,
    /// Iterations in the final stage (and in all stages).
    pub iterations: usize,
    /// Iterations over all continuation stages.
    pub iterations_total: usize,
    /// Weighted residual sum of squares [rad²] (see problem::repeat_weights).
    pub rss: f64,
    /// Observations.
    pub n_obs: usize,
    /// Independent observations (repeated identical readings count once).
    pub n_independent: usize,
    /// Degrees of freedom: independent observations − p.
    pub dof: usize,
    /// Which criterion ended the final stage.
    pub convergence: Convergence,
    /// How the intervals were obtained.
    pub interval_method: uncertainty::IntervalMethod,
    /// Coverage factor of the 95 % intervals (Student-t quantile t_{0.975, dof}).
    pub t95: f64,
    /// Degrees of freedom of that quantile.
    pub interval_dof: f64,
    /// Warnings in words: the notes, then unidentified terms.
    pub flags: Vec<String>,
    /// Notes about the data used (samples left out, bootstrap refits that failed).
    pub notes: Vec<String>,
    /// Whether the model explains the log, with the figures behind the verdict.
    pub adequacy: adequacy::AdequacyReport,
}

impl FitOutcome {
    /// The estimate of term `t`, when fitted.
    pub fn term(&self, t: Term) -> Option<&Estimate> {
        self.terms.iter().find(|(u, _)| *u == t).map(|(_, e)| e)
    }

    /// Overall RMS residual over every run [rad].
    pub fn rms_residual(&self) -> f64 {
        (self.rss / self.n_independent.max(1) as f64).sqrt()
    }

    /// The fitted dynamics and their covariance, as the physical propagation takes them.
    pub fn dynamics(&self) -> crate::physical::FittedDynamics {
        crate::physical::FittedDynamics {
            omega_n: self.physics.omega_n,
            terms: self.damping,
            damping: self.physics.damping,
            cov: self.physics_covariance(),
        }
    }

    /// Covariance of the shared physics block [ωn, fitted terms…].
    pub fn physics_covariance(&self) -> DMatrix<f64> {
        let k = 1 + self.damping.len();
        self.covariance.view((0, 0), (k, k)).into_owned()
    }
}

/// Why a fit was rejected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FitError {
    /// No logs, or conflicting settings.
    #[error("{0}")]
    Setup(String),
    /// No start values could be found.
    #[error(
        "{log}: no start values: {reason}; the log needs at least two full swings about a clear equilibrium"
    )]
    NoStart {
        /// Log(s) at fault.
        log: String,
        /// Why.
        reason: String,
    },
    /// The optimiser did not converge.
    #[error(
        "fit did not converge with damping {damping}: {reason}; check the log with `swingfit check`, or try another --damping set (`swingfit compare` tries them all)"
    )]
    NotConverged {
        /// Damping set.
        damping: DampingSet,
        /// Detail.
        reason: String,
    },
    /// A damping coefficient ended on its bound of zero.
    #[error(
        "fit rejected: the {term} coefficient is pinned at zero: these data show no {term} damping{}; fit without {term}, or give no --damping and let the comparison choose",
        limit.map(|l| format!(", and would have shown a coefficient above {l:.1e} {}", term.normalized_unit())).unwrap_or_else(|| ", but they are too weak to bound it (the term may still be present)".into())
    )]
    AtBound {
        /// The term at its bound.
        term: Term,
        /// Detection limit: 2 standard errors of the coefficient at the bound, when the normal
        /// equations there give one. A small limit says the term is absent; none, lack of power.
        limit: Option<f64>,
    },
    /// The automatic damping choice found no candidate set that could be fitted.
    #[error("no damping set could be fitted: {reasons}")]
    NoCandidate {
        /// Each candidate's reason.
        reasons: String,
    },
    /// The normal equations are singular.
    #[error(
        "fit rejected: singular normal equations with damping {damping}: {detail}; fit fewer terms, or add a release at a clearly different amplitude"
    )]
    Singular {
        /// Damping set.
        damping: DampingSet,
        /// Detail.
        detail: String,
    },
}

/// Fit `logs` jointly with `options`.
pub fn fit(logs: &[AngleLog], options: &FitOptions) -> Result<FitOutcome, FitError> {
    let surveys: Vec<Survey> = logs.iter().map(survey).collect();
    fit_surveyed(logs, &surveys, options, None)
}

/// Fit with the surveys already made and, optionally, a start (physics and releases) from an
/// earlier fit (as `compare` does when it moves from one damping set to the next).
pub fn fit_surveyed(
    logs: &[AngleLog],
    surveys: &[Survey],
    options: &FitOptions,
    warm: Option<(&Physics, &[Release])>,
) -> Result<FitOutcome, FitError> {
    if logs.is_empty() {
        return Err(FitError::Setup("no logs to fit".into()));
    }
    if options.damping.is_empty() {
        return Err(FitError::Setup("the damping set is empty".into()));
    }
    let layout = Layout { damping: options.damping, n_runs: logs.len() };
    let pairs: Vec<(&AngleLog, &Survey)> = logs.iter().zip(surveys).collect();
    let (physics0, releases0): (Physics, Vec<Release>) = match warm {
        Some((p, r)) if r.len() == logs.len() => {
            (seed_terms(p, &pairs, options.damping), r.to_vec())
        }
        _ => {
            let p = start::physics(&pairs, options.damping).map_err(|e| FitError::NoStart {
                log: logs.iter().map(|l| l.source()).collect::<Vec<_>>().join(", "),
                reason: e.0,
            })?;
            (p, pairs.iter().map(|(l, s)| start::release(l, s)).collect())
        }
    };
    let mut x = layout.pack(&physics0, &releases0);
    let start = x.clone();
    let period = 2.0 * std::f64::consts::PI / physics0.omega_n;
    let max_step = period / 250.0;
    // Bounded work on any input: each integration takes about 250 steps per swing, and a fit
    // takes at most `max_iter` iterations per continuation stage.
    let swings =
        logs.iter().map(|l| (l.times()[l.len() - 1] - l.times()[0]) / period).fold(0.0, f64::max);
    if !(swings.is_finite() && swings <= MAX_SWINGS) {
        return Err(FitError::Setup(format!(
            "{}: the record holds {swings:.0} swings of the {period:.3e} s period found, more than the {MAX_SWINGS:.0} one fit integrates in bounded time; fit a window of it (--from/--to) or check the time unit",
            logs.iter().map(|l| l.source()).collect::<Vec<_>>().join(", ")
        )));
    }
    let weights: Vec<Vec<f64>> = logs.iter().map(|l| problem::repeat_weights(l.angles())).collect();
    let ends: Vec<usize> = logs.iter().zip(surveys).map(|(l, s)| resolved_end(l, s)).collect();

    // Continuation: windows growing 3× from each run's start and ending on the whole record,
    // the first between 3 and 9 periods long (…, L/9, L/3, L). Ending the geometric series on
    // the record, rather than starting it at exactly 3 periods, avoids a last window that
    // nearly repeats the whole record (81 then 99 periods cost two full fits; see
    // docs/performance.md) while every step still grows the window at most 3×.
    let longest =
        logs.iter().zip(&ends).map(|(l, &e)| l.times()[e - 1] - l.times()[0]).fold(0.0, f64::max);
    let mut horizon = 3.0 * period;
    if longest > 9.0 * period {
        let stages = (longest / (3.0 * period)).log(3.0).floor();
        horizon = longest / 3f64.powf(stages);
    }
    let mut iterations_total = 0;
    let (lower, upper) = layout.bounds();
    loop {
        // Tolerance: the series L/3^k · 3^k may land a rounding error short of L.
        let last = horizon >= longest * (1.0 - 1e-9);
        let runs: Vec<RunData> = logs
            .iter()
            .zip(&weights)
            .zip(&ends)
            .map(|((l, w), &end)| {
                let t0 = l.times()[0];
                let n = if last {
                    end
                } else {
                    l.times().partition_point(|t| t - t0 <= horizon).max(20).min(end)
                };
                RunData {
                    times: &l.times()[..n],
                    angles: &l.angles()[..n],
                    weights: &w[..n],
                    max_step,
                }
            })
            .collect();
        let problem = TrajectoryProblem { layout, runs };
        let settings = LmSettings {
            lower: lower.clone(),
            upper: upper.clone(),
            max_iter: options.max_iter,
            ..LmSettings::unbounded(layout.n_params())
        };
        let sol = match lm::minimize(&problem, x.clone(), &settings) {
            Ok(s) => s,
            Err(LmError::Singular) => {
                return Err(FitError::Singular {
                    damping: options.damping,
                    detail: "the parameters are not identifiable from these data".into(),
                });
            }
            Err(e) => {
                return Err(FitError::NotConverged {
                    damping: options.damping,
                    reason: e.to_string(),
                });
            }
        };
        iterations_total += sol.iterations;
        x = sol.x.clone();
        if last {
            return finish(logs, surveys, options, layout, &problem, sol, iterations_total, start);
        }
        horizon *= 3.0;
    }
}

/// Most swings (record length over the period) one fit integrates: about 5 million RK4 steps
/// per integration, so that every fit ends in bounded time whatever the input.
pub const MAX_SWINGS: f64 = 20_000.0;

/// A swing smaller than this many encoder steps is not fitted (see [`resolved_end`]).
pub const RESOLVED_STEPS: f64 = 10.0;

/// Number of leading samples of `log` to fit: for an encoder log, the record up to the first
/// half-cycle peak smaller than [`RESOLVED_STEPS`] encoder steps. Below that the quantisation
/// error is a deterministic staircase locked to the motion, not noise, and the last swings and
/// the resting tail bias the damping (measured on simulated encoder logs: docs/estimator.md).
/// Logs in radians or degrees are fitted whole.
pub fn resolved_end(log: &AngleLog, survey: &Survey) -> usize {
    let Some(q) = log.angle_step() else { return log.len() };
    let limit = RESOLVED_STEPS * q;
    match survey.peaks.iter().find(|p| p.deflection.abs() < limit) {
        Some(p) => log
            .times()
            .partition_point(|t| *t <= p.t)
            .clamp(crate::data::MIN_SAMPLES.min(log.len()), log.len()),
        None => log.len(),
    }
}

/// Physics from an earlier fit, with start values for terms it did not have.
fn seed_terms(p: &Physics, pairs: &[(&AngleLog, &Survey)], set: DampingSet) -> Physics {
    let peaks: Vec<&[crate::data::survey::Peak]> =
        pairs.iter().map(|(_, s)| s.peaks.as_slice()).collect();
    let fresh = start::damping(&peaks, p.omega_n, set);
    let mut out = Physics::undamped(p.omega_n);
    for t in set.iter() {
        let old = p.coef(t);
        out.damping[t.index()] = if old > 0.0 { old } else { fresh[t.index()] };
    }
    out
}

#[allow(clippy::too_many_arguments)]
fn finish(
    logs: &[AngleLog],
    surveys: &[Survey],
    options: &FitOptions,
    layout: Layout,
    problem: &TrajectoryProblem,
    sol: lm::LmSolution,
    iterations_total: usize,
    start: DVector<f64>,
) -> Result<FitOutcome, FitError> {
    for &i in &sol.at_bound {
        if i >= 1 && i < layout.n_physics() {
            let term = options.damping.iter().nth(i - 1).unwrap_or(Term::Viscous);
            let n =
                problem.runs.iter().flat_map(|r| r.weights.iter()).sum::<f64>().round() as usize;
            let limit = uncertainty::covariance(&sol.at_min.jtj, sol.at_min.rss, n)
                .ok()
                .map(|c| 2.0 * c.std[i])
                .filter(|l| l.is_finite() && *l > 0.0);
            return Err(FitError::AtBound { term, limit });
        }
    }
    let n_obs = problem.runs.iter().map(|r| r.times.len()).sum::<usize>();
    // Independent observations: runs of repeated readings count once (see problem::repeat_weights).
    let n_eff = problem.runs.iter().flat_map(|r| r.weights.iter()).sum::<f64>().round() as usize;
    let p = layout.n_params();
    if n_eff <= p + 1 {
        return Err(FitError::Setup(format!(
            "{n_eff} independent readings cannot determine {p} parameters"
        )));
    }
    let x = sol.x.clone();
    let trajectories: Vec<_> = (0..logs.len())
        .map(|k| problem.trajectory(&x, k))
        .collect::<Result<_, _>>()
        .map_err(|e| FitError::NotConverged { damping: options.damping, reason: e })?;
    let residuals: Vec<Vec<f64>> = trajectories
        .iter()
        .zip(&problem.runs)
        .map(|(tr, run)| tr.angle.iter().zip(run.angles).map(|(m, y)| m - y).collect())
        .collect();
    let singular = |e: uncertainty::UncertaintyError| FitError::Singular {
        damping: options.damping,
        detail: e.to_string(),
    };
    let cov = uncertainty::covariance(&sol.at_min.jtj, sol.at_min.rss, n_eff).map_err(singular)?;
    let ljung: Vec<Option<stats::LjungBox>> = residuals
        .iter()
        .map(|r| stats::ljung_box(r, stats::ljung_box_lags(r.len()), 0).ok())
        .collect();
    let white = ljung.iter().all(|l| l.as_ref().is_none_or(|l| !l.rejects_white(0.05)));
    let plain = uncertainty::plain_intervals(&x, &cov).map_err(singular)?;
    let intervals = if white {
        plain.clone()
    } else {
        // Correlated residuals: the HAC sandwich, never narrower than the plain interval.
        let bread = cov.cov.clone() / cov.s2.max(1e-300);
        let hac = robust::hac_covariance(problem, &x, &residuals, &bread, n_eff)
            .map_err(|e| FitError::NotConverged { damping: options.damping, reason: e })?;
        let std = DVector::from_fn(p, |i, _| hac.cov[(i, i)].max(0.0).sqrt().max(cov.std[i]));
        let rho1 = ljung.iter().flatten().map(|l| l.rho1).fold(f64::NEG_INFINITY, f64::max);
        let method = uncertainty::IntervalMethod::Hac {
            rho1,
            bandwidth: hac.bandwidth.iter().copied().max().unwrap_or(1),
            dof: hac.dof,
        };
        uncertainty::intervals_from_std(&x, &std, hac.dof, method).map_err(singular)?
    };
    let ljung_box: Vec<f64> =
        ljung.iter().map(|l| l.as_ref().map_or(f64::NAN, |l| l.p_value)).collect();
    let physics = layout.physics(&x);
    let mut notes = Vec::new();
    for (k, run) in problem.runs.iter().enumerate() {
        let log = &logs[k];
        let used = run.times.len();
        if used < log.len() {
            notes.push(format!(
                "{}: the last {:.1} s ({} samples), where the swing is below {} encoder steps of {:.3e} rad, is not fitted: there the quantisation error is locked to the motion and is not noise",
                log.source(),
                log.times()[log.len() - 1] - run.times[used - 1],
                log.len() - used,
                RESOLVED_STEPS,
                log.angle_step().unwrap_or(0.0)
            ));
        }
    }
    let blank = Estimate { value: 0.0, std: 0.0, ci95: (0.0, 0.0), unit: "" };
    let runs: Vec<RunFit> = (0..logs.len())
        .map(|k| {
            let r = &residuals[k];
            let rms = (r.iter().map(|v| v * v).sum::<f64>() / r.len() as f64).sqrt();
            RunFit {
                source: logs[k].source().to_string(),
                samples: r.len(),
                equilibrium: blank.clone(),
                initial_angle: blank.clone(),
                initial_velocity: blank.clone(),
                rms_residual: rms,
                noise_floor: surveys[k].noise_rad,
                ljung_box_p: ljung_box[k],
                residuals: r.clone(),
                model_angle: trajectories[k].angle.clone(),
                model_velocity: trajectories[k].velocity.clone(),
            }
        })
        .collect();
    let inputs: Vec<adequacy::RunInput<'_>> = runs
        .iter()
        .enumerate()
        .map(|(k, r)| adequacy::RunInput {
            times: problem.runs[k].times,
            residuals: &r.residuals,
            model_angle: &r.model_angle,
            model_velocity: &r.model_velocity,
            equilibrium: x[layout.run_offset(k)],
            whiteness_p: r.ljung_box_p,
            survey: &surveys[k],
        })
        .collect();
    let adequacy = adequacy::assess(x[0], &inputs);
    let mut out = FitOutcome {
        damping: options.damping,
        physics,
        omega_n: blank.clone(),
        terms: options.damping.iter().map(|t| (t, blank.clone())).collect(),
        runs,
        names: layout.names(),
        x,
        start,
        covariance: cov.cov.clone(),
        correlation: cov.corr.clone(),
        condition: cov.condition,
        iterations: sol.iterations,
        iterations_total,
        rss: sol.at_min.rss,
        n_obs,
        n_independent: n_eff,
        dof: n_eff - p,
        convergence: sol.convergence,
        interval_method: intervals.method.clone(),
        t95: intervals.coverage_factor,
        interval_dof: intervals.dof,
        flags: Vec::new(),
        notes,
        adequacy,
    };
    set_intervals(&mut out, &cov, &intervals);
    match options.bootstrap {
        Some(b) if b >= 2 => bootstrap::apply(logs, surveys, out, b, options.seed),
        _ => Ok(out),
    }
}

/// Put `intervals` into the outcome: every estimate, the covariance (rescaled so that it agrees
/// with the reported standard uncertainties; the correlations stay those of the fit), the method
/// and coverage factor, and the flags they imply (after `notes`, which come first).
pub(crate) fn set_intervals(
    out: &mut FitOutcome,
    cov: &uncertainty::Covariance,
    intervals: &uncertainty::IntervalSet,
) {
    let layout = Layout { damping: out.damping, n_runs: out.runs.len() };
    let p = layout.n_params();
    let est = |i: usize, unit: &'static str| {
        let iv = &intervals.params[i];
        Estimate { value: iv.value, std: iv.std, ci95: (iv.lo, iv.hi), unit }
    };
    out.omega_n = est(0, "rad/s");
    out.terms =
        out.damping.iter().enumerate().map(|(i, t)| (t, est(1 + i, t.normalized_unit()))).collect();
    for (k, run) in out.runs.iter_mut().enumerate() {
        let o = layout.run_offset(k);
        run.equilibrium = est(o, "rad");
        run.initial_angle = est(o + 1, "rad");
        run.initial_velocity = est(o + 2, "rad/s");
    }
    let mut covariance = cov.cov.clone();
    for i in 0..p {
        for j in 0..p {
            let si = intervals.params[i].std / cov.std[i].max(1e-300);
            let sj = intervals.params[j].std / cov.std[j].max(1e-300);
            covariance[(i, j)] *= si * sj;
        }
    }
    out.covariance = covariance;
    out.interval_method = intervals.method.clone();
    out.t95 = intervals.coverage_factor;
    out.interval_dof = intervals.dof;
    let names = layout.names();
    let name_refs: Vec<&str> = names.iter().map(String::as_str).collect();
    // Flags about the shared physics only: the release of each run is always well determined
    // or harmless (an initial velocity of zero has an interval wider than its value by nature).
    out.flags = out.notes.clone();
    out.flags.extend(
        uncertainty::identifiability_flags(&name_refs, cov, intervals)
            .into_iter()
            .filter(|f| f.param < layout.n_physics() && !matches!(f.kind, uncertainty::FlagKind::Correlated { other, .. } if other >= layout.n_physics()))
            .map(|f| f.message),
    );
}
