//! Which damping explains the decay: fit every candidate set and weigh the evidence.
//!
//! Each candidate (by default the seven non-empty subsets of viscous, Coulomb, quadratic) is
//! fitted, smallest first, each one started from the best fitted subset of it. The evidence per
//! candidate: RSS, Gaussian AIC (Akaike 1974) and BIC (Schwarz 1978), the test of each added
//! term (a Wald test with the fit's own standard uncertainty, plain or HAC, so a term is
//! significant exactly when its 95 % interval excludes zero; reported as F = (b/u)² on
//! (1, ν) degrees of freedom), the Ljung–Box p-value of the residuals (Ljung & Box 1978), the RMS
//! residual against the noise floor of the survey, the fit's adequacy verdict
//! ([`crate::fit::adequacy`]), and the model's half-cycle envelope beside the measured one.
//!
//! Decision rule (common practice, stated so it can be argued with):
//! - a candidate *explains the decay* when its adequacy verdict is `explained` (no residual
//!   structure that follows the swing, half cycles reproduced); coloured sensor noise does not
//!   stop a candidate from explaining the decay;
//! - among candidates whose terms are all significant, the lowest BIC is preferred;
//! - when none explains the decay the comparison names no best set: it says so and what the
//!   residuals look like, rather than naming the least bad;
//! - two candidates that both explain the decay with BIC within [`BIC_TIE`] are called
//!   indistinguishable on these data (Kass & Raftery 1995 call ΔBIC < 2 "not worth more than a
//!   bare mention" [memory]), with the test that would separate them.

use crate::data::AngleLog;
use crate::data::survey::{Peak, Survey, survey};
use crate::fit::adequacy::Adequacy;
use crate::fit::start::period_ratio;
use crate::fit::{FitError, FitOptions, FitOutcome, fit_surveyed};
use crate::integrate::{self, Event, Method};
use crate::model::{DampingSet, Release, Term};
use crate::stats;

/// RMS residual ≤ this × noise floor counts as "at the noise floor" (common practice).
pub const EXPLAIN_RATIO: f64 = crate::fit::adequacy::NOISE_RATIO_LIMIT;

/// BIC differences below this do not separate two candidates (Kass & Raftery 1995 [memory]).
pub const BIC_TIE: f64 = 2.0;

/// What to compare.
#[derive(Clone, Debug, PartialEq)]
pub struct CompareOptions {
    /// Candidate damping sets (default: the seven non-empty subsets).
    pub candidates: Vec<DampingSet>,
    /// Fit options (the damping field is ignored).
    pub fit: FitOptions,
}

impl Default for CompareOptions {
    fn default() -> CompareOptions {
        CompareOptions { candidates: default_candidates(), fit: FitOptions::default() }
    }
}

/// The test of one added term: Wald, F = (b/u)² against F(1, ν) with the fit's own u and ν.
#[derive(Clone, Debug, PartialEq)]
pub struct AddedTerm {
    /// The smaller set.
    pub from: DampingSet,
    /// The term added to it.
    pub term: Term,
    /// F statistic.
    pub f: f64,
    /// Upper-tail p-value.
    pub p_value: f64,
}

/// The evidence for one candidate.
#[derive(Clone, Debug)]
pub struct CandidateEvidence {
    /// The damping set.
    pub damping: DampingSet,
    /// The fit, or why it failed.
    pub fit: Result<FitOutcome, FitError>,
    /// RSS [rad²] (NaN when failed).
    pub rss: f64,
    /// Gaussian AIC.
    pub aic: f64,
    /// Gaussian BIC.
    pub bic: f64,
    /// Ljung–Box p-value of the residuals (smallest over runs).
    pub ljung_box_p: f64,
    /// RMS residual [rad].
    pub rms_residual: f64,
    /// Largest ratio of a run's RMS residual to its noise floor.
    pub noise_ratio: f64,
    /// Every fitted term significantly non-zero.
    pub all_significant: bool,
    /// Explains the decay to the noise floor.
    pub explains_decay: bool,
    /// F-tests against each nested candidate with one term fewer.
    pub added_terms: Vec<AddedTerm>,
    /// The model's peak of every half cycle, per run.
    pub model_peaks: Vec<Vec<Peak>>,
}

impl CandidateEvidence {
    /// The fit when it succeeded.
    pub fn outcome(&self) -> Option<&FitOutcome> {
        self.fit.as_ref().ok()
    }
}

/// Envelope law in cycle number.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EnvelopeLaw {
    /// ln A linear in n: viscous.
    Exponential,
    /// A linear in n: Coulomb.
    Linear,
    /// 1/A linear in n: quadratic.
    Hyperbolic,
}

