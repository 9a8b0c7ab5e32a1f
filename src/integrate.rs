//! Integration of the pendulum model at arbitrary, non-uniform sample times.
//!
//! Two schemes: classical RK4 with sub-steps between sample times (used by the estimator, with
//! forward sensitivities), and adaptive Dormand–Prince 5(4) with dense output (used by `simulate`
//! and as a check). Both locate the instants where the angular velocity reaches zero inside a step
//! and apply the stick–slip rule there: the article sticks if |ωn² sin(θ−θeq)| ≤ the static
//! friction level, else it reverses with the Coulomb sign switched.
//!
//! The two schemes live in [`rk4`] (which also carries the forward sensitivities, generic over the
//! number of parameters so the hot loop works on fixed arrays) and [`dopri`]. This file holds what
//! both share: input checks, the stick–slip decision and the safeguarded root finder that locates
//! velocity zeros. See docs/integration.md for the equations.

pub mod dopri;
mod rk4;

use crate::model::{DampingSet, N_TERMS, Physics, Release, Term};

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
///
/// `times` must be finite and strictly increasing; an empty slice gives an empty trajectory.
pub fn simulate(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    method: Method,
) -> Result<Trajectory, IntegrateError> {
    check_inputs(physics, release, times)?;
    match method {
        Method::Rk4 { max_step } => {
            check_max_step(max_step)?;
            let (traj, _) = rk4::run::<0>(physics, release, times, DampingSet::EMPTY, max_step)?;
            Ok(traj)
        }
        Method::DormandPrince { rtol, atol } => {
            if !(rtol.is_finite() && rtol >= dopri::MIN_RTOL) {
                return Err(IntegrateError::InvalidParams(format!(
                    "rtol must be a finite number >= {:e}, found {rtol}",
                    dopri::MIN_RTOL
                )));
            }
            if !(atol.is_finite() && atol > 0.0) {
                return Err(IntegrateError::InvalidParams(format!(
                    "atol must be a finite number > 0, found {atol}"
                )));
            }
            dopri::run(physics, release, times, rtol, atol)
        }
    }
}

/// RK4 integration of the state together with its forward sensitivities to the parameters of
/// `terms` (see [`Sensitivities`] for the order), including the jump conditions at velocity
/// reversals and at sticking. Terms outside `terms` are integrated with their coefficient from
/// `physics` but get no sensitivity column.
///
/// The state part of the result is identical to `simulate` with `Method::Rk4 { max_step }`.
pub fn simulate_with_sensitivities(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
) -> Result<(Trajectory, Sensitivities), IntegrateError> {
    check_inputs(physics, release, times)?;
    check_max_step(max_step)?;
    let (traj, d_angle) = match terms.len() {
        0 => rk4::run::<4>(physics, release, times, terms, max_step)?,
        1 => rk4::run::<5>(physics, release, times, terms, max_step)?,
        2 => rk4::run::<6>(physics, release, times, terms, max_step)?,
        3 => rk4::run::<7>(physics, release, times, terms, max_step)?,
        4 => rk4::run::<8>(physics, release, times, terms, max_step)?,
        _ => rk4::run::<9>(physics, release, times, terms, max_step)?,
    };
    Ok((traj, Sensitivities { n_params: 1 + terms.len() + crate::model::RELEASE_PARAMS, d_angle }))
}

/// Like [`simulate`] with `Method::Rk4 { max_step }`, but hands each sample's θ and ω to
/// `sink(i, θ, ω)` instead of storing them (the estimator's cost needs only a sum). Returns the
/// events.
pub fn for_each_state(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    max_step: f64,
    mut sink: impl FnMut(usize, f64, f64),
) -> Result<Vec<Event>, IntegrateError> {
    check_inputs(physics, release, times)?;
    check_max_step(max_step)?;
    let mut i = 0usize;
    rk4::run_into::<0>(physics, release, times, DampingSet::EMPTY, max_step, &mut |th, om, _| {
        sink(i, th, om);
        i += 1;
    })
}

/// Like [`simulate_with_sensitivities`], but hands each sample's θ, ω and ∂θ/∂p (columns in the
/// [`Sensitivities`] order) to `sink(i, θ, ω, ∂θ/∂p)` as soon as it is computed instead of
/// storing them, so a caller that only accumulates (the estimator's normal equations) needs no
/// n × p matrix. The numbers are the same as [`simulate_with_sensitivities`]'s. Returns the
/// events.
pub fn for_each_sensitivity(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
    mut sink: impl FnMut(usize, f64, f64, &[f64]),
) -> Result<Vec<Event>, IntegrateError> {
    check_inputs(physics, release, times)?;
    check_max_step(max_step)?;
    let mut i = 0usize;
    macro_rules! go {
        ($np:literal) => {
            rk4::run_into::<$np>(physics, release, times, terms, max_step, &mut |th, om, st| {
                sink(i, th, om, st);
                i += 1;
            })
        };
    }
    match terms.len() {
        0 => go!(4),
        1 => go!(5),
        2 => go!(6),
        3 => go!(7),
        4 => go!(8),
        _ => go!(9),
    }
}

