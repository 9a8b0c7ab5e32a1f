//! Physical coefficients from per-unit-inertia ones: gravity, parallel axis, GUM propagation.
//!
//! A free-decay fit identifies ωn² = m g d / J and the damping per unit inertia (b1 = c/J,
//! b0 = τc/J, b2 = cq/J). With the mass m, the pivot-to-CG distance d and gravity g (each with
//! a standard uncertainty) this module gives J about the pivot, J about the CG (parallel axis),
//! radii of gyration, the equivalent simple-pendulum length and c, τc, cq in SI, plus the
//! small-amplitude period, damping ratio, log decrement and Q.
//!
//! Uncertainty follows the GUM (JCGM 100:2008) first-order law of propagation,
//! u_c²(y) = ∇fᵀ·Σ·∇f, which is eq. (13) with the full covariance Σ of the inputs
//! z = (m, d, g, ωn, b1, b0, b2); for the uncorrelated m, d, g it reduces to eq. (10), and the
//! fitted block comes from the fit covariance (those estimates are correlated). Expanded
//! uncertainty U = k·u_c with k = 2 (§6.2.1 eq. 18, §6.3.3) `[memory]`. Sensitivities are analytic
//! ([`value_and_gradient`]); a test checks them against central differences.
//!
//! Formulas of the compound pendulum: docs/checks.md §1 and §3 `[common practice]`, e.g. Thomson &
//! Dahleh, *Theory of Vibration with Applications*, 5th ed., 1998, ch. 2 `[memory]`.

pub mod budget;

use std::f64::consts::PI;

use nalgebra::DMatrix;

use crate::model::{DampingSet, Term};

/// Standard acceleration of gravity g_n = 9.80665 m/s², exact by definition (3rd CGPM, 1901;
/// SI Brochure, 9th ed., 2019, Appendix 1 `[memory]`).
pub const STANDARD_GRAVITY: f64 = 9.80665;

/// Coverage factor of the expanded uncertainty (JCGM 100:2008 §6.3.3: k = 2 ≈ 95 % for a normal
/// distribution `[memory]`).
pub const COVERAGE_FACTOR: f64 = 2.0;

/// WGS 84 normal gravity at the equator γ_e (m/s²) (NIMA TR8350.2, 3rd ed., ch. 4 `[memory]`).
pub const WGS84_GAMMA_E: f64 = 9.7803253359;
/// WGS 84 Somigliana constant k_s.
pub const WGS84_K: f64 = 0.00193185265241;
/// WGS 84 first eccentricity squared e² (2f − f²).
pub const WGS84_E2: f64 = 0.00669437999013;
/// WGS 84 semi-major axis a (m).
pub const WGS84_A: f64 = 6378137.0;
/// WGS 84 flattening f.
pub const WGS84_F: f64 = 1.0 / 298.257223563;
/// WGS 84 m = ω²a²b/GM.
pub const WGS84_M: f64 = 0.00344978650684;

/// Why physical coefficients could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum PhysicalError {
    /// An input value is out of its domain.
    #[error("{field}: expected {expected}, found {value}")]
    Input {
        /// Which input (e.g. "mass").
        field: &'static str,
        /// What was expected.
        expected: &'static str,
        /// The value found.
        value: f64,
    },
    /// J about the CG came out negative: m d² exceeds the fitted J about the pivot. Never
    /// reported as a value (no rigid body has it); the inputs or the log are wrong.
    #[error(
        "moment of inertia about the CG J - m d^2 = {j_cg:.4e} kg*m^2 is negative (U = {expanded:.1e}, k = 2): m d^2 = {md2:.4e} kg*m^2 exceeds the fitted J about the pivot {j:.4e} kg*m^2; check the mass and the pivot-to-CG distance, and that the log holds a free swing (a forced swing biases omega_n)"
    )]
    NegativeInertiaCg {
        /// J − m d² [kg·m²].
        j_cg: f64,
        /// Its expanded uncertainty [kg·m²].
        expanded: f64,
        /// m d² [kg·m²].
        md2: f64,
        /// J about the pivot [kg·m²].
        j: f64,
    },
    /// The fit covariance does not match the fitted terms.
    #[error(
        "fit covariance is {rows}x{cols}, expected {expected}x{expected} (omega_n plus the fitted terms)"
    )]
    Covariance {
        /// Rows found.
        rows: usize,
        /// Columns found.
        cols: usize,
        /// Size expected.
        expected: usize,
    },
}