impl EnvelopeLaw {
    /// Name and the mechanism it points to.
    pub fn describe(self) -> &'static str {
        match self {
            EnvelopeLaw::Exponential => "exponential (ln A straight in cycle number: viscous)",
            EnvelopeLaw::Linear => "linear (A straight in cycle number: Coulomb)",
            EnvelopeLaw::Hyperbolic => "hyperbolic (1/A straight in cycle number: quadratic)",
        }
    }

    /// Short name.
    pub fn name(self) -> &'static str {
        match self {
            EnvelopeLaw::Exponential => "exponential",
            EnvelopeLaw::Linear => "linear",
            EnvelopeLaw::Hyperbolic => "hyperbolic",
        }
    }
}

/// Fit quality of each envelope law on the measured peaks.
#[derive(Clone, Debug, PartialEq)]
pub struct EnvelopeFits {
    /// (law, RMS misfit in A [rad]) for each law, best first.
    pub laws: Vec<(EnvelopeLaw, f64)>,
}

/// Measured period of one cycle against its amplitude.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PeriodPoint {
    /// Mean amplitude over the cycle [rad].
    pub amplitude: f64,
    /// Measured period [s].
    pub period: f64,
}

/// The comparison.
#[derive(Clone, Debug)]
pub struct Comparison {
    /// Every candidate, ranked best first (failed ones last).
    pub candidates: Vec<CandidateEvidence>,
    /// The chosen set, when one explains the decay.
    pub best: Option<DampingSet>,
    /// Whether any candidate explains the decay.
    pub explained: bool,
    /// Candidates indistinguishable from the best on these data.
    pub ties: Vec<DampingSet>,
    /// Measured half-cycle peaks per run.
    pub measured_peaks: Vec<Vec<Peak>>,
    /// Envelope laws fitted to the measured peaks (all runs), best first.
    pub envelope: EnvelopeFits,
    /// Measured period against amplitude, per run.
    pub period_points: Vec<Vec<PeriodPoint>>,
    /// The best (or least bad) model's period against amplitude: (amplitude rad, period s).
    pub period_curve: Vec<(f64, f64)>,
}

impl Comparison {
    /// The evidence of the best candidate.
    pub fn best_candidate(&self) -> Option<&CandidateEvidence> {
        self.best.and_then(|b| self.candidates.iter().find(|c| c.damping == b))
    }

    /// The set the "choose, then fit" workflow fits: the best, or when none explains the decay
    /// the least bad (lowest BIC among candidates whose terms are all significant, else among all
    /// fitted), with its own adequacy verdict.
    pub fn selected(&self) -> Option<&FitOutcome> {
        match self.best {
            Some(b) => self.candidates.iter().find(|c| c.damping == b).and_then(|c| c.outcome()),
            None => self.candidates.iter().find_map(|c| c.outcome()),
        }
    }

    /// What the record says about pre-sliding friction, in words (docs/friction.md): whether
    /// the selected model's spring–slider is seen at work (the last swings reach its range
    /// b0/σ, where the small-amplitude period falls to 2π/√(ωn² + σ)), or that the record cannot
    /// determine σ because its smallest swing stays far above the range. `None` when no
    /// candidate with Coulomb friction was fitted.
    pub fn presliding_note(&self) -> Option<String> {
        let a_min = self
            .measured_peaks
            .iter()
            .flat_map(|r| r.iter().map(|p| p.deflection.abs()))
            .filter(|a| *a > 0.0)
            .fold(f64::INFINITY, f64::min);
        if !a_min.is_finite() {
            return None;
        }
        let sel = self.selected()?;
        let with_ps = if sel.damping.contains(Term::Presliding) {
            Some(sel)
        } else if sel.damping.contains(Term::Coulomb) {
            let want = sel.damping.with(Term::Presliding);
            self.candidates.iter().find(|c| c.damping == want).and_then(|c| c.outcome())
        } else {
            None
        };
        let f = with_ps?;
        let (b0, sigma) = (f.physics.coef(Term::Coulomb), f.physics.coef(Term::Presliding));
        if !(b0 > 0.0 && sigma > 0.0) {
            return None;
        }
        let range = b0 / sigma;
        let wn = f.physics.omega_n;
        let chosen = sel.damping.contains(Term::Presliding);
        Some(if a_min <= 2.0 * range && chosen {
            format!(
                "Pre-sliding signature seen: the smallest swings ({a_min:.3e} rad) reach the \
                 spring range b0/sigma = {range:.3e} rad, where the period falls from {:.6} s \
                 towards {:.6} s.",
                2.0 * std::f64::consts::PI / wn,
                2.0 * std::f64::consts::PI / (wn * wn + sigma).sqrt()
            )
        } else if a_min <= 2.0 * range {
            format!(
                "Pre-sliding: the smallest swings ({a_min:.3e} rad) reach the range b0/sigma = \
                 {range:.3e} rad of the fitted spring, but the data do not support the term."
            )
        } else {
            format!(
                "This record cannot determine a pre-sliding stiffness sigma: its smallest swing \
                 ({a_min:.3e} rad) stays above the range of any spring it could reveal (fitted \
                 b0/sigma = {range:.3e} rad); a record that decays to that range with many \
                 cycles, or a second small release, is needed."
            )
        })
    }

