//! GUM uncertainty budget of every physical value: which input makes its uncertainty.
//!
//! For y = f(z) with inputs z = (m, d, g, ωn, b1, b0, b2) and their covariance Σ, the law of
//! propagation (JCGM 100:2008 eq. 13 `[memory]`) is
//!
//! u_c²(y) = Σ_i c_i² u²(z_i) + Σ_{i<j} 2 c_i c_j u(z_i, z_j),   c_i = ∂f/∂z_i.
//!
//! A budget lists each input with its value, standard uncertainty u(z_i), sensitivity
//! coefficient c_i, contribution u_i(y) = |c_i|·u(z_i) (GUM §5.1.3) and its share of u_c², and
//! then each correlation term 2 c_i c_j u(z_i, z_j) with r(z_i, z_j) and its share (a negative
//! share means the correlation reduces u_c). The variance terms and the correlation terms add up
//! to u_c² exactly: it is the same quadratic form [`super::propagate`] evaluates, split into
//! its terms. Fit estimates (ωn and the damping coefficients) are correlated through the fit
//! covariance, m and d only when r(m, d) is given; gravity and the mass data are otherwise
//! independent of the fit.

use nalgebra::DMatrix;

use super::{Coefficient, Point, input, value_and_gradient};
use crate::model::{DampingSet, Term};

/// One input quantity of a budget.
#[derive(Clone, Debug, PartialEq)]
pub struct BudgetLine {
    /// Index in the propagation vector z (see [`input`]).
    pub input: usize,
    /// Machine name, e.g. `mass`, `omega_n`.
    pub key: &'static str,
    /// Symbol, e.g. `m`, `omega_n`.
    pub symbol: &'static str,
    /// Unit of the input.
    pub unit: &'static str,
    /// Value of the input.
    pub value: f64,
    /// Standard uncertainty u(z_i) (unit of the input; 0 when taken as exact).
    pub u: f64,
    /// Sensitivity coefficient c_i = ∂y/∂z_i (unit of y per unit of the input).
    pub sensitivity: f64,
    /// Contribution u_i(y) = |c_i|·u(z_i) (unit of y).
    pub contribution: f64,
    /// c_i²·u²(z_i) / u_c² (0 when u_c = 0).
    pub share: f64,
}

/// One correlation term 2 c_i c_j u(z_i, z_j) of a budget.
#[derive(Clone, Debug, PartialEq)]
pub struct CorrelationLine {
    /// Key of the first input.
    pub a: &'static str,
    /// Key of the second input.
    pub b: &'static str,
    /// Correlation coefficient r(z_a, z_b).
    pub r: f64,
    /// The term 2 c_a c_b u(z_a, z_b) (unit of y squared); may be negative.
    pub term: f64,
    /// term / u_c² (0 when u_c = 0).
    pub share: f64,
}

/// The budget of one physical value.
#[derive(Clone, Debug, PartialEq)]
pub struct Budget {
    /// Which coefficient.
    pub coefficient: Coefficient,
    /// Machine name, as in the fit JSON's `physical` block (e.g. `inertia_pivot`).
    pub key: &'static str,
    /// Value of the coefficient.
    pub value: f64,
    /// SI unit of the coefficient.
    pub unit: &'static str,
    /// Combined standard uncertainty u_c.
    pub u_c: f64,
    /// The inputs, in propagation order.
    pub inputs: Vec<BudgetLine>,
    /// The non-zero correlation terms.
    pub correlations: Vec<CorrelationLine>,
}

impl Budget {
    /// Σ c_i² u²(z_i) + Σ 2 c_i c_j u(z_i, z_j): equals u_c² (before the clamp of a negative
    /// round-off to 0).
    pub fn sum_of_terms(&self) -> f64 {
        self.inputs.iter().map(|l| l.contribution * l.contribution).sum::<f64>()
            + self.correlations.iter().map(|c| c.term).sum::<f64>()
    }

    /// The input with the largest contribution.
    pub fn dominant(&self) -> Option<&BudgetLine> {
        self.inputs.iter().max_by(|a, b| a.contribution.total_cmp(&b.contribution))
    }
}