fn require(
    field: &'static str,
    expected: &'static str,
    value: f64,
    ok: bool,
) -> Result<(), PhysicalError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(PhysicalError::Input { field, expected, value })
    }
}

/// WGS 84 normal gravity on the ellipsoid at geodetic latitude `latitude_deg` (Somigliana's
/// closed form): γ = γ_e (1 + k_s sin²φ)/√(1 − e² sin²φ). NIMA TR8350.2 ch. 4 `[memory]`.
pub fn somigliana(latitude_deg: f64) -> f64 {
    let s2 = latitude_deg.to_radians().sin().powi(2);
    WGS84_GAMMA_E * (1.0 + WGS84_K * s2) / (1.0 - WGS84_E2 * s2).sqrt()
}

/// Normal gravity at latitude `latitude_deg` (−90…90) and ellipsoidal height `elevation_m`
/// (−11 000 … 20 000 m) by the second-order height formula
/// γ_h = γ [1 − (2/a)(1 + f + m − 2f sin²φ) h + (3/a²) h²] (TR8350.2 ch. 4 `[memory]`).
pub fn normal_gravity(latitude_deg: f64, elevation_m: f64) -> Result<f64, PhysicalError> {
    require("latitude", "degrees between -90 and 90", latitude_deg, latitude_deg.abs() <= 90.0)?;
    require(
        "elevation",
        "metres between -11000 and 20000",
        elevation_m,
        (-11_000.0..=20_000.0).contains(&elevation_m),
    )?;
    let s2 = latitude_deg.to_radians().sin().powi(2);
    let h = elevation_m;
    let a = WGS84_A;
    let factor =
        1.0 - 2.0 / a * (1.0 + WGS84_F + WGS84_M - 2.0 * WGS84_F * s2) * h + 3.0 / (a * a) * h * h;
    Ok(somigliana(latitude_deg) * factor)
}

/// Where the gravity value came from.
#[derive(Clone, Debug, PartialEq)]
pub enum GravitySource {
    /// Standard gravity g_n.
    Standard,
    /// Given by the user.
    Given,
    /// WGS 84 normal gravity at a latitude and elevation.
    NormalGravity {
        /// Geodetic latitude, degrees.
        latitude_deg: f64,
        /// Height above the ellipsoid, metres.
        elevation_m: f64,
    },
}

/// A gravity value with its standard uncertainty and origin.
#[derive(Clone, Debug, PartialEq)]
pub struct Gravity {
    /// g (m/s²).
    pub value: f64,
    /// Standard uncertainty of g (m/s²); 0 unless given.
    pub u: f64,
    /// Where the value came from.
    pub source: GravitySource,
}

impl Gravity {
    /// Standard gravity 9.80665 m/s² with uncertainty 0.
    pub fn standard() -> Gravity {
        Gravity { value: STANDARD_GRAVITY, u: 0.0, source: GravitySource::Standard }
    }

    /// A user-given value (m/s², 9.7…9.9 on Earth is not enforced; must be positive).
    pub fn given(value: f64, u: f64) -> Result<Gravity, PhysicalError> {
        require("gravity", "a positive acceleration in m/s^2", value, value > 0.0)?;
        require(
            "gravity uncertainty",
            "a non-negative standard uncertainty in m/s^2",
            u,
            u >= 0.0,
        )?;
        Ok(Gravity { value, u, source: GravitySource::Given })
    }

    /// WGS 84 normal gravity at a location ([`normal_gravity`]), with standard uncertainty `u`
    /// (0 if the formula is taken as exact; local anomalies are tens of mGal).
    pub fn at_location(
        latitude_deg: f64,
        elevation_m: f64,
        u: f64,
    ) -> Result<Gravity, PhysicalError> {
        require(
            "gravity uncertainty",
            "a non-negative standard uncertainty in m/s^2",
            u,
            u >= 0.0,
        )?;
        let value = normal_gravity(latitude_deg, elevation_m)?;
        Ok(Gravity { value, u, source: GravitySource::NormalGravity { latitude_deg, elevation_m } })
    }

