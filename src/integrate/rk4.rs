//! Classical fourth-order Runge–Kutta on fixed sub-steps between sample times, with optional
//! forward sensitivities and true stick–slip.
//!
//! One driver serves both `simulate` (no sensitivities, `NP = 0`) and
//! `simulate_with_sensitivities` (`NP` = 4…7 parameters), so the two give bit-identical states.
//! The sensitivity matrix S = ∂x/∂p is carried in fixed arrays `[f64; NP]`, so a step allocates
//! nothing and the compiler unrolls the column loops. Events (ω = 0) are located by re-stepping
//! from the sub-step start with a trial length found by [`super::locate_zero`].

use super::{
    Event, IntegrateError, Mode, Rhs, Trajectory, decide, initial_mode, locate_zero, term_list,
};
use crate::model::{DampingSet, Physics, Release, Term};

/// State plus its two sensitivity rows (∂θ/∂p and ∂ω/∂p).
#[derive(Clone, Copy, Debug)]
struct X<const NP: usize> {
    th: f64,
    om: f64,
    st: [f64; NP],
    so: [f64; NP],
}

impl<const NP: usize> X<NP> {
    #[inline(always)]
    fn axpy(&self, h: f64, k: &X<NP>) -> X<NP> {
        let mut out = *self;
        out.th += h * k.th;
        out.om += h * k.om;
        for j in 0..NP {
            out.st[j] += h * k.st[j];
            out.so[j] += h * k.so[j];
        }
        out
    }
}

/// Right-hand side with the layout of the sensitivity columns.
#[derive(Clone, Copy, Debug)]
struct Field {
    rhs: Rhs,
    terms: [Term; 3],
    n_terms: usize,
}

impl Field {
    /// d/dt of state and sensitivities: x' = f(x), S' = f_x S + f_p.
    #[inline(always)]
    fn deriv<const M: usize>(&self, x: &X<M>, dir: f64) -> X<M> {
        let r = &self.rhs;
        if M == 0 {
            let s = (x.th - r.equilibrium).sin();
            return X { th: x.om, om: r.accel_from_sin(s, x.om, dir), st: x.so, so: [0.0; M] };
        }
        let (s, c) = (x.th - r.equilibrium).sin_cos();
        let a = r.accel_from_sin(s, x.om, dir);
        let a_th = -r.wn2 * c;
        let a_om = -r.damping_domega(x.om);
        let mut so = [0.0; M];
        for j in 0..M {
            so[j] = a_th * x.st[j] + a_om * x.so[j];
        }
        // f_p: ωn, then each fitted term's coefficient, then θeq (θ0 and ω0 enter only S(t0)).
        so[0] -= 2.0 * r.omega_n * s;
        for k in 0..self.n_terms {
            so[1 + k] -= self.terms[k].daccel_dcoef(x.om, dir);
        }
        so[1 + self.n_terms] += r.wn2 * c;
        X { th: x.om, om: a, st: x.so, so }
    }

    /// One classical RK4 step of length h.
    #[inline(always)]
    fn step<const M: usize>(&self, x: &X<M>, dir: f64, h: f64) -> X<M> {
        let k1 = self.deriv(x, dir);
        let k2 = self.deriv(&x.axpy(0.5 * h, &k1), dir);
        let k3 = self.deriv(&x.axpy(0.5 * h, &k2), dir);
        let k4 = self.deriv(&x.axpy(h, &k3), dir);
        let mut out = *x;
        let h6 = h / 6.0;
        out.th += h6 * (k1.th + 2.0 * k2.th + 2.0 * k3.th + k4.th);
        out.om += h6 * (k1.om + 2.0 * k2.om + 2.0 * k3.om + k4.om);
        for j in 0..M {
            out.st[j] += h6 * (k1.st[j] + 2.0 * k2.st[j] + 2.0 * k3.st[j] + k4.st[j]);
            out.so[j] += h6 * (k1.so[j] + 2.0 * k2.so[j] + 2.0 * k3.so[j] + k4.so[j]);
        }
        out
    }
}

