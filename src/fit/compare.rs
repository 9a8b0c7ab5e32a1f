//! Which damping explains the decay: fit every candidate set and weigh the evidence.
//!
//! (Interface fixed by the lead; bodies come with issue 5.)

use crate::data::AngleLog;
use crate::data::survey::Peak;
use crate::fit::{FitError, FitOptions, FitOutcome};
use crate::model::DampingSet;

/// What to compare.
#[derive(Clone, Debug, PartialEq)]
pub struct CompareOptions {
    /// Candidate damping sets (default: the seven non-empty subsets).
    pub candidates: Vec<DampingSet>,
    /// Fit options (the damping field is ignored).
    pub fit: FitOptions,
}

/// A nested F-test of one added term.
#[derive(Clone, Debug, PartialEq)]
pub struct AddedTerm {
    /// The smaller set.
    pub from: DampingSet,
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
    /// Every fitted term significantly non-zero.
    pub all_significant: bool,
    /// Explains the decay to the noise floor with white-enough residuals.
    pub explains_decay: bool,
    /// F-tests against each nested smaller candidate.
    pub added_terms: Vec<AddedTerm>,
    /// The model's peak of every half cycle, per run (same half cycles as the measured ones).
    pub model_peaks: Vec<Vec<Peak>>,
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
    /// The chosen set, if any explains the decay.
    pub best: Option<DampingSet>,
    /// Whether any candidate explains the decay.
    pub explained: bool,
    /// The verdict in words with its numbers.
    pub verdict: String,
    /// Measured half-cycle peaks per run.
    pub measured_peaks: Vec<Vec<Peak>>,
    /// Best envelope law of the measured peaks.
    pub envelope_law: EnvelopeLaw,
    /// Measured period against amplitude, per run.
    pub period_points: Vec<Vec<PeriodPoint>>,
    /// The model's period against amplitude: (amplitude rad, period s) over the measured range.
    pub period_curve: Vec<(f64, f64)>,
}

/// Compare the candidates on `logs`.
pub fn compare(logs: &[AngleLog], options: &CompareOptions) -> Comparison {
    let _ = (logs, options);
    todo!("issue 5")
}