    /// One line for reports, e.g. "standard gravity 9.80665 m/s^2".
    pub fn describe(&self) -> String {
        match &self.source {
            GravitySource::Standard => format!("standard gravity {} m/s^2", self.value),
            GravitySource::Given => {
                format!("given gravity {} m/s^2 (u {} m/s^2)", self.value, self.u)
            }
            GravitySource::NormalGravity { latitude_deg, elevation_m } => format!(
                "wgs 84 normal gravity {:.7} m/s^2 at latitude {latitude_deg} deg, elevation {elevation_m} m",
                self.value
            ),
        }
    }
}

/// A measured input: value and standard uncertainty.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Measured {
    /// Value.
    pub value: f64,
    /// Standard uncertainty (same unit).
    pub u: f64,
}

/// What the user knows about the article.
#[derive(Clone, Debug, PartialEq)]
pub struct ArticleInputs {
    /// Mass m (kg).
    pub mass: Measured,
    /// Pivot-to-CG distance d (m).
    pub pivot_to_cg: Measured,
    /// Gravity g.
    pub gravity: Gravity,
    /// Correlation coefficient r(m, d) between the mass and distance estimates (usually 0).
    pub r_mass_pivot: f64,
}

/// Fitted per-unit-inertia dynamics and their covariance.
#[derive(Clone, Debug, PartialEq)]
pub struct FittedDynamics {
    /// ωn (rad/s).
    pub omega_n: f64,
    /// Damping terms that were fitted.
    pub terms: DampingSet,
    /// Coefficients in [`Term::ALL`] order (b1 1/s, b0 rad/s², b2 1/rad); unfitted ones ignored.
    pub damping: [f64; crate::model::N_TERMS],
    /// Covariance of (ωn, fitted terms in [`Term::ALL`] order), size 1 + terms.len().
    pub cov: DMatrix<f64>,
}

/// Index of each input in the propagation vector z.
pub mod input {
    /// Mass m.
    pub const MASS: usize = 0;
    /// Pivot-to-CG distance d.
    pub const PIVOT_TO_CG: usize = 1;
    /// Gravity g.
    pub const GRAVITY: usize = 2;
    /// Natural frequency ωn.
    pub const OMEGA_N: usize = 3;
    /// First damping coefficient (viscous b1); Coulomb b0, quadratic b2 and the pre-sliding
    /// stiffness σ follow.
    pub const DAMPING: usize = 4;
    /// Length of z.
    pub const LEN: usize = DAMPING + crate::model::N_TERMS;
}

/// A point z = (m, d, g, ωn, b1, b0, b2, σ) at which coefficients are evaluated.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Point(pub [f64; input::LEN]);

/// An output of the propagation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Coefficient {
    /// J = m g d / ωn² (kg·m²).
    InertiaPivot,
    /// J_cg = J − m d² (kg·m²).
    InertiaCg,
    /// k_O = √(J/m) (m).
    GyrationPivot,
    /// k_cg = √(J_cg/m) (m); undefined when J_cg ≤ 0.
    GyrationCg,
    /// L = J/(m d) = g/ωn² (m).
    EquivalentLength,
    /// Physical damping coefficient b·J of a term.
    Damping(Term),
    /// T0 = 2π/ωn (s).
    Period,
    /// ζ = b1/(2ωn).
    DampingRatio,
    /// δ = 2πζ/√(1 − ζ²); undefined for ζ ≥ 1.
    LogDecrement,
    /// Q = 1/(2ζ) = ωn/b1; undefined for b1 ≤ 0.
    QualityFactor,
}

impl Coefficient {
    /// SI unit of the coefficient.
    pub fn unit(self) -> &'static str {
        match self {
            Coefficient::InertiaPivot | Coefficient::InertiaCg => "kg*m^2",
            Coefficient::GyrationPivot
            | Coefficient::GyrationCg
            | Coefficient::EquivalentLength => "m",
            Coefficient::Damping(t) => t.physical_unit(),
            Coefficient::Period => "s",
            Coefficient::DampingRatio | Coefficient::LogDecrement | Coefficient::QualityFactor => {
                "1"
            }
        }
    }
}

