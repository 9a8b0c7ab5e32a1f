//! A quick look at a validated log: rate, gaps, equilibrium, period, noise, peaks.
//!
//! (Interface fixed by the lead; bodies to be written in issue 2.)
//!
//! The survey is what `check` prints and what the estimator uses for its start values, so the
//! same numbers are seen by the engineer and by the fit.

use super::AngleLog;

/// An interval between samples over 5× the median interval.
#[derive(Clone, Debug, PartialEq)]
pub struct Gap {
    /// Time of the sample before the gap [s].
    pub start_s: f64,
    /// Length of the interval [s].
    pub length_s: f64,
}

/// An extreme of one half cycle, measured from the equilibrium.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Peak {
    /// Time of the extreme [s].
    pub t: f64,
    /// Angle minus equilibrium [rad] (signed).
    pub deflection: f64,
}

/// What `check` reports about a log.
#[derive(Clone, Debug, PartialEq)]
pub struct Survey {
    /// Number of samples.
    pub samples: usize,
    /// Last minus first time [s].
    pub duration_s: f64,
    /// 1 / median sample interval [Hz].
    pub rate_hz: f64,
    /// Sampling jitter: robust spread of intervals relative to the median (dimensionless).
    pub jitter: f64,
    /// Intervals over 5× the median.
    pub gaps: Vec<Gap>,
    /// Smallest and largest angle [rad].
    pub angle_range: (f64, f64),
    /// Time the article came to rest, when the log ends in a resting tail [s].
    pub rest_from_s: Option<f64>,
    /// Estimated equilibrium angle [rad].
    pub equilibrium_rad: f64,
    /// Swing period from zero crossings about the equilibrium [s], when there are enough.
    pub period_s: Option<f64>,
    /// Noise floor estimate (standard deviation) [rad].
    pub noise_rad: f64,
    /// Encoder step [rad] when the angle came in counts.
    pub encoder_step_rad: Option<f64>,
    /// Times the angle crosses the equilibrium [s].
    pub crossings: Vec<f64>,
    /// Extreme of every half cycle, in time order.
    pub peaks: Vec<Peak>,
}

/// Survey a log.
pub fn survey(log: &AngleLog) -> Survey {
    let _ = log;
    todo!("issue 2")
}
