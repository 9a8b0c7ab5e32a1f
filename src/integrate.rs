//! Integration of the pendulum model at arbitrary, non-uniform sample times.
//!
//! (Interface fixed by the lead; bodies to be written in issue 3.)
//!
//! Two schemes: classical RK4 with sub-steps between sample times (used by the estimator, with
//! forward sensitivities), and adaptive Dormand–Prince 5(4) with dense output (used by `simulate`
//! and as a check). Both locate the instants where the angular velocity reaches zero inside a step
//! and apply the stick–slip rule there: the article sticks if |ωn² sin(θ−θeq)| ≤ the static
//! friction level, else it reverses with the Coulomb sign switched.

use crate::model::{DampingSet, Physics, Release};

/// Which scheme to use, with its accuracy setting.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Method {
    /// Classical RK4; each interval between samples is cut into equal sub-steps no longer than
    /// `max_step` seconds.
    Rk4 {
        /// Longest sub-step [s].
        max_step: f64,
    },
    /// Adaptive Dormand–Prince 5(4) with dense output.
    DormandPrince {
        /// Relative tolerance.
        rtol: f64,
        /// Absolute tolerance [rad, rad/s].
        atol: f64,
    },
}

/// Something that happened on the way.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Event {
    /// The velocity reached zero and the motion reversed.
    Reversal {
        /// Time [s].
        t: f64,
        /// Angle at the turning point [rad].
        angle: f64,
    },
    /// The velocity reached zero inside the friction dead band: the article stuck for good.
    Stick {
        /// Time [s].
        t: f64,
        /// Rest angle [rad].
        angle: f64,
    },
}

/// Angle and velocity at the requested times, and the events between them.
#[derive(Clone, Debug, PartialEq)]
pub struct Trajectory {
    /// Sample times [s] (as requested).
    pub times: Vec<f64>,
    /// θ at each time [rad].
    pub angle: Vec<f64>,
    /// θ' at each time [rad/s].
    pub velocity: Vec<f64>,
    /// Turning points and the stick event, in time order.
    pub events: Vec<Event>,
}

/// Sensitivities ∂θ(t_i)/∂p of the angle at every sample to every fitted parameter.
///
/// Parameter order: ωn, then the coefficient of each term of the [`DampingSet`] in canonical
/// order, then equilibrium, initial angle, initial velocity. Row-major: `d_angle[i * n_params + k]`.
#[derive(Clone, Debug, PartialEq)]
pub struct Sensitivities {
    /// Number of parameters (1 + terms + 3).
    pub n_params: usize,
    /// ∂θ/∂p, sample-major.
    pub d_angle: Vec<f64>,
}

/// Why an integration could not finish.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum IntegrateError {
    /// The parameters are not physical (named field).
    #[error("invalid parameter: {0}")]
    InvalidParams(String),
    /// Sample times not finite and strictly increasing.
    #[error("sample times must be finite and strictly increasing (at index {0})")]
    BadTimes(usize),
    /// The adaptive step fell below the resolvable minimum.
    #[error("step size underflow at t = {t} s")]
    StepTooSmall {
        /// Time at which the step collapsed [s].
        t: f64,
    },
    /// The solution left the finite range.
    #[error("solution became non-finite at t = {t} s")]
    NonFinite {
        /// Time [s].
        t: f64,
    },
}

/// Integrate from the release at `times[0]` and return the trajectory at every time in `times`.
pub fn simulate(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    method: Method,
) -> Result<Trajectory, IntegrateError> {
    let _ = (physics, release, times, method);
    todo!("issue 3")
}

/// RK4 integration of the state together with its forward sensitivities to the parameters of
/// `terms` (see [`Sensitivities`] for the order), including the jump conditions at velocity
/// reversals and at sticking. Terms outside `terms` are integrated with their coefficient from
/// `physics` but get no sensitivity column.
pub fn simulate_with_sensitivities(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
) -> Result<(Trajectory, Sensitivities), IntegrateError> {
    let _ = (physics, release, times, terms, max_step);
    todo!("issue 3")
}