/// Value and analytic gradient ∂y/∂z of `c` at `z`; `None` where the coefficient is undefined
/// (k_cg with J_cg ≤ 0, δ with ζ ≥ 1, Q with b1 ≤ 0, any non-positive m, d, g or ωn).
pub fn value_and_gradient(c: Coefficient, z: &Point) -> Option<(f64, [f64; input::LEN])> {
    use input::*;
    let [m, d, g, w, ..] = z.0;
    if !(m > 0.0 && d > 0.0 && g > 0.0 && w > 0.0) {
        return None;
    }
    let mut grad = [0.0; LEN];
    let j = m * g * d / (w * w);
    let j_grad = [j / m, j / d, j / g, -2.0 * j / w];
    let value = match c {
        Coefficient::InertiaPivot => {
            grad[..4].copy_from_slice(&j_grad);
            j
        }
        Coefficient::InertiaCg => {
            grad[..4].copy_from_slice(&j_grad);
            grad[MASS] -= d * d;
            grad[PIVOT_TO_CG] -= 2.0 * m * d;
            j - m * d * d
        }
        Coefficient::GyrationPivot => {
            // k_O = √(g d)/ωn.
            let k = (g * d).sqrt() / w;
            grad[PIVOT_TO_CG] = k / (2.0 * d);
            grad[GRAVITY] = k / (2.0 * g);
            grad[OMEGA_N] = -k / w;
            k
        }
        Coefficient::GyrationCg => {
            // k_cg² = g d/ωn² − d².
            let k2 = g * d / (w * w) - d * d;
            if k2 <= 0.0 {
                return None;
            }
            let k = k2.sqrt();
            grad[PIVOT_TO_CG] = (g / (w * w) - 2.0 * d) / (2.0 * k);
            grad[GRAVITY] = d / (w * w) / (2.0 * k);
            grad[OMEGA_N] = -2.0 * g * d / (w * w * w) / (2.0 * k);
            k
        }
        Coefficient::EquivalentLength => {
            grad[GRAVITY] = 1.0 / (w * w);
            grad[OMEGA_N] = -2.0 * g / (w * w * w);
            g / (w * w)
        }
        Coefficient::Damping(t) if !t.scales_with_inertia() => {
            // A speed (the Stribeck velocity): the same in both views.
            let idx = DAMPING + t.index();
            grad[idx] = 1.0;
            z.0[idx]
        }
        Coefficient::Damping(t) => {
            let idx = DAMPING + t.index();
            let b = z.0[idx];
            for (gi, ji) in grad.iter_mut().zip(j_grad) {
                *gi = b * ji;
            }
            grad[idx] = j;
            b * j
        }
        Coefficient::Period => {
            grad[OMEGA_N] = -2.0 * PI / (w * w);
            2.0 * PI / w
        }
        Coefficient::DampingRatio => {
            let b1 = z.0[DAMPING];
            grad[DAMPING] = 1.0 / (2.0 * w);
            grad[OMEGA_N] = -b1 / (2.0 * w * w);
            b1 / (2.0 * w)
        }
        Coefficient::LogDecrement => {
            let b1 = z.0[DAMPING];
            let zeta = b1 / (2.0 * w);
            if zeta.is_nan() || zeta.abs() >= 1.0 {
                return None;
            }
            let q = 1.0 - zeta * zeta;
            let dd_dzeta = 2.0 * PI / (q * q.sqrt());
            grad[DAMPING] = dd_dzeta / (2.0 * w);
            grad[OMEGA_N] = -dd_dzeta * b1 / (2.0 * w * w);
            2.0 * PI * zeta / q.sqrt()
        }
        Coefficient::QualityFactor => {
            let b1 = z.0[DAMPING];
            if b1 <= 0.0 {
                return None;
            }
            grad[OMEGA_N] = 1.0 / b1;
            grad[DAMPING] = -w / (b1 * b1);
            w / b1
        }
    };
    value.is_finite().then_some((value, grad))
}

/// Combined standard uncertainty √(∇fᵀ Σ ∇f) (JCGM 100:2008 eq. 13 `[memory]`); `Σ` must be
/// len × len. Tiny negative round-off of the quadratic form is clamped to 0.
pub fn propagate(gradient: &[f64], sigma: &DMatrix<f64>) -> f64 {
    let n = gradient.len().min(sigma.nrows()).min(sigma.ncols());
    let mut s = 0.0;
    for i in 0..n {
        for j in 0..n {
            s += gradient[i] * sigma[(i, j)] * gradient[j];
        }
    }
    s.max(0.0).sqrt()
}

