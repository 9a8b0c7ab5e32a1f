//! Adaptive Dormand–Prince 5(4) with its continuous extension (dense output), a PI step
//! controller of our own ([`StepController`]) and true stick–slip.
//!
//! The method (Butcher tableau, embedded 4th-order error weights and the 4th-order continuous
//! extension) is the published Dormand–Prince 5(4) pair as given in Hairer, Nørsett & Wanner,
//! *Solving Ordinary Differential Equations I*, 2nd ed., §II.4–II.6 `[memory]`. The solution is
//! advanced with the 5th-order result (local extrapolation); the dense output passes through
//! both step ends. A velocity zero inside an accepted step is found as a root of the dense ω(t);
//! the step is then redone up to that instant so the event state carries the full 5th-order
//! accuracy.

use super::{
    Event, IntegrateError, Mode, Rhs, Trajectory, decide, initial_mode, locate_zero,
    reverse_presliding,
};
use crate::model::{Physics, Release};

// The nodes c2…c5 = 1/5, 3/10, 4/5, 8/9 are not needed: the pendulum is autonomous.
const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
const A71: f64 = 35.0 / 384.0;
const A73: f64 = 500.0 / 1113.0;
const A74: f64 = 125.0 / 192.0;
const A75: f64 = -2187.0 / 6784.0;
const A76: f64 = 11.0 / 84.0;
// Error coefficients: 5th-order weights minus 4th-order weights.
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;
// Weights of the 4th-order continuous extension (the quartic correction term).
const D1: f64 = -12715105075.0 / 11282082432.0;
const D3: f64 = 87487479700.0 / 32700410799.0;
const D4: f64 = -10690763975.0 / 1880347072.0;
const D5: f64 = 701980252875.0 / 199316789632.0;
const D6: f64 = -1453857185.0 / 822651844.0;
const D7: f64 = 69997945.0 / 29380423.0;

/// Finest relative tolerance accepted: below it the error estimate no longer sees rounding
/// (it only models truncation), so the controller would accept ever smaller steps forever.
pub const MIN_RTOL: f64 = 1e-14;

/// State [θ, ω].
type Y = [f64; 2];

#[inline(always)]
fn f(rhs: &Rhs, y: &Y, dir: f64) -> Y {
    [y[1], rhs.accel(y[0], y[1], dir)]
}

#[inline(always)]
fn comb(y: &Y, h: f64, terms: &[(f64, &Y)]) -> Y {
    let mut out = *y;
    for (c, k) in terms {
        out[0] += h * c * k[0];
        out[1] += h * c * k[1];
    }
    out
}

/// The 4th-order continuous extension of one step of length h from y0 to y1, written as
/// y(s) = y0 + s·chord + s(1−s)·[start_gap + s·(end_gap − start_gap) + s(1−s)·quartic] for the
/// fraction s ∈ [0, 1] of the step: without `quartic` it is the cubic Hermite interpolant
/// matching both end slopes (`start_gap` = h·y0' − chord, `end_gap` = chord − h·y1'), and
/// `quartic` is the Dormand–Prince correction that lifts it to 4th order.
#[derive(Clone, Copy)]
struct Continuation {
    start: Y,
    chord: Y,
    start_gap: Y,
    end_gap: Y,
    quartic: Y,
}

impl Continuation {
    /// State at fraction s ∈ [0, 1] of the step.
    #[inline(always)]
    fn at(&self, s: f64) -> Y {
        let r = 1.0 - s;
        std::array::from_fn(|i| {
            let gap = self.start_gap[i]
                + s * ((self.end_gap[i] - self.start_gap[i]) + r * self.quartic[i]);
            self.start[i] + s * (self.chord[i] + r * gap)
        })
    }
}

/// One Dormand–Prince step from (y, k1 = f(y)) of length h: the 5th-order result, f at it
/// (first stage of the next step), the scaled error (see [`StepController`]) and the dense output.
struct Step {
    end: Y,
    end_slope: Y,
    error: f64,
    continuation: Continuation,
}