    /// The best envelope law.
    pub fn envelope_law(&self) -> EnvelopeLaw {
        self.envelope.laws.first().map(|l| l.0).unwrap_or(EnvelopeLaw::Exponential)
    }
}

/// Compare the candidates on `logs`.
pub fn compare(logs: &[AngleLog], options: &CompareOptions) -> Comparison {
    let surveys: Vec<Survey> = logs.iter().map(survey).collect();
    compare_surveyed(logs, &surveys, options)
}

/// The candidate sets a comparison fits by default: every non-empty subset of the three
/// rate-dependent terms, and each of them that holds Coulomb friction with its pre-sliding
/// stiffness, and with its Stribeck excess, too (both refine the Coulomb friction; fifteen
/// sets). (One place to extend when a new term joins.)
pub fn default_candidates() -> Vec<DampingSet> {
    DampingSet::all_friction_family()
}

/// [`compare`] with the surveys already made.
pub fn compare_surveyed(
    logs: &[AngleLog],
    surveys: &[Survey],
    options: &CompareOptions,
) -> Comparison {
    let surveys = surveys.to_vec();
    let mut sets = options.candidates.clone();
    sets.sort_by_key(|s| (s.len(), *s));
    sets.dedup();
    let mut done: Vec<(DampingSet, Result<FitOutcome, FitError>)> = Vec::new();
    for set in sets {
        // Warm start from the largest already fitted subset with the lowest RSS.
        let warm = done
            .iter()
            .filter_map(|(s, r)| r.as_ref().ok().map(|f| (*s, f)))
            .filter(|(s, _)| s.is_subset(set))
            .max_by(|a, b| a.0.len().cmp(&b.0.len()).then(b.1.rss.total_cmp(&a.1.rss)))
            .map(|(_, f)| f);
        let opts = FitOptions { damping: set, ..options.fit.clone() };
        let releases: Vec<Release>;
        let warm_args = match warm {
            Some(f) => {
                releases = (0..f.runs.len())
                    .map(|k| Release {
                        equilibrium: f.runs[k].equilibrium.value,
                        angle: f.runs[k].initial_angle.value,
                        velocity: f.runs[k].initial_velocity.value,
                    })
                    .collect();
                Some((&f.physics, releases.as_slice()))
            }
            None => None,
        };
        let mut result = fit_surveyed(logs, &surveys, &opts, warm_args);
        if result.is_err() && warm_args.is_some() {
            // A warm start can sit in the wrong basin for the larger set; try the cold start too.
            result = fit_surveyed(logs, &surveys, &opts, None);
        }
        done.push((set, result));
    }
    assemble(logs, &surveys, done)
}