/// Integrate at `times` with sub-steps ≤ `max_step`; returns the trajectory and, when NP > 0,
/// ∂θ/∂p sample-major (`NP` columns). Inputs are already checked by the caller.
pub(crate) fn run<const NP: usize>(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
) -> Result<(Trajectory, Vec<f64>), IntegrateError> {
    let n = times.len();
    let mut traj = Trajectory {
        times: times.to_vec(),
        angle: Vec::with_capacity(n),
        velocity: Vec::with_capacity(n),
        events: Vec::new(),
    };
    let mut sens = Vec::with_capacity(n * NP);
    if n == 0 {
        return Ok((traj, sens));
    }
    let field = Field {
        rhs: Rhs::new(physics, release.equilibrium),
        terms: term_list(terms),
        n_terms: terms.len(),
    };
    let mut x = X::<NP> { th: release.angle, om: release.velocity, st: [0.0; NP], so: [0.0; NP] };
    if NP > 0 {
        // S(t0): ∂θ/∂θ0 = 1, ∂ω/∂ω0 = 1 (the last two columns).
        x.st[NP - 2] = 1.0;
        x.so[NP - 1] = 1.0;
    }
    let mut mode = initial_mode(physics, release);
    if mode == Mode::Stuck {
        x.om = 0.0;
        x.so = [0.0; NP];
        traj.events.push(Event::Stick { t: times[0], angle: x.th });
    }
    let mut record = |x: &X<NP>, traj: &mut Trajectory| {
        traj.angle.push(x.th);
        traj.velocity.push(x.om);
        sens.extend_from_slice(&x.st);
    };
    record(&x, &mut traj);
    for i in 1..n {
        let (t0, t1) = (times[i - 1], times[i]);
        if let Mode::Moving(_) = mode {
            let dt = t1 - t0;
            let m = (dt / max_step).ceil().max(1.0);
            let h = dt / m;
            // m ≥ 1 is a whole number; as u64 saturates only for absurd step ratios.
            for k in 0..m as u64 {
                let ts = t0 + k as f64 * h;
                advance(&field, physics, &mut x, &mut mode, ts, h, &mut traj.events);
                if mode == Mode::Stuck {
                    break;
                }
            }
            if !(x.th.is_finite() && x.om.is_finite()) {
                return Err(IntegrateError::NonFinite { t: t1 });
            }
        }
        record(&x, &mut traj);
    }
    Ok((traj, sens))
}

/// Advance one sub-step [t, t + h], handling every ω = 0 event inside it.
#[inline]
fn advance<const NP: usize>(
    field: &Field,
    physics: &Physics,
    x: &mut X<NP>,
    mode: &mut Mode,
    t: f64,
    h: f64,
    events: &mut Vec<Event>,
) {
    let mut t = t;
    let mut rem = h;
    loop {
        let Mode::Moving(dir) = *mode else { return };
        let y = field.step(x, dir, rem);
        let g_end = dir * y.om;
        if !(g_end <= 0.0) {
            // Still moving the same way (or non-finite, which the caller reports).
            *x = y;
            return;
        }
        let xs = X::<0> { th: x.th, om: x.om, st: [], so: [] };
        let hs = locate_zero(|s| dir * field.step(&xs, dir, s).om, rem, dir * x.om, g_end);
        if hs <= 0.0 {
            // The motion cannot be resolved as leaving this zero of ω: it is at rest.
            x.om = 0.0;
            x.so = [0.0; NP];
            events.push(Event::Stick { t, angle: x.th });
            *mode = Mode::Stuck;
            return;
        }
        let mut y = if hs == rem { y } else { field.step(x, dir, hs) };
        let tau = t + hs;
        let a_minus = field.rhs.accel(y.th, 0.0, dir);
        y.om = 0.0;
        let next = decide(physics, field.rhs.equilibrium, y.th);
        match next {
            Mode::Stuck => {
                // θ(t) = θ(τ) for all later t: S_θ frozen at S_θ(τ−), S_ω = 0.
                y.so = [0.0; NP];
                events.push(Event::Stick { t: tau, angle: y.th });
            }
            Mode::Moving(new_dir) => {
                // ∂τ/∂p = −S_ω(τ−)/a−; S_ω(τ+) = S_ω(τ−) + (a− − a+)·∂τ/∂p = S_ω(τ−)·a+/a−.
                let a_plus = field.rhs.accel(y.th, 0.0, new_dir);
                if NP > 0 && a_minus != 0.0 {
                    let ratio = a_plus / a_minus;
                    for v in y.so.iter_mut() {
                        *v *= ratio;
                    }
                }
                events.push(Event::Reversal { t: tau, angle: y.th });
            }
        }
        *x = y;
        *mode = next;
        t = tau;
        rem -= hs;
        if rem <= 0.0 {
            return;
        }
    }
}
