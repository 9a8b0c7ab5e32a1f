//! Covariance, standard errors, confidence intervals, flags for unidentifiable terms.
//!
//! From the normal equations at the minimum: s² = RSS/(n − p), Cov = s²·(JᵀJ)⁻¹, standard errors
//! √diag Cov, the correlation matrix and the condition number of the column-scaled JᵀJ
//! (Bates & Watts, *Nonlinear Regression Analysis and Its Applications*, Wiley 1988, ch. 2
//! `[memory]`). Intervals are x̂ ± t_{0.975, ν}·SE. When the residuals are not white (Ljung–Box)
//! they are widened by an effective sample size, or replaced by a moving-block bootstrap whose
//! resampling lives here too. Flags put unidentifiable parameters into words.
//!
//! The inverse is taken of D⁻¹·JᵀJ·D⁻¹ (D = √diag JᵀJ, unit diagonal) by Cholesky with two steps
//! of iterative refinement, then scaled back: column scaling removes the units' spread from the
//! conditioning (NIST Thurber has entries spanning 10 decades).

use nalgebra::{DMatrix, DVector, SymmetricEigen};
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};

use crate::fit::lm::LmSolution;
use crate::stats::{self, LjungBox};

/// Scaled JᵀJ with a condition number above this is treated as singular (≈ 1/(100·ε)).
pub const MAX_CONDITION: f64 = 1e14;

/// |correlation| above which two parameters are flagged as not separable.
pub const CORRELATION_LIMIT: f64 = 0.98;

/// Why the uncertainty could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum UncertaintyError {
    /// JᵀJ is singular or numerically so.
    #[error(
        "normal equations are singular (condition number {condition:e}): some parameters are not identifiable"
    )]
    Singular {
        /// Condition number of the scaled JᵀJ (∞ when a column is zero).
        condition: f64,
    },
    /// No degrees of freedom left for s².
    #[error("{n} observations leave no degrees of freedom for {p} parameters")]
    NoDegreesOfFreedom {
        /// Observations.
        n: usize,
        /// Parameters.
        p: usize,
    },
    /// Inputs of mismatched size or non-finite values.
    #[error("bad input to the uncertainty computation: {0}")]
    Input(String),
    /// A statistic failed (e.g. too few residuals for Ljung–Box).
    #[error("{0}")]
    Stats(#[from] stats::StatsError),
}

/// Parameter covariance at the least-squares minimum.
#[derive(Clone, Debug, PartialEq)]
pub struct Covariance {
    /// Observations n.
    pub n: usize,
    /// Degrees of freedom n − p.
    pub dof: usize,
    /// Residual variance s² = RSS/(n − p).
    pub s2: f64,
    /// s²·(JᵀJ)⁻¹.
    pub cov: DMatrix<f64>,
    /// Standard errors √diag(cov).
    pub std: DVector<f64>,
    /// Correlation matrix cov_ij/(std_i·std_j).
    pub corr: DMatrix<f64>,
    /// 2-norm condition number of the column-scaled JᵀJ (D⁻¹JᵀJD⁻¹, D = √diag JᵀJ).
    pub condition: f64,
}

/// (JᵀJ)⁻¹ and the condition number of the scaled matrix, by column scaling, Cholesky and two
/// steps of iterative refinement. [`UncertaintyError::Singular`] when a column vanishes, the
/// matrix is not positive definite, or its scaled condition number exceeds [`MAX_CONDITION`].
pub fn scaled_inverse(jtj: &DMatrix<f64>) -> Result<(DMatrix<f64>, f64), UncertaintyError> {
    let p = jtj.nrows();
    if jtj.ncols() != p {
        return Err(UncertaintyError::Input(format!(
            "jtj is {}x{}, expected square",
            p,
            jtj.ncols()
        )));
    }
    if !jtj.iter().all(|v| v.is_finite()) {
        return Err(UncertaintyError::Input("jtj has non-finite entries".to_string()));
    }
    if p == 0 {
        return Ok((DMatrix::zeros(0, 0), 1.0));
    }
    let d = DVector::from_fn(p, |i, _| jtj[(i, i)].max(0.0).sqrt());
    if d.iter().any(|v| *v <= 0.0) {
        return Err(UncertaintyError::Singular { condition: f64::INFINITY });
    }
    let a = DMatrix::from_fn(p, p, |i, j| 0.5 * (jtj[(i, j)] + jtj[(j, i)]) / (d[i] * d[j]));
    let eig = SymmetricEigen::new(a.clone());
    let lo = eig.eigenvalues.iter().cloned().fold(f64::INFINITY, f64::min);
    let hi = eig.eigenvalues.iter().cloned().fold(0.0, f64::max);
    let condition = if lo > 0.0 { hi / lo } else { f64::INFINITY };
    if condition.is_nan() || condition > MAX_CONDITION {
        return Err(UncertaintyError::Singular { condition });
    }
    let chol = a.clone().cholesky().ok_or(UncertaintyError::Singular { condition })?;
    let mut x = chol.inverse();
    let eye = DMatrix::<f64>::identity(p, p);
    for _ in 0..2 {
        let r = &eye - &a * &x;
        x += chol.solve(&r);
    }
    let inv = DMatrix::from_fn(p, p, |i, j| 0.5 * (x[(i, j)] + x[(j, i)]) / (d[i] * d[j]));
    Ok((inv, condition))
}