/// A coefficient with its combined standard uncertainty and expanded uncertainty.
#[derive(Clone, Debug, PartialEq)]
pub struct Quantity {
    /// Estimate.
    pub value: f64,
    /// Combined standard uncertainty u_c.
    pub u_c: f64,
    /// Coverage factor k.
    pub k: f64,
    /// Expanded uncertainty U = k·u_c.
    pub expanded: f64,
    /// SI unit.
    pub unit: &'static str,
}

/// Physical coefficients of the article, each with GUM uncertainties.
#[derive(Clone, Debug, PartialEq)]
pub struct PhysicalCoefficients {
    /// J about the pivot.
    pub inertia_pivot: Quantity,
    /// J about the CG (parallel axis); negative means m, d and the fit are inconsistent.
    pub inertia_cg: Quantity,
    /// Radius of gyration about the pivot.
    pub gyration_pivot: Quantity,
    /// Radius of gyration about the CG (absent when J_cg ≤ 0).
    pub gyration_cg: Option<Quantity>,
    /// Equivalent simple-pendulum length.
    pub equivalent_length: Quantity,
    /// c, τc, cq, k (pre-sliding stiffness σ·J) in [`Term::ALL`] order; absent terms absent.
    pub damping: [Option<Quantity>; crate::model::N_TERMS],
    /// Small-amplitude period.
    pub period: Quantity,
    /// Viscous damping ratio ζ (with a viscous term).
    pub damping_ratio: Option<Quantity>,
    /// Logarithmic decrement of the viscous part (with a viscous term, ζ < 1).
    pub log_decrement: Option<Quantity>,
    /// Quality factor Q = 1/(2ζ) (with a positive viscous term).
    pub quality_factor: Option<Quantity>,
    /// The gravity used.
    pub gravity: Gravity,
    /// The GUM budget of every value above ([`budget`]), in report order.
    pub budgets: Vec<budget::Budget>,
}

/// The 7 × 7 covariance Σ of z = (m, d, g, ωn, b1, b0, b2): u² of m, d, g on the diagonal,
/// r(m,d)·u(m)·u(d) off it, and the fit covariance in the (ωn, fitted terms) block. Unfitted
/// terms have zero rows.
pub fn input_covariance(
    inputs: &ArticleInputs,
    fit: &FittedDynamics,
) -> Result<DMatrix<f64>, PhysicalError> {
    use input::*;
    let idx: Vec<usize> =
        std::iter::once(OMEGA_N).chain(fit.terms.iter().map(|t| DAMPING + t.index())).collect();
    let k = idx.len();
    if fit.cov.nrows() != k || fit.cov.ncols() != k {
        return Err(PhysicalError::Covariance {
            rows: fit.cov.nrows(),
            cols: fit.cov.ncols(),
            expected: k,
        });
    }
    if !fit.cov.iter().all(|v| v.is_finite()) {
        return Err(PhysicalError::Input {
            field: "fit covariance",
            expected: "finite entries",
            value: f64::NAN,
        });
    }
    let mut s = DMatrix::zeros(LEN, LEN);
    s[(MASS, MASS)] = inputs.mass.u.powi(2);
    s[(PIVOT_TO_CG, PIVOT_TO_CG)] = inputs.pivot_to_cg.u.powi(2);
    s[(GRAVITY, GRAVITY)] = inputs.gravity.u.powi(2);
    let c = inputs.r_mass_pivot * inputs.mass.u * inputs.pivot_to_cg.u;
    s[(MASS, PIVOT_TO_CG)] = c;
    s[(PIVOT_TO_CG, MASS)] = c;
    for (a, &ia) in idx.iter().enumerate() {
        for (b, &ib) in idx.iter().enumerate() {
            s[(ia, ib)] = fit.cov[(a, b)];
        }
    }
    Ok(s)
}

fn check_inputs(inputs: &ArticleInputs, fit: &FittedDynamics) -> Result<(), PhysicalError> {
    check_article(inputs)?;
    require("omega_n", "a positive natural frequency in rad/s", fit.omega_n, fit.omega_n > 0.0)?;
    for t in fit.terms.iter() {
        let v = fit.damping[t.index()];
        require("damping coefficient", "a finite number", v, true)?;
    }
    Ok(())
}