fn assemble(
    logs: &[AngleLog],
    surveys: &[Survey],
    done: Vec<(DampingSet, Result<FitOutcome, FitError>)>,
) -> Comparison {
    // The independent observations are a property of the data, the same for every candidate.
    let n_obs: usize =
        done.iter().find_map(|(_, r)| r.as_ref().ok().map(|f| f.n_independent)).unwrap_or(0);
    let mut cands: Vec<CandidateEvidence> = done
        .iter()
        .map(|(set, r)| match r {
            Ok(f) => {
                let p = f.x.len();
                let noise_ratio = f
                    .runs
                    .iter()
                    .map(|r| r.rms_residual / r.noise_floor.max(1e-12))
                    .fold(0.0, f64::max);
                let all_significant = f.terms.iter().all(|(_, e)| e.ci95.0 > 0.0);
                CandidateEvidence {
                    damping: *set,
                    fit: Ok(f.clone()),
                    rss: f.rss,
                    aic: stats::aic(n_obs, f.rss, p).unwrap_or(f64::NAN),
                    bic: stats::bic(n_obs, f.rss, p).unwrap_or(f64::NAN),
                    ljung_box_p: f.runs.iter().map(|r| r.ljung_box_p).fold(1.0, f64::min),
                    rms_residual: f.rms_residual(),
                    noise_ratio,
                    all_significant,
                    explains_decay: f.adequacy.verdict == Adequacy::Explained,
                    added_terms: Vec::new(),
                    model_peaks: model_peaks(logs, f),
                }
            }
            Err(e) => CandidateEvidence {
                damping: *set,
                fit: Err(e.clone()),
                rss: f64::NAN,
                aic: f64::NAN,
                bic: f64::NAN,
                ljung_box_p: f64::NAN,
                rms_residual: f64::NAN,
                noise_ratio: f64::NAN,
                all_significant: false,
                explains_decay: false,
                added_terms: Vec::new(),
                model_peaks: Vec::new(),
            },
        })
        .collect();
    // Added-term tests: every successful candidate against each successful subset with one
    // term fewer, as a Wald test of the added coefficient with the larger fit's own standard
    // uncertainty (plain or HAC), so that "significant" and "interval excludes zero" agree.
    let fitted: Vec<DampingSet> =
        cands.iter().filter(|c| c.fit.is_ok()).map(|c| c.damping).collect();
    for c in cands.iter_mut() {
        let Some(f) = c.outcome() else { continue };
        let mut tests = Vec::new();
        for &s in &fitted {
            if s.len() + 1 == c.damping.len() && s.is_subset(c.damping) {
                let Some(term) = c.damping.iter().find(|t| !s.contains(*t)) else { continue };
                let Some(e) = f.term(term) else { continue };
                let z = e.value / e.std.max(1e-300);
                let fstat = z * z;
                if let Ok(p_value) = stats::f_sf(fstat, 1.0, f.interval_dof.max(1.0)) {
                    tests.push(AddedTerm { from: s, term, f: fstat, p_value });
                }
            }
        }
        c.added_terms = tests;
    }
    // Rank: successful first, by (eligible, BIC).
    cands.sort_by(|a, b| {
        let ka = (a.fit.is_err(), !a.all_significant, a.bic);
        let kb = (b.fit.is_err(), !b.all_significant, b.bic);
        ka.0.cmp(&kb.0).then(ka.1.cmp(&kb.1)).then(ka.2.total_cmp(&kb.2))
    });
    let eligible: Vec<&CandidateEvidence> =
        cands.iter().filter(|c| c.fit.is_ok() && c.all_significant).collect();
    let explained = eligible.first().is_some_and(|c| c.explains_decay);
    let best = if explained { eligible.first().map(|c| c.damping) } else { None };
    let ties: Vec<DampingSet> = match eligible.first() {
        Some(b) if explained => eligible
            .iter()
            .skip(1)
            .filter(|c| c.explains_decay && (c.bic - b.bic).abs() < BIC_TIE)
            .map(|c| c.damping)
            .collect(),
        _ => Vec::new(),
    };
    let measured_peaks: Vec<Vec<Peak>> = surveys.iter().map(|s| s.peaks.clone()).collect();
    let envelope = envelope_fits(&measured_peaks);
    let period_points: Vec<Vec<PeriodPoint>> = surveys.iter().map(period_points).collect();
    let reference = eligible.first().copied().or_else(|| cands.iter().find(|c| c.fit.is_ok()));
    let period_curve = reference
        .and_then(|c| c.outcome())
        .map(|f| period_curve(f, &period_points))
        .unwrap_or_default();
    Comparison {
        candidates: cands,
        best,
        explained,
        ties,
        measured_peaks,
        envelope,
        period_points,
        period_curve,
    }
}

/// Turning points of the fitted model, as half-cycle peaks measured from its equilibrium.
fn model_peaks(logs: &[AngleLog], f: &FitOutcome) -> Vec<Vec<Peak>> {
    logs.iter()
        .zip(&f.runs)
        .map(|(log, run)| {
            let release = Release {
                equilibrium: run.equilibrium.value,
                angle: run.initial_angle.value,
                velocity: run.initial_velocity.value,
            };
            let max_step = 2.0 * std::f64::consts::PI / f.physics.omega_n / 250.0;
            integrate::simulate(&f.physics, &release, log.times(), Method::Rk4 { max_step })
                .map(|tr| {
                    tr.events
                        .iter()
                        .filter_map(|e| match e {
                            Event::Reversal { t, angle } => {
                                Some(Peak { t: *t, deflection: angle - release.equilibrium })
                            }
                            Event::Stick { .. } => None,
                        })
                        .collect()
                })
                .unwrap_or_default()
        })
        .collect()
}