/// Covariance from JᵀJ (p × p), the RSS and the number of observations n.
///
/// s² = RSS/(n − p); Cov = s²·(JᵀJ)⁻¹ via [`scaled_inverse`]. The NIST StRD "certified standard
/// deviations" are exactly √diag Cov.
pub fn covariance(jtj: &DMatrix<f64>, rss: f64, n: usize) -> Result<Covariance, UncertaintyError> {
    let p = jtj.nrows();
    if n <= p {
        return Err(UncertaintyError::NoDegreesOfFreedom { n, p });
    }
    if !(rss.is_finite() && rss >= 0.0) {
        return Err(UncertaintyError::Input(format!(
            "residual sum of squares {rss} is not a finite non-negative number"
        )));
    }
    let (inv, condition) = scaled_inverse(jtj)?;
    let dof = n - p;
    let s2 = rss / dof as f64;
    let cov = inv * s2;
    let std = DVector::from_fn(p, |i, _| cov[(i, i)].max(0.0).sqrt());
    let corr = DMatrix::from_fn(p, p, |i, j| {
        if i == j {
            1.0
        } else if std[i] > 0.0 && std[j] > 0.0 {
            (cov[(i, j)] / (std[i] * std[j])).clamp(-1.0, 1.0)
        } else {
            0.0
        }
    });
    Ok(Covariance { n, dof, s2, cov, std, corr, condition })
}

/// Covariance at a converged [`LmSolution`] of a problem with `n_obs` residuals.
pub fn covariance_at(solution: &LmSolution, n_obs: usize) -> Result<Covariance, UncertaintyError> {
    covariance(&solution.at_min.jtj, solution.at_min.rss, n_obs)
}

/// How the intervals were obtained.
#[derive(Clone, Debug, PartialEq)]
pub enum IntervalMethod {
    /// x̂ ± t_{0.975, n−p}·SE with the plain covariance (residuals white).
    Plain,
    /// HAC sandwich covariance (Bartlett weights) for correlated residuals; see `fit::robust`.
    Hac {
        /// Lag-1 autocorrelation of the residuals (largest over runs).
        rho1: f64,
        /// Largest Bartlett bandwidth over runs [samples].
        bandwidth: usize,
        /// Degrees of freedom of the coverage factor.
        dof: f64,
    },
    /// SE from the scatter of refits on model + moving-block-resampled residuals.
    Bootstrap {
        /// Number of refits used.
        replicates: usize,
        /// Block length of the resampling.
        block_length: usize,
        /// Seed of the resampling.
        seed: u64,
    },
}

/// One parameter's estimate and 95 % interval.
#[derive(Clone, Debug, PartialEq)]
pub struct ParameterInterval {
    /// Estimate x̂.
    pub value: f64,
    /// Standard error (after any widening).
    pub std: f64,
    /// Lower end x̂ − t·std.
    pub lo: f64,
    /// Upper end x̂ + t·std.
    pub hi: f64,
}

impl ParameterInterval {
    /// Half-width t·std.
    pub fn half_width(&self) -> f64 {
        0.5 * (self.hi - self.lo)
    }
}

/// 95 % intervals of all parameters, with the method used.
#[derive(Clone, Debug, PartialEq)]
pub struct IntervalSet {
    /// How the standard errors were obtained.
    pub method: IntervalMethod,
    /// Degrees of freedom of the t quantile.
    pub dof: f64,
    /// Coverage factor t_{0.975, dof}.
    pub coverage_factor: f64,
    /// Per parameter, in parameter order.
    pub params: Vec<ParameterInterval>,
    /// The whiteness test that chose the method, when one was run.
    pub whiteness: Option<LjungBox>,
}

