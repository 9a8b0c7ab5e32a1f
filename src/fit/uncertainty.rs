//! Covariance, standard errors, confidence intervals, flags for unidentifiable terms.

// Interface used by the estimator (lead); bodies come with issue 4.
use nalgebra::{DMatrix, DVector};

use crate::fit::lm::Linearization;

/// How the intervals were obtained.
#[derive(Clone, Debug, PartialEq)]
pub enum IntervalMethod {
    /// s²(JᵀJ)⁻¹ with Student-t, residuals white.
    Plain,
    /// Widened by √(n/n_eff) for correlated residuals.
    EffectiveSampleSize {
        /// Inflation factor of the standard uncertainties.
        factor: f64,
    },
    /// Moving-block bootstrap.
    Bootstrap {
        /// Replicates that converged.
        replicates: usize,
        /// Block length [samples].
        block: usize,
    },
}

impl std::fmt::Display for IntervalMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{self:?}")
    }
}

/// Covariance and diagnostics at a minimum.
#[derive(Clone, Debug, PartialEq)]
pub struct Assessment {
    /// Covariance (after widening).
    pub covariance: DMatrix<f64>,
    /// Method.
    pub method: IntervalMethod,
    /// t_{0.975, n−p}.
    pub t95: f64,
    /// Flags in words.
    pub flags: Vec<String>,
    /// Condition number.
    pub condition: f64,
    /// Ljung–Box p per run.
    pub ljung_box_p: Vec<f64>,
}

/// Assess the uncertainty at a minimum.
pub fn assess(
    at_min: &Linearization,
    n_obs: usize,
    residuals: &[Vec<f64>],
    names: &[String],
    x: &DVector<f64>,
) -> Result<Assessment, String> {
    let _ = (at_min, n_obs, residuals, names, x);
    todo!("issue 4")
}

/// Correlation matrix of a covariance.
pub fn correlation(cov: &DMatrix<f64>) -> DMatrix<f64> {
    let _ = cov;
    todo!("issue 4")
}

/// Block length for the moving-block bootstrap.
pub fn block_length(residuals: &[f64]) -> usize {
    let _ = residuals;
    todo!("issue 4")
}

/// One moving-block bootstrap resample.
pub fn block_resample(residuals: &[f64], block: usize, seed: u64) -> Vec<f64> {
    let _ = (residuals, block, seed);
    todo!("issue 4")
}
