//! Classical fourth-order Runge–Kutta on fixed sub-steps between sample times, with optional
//! forward sensitivities and true stick–slip.
//!
//! One driver serves both `simulate` (no sensitivities, `NP = 0`) and
//! `simulate_with_sensitivities` (`NP` = 4…9 parameters), so the two give bit-identical states.
//! The sensitivity matrix S = ∂x/∂p is carried in fixed arrays `[f64; NP]`, so a step allocates
//! nothing and the compiler unrolls the column loops. Events (ω = 0) are located by re-stepping
//! from the sub-step start with a trial length found by [`super::locate_zero`].

use super::{
    Event, IntegrateError, Mode, Rhs, Trajectory, decide, initial_mode, locate_zero,
    reverse_presliding, term_list,
};
use crate::model::{DampingSet, N_TERMS, Physics, Release, Term};

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

/// Right-hand side with the layout of the sensitivity columns, and with pre-sliding friction
/// the sensitivities ∂θs/∂p of the spring's anchor (which changes only at events).
#[derive(Clone, Copy, Debug)]
struct Field<const NP: usize> {
    rhs: Rhs,
    terms: [Term; N_TERMS],
    n_terms: usize,
    /// ∂θs/∂p of the spring–slider anchor (pre-sliding only).
    d_anchor: [f64; NP],
    /// Column of σ and of b0 among the parameters, when fitted.
    col_sigma: Option<usize>,
    col_b0: Option<usize>,
}

impl<const NP: usize> Field<NP> {
    /// Re-anchor after the spring–slider saturated moving in `dir`: θs = θ(τ) − dir·b0/σ, so
    /// ∂θs/∂p = ∂θ(τ)/∂p − dir·∂(b0/σ)/∂p (ω(τ) = 0, so ∂θ(τ)/∂p = S_θ).
    fn reanchor_sensitivity(&mut self, s_theta: &[f64; NP], dir: f64) {
        let (sig, fc) = (self.rhs.sigma, self.rhs.fc);
        self.d_anchor = *s_theta;
        if let Some(k) = self.col_b0 {
            self.d_anchor[k] -= dir / sig;
        }
        if let Some(k) = self.col_sigma {
            self.d_anchor[k] += dir * fc / (sig * sig);
        }
    }

    /// d/dt of state and sensitivities: x' = f(x), S' = f_x S + f_p, given s = sin(θ − θeq) and
    /// c = cos(θ − θeq) at the state.
    #[inline(always)]
    fn deriv<const M: usize>(&self, x: &X<M>, dir: f64, s: f64, c: f64) -> X<M> {
        let r = &self.rhs;
        let a = r.accel_from_sin(x.th, s, x.om, dir);
        if M == 0 {
            return X { th: x.om, om: a, st: x.so, so: [0.0; M] };
        }
        let mut a_th = -r.wn2 * c;
        // In the spring (pre-sliding) range F = σ(θ − θs): ∂F/∂θ = σ, ∂F/∂θs = −σ.
        let elastic = r.sigma > 0.0 && !r.friction(x.th, dir).1;
        if elastic {
            a_th -= r.sigma;
        }
        let a_om = -r.damping_domega(x.om, dir);
        let mut so = [0.0; M];
        for ((d, st), sw) in so.iter_mut().zip(&x.st).zip(&x.so) {
            *d = a_th * st + a_om * sw;
        }
        // f_p: ωn, then each fitted term's coefficient, then θeq (θ0 and ω0 enter only S(t0)).
        so[0] -= 2.0 * r.omega_n * s;
        for k in 0..self.n_terms {
            so[1 + k] -= self.terms[k].daccel_dcoef(&r.damping, x.om, dir);
        }
        so[1 + self.n_terms] += r.wn2 * c;
        if elastic {
            for (d, da) in so.iter_mut().zip(&self.d_anchor) {
                *d += r.sigma * da;
            }
            // The Coulomb column got −dir above; in the spring range F does not depend on b0.
            if let Some(k) = self.col_b0 {
                so[k] += dir;
            }
            if let Some(k) = self.col_sigma {
                so[k] -= x.th - r.anchor;
            }
        }
        X { th: x.om, om: a, st: x.so, so }
    }