fn dp_step(rhs: &Rhs, y: &Y, k1: &Y, dir: f64, h: f64, rtol: f64, atol: f64) -> Step {
    let k2 = f(rhs, &comb(y, h, &[(A21, k1)]), dir);
    let k3 = f(rhs, &comb(y, h, &[(A31, k1), (A32, &k2)]), dir);
    let k4 = f(rhs, &comb(y, h, &[(A41, k1), (A42, &k2), (A43, &k3)]), dir);
    let k5 = f(rhs, &comb(y, h, &[(A51, k1), (A52, &k2), (A53, &k3), (A54, &k4)]), dir);
    let k6 = f(rhs, &comb(y, h, &[(A61, k1), (A62, &k2), (A63, &k3), (A64, &k4), (A65, &k5)]), dir);
    let end = comb(y, h, &[(A71, k1), (A73, &k3), (A74, &k4), (A75, &k5), (A76, &k6)]);
    let k7 = f(rhs, &end, dir);
    let mut squares = 0.0;
    let zero = [0.0; 2];
    let mut c =
        Continuation { start: *y, chord: zero, start_gap: zero, end_gap: zero, quartic: zero };
    for i in 0..2 {
        let local_error =
            h * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
        let scale = atol + rtol * y[i].abs().max(end[i].abs());
        squares += (local_error / scale) * (local_error / scale);
        c.chord[i] = end[i] - y[i];
        c.start_gap[i] = h * k1[i] - c.chord[i];
        c.end_gap[i] = c.chord[i] - h * k7[i];
        c.quartic[i] =
            h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
    }
    Step { end, end_slope: k7, error: (0.5 * squares).sqrt(), continuation: c }
}

/// First step length: the step whose local error would be about 1 % of the tolerance if the
/// solution were a polynomial of the method's order, estimated from the sizes of the state, its
/// slope and (one explicit Euler probe) its second derivative, all in the tolerance scale; never
/// more than 100 times the probe length nor the whole span (the starting-step rule of Hairer,
/// Nørsett & Wanner §II.4 `[memory]`).
fn first_step(rhs: &Rhs, y: &Y, k1: &Y, dir: f64, rtol: f64, atol: f64, span: f64) -> f64 {
    let scaled = |v: &Y| {
        let mut squares = 0.0;
        for i in 0..2 {
            let scale = atol + rtol * y[i].abs();
            squares += (v[i] / scale) * (v[i] / scale);
        }
        (0.5 * squares).sqrt()
    };
    let (state_size, slope_size) = (scaled(y), scaled(k1));
    let probe =
        if state_size < 1e-5 || slope_size < 1e-5 { 1e-6 } else { 0.01 * state_size / slope_size }
            .min(span);
    let probe_slope = f(rhs, &comb(y, probe, &[(1.0, k1)]), dir);
    let curvature = scaled(&[probe_slope[0] - k1[0], probe_slope[1] - k1[1]]) / probe;
    let rate = slope_size.max(curvature);
    let from_rate = if rate <= 1e-15 { (probe * 1e-3).max(1e-6) } else { (0.01 / rate).powf(0.2) };
    (100.0 * probe).min(from_rate).min(span)
}

/// Step-length control: the next h from the scaled error of the step just tried.
///
/// **Error norm.** The embedded pair gives, per component, the difference e_i between the 5th-
/// and 4th-order results. Each is measured against its own tolerance
/// s_i = atol + rtol·max(|y0_i|, |y1_i|) and the two are combined as a root mean square,
/// err = √(½ Σ (e_i/s_i)²). A step is accepted when err ≤ 1.
///
/// **Exponents.** The estimate behaves like C·h⁵ (the 4th-order solution's local error), so if
/// C stayed put the step with err = 1 would be h·err^(−1/5), a pure integral controller. Its
/// known fault is oscillating step lengths (accept, reject, accept) when C drifts or the step is
/// near the stability limit. Adding a proportional term on the change of log err,
/// log h' = log h − k_I·log err_n − k_P·(log err_n − log err_{n−1}),
/// gives h' = h·err_n^−(k_I+k_P)·err_{n−1}^k_P. We use k_P = 0.04 and k_I = 0.13: the exponent on
/// the current error, 0.17, stays a little below 1/5 so a single jump in the estimate is
/// followed only partly, and the memory term smooths the sequence (the PI choice recommended
/// for this pair by Hairer, Nørsett & Wanner §II.4 `[memory]`).
///
/// **Limits.** The proposal is aimed at err ≈ 0.9^5 rather than 1 (factor [`Self::TARGET`]) so
/// the next step is usually accepted. The ratio h'/h stays within [`Self::MAX_SHRINK`] … [`Self::MAX_GROWTH`]:
/// growth is capped because the estimate only knows the stretch just stepped over, shrinking
/// because a wild estimate (NaN, overflow of a far too long trial) says nothing about how much.
/// The remembered error is floored at [`Self::ERROR_FLOOR`] so a step that happened to be exact
/// does not inflate later proposals. Right after a rejection the next accepted step does not
/// grow (it just failed at a larger length); a rejection itself uses the integral part only.
struct StepController {
    /// Scaled error of the last accepted step, floored; the proportional term's memory.
    previous_error: f64,
    /// The last trial was rejected: the next accepted step may not grow.
    after_rejection: bool,
}