/// Check physics, release and times once, before any integration.
fn check_inputs(physics: &Physics, release: &Release, times: &[f64]) -> Result<(), IntegrateError> {
    physics.validate().map_err(IntegrateError::InvalidParams)?;
    if physics.coef(Term::Presliding) > 0.0 && physics.coef(Term::Coulomb) <= 0.0 {
        return Err(IntegrateError::InvalidParams(
            "presliding stiffness needs a coulomb level > 0".into(),
        ));
    }
    for (name, v) in [
        ("equilibrium", release.equilibrium),
        ("initial_angle", release.angle),
        ("initial_velocity", release.velocity),
    ] {
        if !v.is_finite() {
            return Err(IntegrateError::InvalidParams(format!("{name} must be finite, found {v}")));
        }
    }
    for (i, t) in times.iter().enumerate() {
        if !t.is_finite() || (i > 0 && *t <= times[i - 1]) {
            return Err(IntegrateError::BadTimes(i));
        }
    }
    Ok(())
}

fn check_max_step(max_step: f64) -> Result<(), IntegrateError> {
    if max_step.is_finite() && max_step > 0.0 {
        Ok(())
    } else {
        Err(IntegrateError::InvalidParams(format!(
            "max_step must be a finite number > 0, found {max_step}"
        )))
    }
}

/// How the article moves between events.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Mode {
    /// Moving with Coulomb direction `dir` (±1): ω·dir ≥ 0 until the next event.
    Moving(f64),
    /// At rest for good.
    Stuck,
}

/// The stick–slip rule at an instant where ω = 0 at angle `theta`: stick if the gravity
/// acceleration is within the static friction level, else move the way gravity pulls.
pub(crate) fn decide(physics: &Physics, equilibrium: f64, theta: f64) -> Mode {
    let a_g = -physics.omega_n * physics.omega_n * (theta - equilibrium).sin();
    if a_g.abs() <= physics.static_level() { Mode::Stuck } else { Mode::Moving(a_g.signum()) }
}

/// The mode at the release: the direction of ω0, or the stick–slip rule when ω0 = 0.
///
/// With pre-sliding friction, `rhs.anchor` is set here too: moving, the friction starts
/// saturated at b0·sgn ω0 (anchor θ0 − dir·b0/σ); from rest it starts relaxed (anchor θ0,
/// F = 0), and the article moves the way gravity pulls unless it hangs exactly at equilibrium.
pub(crate) fn initial_mode(physics: &Physics, release: &Release, rhs: &mut Rhs) -> Mode {
    if rhs.sigma > 0.0 {
        if release.velocity != 0.0 {
            let dir = release.velocity.signum();
            rhs.anchor = release.angle - dir * rhs.fc / rhs.sigma;
            return Mode::Moving(dir);
        }
        rhs.anchor = release.angle;
        let a = rhs.accel(release.angle, 0.0, 1.0);
        return if a == 0.0 { Mode::Stuck } else { Mode::Moving(a.signum()) };
    }
    if release.velocity != 0.0 {
        Mode::Moving(release.velocity.signum())
    } else {
        decide(physics, release.equilibrium, release.angle)
    }
}

/// The rule at a velocity zero at angle `theta` reached moving in direction `dir`, with
/// pre-sliding friction (σ > 0): the friction force is continuous (the spring holds it), so
/// there is no dead band and no stick test. If the slider was sliding (saturated) the spring
/// is re-anchored so that it holds the same force, dir·b0; the motion then reverses the way the
/// acceleration points, or rests if the acceleration is exactly zero. Returns the new mode and
/// whether the anchor moved.
pub(crate) fn reverse_presliding(rhs: &mut Rhs, theta: f64, dir: f64) -> (Mode, bool) {
    let (_, sat) = rhs.friction(theta, dir);
    if sat {
        rhs.anchor = theta - dir * rhs.fc / rhs.sigma;
    }
    let a = rhs.accel(theta, 0.0, dir);
    let mode = if a == 0.0 { Mode::Stuck } else { Mode::Moving(a.signum()) };
    (mode, sat)
}

/// Terms of `terms` in canonical order, padded; the first `terms.len()` entries are meaningful.
pub(crate) fn term_list(terms: DampingSet) -> [Term; N_TERMS] {
    let mut out = [Term::Viscous; N_TERMS];
    for (slot, t) in out.iter_mut().zip(terms.iter()) {
        *slot = t;
    }
    out
}

/// Time resolution of event location [s].
pub(crate) const EVENT_TOL: f64 = 1e-12;

