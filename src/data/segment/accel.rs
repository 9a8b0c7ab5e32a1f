//! The physics of the segmentation: derivative estimates by local quadratics, half cycles
//! between velocity reversals, and the test of a half cycle's measured acceleration against
//! the restoring-torque law fitted to the free ones (see [`super`] for the method).

use nalgebra::{SMatrix, SVector};

use super::FORCED_RATIO;
use crate::data::survey::Survey;

/// Local derivative estimate at one sample.
#[derive(Clone, Copy, Debug)]
pub(super) struct Deriv {
    pub(super) index: usize,
    pub(super) theta: f64,
    pub(super) omega: f64,
    pub(super) alpha: f64,
    /// Standard deviation of `alpha` from the sample noise.
    pub(super) alpha_sd: f64,
}

/// A half cycle of a moving span: derivative points between two velocity reversals.
#[derive(Clone, Debug)]
pub(super) struct HalfCycle {
    /// Sample index of the turning point that starts it.
    pub(super) start: usize,
    /// Sample index of the turning point that ends it.
    pub(super) end: usize,
    pub(super) points: Vec<Deriv>,
}

/// Largest |θ − θeq| over a half cycle's points.
pub(super) fn amplitude(hc: &HalfCycle, eq: f64) -> f64 {
    hc.points.iter().map(|d| (d.theta - eq).abs()).fold(0.0, f64::max)
}

/// Ratio of measured to predicted RMS acceleration over a half cycle.
pub(super) fn accel_gain(hc: &HalfCycle, c: &[f64; 5]) -> f64 {
    let (mut m, mut p) = (0.0, 0.0);
    for d in &hc.points {
        m += d.alpha * d.alpha;
        let a = predict(c, d);
        p += a * a;
    }
    (m / p.max(1e-300)).sqrt()
}