impl StepController {
    const TARGET: f64 = 0.9;
    const GAIN_PROPORTIONAL: f64 = 0.04;
    const GAIN_INTEGRAL: f64 = 0.13;
    const MAX_SHRINK: f64 = 0.2;
    const MAX_GROWTH: f64 = 10.0;
    const ERROR_FLOOR: f64 = 1e-4;

    fn new() -> Self {
        StepController { previous_error: Self::ERROR_FLOOR, after_rejection: false }
    }

    /// Exponent on the current error: k_I + k_P.
    fn current_exponent() -> f64 {
        Self::GAIN_INTEGRAL + Self::GAIN_PROPORTIONAL
    }

    /// Length to retry after a trial of length `h` was rejected with scaled error `error`
    /// (> 1, or NaN/∞ when the trial blew up).
    fn retry(&mut self, h: f64, error: f64) -> f64 {
        self.after_rejection = true;
        let ratio = if error.is_finite() {
            (Self::TARGET / error.powf(Self::current_exponent())).max(Self::MAX_SHRINK)
        } else {
            Self::MAX_SHRINK
        };
        h * ratio
    }

    /// Length proposed after a trial of length `h` was accepted with scaled error `error` ≤ 1.
    fn next(&mut self, h: f64, error: f64) -> f64 {
        let proposal = Self::TARGET * self.previous_error.powf(Self::GAIN_PROPORTIONAL)
            / error.powf(Self::current_exponent());
        let mut ratio = proposal.clamp(Self::MAX_SHRINK, Self::MAX_GROWTH);
        if self.after_rejection {
            ratio = ratio.min(1.0);
        }
        self.previous_error = error.max(Self::ERROR_FLOOR);
        self.after_rejection = false;
        h * ratio
    }
}