fn build(
    x: &DVector<f64>,
    std: &DVector<f64>,
    dof: f64,
    method: IntervalMethod,
    whiteness: Option<LjungBox>,
) -> Result<IntervalSet, UncertaintyError> {
    if x.len() != std.len() {
        return Err(UncertaintyError::Input(format!(
            "{} estimates but {} standard errors",
            x.len(),
            std.len()
        )));
    }
    let t = stats::t_quantile(0.975, dof)?;
    let params = x
        .iter()
        .zip(std.iter())
        .map(|(&value, &s)| ParameterInterval {
            value,
            std: s,
            lo: value - t * s,
            hi: value + t * s,
        })
        .collect();
    Ok(IntervalSet { method, dof, coverage_factor: t, params, whiteness })
}

/// Intervals x̂ ± t_{0.975, dof}·std from standard errors obtained by `method`.
pub fn intervals_from_std(
    x: &DVector<f64>,
    std: &DVector<f64>,
    dof: f64,
    method: IntervalMethod,
) -> Result<IntervalSet, UncertaintyError> {
    build(x, std, dof, method, None)
}

/// Plain Student-t 95 % intervals x̂ ± t_{0.975, n−p}·SE.
pub fn plain_intervals(
    x: &DVector<f64>,
    cov: &Covariance,
) -> Result<IntervalSet, UncertaintyError> {
    build(x, &cov.std, cov.dof as f64, IntervalMethod::Plain, None)
}

/// Intervals from bootstrap refits: SE_j = sample standard deviation of the replicate estimates,
/// interval x̂ ± t_{0.975, dof}·SE (normal-approximation bootstrap interval, `[common practice]`;
/// B. Efron & R. J. Tibshirani, *An Introduction to the Bootstrap*, 1993, ch. 13 `[memory]`).
/// Needs at least 2 replicates of the same length as `x`.
pub fn bootstrap_intervals(
    x: &DVector<f64>,
    replicates: &[DVector<f64>],
    dof: f64,
    block_length: usize,
    seed: u64,
) -> Result<IntervalSet, UncertaintyError> {
    let b = replicates.len();
    if b < 2 {
        return Err(UncertaintyError::Input(format!(
            "bootstrap needs at least 2 replicates, found {b}"
        )));
    }
    if let Some(r) =
        replicates.iter().find(|r| r.len() != x.len() || !r.iter().all(|v| v.is_finite()))
    {
        return Err(UncertaintyError::Input(format!(
            "a bootstrap replicate has {} values or non-finite ones, expected {}",
            r.len(),
            x.len()
        )));
    }
    let std = DVector::from_fn(x.len(), |j, _| {
        let mean = replicates.iter().map(|r| r[j]).sum::<f64>() / b as f64;
        (replicates.iter().map(|r| (r[j] - mean).powi(2)).sum::<f64>() / (b - 1) as f64).sqrt()
    });
    build(x, &std, dof, IntervalMethod::Bootstrap { replicates: b, block_length, seed }, None)
}

/// Block length for the moving-block bootstrap: L = max(⌈n^{1/3}⌉, first lag k with r_k < 1/e),
/// at most n/2 (and at least 1). The n^{1/3} growth rate is the MSE-optimal order for the
/// variance (P. Hall, J. L. Horowitz, B.-Y. Jing, Biometrika 82(3):561–574, 1995 `[memory]`);
/// the 1/e lag keeps a block as long as the residuals' correlation time `[common practice]`.
pub fn block_length_rule(residuals: &[f64]) -> usize {
    let n = residuals.len();
    if n < 2 {
        return 1;
    }
    let base = (n as f64).cbrt().ceil() as usize;
    let max_lag = (n / 2).clamp(1, 10_000);
    let r = stats::autocorrelations(residuals, max_lag);
    let corr_time = r.iter().position(|&v| v < (-1.0f64).exp()).map(|k| k + 1).unwrap_or(max_lag);
    base.max(corr_time).clamp(1, (n / 2).max(1))
}

/// Moving-block bootstrap of a residual series (H. R. Künsch, Annals of Statistics
/// 17(3):1217–1241, 1989 `[memory]`): blocks of `block_length` consecutive residuals, starting at
/// uniformly drawn positions, are concatenated until n values are reached. Seeded and
/// reproducible. The caller refits on model + resampled residuals.
#[derive(Clone, Debug)]
pub struct BlockBootstrap {
    residuals: Vec<f64>,
    block_length: usize,
    seed: u64,
    rng: StdRng,
}