/// Check the article's inputs on their own (before any fit): positive m, d, g, non-negative
/// uncertainties, |r(m, d)| ≤ 1. The error names the field.
pub fn check_article(inputs: &ArticleInputs) -> Result<(), PhysicalError> {
    let m = inputs.mass;
    let d = inputs.pivot_to_cg;
    let g = &inputs.gravity;
    require("mass", "a positive mass in kg", m.value, m.value > 0.0)?;
    require("mass uncertainty", "a non-negative standard uncertainty in kg", m.u, m.u >= 0.0)?;
    require("pivot-to-cg", "a positive distance in m", d.value, d.value > 0.0)?;
    require(
        "pivot-to-cg uncertainty",
        "a non-negative standard uncertainty in m",
        d.u,
        d.u >= 0.0,
    )?;
    require("gravity", "a positive acceleration in m/s^2", g.value, g.value > 0.0)?;
    require(
        "gravity uncertainty",
        "a non-negative standard uncertainty in m/s^2",
        g.u,
        g.u >= 0.0,
    )?;
    let r = inputs.r_mass_pivot;
    require("mass/pivot-to-cg correlation", "a coefficient between -1 and 1", r, r.abs() <= 1.0)?;
    Ok(())
}

/// Physical coefficients with GUM uncertainties (k = 2) from the article inputs and the fit.
pub fn physical_coefficients(
    inputs: &ArticleInputs,
    fit: &FittedDynamics,
) -> Result<PhysicalCoefficients, PhysicalError> {
    check_inputs(inputs, fit)?;
    let sigma = input_covariance(inputs, fit)?;
    let mut z = [0.0; input::LEN];
    z[..=input::OMEGA_N].copy_from_slice(&[
        inputs.mass.value,
        inputs.pivot_to_cg.value,
        inputs.gravity.value,
        fit.omega_n,
    ]);
    for t in fit.terms.iter() {
        z[input::DAMPING + t.index()] = fit.damping[t.index()];
    }
    let point = Point(z);
    let quantity = |c: Coefficient| {
        value_and_gradient(c, &point).map(|(value, grad)| {
            let u_c = propagate(&grad, &sigma);
            Quantity {
                value,
                u_c,
                k: COVERAGE_FACTOR,
                expanded: COVERAGE_FACTOR * u_c,
                unit: c.unit(),
            }
        })
    };
    // Invariant: with m, d, g, ωn checked positive above, these four are always defined.
    let always = |c: Coefficient| {
        quantity(c).ok_or(PhysicalError::Input {
            field: "inputs",
            expected: "values giving a finite inertia",
            value: f64::NAN,
        })
    };
    let viscous = fit.terms.contains(Term::Viscous);
    let inertia_pivot = always(Coefficient::InertiaPivot)?;
    let inertia_cg = always(Coefficient::InertiaCg)?;
    if inertia_cg.value <= 0.0 {
        return Err(PhysicalError::NegativeInertiaCg {
            j_cg: inertia_cg.value,
            expanded: inertia_cg.expanded,
            md2: inputs.mass.value * inputs.pivot_to_cg.value * inputs.pivot_to_cg.value,
            j: inertia_pivot.value,
        });
    }
    Ok(PhysicalCoefficients {
        inertia_pivot,
        inertia_cg,
        gyration_pivot: always(Coefficient::GyrationPivot)?,
        gyration_cg: quantity(Coefficient::GyrationCg),
        equivalent_length: always(Coefficient::EquivalentLength)?,
        damping: Term::ALL
            .map(|t| if fit.terms.contains(t) { quantity(Coefficient::Damping(t)) } else { None }),
        period: always(Coefficient::Period)?,
        damping_ratio: if viscous { quantity(Coefficient::DampingRatio) } else { None },
        log_decrement: if viscous { quantity(Coefficient::LogDecrement) } else { None },
        quality_factor: if viscous { quantity(Coefficient::QualityFactor) } else { None },
        gravity: inputs.gravity.clone(),
        budgets: budget::budgets(&point, &sigma, fit.terms),
    })
}