/// Integrate with adaptive steps; inputs are already checked by the caller.
pub(crate) fn run(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    rtol: f64,
    atol: f64,
) -> Result<Trajectory, IntegrateError> {
    let n = times.len();
    let mut traj = Trajectory {
        times: times.to_vec(),
        angle: Vec::with_capacity(n),
        velocity: Vec::with_capacity(n),
        events: Vec::new(),
    };
    if n == 0 {
        return Ok(traj);
    }
    let mut rhs = Rhs::new(physics, release.equilibrium);
    let mut y: Y = [release.angle, release.velocity];
    let mut mode = initial_mode(physics, release, &mut rhs);
    let mut t = times[0];
    if mode == Mode::Stuck {
        y[1] = 0.0;
        traj.events.push(Event::Stick { t, angle: y[0] });
    }
    traj.angle.push(y[0]);
    traj.velocity.push(y[1]);
    let t_end = times[n - 1];
    let mut j = 1; // next sample to fill
    let mut h = 0.0; // step length to try next; 0 until the first guess
    let mut slope: Y = [0.0; 2]; // f at (t, y)
    let mut slope_stale = true; // after an event: slope (and the first guess) must be recomputed
    let mut control = StepController::new();
    while j < n {
        let Mode::Moving(dir) = mode else {
            // At rest for good: every later sample is the rest angle.
            while j < n {
                traj.angle.push(y[0]);
                traj.velocity.push(0.0);
                j += 1;
            }
            break;
        };
        if slope_stale {
            slope = f(&rhs, &y, dir);
            if h == 0.0 {
                h = first_step(&rhs, &y, &slope, dir, rtol, atol, t_end - t);
            }
            slope_stale = false;
        }
        let remaining = t_end - t;
        let reaches_end = h >= remaining;
        let trial = if reaches_end { remaining } else { h };
        if trial.is_nan() || trial <= 1e-14 * t.abs().max(1.0) {
            return Err(IntegrateError::StepTooSmall { t });
        }
        let step = dp_step(&rhs, &y, &slope, dir, trial, rtol, atol);
        if step.error.is_nan() || step.error > 1.0 {
            // Rejected (a NaN error counts as rejected and shrinks the step).
            h = control.retry(trial, step.error);
            continue;
        }
        if !(step.end[0].is_finite() && step.end[1].is_finite()) {
            return Err(IntegrateError::NonFinite { t: t + trial });
        }
        let proposed = control.next(trial, step.error);

        let t_next = if reaches_end { t_end } else { t + trial };
        let g_end = dir * step.end[1];
        if g_end > 0.0 {
            emit(&mut traj, times, &mut j, t, trial, t_next, &step.continuation, &step.end);
            t = t_next;
            y = step.end;
            slope = step.end_slope;
            h = proposed;
            continue;
        }
        // ω reached zero inside the step: root of the dense ω, then redo the step up to it.
        let s = locate_zero(|s| dir * step.continuation.at(s / trial)[1], trial, dir * y[1], g_end);
        let (tau, y_ev) = if s <= 0.0 {
            (t, y)
        } else if s >= trial {
            emit(&mut traj, times, &mut j, t, trial, t_next, &step.continuation, &step.end);
            (t_next, step.end)
        } else {
            let redo = dp_step(&rhs, &y, &slope, dir, s, rtol, atol);
            let tau = t + s;
            emit(&mut traj, times, &mut j, t, s, tau, &redo.continuation, &redo.end);
            (tau, redo.end)
        };
        let next = if s <= 0.0 {
            Mode::Stuck
        } else if rhs.sigma > 0.0 {
            reverse_presliding(&mut rhs, y_ev[0], dir).0
        } else {
            decide(physics, release.equilibrium, y_ev[0])
        };
        y = [y_ev[0], 0.0];
        match next {
            Mode::Stuck => traj.events.push(Event::Stick { t: tau, angle: y[0] }),
            Mode::Moving(_) => traj.events.push(Event::Reversal { t: tau, angle: y[0] }),
        }
        t = tau;
        mode = next;
        slope_stale = true;
        h = proposed.min(trial);
        if t >= t_end {
            while j < n {
                traj.angle.push(y[0]);
                traj.velocity.push(y[1]);
                j += 1;
            }
        }
    }
    Ok(traj)
}

/// Write every sample with time in (t, t_new] from the dense output of a step of length h.
#[allow(clippy::too_many_arguments)]
fn emit(
    traj: &mut Trajectory,
    times: &[f64],
    j: &mut usize,
    t: f64,
    h: f64,
    t_new: f64,
    continuation: &Continuation,
    end: &Y,
) {
    while *j < times.len() && times[*j] <= t_new {
        let v = if times[*j].total_cmp(&t_new).is_eq() {
            *end
        } else {
            continuation.at((times[*j] - t) / h)
        };
        traj.angle.push(v[0]);
        traj.velocity.push(v[1]);
        *j += 1;
    }
}

/// Integrate smooth motion (no velocity zero may occur) from `t0 = 0` to `t_end` with `n` equal
/// Dormand–Prince steps and no error control; returns [θ, ω] at `t_end`.
///
/// Exists to measure the order of the 5th-order step (see the tests); `simulate` never uses it.
/// Returns `None` when `n` is 0 or the parameters are invalid.
pub fn fixed_steps(physics: &Physics, release: &Release, t_end: f64, n: usize) -> Option<[f64; 2]> {
    if n == 0 || physics.validate().is_err() || !t_end.is_finite() {
        return None;
    }
    let mut rhs = Rhs::new(physics, release.equilibrium);
    let dir = if release.velocity < 0.0 { -1.0 } else { 1.0 };
    rhs.anchor = release.angle - dir * rhs.fc / rhs.sigma.max(f64::MIN_POSITIVE);
    let h = t_end / n as f64;
    let mut y: Y = [release.angle, release.velocity];
    for _ in 0..n {
        let k1 = f(&rhs, &y, dir);
        y = dp_step(&rhs, &y, &k1, dir, h, 1.0, 1.0).end;
    }
    Some(y)
}
