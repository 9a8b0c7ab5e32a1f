//! Statistics shared by the estimator and the comparison: distributions, whiteness, information criteria.
//!
//! Quantiles and tail probabilities come from `statrs` (Student t, χ², Fisher–Snedecor F); the
//! residual-whiteness test is Ljung–Box, and the model-choice numbers are the Gaussian AIC, BIC
//! and AICc plus the nested F-test. Every function checks its arguments and returns a
//! [`StatsError`] instead of panicking. Sources are named beside each function and collected in
//! docs/statistics.md.

use statrs::distribution::{ChiSquared, ContinuousCDF, FisherSnedecor, StudentsT};

/// Why a statistic could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum StatsError {
    /// A degrees-of-freedom argument was not a positive finite number.
    #[error("degrees of freedom must be positive and finite, found {0}")]
    DegreesOfFreedom(f64),
    /// A probability argument was outside (0, 1).
    #[error("probability must lie strictly between 0 and 1, found {0}")]
    Probability(f64),
    /// Too few values for the statistic.
    #[error("{what} needs at least {needed} values, found {found}")]
    TooFew {
        /// Which statistic.
        what: &'static str,
        /// Values needed.
        needed: usize,
        /// Values given.
        found: usize,
    },
    /// An input was NaN or infinite, or a sum of squares was negative.
    #[error("{what} must be finite and non-negative, found {value}")]
    BadValue {
        /// Which input.
        what: &'static str,
        /// The value found.
        value: f64,
    },
}

fn check_dof(dof: f64) -> Result<(), StatsError> {
    if dof.is_finite() && dof > 0.0 { Ok(()) } else { Err(StatsError::DegreesOfFreedom(dof)) }
}

fn check_prob(p: f64) -> Result<(), StatsError> {
    if p > 0.0 && p < 1.0 { Ok(()) } else { Err(StatsError::Probability(p)) }
}

fn check_value(what: &'static str, value: f64) -> Result<(), StatsError> {
    if value.is_finite() && value >= 0.0 {
        Ok(())
    } else {
        Err(StatsError::BadValue { what, value })
    }
}

/// Quantile of Student's t distribution with `dof` degrees of freedom: P(T ≤ t) = `p`.
///
/// `t_quantile(0.975, ν)` is the coverage factor of a two-sided 95 % interval. For ν < 100 the
/// statrs distribution function is inverted by bracketing and bisection (statrs' own inverse can
/// loop for large ν); for ν ≥ 100 the Cornish–Fisher expansion in 1/ν through the 1/ν⁴ term is
/// used (Abramowitz & Stegun 26.7.5 `[memory]`; agrees with scipy to 1e-12 at ν = 100, see
/// tests/data/stats/reference.txt).
pub fn t_quantile(p: f64, dof: f64) -> Result<f64, StatsError> {
    check_dof(dof)?;
    check_prob(p)?;
    if dof >= 100.0 {
        let z = normal_quantile(p);
        let (z2, nu) = (z * z, dof);
        let g1 = (z2 + 1.0) * z / 4.0;
        let g2 = ((5.0 * z2 + 16.0) * z2 + 3.0) * z / 96.0;
        let g3 = (((3.0 * z2 + 19.0) * z2 + 17.0) * z2 - 15.0) * z / 384.0;
        let g4 = ((((79.0 * z2 + 776.0) * z2 + 1482.0) * z2 - 1920.0) * z2 - 945.0) * z / 92160.0;
        return Ok(z + (g1 + (g2 + (g3 + g4 / nu) / nu) / nu) / nu);
    }
    let dist = StudentsT::new(0.0, 1.0, dof).map_err(|_| StatsError::DegreesOfFreedom(dof))?;
    let upper = invert_increasing(|t| dist.cdf(t), p.max(1.0 - p), 0.0, 1.0);
    Ok(if p >= 0.5 { upper } else { -upper })
}

/// Standard normal quantile (statrs `erf_inv`).
pub fn normal_quantile(p: f64) -> f64 {
    -std::f64::consts::SQRT_2 * statrs::function::erf::erfc_inv(2.0 * p)
}

/// The x ≥ `lo` with `cdf(x)` = `p` for an increasing `cdf`: the upper end of the bracket
/// starts at `lo + step` and doubles until it passes `p`, then bisection to full precision.
fn invert_increasing(cdf: impl Fn(f64) -> f64, p: f64, lo: f64, step: f64) -> f64 {
    let mut lo = lo;
    let mut hi = lo + step;
    for _ in 0..1100 {
        if cdf(hi) >= p {
            break;
        }
        lo = hi;
        hi = lo + 2.0 * (hi - lo).max(step);
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if cdf(mid) < p { lo = mid } else { hi = mid }
    }
    0.5 * (lo + hi)
}

fn chi2(dof: f64) -> Result<ChiSquared, StatsError> {
    check_dof(dof)?;
    ChiSquared::new(dof).map_err(|_| StatsError::DegreesOfFreedom(dof))
}

