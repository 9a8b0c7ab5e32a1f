//! Bounded, scaled Levenberg–Marquardt on the normal equations.
//!
//! (Interface fixed by the lead; bodies to be written in issue 4.)
//!
//! The problem supplies the residual sum of squares (for trial steps) and, at accepted points,
//! the normal equations JᵀJ and Jᵀr, so no n×p Jacobian needs to be stored for long logs.

use nalgebra::{DMatrix, DVector};

/// The normal equations of a least-squares problem at one point.
#[derive(Clone, Debug, PartialEq)]
pub struct Linearization {
    /// Residual sum of squares Σ r².
    pub rss: f64,
    /// JᵀJ (p × p), J = ∂r/∂x.
    pub jtj: DMatrix<f64>,
    /// Jᵀr (p).
    pub jtr: DVector<f64>,
}

/// A least-squares problem: minimise Σ r(x)².
pub trait LeastSquares {
    /// Number of parameters p.
    fn n_params(&self) -> usize;
    /// Number of residuals n.
    fn n_obs(&self) -> usize;
    /// Σ r(x)², or an error when the model cannot be evaluated at x.
    fn cost(&self, x: &DVector<f64>) -> Result<f64, String>;
    /// Σ r², JᵀJ and Jᵀr at x.
    fn linearize(&self, x: &DVector<f64>) -> Result<Linearization, String>;
}

/// Solver settings.
#[derive(Clone, Debug, PartialEq)]
pub struct LmSettings {
    /// Lower bounds (−∞ allowed), length p.
    pub lower: DVector<f64>,
    /// Upper bounds (+∞ allowed), length p.
    pub upper: DVector<f64>,
    /// Most iterations (accepted or rejected steps).
    pub max_iter: usize,
    /// Stop when the relative reduction of the RSS falls below this.
    pub ftol: f64,
    /// Stop when the scaled step falls below this relative size.
    pub xtol: f64,
    /// Stop when the scaled gradient falls below this.
    pub gtol: f64,
}

impl LmSettings {
    /// Unbounded settings with default tolerances for `p` parameters.
    pub fn unbounded(p: usize) -> LmSettings {
        let _ = p;
        todo!("issue 4")
    }
}

/// Why the solver stopped successfully.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Convergence {
    /// Relative RSS reduction below `ftol`.
    Cost,
    /// Scaled step below `xtol`.
    Step,
    /// Scaled gradient below `gtol`.
    Gradient,
}

/// A converged solution.
#[derive(Clone, Debug, PartialEq)]
pub struct LmSolution {
    /// Parameters at the minimum.
    pub x: DVector<f64>,
    /// Normal equations at the minimum.
    pub at_min: Linearization,
    /// Iterations taken.
    pub iterations: usize,
    /// Cost evaluations plus linearizations.
    pub evaluations: usize,
    /// Which criterion ended the run.
    pub convergence: Convergence,
    /// Indices of parameters that ended on a bound.
    pub at_bound: Vec<usize>,
}

/// Why the solver failed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum LmError {
    /// No criterion met within `max_iter`.
    #[error("no convergence after {iterations} iterations (RSS {rss:e})")]
    NotConverged {
        /// Iterations taken.
        iterations: usize,
        /// RSS reached.
        rss: f64,
    },
    /// JᵀJ singular even with damping.
    #[error("singular normal equations: the parameters are not identifiable from these data")]
    Singular,
    /// The problem could not be evaluated at the start.
    #[error("model cannot be evaluated: {0}")]
    Problem(String),
}

/// Minimise from `x0`.
pub fn minimize<P: LeastSquares>(
    problem: &P,
    x0: DVector<f64>,
    settings: &LmSettings,
) -> Result<LmSolution, LmError> {
    let _ = (problem, x0, settings);
    todo!("issue 4")
}