/// Period for the windows: the survey's, else twice the median spacing of its peaks.
pub(super) fn period_of(s: &Survey) -> Option<f64> {
    if let Some(p) = s.period_s.filter(|p| p.is_finite() && *p > 0.0) {
        return Some(p);
    }
    let sp = median(s.peaks.windows(2).map(|w| w[1].t - w[0].t).collect());
    (sp.is_finite() && sp > 0.0).then_some(2.0 * sp)
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Judgement {
    /// Misfit ratio under the limit.
    Free(f64),
    /// Misfit ratio over the limit.
    Forced(f64),
    /// Prediction not above the acceleration noise: cannot tell.
    Unjudged,
}

pub(super) fn predict(c: &[f64; 5], d: &Deriv) -> f64 {
    let (s, co) = d.theta.sin_cos();
    c[0] * s + c[1] * co + c[2] * d.omega.signum() + c[3] * d.omega + c[4] * d.omega * d.omega.abs()
}

pub(super) fn judge(hc: &HalfCycle, c: &[f64; 5]) -> Judgement {
    let (mut e2, mut p2, mut n2) = (0.0, 0.0, 0.0);
    for d in &hc.points {
        let p = predict(c, d);
        e2 += (d.alpha - p) * (d.alpha - p);
        p2 += p * p;
        n2 += d.alpha_sd * d.alpha_sd;
    }
    if hc.points.len() < 4 || p2 <= 25.0 * n2 {
        return Judgement::Unjudged;
    }
    // Misfit beyond what the noise alone explains.
    let r = ((e2 - n2).max(0.0) / p2).sqrt();
    if r > FORCED_RATIO { Judgement::Forced(r) } else { Judgement::Free(r) }
}

/// Linear least squares of α on (sin θ, cos θ, sgn ω, ω, ω|ω|) over the kept half cycles.
pub(super) fn reference_fit(all: &[&HalfCycle], keep: &[bool]) -> Option<[f64; 5]> {
    let mut m = SMatrix::<f64, 5, 5>::zeros();
    let mut r = SVector::<f64, 5>::zeros();
    let mut count = 0usize;
    let mut scale = 0.0f64;
    for (hc, _) in all.iter().zip(keep).filter(|(_, k)| **k) {
        for d in &hc.points {
            scale = scale.max(d.omega.abs());
        }
    }
    let scale = scale.max(1e-12);
    for (hc, _) in all.iter().zip(keep).filter(|(_, k)| **k) {
        for d in &hc.points {
            let (s, c) = d.theta.sin_cos();
            let w = d.omega / scale;
            let x = SVector::<f64, 5>::from([s, c, d.omega.signum(), w, w * w.abs()]);
            m += x * x.transpose();
            r += x * d.alpha;
            count += 1;
        }
    }
    if count < 20 {
        return None;
    }
    let sol = m.cholesky()?.solve(&r);
    let c = [sol[0], sol[1], sol[2], sol[3] / scale, sol[4] / (scale * scale)];
    c.iter().all(|v| v.is_finite()).then_some(c)
}

/// Derivative points of samples `a..b` every `stride` samples, windows of half-width `h`
/// clipped to the span, split into half cycles at velocity reversals.
pub(super) fn half_cycles(
    t: &[f64],
    y: &[f64],
    a: usize,
    b: usize,
    h: f64,
    stride: usize,
    noise: f64,
) -> Vec<HalfCycle> {
    let mut pts: Vec<Deriv> = Vec::new();
    let mut lo = a;
    let mut hi = a;
    let mut c = a;
    while c < b {
        let tc = t[c];
        while lo < c && tc - t[lo] > h {
            lo += 1;
        }
        if hi < c {
            hi = c;
        }
        while hi + 1 < b && t[hi + 1] - tc <= h {
            hi += 1;
        }
        if hi + 1 - lo >= 5
            && let Some(d) = local_quadratic(t, y, lo, hi, c, h, noise)
        {
            pts.push(d);
        }
        c += stride;
    }
    // Split at reversals of the velocity, ignoring reversals inside the noise.
    let mut out = Vec::new();
    let mut cur: Vec<Deriv> = Vec::new();
    let mut sign = 0i8;
    let mut start = a;
    for d in pts {
        let s: i8 = if d.omega > 0.0 {
            1
        } else if d.omega < 0.0 {
            -1
        } else {
            0
        };
        if sign != 0 && s != 0 && s != sign {
            // Turning point: the extreme sample between the last point and this one.
            let from = cur.last().map_or(d.index, |p| p.index);
            let turn = extreme_between(y, from, d.index, sign > 0);
            out.push(HalfCycle { start, end: turn, points: std::mem::take(&mut cur) });
            start = turn;
        }
        if s != 0 {
            sign = s;
        }
        cur.push(d);
    }
    if !cur.is_empty() {
        out.push(HalfCycle { start, end: b - 1, points: cur });
    }
    out
}

/// Index of the largest (`max`) or smallest angle in samples `a..=b`.
pub(super) fn extreme_between(y: &[f64], a: usize, b: usize, max: bool) -> usize {
    let (a, b) = (a.min(b), a.max(b).min(y.len() - 1));
    (a..=b)
        .max_by(|&i, &j| if max { y[i].total_cmp(&y[j]) } else { y[j].total_cmp(&y[i]) })
        .unwrap_or(a)
}

/// Quadratic least squares through samples `lo..=hi`, evaluated at sample `c`.
pub(super) fn local_quadratic(
    t: &[f64],
    y: &[f64],
    lo: usize,
    hi: usize,
    c: usize,
    h: f64,
    noise: f64,
) -> Option<Deriv> {
    let tc = t[c];
    let mut m = SMatrix::<f64, 3, 3>::zeros();
    let mut r = SVector::<f64, 3>::zeros();
    for j in lo..=hi {
        let x = (t[j] - tc) / h;
        let p = SVector::<f64, 3>::from([1.0, x, x * x]);
        m += p * p.transpose();
        r += p * (y[j] - y[c]);
    }
    let inv = m.try_inverse()?;
    let sol = inv * r;
    let alpha = 2.0 * sol[2] / (h * h);
    let alpha_sd = 2.0 * noise * inv[(2, 2)].max(0.0).sqrt() / (h * h);
    let d = Deriv { index: c, theta: y[c] + sol[0], omega: sol[1] / h, alpha, alpha_sd };
    (d.alpha.is_finite() && d.omega.is_finite() && d.alpha_sd.is_finite()).then_some(d)
}

pub(super) fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    let mid = v.len() / 2;
    let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    *m
}