/// Fit the three envelope laws to |peak| against half-cycle number, per run, and rank them by
/// their RMS misfit in amplitude.
pub fn envelope_fits(peaks: &[Vec<Peak>]) -> EnvelopeFits {
    let mut laws = Vec::new();
    for law in [EnvelopeLaw::Exponential, EnvelopeLaw::Linear, EnvelopeLaw::Hyperbolic] {
        let (mut ss, mut count) = (0.0, 0usize);
        for run in peaks {
            let a: Vec<f64> = run.iter().map(|p| p.deflection.abs()).filter(|a| *a > 0.0).collect();
            if a.len() < 3 {
                continue;
            }
            let fwd = |v: f64| match law {
                EnvelopeLaw::Exponential => v.ln(),
                EnvelopeLaw::Linear => v,
                EnvelopeLaw::Hyperbolic => 1.0 / v,
            };
            let inv = |u: f64| match law {
                EnvelopeLaw::Exponential => u.exp(),
                EnvelopeLaw::Linear => u,
                EnvelopeLaw::Hyperbolic => 1.0 / u,
            };
            // Weighted straight line in the transformed variable, with weights that make the
            // misfit first-order equal to the misfit in A: (dA/du)² = A² for ln A, A⁴ for 1/A.
            let xs: Vec<f64> = (0..a.len()).map(|i| i as f64).collect();
            let ys: Vec<f64> = a.iter().map(|v| fwd(*v)).collect();
            let ws: Vec<f64> = a
                .iter()
                .map(|v| match law {
                    EnvelopeLaw::Exponential => v * v,
                    EnvelopeLaw::Linear => 1.0,
                    EnvelopeLaw::Hyperbolic => v.powi(4),
                })
                .collect();
            let sw: f64 = ws.iter().sum();
            let mx = xs.iter().zip(&ws).map(|(x, w)| w * x).sum::<f64>() / sw;
            let my = ys.iter().zip(&ws).map(|(y, w)| w * y).sum::<f64>() / sw;
            let sxx: f64 = xs.iter().zip(&ws).map(|(x, w)| w * (x - mx) * (x - mx)).sum();
            let sxy: f64 =
                xs.iter().zip(&ys).zip(&ws).map(|((x, y), w)| w * (x - mx) * (y - my)).sum();
            let slope = if sxx > 0.0 { sxy / sxx } else { 0.0 };
            for (x, v) in xs.iter().zip(&a) {
                let u = my + slope * (x - mx);
                // Past the law's own end (A ≤ 0) the prediction is zero amplitude.
                let pred =
                    if law == EnvelopeLaw::Hyperbolic && u <= 0.0 { 0.0 } else { inv(u).max(0.0) };
                let d = if pred.is_finite() { pred - v } else { *v };
                ss += d * d;
                count += 1;
            }
        }
        if count > 0 {
            laws.push((law, (ss / count as f64).sqrt()));
        }
    }
    laws.sort_by(|a, b| a.1.total_cmp(&b.1));
    EnvelopeFits { laws }
}

/// Measured period of each full cycle (from a crossing of the equilibrium to the next but one,
/// the survey's crossings with hysteresis) against its mean amplitude. The one
/// period-against-amplitude algorithm: the comparison and the sheet's plot both use it.
pub fn period_points(s: &Survey) -> Vec<PeriodPoint> {
    let c = &s.crossings;
    let mut out = Vec::new();
    for i in 0..c.len().saturating_sub(2) {
        let (t0, t1) = (c[i], c[i + 2]);
        let amps: Vec<f64> =
            s.peaks.iter().filter(|p| p.t > t0 && p.t < t1).map(|p| p.deflection.abs()).collect();
        if amps.len() != 2 {
            continue; // a gap or a missed peak: this cycle is not measured cleanly
        }
        out.push(PeriodPoint { amplitude: 0.5 * (amps[0] + amps[1]), period: t1 - t0 });
    }
    out
}

/// The model's period over the measured amplitude range: T0·(2/π)K(sin²(A/2)), with the viscous
/// shift of the damped frequency when viscous damping is fitted.
fn period_curve(f: &FitOutcome, points: &[Vec<PeriodPoint>]) -> Vec<(f64, f64)> {
    let amax = points.iter().flatten().map(|p| p.amplitude).fold(0.0, f64::max);
    if amax <= 0.0 {
        return Vec::new();
    }
    let w = f.physics.omega_n;
    let zeta = f.physics.coef(Term::Viscous) / (2.0 * w);
    let t0 = 2.0 * std::f64::consts::PI / (w * (1.0 - zeta * zeta).max(1e-12).sqrt());
    (0..=60).map(|i| amax * 1.05 * i as f64 / 60.0).map(|a| (a, t0 * period_ratio(a))).collect()
}
