//! Bounded, scaled Levenberg–Marquardt on the normal equations.
//!
//! The problem supplies the residual sum of squares (for trial steps) and, at accepted points,
//! the normal equations JᵀJ and Jᵀr, so no n×p Jacobian needs to be stored for long logs.
//!
//! # Algorithm
//! Each iteration solves the damped, scaled normal equations
//! (JᵀJ + λ·D²) δ = −Jᵀr with D² = running maximum of diag(JᵀJ) (Marquardt 1963 scaling, as in
//! MINPACK `lmder`; a floor keeps a zero column from making D singular), by a Cholesky
//! factorisation of the Jacobi-equilibrated matrix. The trial point is projected onto the bounds
//! after freezing the parameters that sit on a bound with the gradient pushing outward (projected
//! LM with an active set). Only the RSS is evaluated at the trial point; the normal equations
//! are formed only where a step is accepted. λ follows Nielsen's rule: on success
//! λ ← λ·max(1/3, 1 − (2ρ − 1)³), ν ← 2; on failure λ ← λ·ν, ν ← 2ν, with ρ the ratio of the
//! actual to the predicted RSS reduction (H. B. Nielsen, "Damping parameter in Marquardt's
//! method", IMM-REP-1999-05, DTU 1999 `[memory]`; K. Madsen, H. B. Nielsen, O. Tingleff,
//! *Methods for Non-Linear Least Squares Problems*, 2nd ed., DTU 2004, §3.2 `[memory]`).
//!
//! # Stopping rules (MINPACK-style, J. J. Moré, "The Levenberg–Marquardt algorithm:
//! implementation and theory", Lecture Notes in Mathematics 630, 1978 `[memory]`)
//! - [`Convergence::Gradient`]: max_i |g_i| / (‖J_i‖·‖r‖) ≤ gtol over the free parameters
//!   (the cosine between the residual and each Jacobian column; g = Jᵀr, ‖J_i‖ = √(JᵀJ)_ii).
//! - [`Convergence::Cost`]: after an accepted step, both the actual and the predicted relative
//!   RSS reductions are ≤ ftol.
//! - [`Convergence::Step`]: ‖D·δ‖ ≤ xtol·(‖D·x‖ + xtol) for the last (accepted or rejected) step.

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
    ///
    /// Defaults: `max_iter` 500, `ftol` 1e-12, `xtol` 1e-10, `gtol` 1e-10.
    pub fn unbounded(p: usize) -> LmSettings {
        LmSettings {
            lower: DVector::from_element(p, f64::NEG_INFINITY),
            upper: DVector::from_element(p, f64::INFINITY),
            max_iter: 500,
            ftol: 1e-12,
            xtol: 1e-10,
            gtol: 1e-10,
        }
    }

    /// The same settings with lower bound `value` on parameter `i` (ignored when `i` ≥ p).
    pub fn with_lower(mut self, i: usize, value: f64) -> LmSettings {
        if i < self.lower.len() {
            self.lower[i] = value;
        }
        self
    }

    /// The same settings with upper bound `value` on parameter `i` (ignored when `i` ≥ p).
    pub fn with_upper(mut self, i: usize, value: f64) -> LmSettings {
        if i < self.upper.len() {
            self.upper[i] = value;
        }
        self
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
///
/// `x0` is first projected onto the bounds. Errors: [`LmError::Problem`] when the dimensions
/// disagree, the bounds are inconsistent, or the problem cannot be evaluated at the start (or
/// cannot be linearized at an accepted point); [`LmError::Singular`] when the damped normal
/// equations cannot be factorised even with very large damping; [`LmError::NotConverged`] when no
/// criterion is met within `settings.max_iter` iterations.
pub fn minimize<P: LeastSquares>(
    problem: &P,
    x0: DVector<f64>,
    settings: &LmSettings,
) -> Result<LmSolution, LmError> {
    let p = problem.n_params();
    check_settings(p, &x0, settings)?;
    let mut x = project(&x0, settings);
    let mut lin = problem.linearize(&x).map_err(LmError::Problem)?;
    check_linearization(p, &lin)?;
    let mut evaluations = 1usize;
    let mut dm = column_scale(&lin.jtj);
    let mut lambda = INITIAL_LAMBDA;
    let mut nu = 2.0;
    let mut iterations = 0usize;
    loop {
        let free = free_set(&x, &lin.jtr, settings);
        if free.is_empty() || gradient_small(&lin, &free, settings.gtol) {
            return Ok(finish(x, lin, iterations, evaluations, Convergence::Gradient, settings));
        }
        if iterations >= settings.max_iter {
            return Err(LmError::NotConverged { iterations, rss: lin.rss });
        }
        iterations += 1;
        let Some(raw) = damped_step(&lin, &dm, lambda, &free) else {
            lambda *= nu;
            nu *= 2.0;
            if lambda.is_nan() || lambda > MAX_LAMBDA {
                return Err(LmError::Singular);
            }
            continue;
        };
        let trial = project(&(&x + &raw), settings);
        let step = &trial - &x;
        let step_norm = dm.component_mul(&step).norm();
        let x_norm = dm.component_mul(&x).norm();
        let small_step = step_norm <= settings.xtol * (x_norm + settings.xtol);
        // Predicted reduction of the quadratic model: −(2gᵀs + sᵀJᵀJs).
        let predicted = -(2.0 * lin.jtr.dot(&step) + step.dot(&(&lin.jtj * &step)));
        evaluations += 1;
        let cost = problem.cost(&trial).ok().filter(|c| c.is_finite() && *c >= 0.0);
        let actual = cost.map(|c| lin.rss - c);
        match actual {
            Some(actual) if predicted > 0.0 && actual > 0.0 => {
                let rho = actual / predicted;
                let old = lin.rss;
                x = trial;
                lin = problem.linearize(&x).map_err(LmError::Problem)?;
                check_linearization(p, &lin)?;
                evaluations += 1;
                let fresh = column_scale(&lin.jtj);
                dm.zip_apply(&fresh, |d, f| *d = d.max(f));
                lambda *= (1.0 - (2.0 * rho - 1.0).powi(3)).max(1.0 / 3.0);
                lambda = lambda.max(MIN_LAMBDA);
                nu = 2.0;
                if actual / old <= settings.ftol && predicted / old <= settings.ftol {
                    return Ok(finish(
                        x,
                        lin,
                        iterations,
                        evaluations,
                        Convergence::Cost,
                        settings,
                    ));
                }
                if small_step {
                    return Ok(finish(
                        x,
                        lin,
                        iterations,
                        evaluations,
                        Convergence::Step,
                        settings,
                    ));
                }
            }
            _ => {
                if small_step {
                    return Ok(finish(
                        x,
                        lin,
                        iterations,
                        evaluations,
                        Convergence::Step,
                        settings,
                    ));
                }
                lambda *= nu;
                nu *= 2.0;
                if lambda.is_nan() || lambda > MAX_LAMBDA {
                    return Err(LmError::Singular);
                }
            }
        }
    }
}

/// Starting damping λ (relative to the Marquardt scaling D²).
const INITIAL_LAMBDA: f64 = 1e-3;
/// Damping below this is clamped (keeps the factorisation well posed near the solution).
const MIN_LAMBDA: f64 = 1e-15;
/// Damping beyond this means the normal equations cannot be solved.
const MAX_LAMBDA: f64 = 1e30;

fn check_settings(p: usize, x0: &DVector<f64>, s: &LmSettings) -> Result<(), LmError> {
    if x0.len() != p || s.lower.len() != p || s.upper.len() != p {
        return Err(LmError::Problem(format!(
            "start has {} values, bounds have {} and {}, problem has {p} parameters",
            x0.len(),
            s.lower.len(),
            s.upper.len()
        )));
    }
    for i in 0..p {
        if !x0[i].is_finite() {
            return Err(LmError::Problem(format!("start value of parameter {i} is not finite")));
        }
        if s.lower[i].is_nan() || s.upper[i].is_nan() || s.lower[i] > s.upper[i] {
            return Err(LmError::Problem(format!(
                "bounds of parameter {i} are inconsistent: lower {} upper {}",
                s.lower[i], s.upper[i]
            )));
        }
    }
    let ok = |t: f64| t.is_finite() && t >= 0.0;
    if !(ok(s.ftol) && ok(s.xtol) && ok(s.gtol)) {
        return Err(LmError::Problem("tolerances must be non-negative numbers".to_string()));
    }
    Ok(())
}

fn check_linearization(p: usize, lin: &Linearization) -> Result<(), LmError> {
    if lin.jtj.nrows() != p || lin.jtj.ncols() != p || lin.jtr.len() != p {
        return Err(LmError::Problem(format!(
            "normal equations are {}x{} and {}, expected {p}x{p} and {p}",
            lin.jtj.nrows(),
            lin.jtj.ncols(),
            lin.jtr.len()
        )));
    }
    let finite = lin.rss.is_finite()
        && lin.jtj.iter().all(|v| v.is_finite())
        && lin.jtr.iter().all(|v| v.is_finite());
    if !finite || lin.rss < 0.0 {
        return Err(LmError::Problem("residuals or derivatives are not finite".to_string()));
    }
    Ok(())
}

/// Clip `x` into [lower, upper].
fn project(x: &DVector<f64>, s: &LmSettings) -> DVector<f64> {
    DVector::from_fn(x.len(), |i, _| x[i].max(s.lower[i]).min(s.upper[i]))
}

/// √diag(JᵀJ), with zero (or tiny) columns floored to 1e-10 of the largest, or 1 when all vanish.
fn column_scale(jtj: &DMatrix<f64>) -> DVector<f64> {
    let d = DVector::from_fn(jtj.nrows(), |i, _| jtj[(i, i)].max(0.0).sqrt());
    let big = d.iter().cloned().fold(0.0, f64::max);
    let floor = if big > 0.0 { big * 1e-10 } else { 1.0 };
    d.map(|v| v.max(floor))
}

/// Parameters free to move: not on a bound with the descent direction −g pointing outward.
fn free_set(x: &DVector<f64>, g: &DVector<f64>, s: &LmSettings) -> Vec<usize> {
    (0..x.len())
        .filter(|&i| {
            let blocked_low = x[i] <= s.lower[i] && g[i] > 0.0;
            let blocked_high = x[i] >= s.upper[i] && g[i] < 0.0;
            !(blocked_low || blocked_high)
        })
        .collect()
}

fn gradient_small(lin: &Linearization, free: &[usize], gtol: f64) -> bool {
    if lin.rss <= 0.0 {
        return true;
    }
    let rnorm = lin.rss.sqrt();
    free.iter().all(|&i| {
        let col = lin.jtj[(i, i)].max(0.0).sqrt();
        col <= 0.0 || lin.jtr[i].abs() / (col * rnorm) <= gtol
    })
}

/// Solve (JᵀJ + λD²)δ = −g over the free parameters (others fixed at δ = 0), equilibrated by
/// the current column norms before the Cholesky factorisation. `None` when not positive definite.
fn damped_step(
    lin: &Linearization,
    dm: &DVector<f64>,
    lambda: f64,
    free: &[usize],
) -> Option<DVector<f64>> {
    let k = free.len();
    let s = column_scale(&lin.jtj);
    let mut a = DMatrix::from_fn(k, k, |r, c| {
        let (i, j) = (free[r], free[c]);
        lin.jtj[(i, j)] / (s[i] * s[j])
    });
    for (r, &i) in free.iter().enumerate() {
        a[(r, r)] += lambda * (dm[i] / s[i]).powi(2);
    }
    let b = DVector::from_fn(k, |r, _| -lin.jtr[free[r]] / s[free[r]]);
    let y = a.cholesky()?.solve(&b);
    if !y.iter().all(|v| v.is_finite()) {
        return None;
    }
    let mut step = DVector::zeros(lin.jtr.len());
    for (r, &i) in free.iter().enumerate() {
        step[i] = y[r] / s[i];
    }
    Some(step)
}

fn finish(
    x: DVector<f64>,
    at_min: Linearization,
    iterations: usize,
    evaluations: usize,
    convergence: Convergence,
    s: &LmSettings,
) -> LmSolution {
    let at_bound = (0..x.len()).filter(|&i| x[i] <= s.lower[i] || x[i] >= s.upper[i]).collect();
    LmSolution { x, at_min, iterations, evaluations, convergence, at_bound }
}

/// Adapter: a plain residual function as a [`LeastSquares`] problem.
///
/// The closure returns the residual vector r(x) (length n) and its Jacobian ∂r/∂x (n × p); the
/// adapter forms Σr², JᵀJ and Jᵀr. Meant for small models and tests (the NIST StRD checks); long
/// trajectory fits implement [`LeastSquares`] directly and accumulate the normal equations.
pub struct ResidualProblem<F>
where
    F: Fn(&DVector<f64>) -> (DVector<f64>, DMatrix<f64>),
{
    f: F,
    n_params: usize,
    n_obs: usize,
}

impl<F> ResidualProblem<F>
where
    F: Fn(&DVector<f64>) -> (DVector<f64>, DMatrix<f64>),
{
    /// Wrap `f`, which must return `n_obs` residuals and an `n_obs × n_params` Jacobian.
    pub fn new(n_params: usize, n_obs: usize, f: F) -> ResidualProblem<F> {
        ResidualProblem { f, n_params, n_obs }
    }

    /// Residuals and Jacobian at `x`, checked for shape and finiteness.
    pub fn evaluate(&self, x: &DVector<f64>) -> Result<(DVector<f64>, DMatrix<f64>), String> {
        let (r, j) = (self.f)(x);
        if r.len() != self.n_obs || j.nrows() != self.n_obs || j.ncols() != self.n_params {
            return Err(format!(
                "residual function returned {} residuals and a {}x{} jacobian, expected {} and {}x{}",
                r.len(),
                j.nrows(),
                j.ncols(),
                self.n_obs,
                self.n_obs,
                self.n_params
            ));
        }
        if !r.iter().all(|v| v.is_finite()) {
            return Err("residuals are not finite".to_string());
        }
        Ok((r, j))
    }
}

impl<F> LeastSquares for ResidualProblem<F>
where
    F: Fn(&DVector<f64>) -> (DVector<f64>, DMatrix<f64>),
{
    fn n_params(&self) -> usize {
        self.n_params
    }

    fn n_obs(&self) -> usize {
        self.n_obs
    }

    fn cost(&self, x: &DVector<f64>) -> Result<f64, String> {
        let (r, _) = self.evaluate(x)?;
        Ok(r.norm_squared())
    }

    fn linearize(&self, x: &DVector<f64>) -> Result<Linearization, String> {
        let (r, j) = self.evaluate(x)?;
        if !j.iter().all(|v| v.is_finite()) {
            return Err("jacobian is not finite".to_string());
        }
        Ok(Linearization { rss: r.norm_squared(), jtj: j.tr_mul(&j), jtr: j.tr_mul(&r) })
    }
}