    /// The derivative at a step's start, with the sin and cos the later stages rotate.
    #[inline(always)]
    fn start<const M: usize>(&self, x: &X<M>, dir: f64) -> Start<M> {
        let (s, c) = (x.th - self.rhs.equilibrium).sin_cos();
        Start { f: self.deriv(x, dir, s, c), s, c }
    }

    /// sin and cos of (θ − θeq) at a stage state `xs` that lies `d` radians from the step's
    /// start, whose sin and cos are (s0, c0): by the angle-addition formulas with a Taylor
    /// series for the small angle d (see [`small_sin_cos`]), or directly when d is not small.
    #[inline(always)]
    fn stage_sin_cos<const M: usize>(&self, xs: &X<M>, d: f64, s0: f64, c0: f64) -> (f64, f64) {
        match small_sin_cos(d) {
            Some((sd, cd)) => (s0 * cd + c0 * sd, c0 * cd - s0 * sd),
            None => (xs.th - self.rhs.equilibrium).sin_cos(),
        }
    }

    /// One classical RK4 step of length h.
    #[inline(always)]
    fn step<const M: usize>(&self, x: &X<M>, dir: f64, h: f64) -> X<M> {
        self.step_from(x, dir, h, &self.start(x, dir))
    }

    /// One classical RK4 step of length h from a start whose derivative (the first stage) is
    /// already known. One sin_cos per step: the three later stages rotate the start's sine and
    /// cosine by their small angle offsets.
    #[inline(always)]
    fn step_from<const M: usize>(&self, x: &X<M>, dir: f64, h: f64, start: &Start<M>) -> X<M> {
        let (s0, c0) = (start.s, start.c);
        let k1 = start.f;
        let x2 = x.axpy(0.5 * h, &k1);
        let (s2, c2) = self.stage_sin_cos(&x2, 0.5 * h * k1.th, s0, c0);
        let k2 = self.deriv(&x2, dir, s2, c2);
        let x3 = x.axpy(0.5 * h, &k2);
        let (s3, c3) = self.stage_sin_cos(&x3, 0.5 * h * k2.th, s0, c0);
        let k3 = self.deriv(&x3, dir, s3, c3);
        let x4 = x.axpy(h, &k3);
        let (s4, c4) = self.stage_sin_cos(&x4, h * k3.th, s0, c0);
        let k4 = self.deriv(&x4, dir, s4, c4);
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

/// sin d and cos d by their Taylor series for |d| ≤ 0.1 rad (truncation below 3e-19, far under
/// the rounding of the result), `None` for larger d.
#[inline(always)]
fn small_sin_cos(d: f64) -> Option<(f64, f64)> {
    if d.abs() > 0.1 {
        return None;
    }
    let z = d * d;
    // sin d = d − d³/3! + d⁵/5! − d⁷/7! + d⁹/9! − d¹¹/11!, cos d = 1 − d²/2! + … − d¹⁰/10!.
    let s = d
        * (1.0
            - z / 6.0 * (1.0 - z / 20.0 * (1.0 - z / 42.0 * (1.0 - z / 72.0 * (1.0 - z / 110.0)))));
    let c =
        1.0 - z / 2.0 * (1.0 - z / 12.0 * (1.0 - z / 30.0 * (1.0 - z / 56.0 * (1.0 - z / 90.0))));
    Some((s, c))
}

/// The derivative at a step's start and the sin/cos of its angle off equilibrium.
#[derive(Clone, Copy, Debug)]
struct Start<const M: usize> {
    f: X<M>,
    s: f64,
    c: f64,
}

/// A stretch of motion in one direction: its ends and their derivatives, for cubic Hermite
/// output at the sample times inside it.
#[derive(Clone, Copy, Debug)]
struct Piece<const NP: usize> {
    ta: f64,
    xa: X<NP>,
    fa: X<NP>,
    tb: f64,
    xb: X<NP>,
    fb: X<NP>,
}

impl<const NP: usize> Piece<NP> {
    /// θ, ω and ∂θ/∂p at `t` in [ta, tb] by cubic Hermite interpolation, whose O(h⁴) error
    /// matches RK4's order. θ' = ω and (∂θ/∂p)' = ∂ω/∂p are exact derivatives.
    #[inline(always)]
    fn at(&self, t: f64) -> (f64, f64, [f64; NP]) {
        let h = self.tb - self.ta;
        if h <= 0.0 {
            return (self.xb.th, self.xb.om, self.xb.st);
        }
        let u = ((t - self.ta) / h).clamp(0.0, 1.0);
        let (u2, u3) = (u * u, u * u * u);
        let h00 = 2.0 * u3 - 3.0 * u2 + 1.0;
        let h10 = (u3 - 2.0 * u2 + u) * h;
        let h01 = -2.0 * u3 + 3.0 * u2;
        let h11 = (u3 - u2) * h;
        let th = h00 * self.xa.th + h10 * self.xa.om + h01 * self.xb.th + h11 * self.xb.om;
        let om = h00 * self.xa.om + h10 * self.fa.om + h01 * self.xb.om + h11 * self.fb.om;
        let mut st = [0.0; NP];
        for (j, v) in st.iter_mut().enumerate() {
            *v = h00 * self.xa.st[j]
                + h10 * self.xa.so[j]
                + h01 * self.xb.st[j]
                + h11 * self.xb.so[j];
        }
        (th, om, st)
    }
}

/// Integrate at `times` and return the trajectory and, when NP > 0, ∂θ/∂p sample-major (`NP`
/// columns). Inputs are already checked by the caller.
///
/// Steps are no longer than `max_step`. When the next sample is further away than that, the
/// interval is cut into equal sub-steps ending on the sample; when several samples fit in one
/// step, the step ends on the last of them and the samples before it are filled by cubic Hermite
/// interpolation of the step (so a dense log does not force a tiny step). Each velocity zero
/// inside a step ends a [`Piece`]; samples are interpolated within the piece that holds them.
pub(crate) fn run<const NP: usize>(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
) -> Result<(Trajectory, Vec<f64>), IntegrateError> {
    let n = times.len();
    let mut angle = Vec::with_capacity(n);
    let mut velocity = Vec::with_capacity(n);
    let mut sens = Vec::with_capacity(n * NP);
    let events = run_into::<NP>(physics, release, times, terms, max_step, &mut |th, om, st| {
        angle.push(th);
        velocity.push(om);
        sens.extend_from_slice(st);
    })?;
    Ok((Trajectory { times: times.to_vec(), angle, velocity, events }, sens))
}

/// The driver behind [`run`]: hands θ, ω and ∂θ/∂p of every sample, in order, to `sink`
/// instead of storing them, and returns the events.
pub(crate) fn run_into<const NP: usize>(
    physics: &Physics,
    release: &Release,
    times: &[f64],
    terms: DampingSet,
    max_step: f64,
    sink: &mut impl FnMut(f64, f64, &[f64; NP]),
) -> Result<Vec<Event>, IntegrateError> {
    let n = times.len();
    let mut events = Vec::new();
    if n == 0 {
        return Ok(events);
    }
    let col = |t: Term| terms.iter().position(|u| u == t).map(|i| 1 + i).filter(|_| NP > 0);
    let mut field = Field::<NP> {
        rhs: Rhs::new(physics, release.equilibrium),
        terms: term_list(terms),
        n_terms: terms.len(),
        d_anchor: [0.0; NP],
        col_sigma: col(Term::Presliding),
        col_b0: col(Term::Coulomb),
    };
    let mut x = X::<NP> { th: release.angle, om: release.velocity, st: [0.0; NP], so: [0.0; NP] };
    if NP > 0 {
        // S(t0): ∂θ/∂θ0 = 1, ∂ω/∂ω0 = 1 (the last two columns).
        x.st[NP - 2] = 1.0;
        x.so[NP - 1] = 1.0;
    }
    let mut mode = initial_mode(physics, release, &mut field.rhs);
    if NP > 0 && field.rhs.sigma > 0.0 {
        // θs = θ0 − dir·b0/σ when released moving (saturated), θ0 when released at rest.
        if release.velocity != 0.0 {
            field.reanchor_sensitivity(&x.st, release.velocity.signum());
        } else {
            field.d_anchor = x.st;
        }
    }
    if mode == Mode::Stuck {
        x.om = 0.0;
        x.so = [0.0; NP];
        events.push(Event::Stick { t: times[0], angle: x.th });
    }
    let mut push = |th: f64, om: f64, st: &[f64; NP]| sink(th, om, st);
    push(x.th, x.om, &x.st);
    let mut t = times[0];
    let mut i = 1; // next sample to record
    // The derivative at the current state, carried from the end of one step to the next.
    let mut cache: Option<Start<NP>> = None;
    while i < n {
        let Mode::Moving(_) = mode else {
            // At rest for good: every later sample is the rest state.
            push(x.th, 0.0, &x.st);
            i += 1;
            continue;
        };
        // The step: to the last sample within max_step, or a sub-step towards the next sample.
        let reach = t + max_step * (1.0 + 1e-9);
        let mut last = i;
        while last + 1 < n && times[last + 1] <= reach {
            last += 1;
        }
        let t_end = if times[i] <= reach {
            times[last]
        } else {
            let m = ((times[i] - t) / max_step * (1.0 - 1e-9)).ceil().max(1.0);
            t + (times[i] - t) / m
        };
        let (t_end, last) = if times[i] <= reach { (t_end, last) } else { (t_end, i - 1) };
        let mut pending = i; // samples i..=last lie in (t, t_end]
        advance(
            &mut field,
            physics,
            &mut x,
            &mut mode,
            &mut cache,
            t,
            t_end - t,
            &mut events,
            &mut |p: &Piece<NP>| {
                while pending <= last && times[pending] <= p.tb {
                    let (th, om, st) = if times[pending] >= p.tb {
                        (p.xb.th, p.xb.om, p.xb.st)
                    } else {
                        p.at(times[pending])
                    };
                    push(th, om, &st);
                    pending += 1;
                }
            },
        );
        // Samples after a stick inside this step (pieces end at the stick).
        while pending <= last {
            push(x.th, 0.0, &x.st);
            pending += 1;
        }
        if !(x.th.is_finite() && x.om.is_finite()) {
            return Err(IntegrateError::NonFinite { t: t_end });
        }
        t = t_end;
        i = last + 1;
    }
    Ok(events)
}

/// Advance one step [t, t + h], handling every ω = 0 event inside it and reporting each piece
/// of motion to `piece` before the state jumps at its end.
#[allow(clippy::too_many_arguments)]
#[inline]
fn advance<const NP: usize>(
    field: &mut Field<NP>,
    physics: &Physics,
    x: &mut X<NP>,
    mode: &mut Mode,
    cache: &mut Option<Start<NP>>,
    t: f64,
    h: f64,
    events: &mut Vec<Event>,
    piece: &mut impl FnMut(&Piece<NP>),
) {
    let mut t = t;
    let mut rem = h;
    loop {
        let Mode::Moving(dir) = *mode else { return };
        let sa = cache.take().unwrap_or_else(|| field.start(x, dir));
        let fa = sa.f;
        let y = field.step_from(x, dir, rem, &sa);
        let g_end = dir * y.om;
        if g_end.is_nan() || g_end > 0.0 {
            // Still moving the same way (or non-finite, which the caller reports). The end's
            // derivative is the next step's first stage.
            let sb = field.start(&y, dir);
            piece(&Piece { ta: t, xa: *x, fa, tb: t + rem, xb: y, fb: sb.f });
            *x = y;
            *cache = Some(sb);
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
        let mut y = if hs.total_cmp(&rem).is_eq() { y } else { field.step_from(x, dir, hs, &sa) };
        let tau = t + hs;
        let a_minus = field.rhs.accel(y.th, 0.0, dir);
        y.om = 0.0;
        let fb = field.start(&y, dir).f;
        piece(&Piece { ta: t, xa: *x, fa, tb: tau, xb: y, fb });
        let next = if field.rhs.sigma > 0.0 {
            let (m, moved) = reverse_presliding(&mut field.rhs, y.th, dir);
            if moved && NP > 0 {
                field.reanchor_sensitivity(&y.st, dir);
            }
            m
        } else {
            decide(physics, field.rhs.equilibrium, y.th)
        };
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

#[cfg(test)]
mod tests {
    use super::small_sin_cos;

    #[test]
    fn small_angle_series_matches_libm() {
        for i in -100..=100 {
            let d = i as f64 * 1e-3;
            let (s, c) = small_sin_cos(d).expect("small");
            assert!((s - d.sin()).abs() <= 2e-17, "sin {d}");
            assert!((c - d.cos()).abs() <= 2e-16, "cos {d}");
        }
        assert!(small_sin_cos(0.11).is_none());
    }
}