/// χ² distribution function P(X ≤ x) with `dof` degrees of freedom.
pub fn chi2_cdf(x: f64, dof: f64) -> Result<f64, StatsError> {
    check_value("chi-squared statistic", x)?;
    Ok(chi2(dof)?.cdf(x))
}

/// χ² upper tail P(X > x) with `dof` degrees of freedom (computed directly, not as 1 − cdf).
pub fn chi2_sf(x: f64, dof: f64) -> Result<f64, StatsError> {
    check_value("chi-squared statistic", x)?;
    Ok(chi2(dof)?.sf(x))
}

/// χ² quantile: the x with P(X ≤ x) = `p`.
pub fn chi2_quantile(p: f64, dof: f64) -> Result<f64, StatsError> {
    check_prob(p)?;
    let dist = chi2(dof)?;
    Ok(invert_increasing(|x| dist.cdf(x), p, 0.0, dof.max(1.0)))
}

fn fisher(d1: f64, d2: f64) -> Result<FisherSnedecor, StatsError> {
    check_dof(d1)?;
    check_dof(d2)?;
    FisherSnedecor::new(d1, d2).map_err(|_| StatsError::DegreesOfFreedom(d1.min(d2)))
}

/// F distribution function P(X ≤ x) with (`d1`, `d2`) degrees of freedom.
pub fn f_cdf(x: f64, d1: f64, d2: f64) -> Result<f64, StatsError> {
    check_value("F statistic", x)?;
    Ok(fisher(d1, d2)?.cdf(x))
}

/// F upper tail P(X > x) with (`d1`, `d2`) degrees of freedom.
pub fn f_sf(x: f64, d1: f64, d2: f64) -> Result<f64, StatsError> {
    check_value("F statistic", x)?;
    Ok(fisher(d1, d2)?.sf(x))
}

/// F quantile: the x with P(X ≤ x) = `p`.
pub fn f_quantile(p: f64, d1: f64, d2: f64) -> Result<f64, StatsError> {
    check_prob(p)?;
    let dist = fisher(d1, d2)?;
    Ok(invert_increasing(|x| dist.cdf(x), p, 0.0, 1.0))
}

/// Sample autocorrelations r_1 … r_h of `e` about its mean:
/// r_k = Σ_{t=1}^{n−k} (e_t − ē)(e_{t+k} − ē) / Σ_t (e_t − ē)².
///
/// Lags at or beyond n are returned as 0. A constant series (zero variance) gives all zeros.
/// Cost O(n·h). Source: the definition used by Ljung & Box (1978).
pub fn autocorrelations(e: &[f64], h: usize) -> Vec<f64> {
    let n = e.len();
    if n == 0 {
        return vec![0.0; h];
    }
    let mean = e.iter().sum::<f64>() / n as f64;
    let c: Vec<f64> = e.iter().map(|v| v - mean).collect();
    let c0: f64 = c.iter().map(|v| v * v).sum();
    if c0 <= 0.0 || !c0.is_finite() {
        return vec![0.0; h];
    }
    (1..=h)
        .map(|k| {
            if k >= n {
                0.0
            } else {
                c[..n - k].iter().zip(&c[k..]).map(|(a, b)| a * b).sum::<f64>() / c0
            }
        })
        .collect()
}

/// Number of lags for the Ljung–Box test: h = min(20, ⌊n/5⌋), at least 1.
///
/// `[common practice]` rule of thumb; no single authoritative source.
pub fn ljung_box_lags(n: usize) -> usize {
    (n / 5).clamp(1, 20)
}

/// Result of a Ljung–Box whiteness test.
#[derive(Clone, Debug, PartialEq)]
pub struct LjungBox {
    /// The statistic Q = n(n+2) Σ_{k=1}^{h} r_k²/(n−k).
    pub q: f64,
    /// Lags used (h).
    pub lags: usize,
    /// χ² degrees of freedom (h minus the number of fitted ARMA parameters, at least 1).
    pub dof: usize,
    /// Upper-tail probability of Q under the white-noise hypothesis.
    pub p_value: f64,
    /// The lag-1 autocorrelation r_1 (used by the effective-sample-size widening).
    pub rho1: f64,
}

impl LjungBox {
    /// True when whiteness is rejected at significance level `alpha` (e.g. 0.05).
    pub fn rejects_white(&self, alpha: f64) -> bool {
        self.p_value < alpha
    }
}