impl BlockBootstrap {
    /// Resampler over `residuals` with the given block length and seed. Errors when the series
    /// is empty, has non-finite values, or the block length is 0 or longer than the series.
    pub fn new(
        residuals: &[f64],
        block_length: usize,
        seed: u64,
    ) -> Result<BlockBootstrap, UncertaintyError> {
        if residuals.is_empty() || !residuals.iter().all(|v| v.is_finite()) {
            return Err(UncertaintyError::Input(
                "bootstrap residuals must be a non-empty series of finite values".to_string(),
            ));
        }
        if block_length == 0 || block_length > residuals.len() {
            return Err(UncertaintyError::Input(format!(
                "bootstrap block length {block_length} must be between 1 and the series length {}",
                residuals.len()
            )));
        }
        Ok(BlockBootstrap {
            residuals: residuals.to_vec(),
            block_length,
            seed,
            rng: StdRng::seed_from_u64(seed),
        })
    }

    /// Block length in use.
    pub fn block_length(&self) -> usize {
        self.block_length
    }

    /// Seed given at construction.
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// One resampled residual vector of the original length.
    pub fn sample(&mut self) -> DVector<f64> {
        let n = self.residuals.len();
        let l = self.block_length;
        let mut out = Vec::with_capacity(n + l);
        while out.len() < n {
            let start = self.rng.random_range(0..=n - l);
            out.extend_from_slice(&self.residuals[start..start + l]);
        }
        out.truncate(n);
        DVector::from_vec(out)
    }
}

/// What made a parameter suspicious.
#[derive(Clone, Debug, PartialEq)]
pub enum FlagKind {
    /// |corr| with parameter `other` exceeds [`CORRELATION_LIMIT`].
    Correlated {
        /// Index of the other parameter.
        other: usize,
        /// Their correlation coefficient.
        r: f64,
    },
    /// The 95 % half-width exceeds |value|: zero and twice the value are both plausible.
    WideInterval {
        /// Half-width t·SE.
        half_width: f64,
    },
}

/// A parameter the data do not identify, with a sentence for the user.
#[derive(Clone, Debug, PartialEq)]
pub struct Flag {
    /// Index of the parameter.
    pub param: usize,
    /// Why.
    pub kind: FlagKind,
    /// Explanation in words, naming the parameters and what would help.
    pub message: String,
}

fn is_damping(name: &str) -> bool {
    matches!(name, "viscous" | "coulomb" | "quadratic")
}

/// A coefficient known to better than this relative 95 % half-width is determined, whatever its
/// correlation with another: a high correlation then costs nothing worth a flag.
pub const DETERMINED_REL: f64 = 0.1;

/// Flags for parameters the data cannot identify: each pair with |corr| > 0.98 of which at least
/// one is poorly determined (relative half-width above [`DETERMINED_REL`]; one flag, on the
/// first of the pair), and each parameter whose interval half-width exceeds its |value|.
/// `names` labels the parameters (same order as the intervals); missing names become "p<i>".
pub fn identifiability_flags(
    names: &[&str],
    cov: &Covariance,
    intervals: &IntervalSet,
) -> Vec<Flag> {
    let p = intervals.params.len().min(cov.corr.nrows());
    let name = |i: usize| names.get(i).map(|s| s.to_string()).unwrap_or_else(|| format!("p{i}"));
    let rel = |i: usize| {
        let iv = &intervals.params[i];
        if iv.value != 0.0 { iv.half_width() / iv.value.abs() } else { f64::INFINITY }
    };
    let mut flags = Vec::new();
    for i in 0..p {
        for j in i + 1..p {
            let r = cov.corr[(i, j)];
            if r.abs() > CORRELATION_LIMIT && (rel(i) > DETERMINED_REL || rel(j) > DETERMINED_REL) {
                let (a, b) = (name(i), name(j));
                let worst = if rel(i) >= rel(j) { i } else { j };
                let hint = if is_damping(&a) && is_damping(&b) {
                    "releases at two clearly different amplitudes separate them, because the terms scale differently with amplitude"
                } else {
                    "a longer record or a second release separates them"
                };
                flags.push(Flag {
                    param: i,
                    kind: FlagKind::Correlated { other: j, r },
                    message: format!(
                        "{a} and {b} are {r:.3} correlated and {} is known only to ±{:.0} %: these data hardly separate them; {hint}",
                        name(worst),
                        100.0 * rel(worst).min(9.99e4)
                    ),
                });
            }
        }
    }
    for (i, iv) in intervals.params.iter().enumerate() {
        let hw = iv.half_width();
        if hw > iv.value.abs() {
            let n = name(i);
            let hint = if is_damping(&n) {
                "these data cannot tell whether the term is present; the intervals of the other coefficients allow for it"
            } else {
                "the data barely constrain it"
            };
            flags.push(Flag {
                param: i,
                kind: FlagKind::WideInterval { half_width: hw },
                message: format!(
                    "{n} is not identified: its 95 % interval ±{hw:.1e} is wider than its value {:.1e}; {hint}",
                    iv.value
                ),
            });
        }
    }
    flags
}
