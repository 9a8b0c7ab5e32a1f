//! Physical coefficients from per-unit-inertia ones: gravity, parallel axis, GUM propagation.

// Interface used by the CLI and reports (lead); bodies come with issue 4.
use crate::fit::FitOutcome;

/// Where gravity comes from.
#[derive(Clone, Debug, PartialEq)]
pub enum GravitySpec {
    /// Standard gravity 9.80665 m/s² (exact by definition).
    Standard,
    /// A measured value.
    Given {
        /// g [m/s²].
        value: f64,
        /// Standard uncertainty [m/s²].
        std: f64,
    },
    /// Normal gravity from latitude and elevation.
    Normal {
        /// Geodetic latitude [deg].
        latitude_deg: f64,
        /// Elevation [m].
        elevation_m: f64,
    },
}

/// Mass properties of the article and the gravity at the rig.
#[derive(Clone, Debug, PartialEq)]
pub struct Article {
    /// Mass [kg] and standard uncertainty.
    pub mass: (f64, f64),
    /// Pivot-to-CG distance [m] and standard uncertainty.
    pub pivot_to_cg: (f64, f64),
    /// Gravity.
    pub gravity: GravitySpec,
}

impl Article {
    /// Validated article inputs.
    pub fn new(mass: f64, mass_std: f64, d: f64, d_std: f64, gravity: GravitySpec) -> Result<Article, String> {
        let _ = (mass, mass_std, d, d_std, gravity);
        todo!("issue 4")
    }
}

/// A physical value with its uncertainty.
#[derive(Clone, Debug, PartialEq)]
pub struct Quantity {
    /// Value.
    pub value: f64,
    /// Combined standard uncertainty.
    pub std: f64,
    /// Expanded uncertainty, k = 2.
    pub expanded: f64,
    /// Unit.
    pub unit: &'static str,
}

/// Gravity as used.
#[derive(Clone, Debug, PartialEq)]
pub struct GravityUsed {
    /// g [m/s²].
    pub value: f64,
    /// Standard uncertainty.
    pub std: f64,
    /// Source in words.
    pub source: String,
}

/// Physical coefficients.
#[derive(Clone, Debug, PartialEq)]
pub struct PhysicalResult {
    /// J about the pivot.
    pub inertia_pivot: Quantity,
    /// J about the CG.
    pub inertia_cg: Quantity,
    /// √(J/m).
    pub radius_gyration_pivot: Quantity,
    /// √(Jcg/m).
    pub radius_gyration_cg: Quantity,
    /// J/(m d).
    pub equivalent_length: Quantity,
    /// c.
    pub viscous: Option<Quantity>,
    /// τc.
    pub coulomb: Option<Quantity>,
    /// cq.
    pub quadratic: Option<Quantity>,
    /// Gravity used.
    pub gravity: GravityUsed,
}

/// Propagate a fit to physical coefficients.
pub fn propagate(article: &Article, fit: &FitOutcome) -> Result<PhysicalResult, String> {
    let _ = (article, fit);
    todo!("issue 4")
}