/// Ljung–Box portmanteau test of the residuals `e` over `lags` lags, with `arma_params` fitted
/// ARMA parameters subtracted from the χ² degrees of freedom (0 for residuals of a deterministic
/// model). Source: G. M. Ljung & G. E. P. Box, "On a measure of lack of fit in time series
/// models", Biometrika 65(2):297–303, 1978.
///
/// Cost O(n·h); with h ≤ 20 ([`ljung_box_lags`]) a 120 000-sample log costs 2.4 M products, so
/// no subsampling is needed.
pub fn ljung_box(e: &[f64], lags: usize, arma_params: usize) -> Result<LjungBox, StatsError> {
    let n = e.len();
    if n < 3 || lags == 0 || lags >= n {
        return Err(StatsError::TooFew {
            what: "ljung-box test",
            needed: (lags + 1).max(3),
            found: n,
        });
    }
    if let Some(&bad) = e.iter().find(|v| !v.is_finite()) {
        return Err(StatsError::BadValue { what: "residual", value: bad });
    }
    let r = autocorrelations(e, lags);
    let nf = n as f64;
    let q = nf
        * (nf + 2.0)
        * r.iter().enumerate().map(|(i, rk)| rk * rk / (nf - (i + 1) as f64)).sum::<f64>();
    let dof = lags.saturating_sub(arma_params).max(1);
    let p_value = chi2_sf(q, dof as f64)?;
    Ok(LjungBox { q, lags, dof, p_value, rho1: r[0] })
}

fn check_ic(n: usize, rss: f64, p: usize) -> Result<(), StatsError> {
    check_value("residual sum of squares", rss)?;
    if n == 0 {
        return Err(StatsError::TooFew { what: "information criterion", needed: p + 1, found: n });
    }
    if rss <= 0.0 {
        return Err(StatsError::BadValue {
            what: "residual sum of squares (must be positive)",
            value: rss,
        });
    }
    Ok(())
}

/// Gaussian AIC = n·ln(RSS/n) + 2p (constant n(1 + ln 2π) omitted, σ² not counted in p).
/// Source: H. Akaike, IEEE Trans. Automatic Control AC-19(6):716–723, 1974.
pub fn aic(n: usize, rss: f64, p: usize) -> Result<f64, StatsError> {
    check_ic(n, rss, p)?;
    let nf = n as f64;
    Ok(nf * (rss / nf).ln() + 2.0 * p as f64)
}

/// Gaussian BIC = n·ln(RSS/n) + p·ln n. Source: G. Schwarz, Annals of Statistics 6(2):461–464, 1978.
pub fn bic(n: usize, rss: f64, p: usize) -> Result<f64, StatsError> {
    check_ic(n, rss, p)?;
    let nf = n as f64;
    Ok(nf * (rss / nf).ln() + p as f64 * nf.ln())
}

/// AICc = AIC + 2p(p+1)/(n − p − 1); needs n > p + 1.
/// Source: C. M. Hurvich & C.-L. Tsai, Biometrika 76(2):297–307, 1989 `[memory]`.
pub fn aicc(n: usize, rss: f64, p: usize) -> Result<f64, StatsError> {
    if n <= p + 1 {
        return Err(StatsError::TooFew { what: "aicc", needed: p + 2, found: n });
    }
    let pf = p as f64;
    Ok(aic(n, rss, p)? + 2.0 * pf * (pf + 1.0) / (n - p - 1) as f64)
}

/// Result of a nested-model F-test.
#[derive(Clone, Debug, PartialEq)]
pub struct FTest {
    /// F = [(RSS₁ − RSS₂)/(p₂ − p₁)] / [RSS₂/(n − p₂)].
    pub f: f64,
    /// Numerator degrees of freedom p₂ − p₁.
    pub df1: usize,
    /// Denominator degrees of freedom n − p₂.
    pub df2: usize,
    /// Upper-tail probability: small values favour the larger model.
    pub p_value: f64,
}

/// Nested F-test of a small model (p₁ parameters, RSS₁) inside a large one (p₂ > p₁, RSS₂), n
/// observations. Exact for linear models, approximate for nonlinear ones. `[common practice]`;
/// Bates & Watts, *Nonlinear Regression Analysis and Its Applications*, 1988, ch. 3 `[memory]`.
/// A negative F (the larger model fitting worse, i.e. a failed fit) is clamped to 0 (p = 1).
pub fn nested_f_test(
    n: usize,
    rss_small: f64,
    p_small: usize,
    rss_large: f64,
    p_large: usize,
) -> Result<FTest, StatsError> {
    check_value("residual sum of squares of the small model", rss_small)?;
    check_value("residual sum of squares of the large model", rss_large)?;
    if p_large <= p_small {
        return Err(StatsError::TooFew {
            what: "f-test (parameters of the larger model)",
            needed: p_small + 1,
            found: p_large,
        });
    }
    if n <= p_large {
        return Err(StatsError::TooFew { what: "f-test", needed: p_large + 1, found: n });
    }
    if rss_large <= 0.0 {
        return Err(StatsError::BadValue {
            what: "residual sum of squares of the large model (must be positive)",
            value: rss_large,
        });
    }
    let df1 = p_large - p_small;
    let df2 = n - p_large;
    let f = (((rss_small - rss_large) / df1 as f64) / (rss_large / df2 as f64)).max(0.0);
    let p_value = f_sf(f, df1 as f64, df2 as f64)?;
    Ok(FTest { f, df1, df2, p_value })
}