/// Machine name of a coefficient (the key of the fit JSON's `physical` block).
pub fn coefficient_key(c: Coefficient) -> &'static str {
    match c {
        Coefficient::InertiaPivot => "inertia_pivot",
        Coefficient::InertiaCg => "inertia_cg",
        Coefficient::GyrationPivot => "radius_gyration_pivot",
        Coefficient::GyrationCg => "radius_gyration_cg",
        Coefficient::EquivalentLength => "equivalent_length",
        Coefficient::Damping(t) => t.name(),
        Coefficient::Period => "period",
        Coefficient::DampingRatio => "damping_ratio",
        Coefficient::LogDecrement => "log_decrement",
        Coefficient::QualityFactor => "quality_factor",
    }
}

/// Key, symbol and unit of input `i` of z.
pub fn input_name(i: usize) -> (&'static str, &'static str, &'static str) {
    match i {
        input::MASS => ("mass", "m", "kg"),
        input::PIVOT_TO_CG => ("pivot_to_cg", "d", "m"),
        input::GRAVITY => ("gravity", "g", "m/s^2"),
        input::OMEGA_N => ("omega_n", "omega_n", "rad/s"),
        _ => {
            let t = Term::ALL[(i - input::DAMPING).min(Term::ALL.len() - 1)];
            (t.name(), t.symbol(), t.normalized_unit())
        }
    }
}

/// The coefficients a fit with `terms` has, in report order.
pub fn coefficients(terms: DampingSet) -> Vec<Coefficient> {
    let mut v = vec![
        Coefficient::InertiaPivot,
        Coefficient::InertiaCg,
        Coefficient::GyrationPivot,
        Coefficient::GyrationCg,
        Coefficient::EquivalentLength,
    ];
    v.extend(terms.iter().map(Coefficient::Damping));
    v.push(Coefficient::Period);
    if terms.contains(Term::Viscous) {
        v.extend([
            Coefficient::DampingRatio,
            Coefficient::LogDecrement,
            Coefficient::QualityFactor,
        ]);
    }
    v
}

/// The budget of `c` at `z` with input covariance `sigma` (7 × 7, see
/// [`super::input_covariance`]); the inputs listed are m, d, g, ωn and the fitted `terms`.
/// `None` where the coefficient is undefined.
pub fn budget(
    c: Coefficient,
    z: &Point,
    sigma: &DMatrix<f64>,
    terms: DampingSet,
) -> Option<Budget> {
    let (value, grad) = value_and_gradient(c, z)?;
    let idx: Vec<usize> =
        (0..=input::OMEGA_N).chain(terms.iter().map(|t| input::DAMPING + t.index())).collect();
    let var = |i: usize, j: usize| sigma.get((i, j)).copied().unwrap_or(0.0);
    let mut u_c2 = 0.0;
    let mut inputs = Vec::with_capacity(idx.len());
    for &i in &idx {
        let u = var(i, i).max(0.0).sqrt();
        let (key, symbol, unit) = input_name(i);
        u_c2 += grad[i] * grad[i] * var(i, i);
        inputs.push(BudgetLine {
            input: i,
            key,
            symbol,
            unit,
            value: z.0[i],
            u,
            sensitivity: grad[i],
            contribution: grad[i].abs() * u,
            share: 0.0,
        });
    }
    let mut correlations = Vec::new();
    for (a, &i) in idx.iter().enumerate() {
        for &j in &idx[a + 1..] {
            let cov = var(i, j);
            let term = 2.0 * grad[i] * grad[j] * cov;
            if cov == 0.0 || term == 0.0 {
                continue;
            }
            u_c2 += term;
            let den = (var(i, i) * var(j, j)).sqrt();
            correlations.push(CorrelationLine {
                a: input_name(i).0,
                b: input_name(j).0,
                r: if den > 0.0 { cov / den } else { 0.0 },
                term,
                share: 0.0,
            });
        }
    }
    let total = u_c2.max(0.0);
    let share = |x: f64| if total > 0.0 { x / total } else { 0.0 };
    for l in &mut inputs {
        l.share = share(l.contribution * l.contribution);
    }
    for k in &mut correlations {
        k.share = share(k.term);
    }
    Some(Budget {
        coefficient: c,
        key: coefficient_key(c),
        value,
        unit: c.unit(),
        u_c: total.sqrt(),
        inputs,
        correlations,
    })
}

/// The budget of every defined physical value of a fit with `terms`.
pub fn budgets(z: &Point, sigma: &DMatrix<f64>, terms: DampingSet) -> Vec<Budget> {
    coefficients(terms).into_iter().filter_map(|c| budget(c, z, sigma, terms)).collect()
}
