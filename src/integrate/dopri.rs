//! Adaptive Dormand–Prince 5(4) with its continuous extension (dense output), PI step-size
//! control and true stick–slip.
//!
//! Coefficients, error norm, PI controller and the dense-output polynomial follow Hairer, Nørsett
//! & Wanner, *Solving Ordinary Differential Equations I*, 2nd ed., §II.4–II.6 and their DOPRI5
//! code `[memory]`. The solution is advanced with the 5th-order result (local extrapolation); the
//! dense output is the 4th-order continuous extension, which passes through both step ends.
//! A velocity zero inside an accepted step is found as a root of the dense ω(t); the step is then
//! redone up to that instant so the event state carries the full 5th-order accuracy.

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
// Dense output (Hairer's DOPRI5 continuous extension).
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

/// One Dormand–Prince step from (y, k1 = f(y)) of length h: the 5th-order result, f at it
/// (FSAL), the scaled error estimate and the dense-output coefficients.
struct Step {
    y1: Y,
    k7: Y,
    err: f64,
    dense: [Y; 5],
}

fn dp_step(rhs: &Rhs, y: &Y, k1: &Y, dir: f64, h: f64, rtol: f64, atol: f64) -> Step {
    let k2 = f(rhs, &comb(y, h, &[(A21, k1)]), dir);
    let k3 = f(rhs, &comb(y, h, &[(A31, k1), (A32, &k2)]), dir);
    let k4 = f(rhs, &comb(y, h, &[(A41, k1), (A42, &k2), (A43, &k3)]), dir);
    let k5 = f(rhs, &comb(y, h, &[(A51, k1), (A52, &k2), (A53, &k3), (A54, &k4)]), dir);
    let k6 = f(rhs, &comb(y, h, &[(A61, k1), (A62, &k2), (A63, &k3), (A64, &k4), (A65, &k5)]), dir);
    let y1 = comb(y, h, &[(A71, k1), (A73, &k3), (A74, &k4), (A75, &k5), (A76, &k6)]);
    let k7 = f(rhs, &y1, dir);
    let mut sum = 0.0;
    let mut dense = [[0.0; 2]; 5];
    for i in 0..2 {
        let e = h * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
        let sk = atol + rtol * y[i].abs().max(y1[i].abs());
        sum += (e / sk) * (e / sk);
        let ydiff = y1[i] - y[i];
        let bspl = h * k1[i] - ydiff;
        dense[0][i] = y[i];
        dense[1][i] = ydiff;
        dense[2][i] = bspl;
        dense[3][i] = ydiff - h * k7[i] - bspl;
        dense[4][i] =
            h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
    }
    Step { y1, k7, err: (0.5 * sum).sqrt(), dense }
}

/// Dense output at fraction s ∈ [0, 1] of the step.
#[inline(always)]
fn dense_at(d: &[Y; 5], s: f64) -> Y {
    let s1 = 1.0 - s;
    let mut out = [0.0; 2];
    for i in 0..2 {
        out[i] = d[0][i] + s * (d[1][i] + s1 * (d[2][i] + s * (d[3][i] + s1 * d[4][i])));
    }
    out
}

/// Initial step (Hairer's heuristic, §II.4).
fn initial_step(rhs: &Rhs, y: &Y, k1: &Y, dir: f64, rtol: f64, atol: f64, span: f64) -> f64 {
    let norm = |v: &Y| {
        let mut s = 0.0;
        for i in 0..2 {
            let sk = atol + rtol * y[i].abs();
            s += (v[i] / sk) * (v[i] / sk);
        }
        (0.5 * s).sqrt()
    };
    let (d0, d1) = (norm(y), norm(k1));
    let h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 };
    let h0 = h0.min(span);
    let y1 = comb(y, h0, &[(1.0, k1)]);
    let k2 = f(rhs, &y1, dir);
    let d2 = norm(&[k2[0] - k1[0], k2[1] - k1[1]]) / h0;
    let h1 =
        if d1.max(d2) <= 1e-15 { (h0 * 1e-3).max(1e-6) } else { (0.01 / d1.max(d2)).powf(0.2) };
    (100.0 * h0).min(h1).min(span)
}