/// Locate the first zero of `g` on (0, h] where g is "ω·dir" after a trial step of length x.
///
/// `g0 = g(0) ≥ 0` and `gh = g(h) ≤ 0`. When g0 = 0 (the step starts at an event) the left end
/// is moved in by halving until g > 0, so that a motion that reverses again within the step is
/// still found. Then Illinois (modified regula falsi) with a bisection safeguard, until the
/// bracket or the update is below [`EVENT_TOL`]. Returns the root estimate in [0, h]; 0 means the
/// motion could not be resolved as leaving the start point.
pub(crate) fn locate_zero(mut g: impl FnMut(f64) -> f64, h: f64, g0: f64, gh: f64) -> f64 {
    if gh == 0.0 {
        return h;
    }
    let (mut a, mut fa) = (0.0, g0);
    if fa <= 0.0 {
        // Step starts on ω = 0: find an inner point where the motion is under way.
        let mut x = h;
        let mut found = false;
        for _ in 0..60 {
            x *= 0.5;
            let fx = g(x);
            if fx > 0.0 {
                a = x;
                fa = fx;
                found = true;
                break;
            }
        }
        if !found {
            return 0.0;
        }
    }
    let (mut b, mut fb) = (h, gh);
    let mut side = 0i8;
    let mut prev = f64::NAN;
    let mut last = 0.5 * (a + b);
    for _ in 0..200 {
        let mut c = (a * fb - b * fa) / (fb - fa);
        if !(c > a && c < b) {
            c = 0.5 * (a + b);
        }
        let fc = g(c);
        last = c;
        if fc == 0.0 {
            return c;
        }
        if fc > 0.0 {
            a = c;
            fa = fc;
            if side == -1 {
                fb *= 0.5;
            }
            side = -1;
        } else {
            b = c;
            fb = fc;
            if side == 1 {
                fa *= 0.5;
            }
            side = 1;
        }
        if b - a <= EVENT_TOL || (c - prev).abs() <= 0.25 * EVENT_TOL {
            break;
        }
        prev = c;
    }
    last
}

/// The right-hand side shared by both schemes: θ'' as a function of (θ, ω, dir), and for the
/// sensitivity equations its partial derivatives. Built once per integration; with pre-sliding
/// friction it also holds the friction state (the spring's anchor), which changes only at the
/// release and at velocity reversals.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Rhs {
    pub(crate) omega_n: f64,
    pub(crate) wn2: f64,
    pub(crate) equilibrium: f64,
    /// Coefficients of the terms whose force depends on ω and dir only; the Coulomb entry is
    /// zero when the spring–slider carries the Coulomb level instead.
    pub(crate) damping: [f64; N_TERMS],
    /// Pre-sliding stiffness σ [1/s²]; 0 = plain Coulomb slider.
    pub(crate) sigma: f64,
    /// Coulomb level b0 of the spring–slider (when σ > 0).
    pub(crate) fc: f64,
    /// Anchor θs of the spring–slider: the friction is σ·(θ − θs) until it saturates at b0.
    pub(crate) anchor: f64,
}

impl Rhs {
    pub(crate) fn new(physics: &Physics, equilibrium: f64) -> Rhs {
        let mut damping = physics.damping;
        let (sigma, fc) = match physics.presliding() {
            Some(s) => {
                damping[Term::Coulomb.index()] = 0.0;
                (s, physics.coef(Term::Coulomb))
            }
            None => (0.0, 0.0),
        };
        damping[Term::Presliding.index()] = 0.0;
        Rhs {
            omega_n: physics.omega_n,
            wn2: physics.omega_n * physics.omega_n,
            equilibrium,
            damping,
            sigma,
            fc,
            anchor: 0.0,
        }
    }

    /// Spring–slider friction per unit inertia at angle θ moving in direction `dir`
    /// (elastoplastic form, docs/friction.md): F = σ(θ − θs) while dir·σ(θ − θs) < b0, else
    /// dir·b0 (sliding). Returns F and whether it is saturated.
    #[inline(always)]
    pub(crate) fn friction(&self, theta: f64, dir: f64) -> (f64, bool) {
        let u = self.sigma * (theta - self.anchor);
        if dir * u >= self.fc { (dir * self.fc, true) } else { (u, false) }
    }

    /// Total damping deceleration Σ accel of the terms with a non-zero coefficient.
    #[inline(always)]
    pub(crate) fn damping_accel(&self, omega: f64, dir: f64) -> f64 {
        let mut d = 0.0;
        for t in Term::ALL {
            if self.damping[t.index()] != 0.0 {
                d += t.accel(&self.damping, omega, dir);
            }
        }
        d
    }

    /// ∂(Σ accel)/∂ω.
    #[inline(always)]
    pub(crate) fn damping_domega(&self, omega: f64, dir: f64) -> f64 {
        let mut d = 0.0;
        for t in Term::ALL {
            if self.damping[t.index()] != 0.0 {
                d += t.daccel_domega(&self.damping, omega, dir);
            }
        }
        d
    }

    /// θ'' from the sine of the angle off equilibrium (so callers can share one `sin_cos`).
    #[inline(always)]
    pub(crate) fn accel_from_sin(&self, theta: f64, sin: f64, omega: f64, dir: f64) -> f64 {
        let a = -self.wn2 * sin - self.damping_accel(omega, dir);
        if self.sigma > 0.0 { a - self.friction(theta, dir).0 } else { a }
    }

    /// θ'' at (θ, ω) moving in direction `dir`.
    #[inline(always)]
    pub(crate) fn accel(&self, theta: f64, omega: f64, dir: f64) -> f64 {
        self.accel_from_sin(theta, (theta - self.equilibrium).sin(), omega, dir)
    }
}