/// Integrate with adaptive steps; inputs are already checked by the caller.
pub(crate) fn run(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    rtol: f64,
    atol: f64,
) -> Result<Trajectory, IntegrateError> {
    const SAFETY: f64 = 0.9;
    const BETA: f64 = 0.04;
    const EXPO1: f64 = 0.2 - BETA * 0.75;
    const FAC_MIN: f64 = 0.2; // largest decrease 1/5
    const FAC_MAX: f64 = 10.0; // largest increase 10
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
    let mut h = 0.0;
    let mut k1: Y = [0.0; 2];
    let mut fresh = true; // k1 (and possibly h) must be recomputed
    let mut fac_old: f64 = 1e-4;
    let mut reject_streak = false;
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
        if fresh {
            k1 = f(&rhs, &y, dir);
            if h == 0.0 {
                h = initial_step(&rhs, &y, &k1, dir, rtol, atol, t_end - t);
            }
            fresh = false;
        }
        let span = t_end - t;
        let last = h >= span;
        let hs = if last { span } else { h };
        if hs.is_nan() || hs <= 1e-14 * t.abs().max(1.0) {
            return Err(IntegrateError::StepTooSmall { t });
        }
        let st = dp_step(&rhs, &y, &k1, dir, hs, rtol, atol);
        let err = st.err;
        if err.is_nan() || err > 1.0 {
            // Rejected (a NaN error counts as rejected and shrinks the step).
            let fac11 = if err.is_finite() { err.powf(EXPO1) } else { 1.0 / FAC_MIN };
            h = hs / (1.0 / FAC_MIN).min(fac11 / SAFETY);
            reject_streak = true;
            continue;
        }
        if !(st.y1[0].is_finite() && st.y1[1].is_finite()) {
            return Err(IntegrateError::NonFinite { t: t + hs });
        }
        // PI controller for the next step.
        let fac11 = err.powf(EXPO1);
        let mut fac = fac11 / fac_old.powf(BETA);
        fac = (1.0 / FAC_MAX).max((1.0 / FAC_MIN).min(fac / SAFETY));
        let mut h_new = hs / fac;
        if reject_streak {
            h_new = h_new.min(hs);
        }
        fac_old = err.max(1e-4);
        reject_streak = false;

        let t_new = if last { t_end } else { t + hs };
        let g_end = dir * st.y1[1];
        if g_end > 0.0 {
            emit(&mut traj, times, &mut j, t, hs, t_new, &st.dense, &st.y1);
            t = t_new;
            y = st.y1;
            k1 = st.k7;
            h = h_new;
            continue;
        }
        // ω reached zero inside the step: root of the dense ω, then redo the step up to it.
        let s = locate_zero(|s| dir * dense_at(&st.dense, s / hs)[1], hs, dir * y[1], g_end);
        let (tau, y_ev) = if s <= 0.0 {
            (t, y)
        } else if s >= hs {
            emit(&mut traj, times, &mut j, t, hs, t_new, &st.dense, &st.y1);
            (t_new, st.y1)
        } else {
            let re = dp_step(&rhs, &y, &k1, dir, s, rtol, atol);
            let tau = t + s;
            emit(&mut traj, times, &mut j, t, s, tau, &re.dense, &re.y1);
            (tau, re.y1)
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
        fresh = true;
        h = h_new.min(hs);
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
    dense: &[Y; 5],
    y1: &Y,
) {
    while *j < times.len() && times[*j] <= t_new {
        let v = if times[*j].total_cmp(&t_new).is_eq() {
            *y1
        } else {
            dense_at(dense, (times[*j] - t) / h)
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
        y = dp_step(&rhs, &y, &k1, dir, h, 1.0, 1.0).y1;
    }
    Some(y)
}
