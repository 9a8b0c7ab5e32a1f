//! A quick look at a validated log: rate, gaps, equilibrium, period, noise, peaks.
//!
//! The survey is what `check` prints and what the estimator uses for its start values, so the
//! same numbers are seen by the engineer and by the fit.
//!
//! # Method
//! - Rate and jitter: median interval, and 1.4826 × MAD of the intervals over the median.
//! - Gaps: intervals over [`GAP_FACTOR`] × the median. Nothing is interpolated across a gap.
//! - Noise floor: the centre residual of a least-squares quadratic through 5 samples (actual
//!   times), standardised by its leverage, robust std (1.4826 × median |e|); never below the
//!   quantisation step/√12 for counts (Widrow & Kollár, docs/checks.md §9 \[memory\]).
//! - Extremes: turning points with a hysteresis of 10 noise std (or 2 encoder steps), each refined
//!   by the parabola through the sample (or the middle of a flat top) and its two neighbours.
//!   A log that starts still (article held, then let go) gets its first extreme at the release,
//!   with the median angle of the still stretch before it.
//! - Equilibrium: median over consecutive extremes of (P₋ + 2P₀ + P₊)/4, which cancels a linear
//!   (Coulomb) decay exactly and a geometric (viscous) decay to second order, so the estimate is the
//!   centre of the swing and not the rest angle. Fallback: the resting tail, then the mean.
//! - Crossings of the equilibrium with a hysteresis band of 5 noise std (or one encoder step), the
//!   time interpolated linearly inside the last sample interval, never inside a gap.
//! - Period: from crossings of each half cycle's own midline (the mean of its two bounding
//!   extremes), which are unbiased under Coulomb as well as viscous decay (see
//!   `midline_crossings`); the equilibrium crossings serve when there are too few. Each crossing gets an integer half-cycle number (its parity fixed by its direction),
//!   then t = a_dir + (T/2)·k is fitted by least squares weighted by amplitude² (timing error
//!   scales as noise/amplitude), with outlier rejection.
//!   This is exact for a linear damped oscillator and unaffected by gaps or irregular timestamps.
//! - Resting tail: the final stretch whose angles all lie within a band of ±5 noise std (at
//!   least one encoder step and 0.01 % of the angle range), lasting at least 20 samples and one
//!   period (estimated from the spacing of the extremes; 10 % of the log when there are none).

use super::AngleLog;

/// An interval between samples over 5× the median interval.
#[derive(Clone, Debug, PartialEq)]
pub struct Gap {
    /// Time of the sample before the gap [s].
    pub start_s: f64,
    /// Length of the interval [s].
    pub length_s: f64,
}

/// An extreme of one half cycle, measured from the equilibrium.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Peak {
    /// Time of the extreme [s].
    pub t: f64,
    /// Angle minus equilibrium [rad] (signed).
    pub deflection: f64,
}

/// What `check` reports about a log.
#[derive(Clone, Debug, PartialEq)]
pub struct Survey {
    /// Number of samples.
    pub samples: usize,
    /// Last minus first time [s].
    pub duration_s: f64,
    /// 1 / median sample interval [Hz].
    pub rate_hz: f64,
    /// Sampling jitter: robust spread of intervals relative to the median (dimensionless).
    pub jitter: f64,
    /// Intervals over 5× the median.
    pub gaps: Vec<Gap>,
    /// Smallest and largest angle [rad].
    pub angle_range: (f64, f64),
    /// Time the article came to rest, when the log ends in a resting tail [s].
    pub rest_from_s: Option<f64>,
    /// Estimated equilibrium angle [rad].
    pub equilibrium_rad: f64,
    /// Swing period from zero crossings about the equilibrium [s], when there are enough.
    pub period_s: Option<f64>,
    /// Small-amplitude period T0 [s]: the median over half cycles of twice the peak-to-peak time
    /// divided by (2/π)·K(sin²(A/2)) at that half cycle's amplitude, so a large release does not
    /// lengthen it (see [`crate::model::period_ratio`]).
    pub period_small_amplitude_s: Option<f64>,
    /// Noise floor estimate (standard deviation) [rad].
    pub noise_rad: f64,
    /// Encoder step [rad] when the angle came in counts.
    pub encoder_step_rad: Option<f64>,
    /// Times the angle crosses the equilibrium [s], before any resting tail; none inside a gap.
    pub crossings: Vec<f64>,
    /// Extreme of every half cycle, in time order, before any resting tail. Half cycles whose
    /// extreme sits next to a gap are left out (the true extreme may lie inside the gap). When the
    /// log starts with the article held still, the first peak is at the release.
    pub peaks: Vec<Peak>,
    /// Time-base slips (samples stamped one interval off; see [`super::slips`]).
    pub slips: super::slips::Slips,
}

/// Intervals over this multiple of the median interval are gaps.
pub const GAP_FACTOR: f64 = 5.0;

/// Survey a log. Works on any valid [`AngleLog`]; never panics.
pub fn survey(log: &AngleLog) -> Survey {
    let t = log.times();
    let y = log.angles();
    let n = t.len();
    let dts: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    let med_dt = median(dts.clone());
    let rate_hz = if med_dt > 0.0 { 1.0 / med_dt } else { f64::NAN };
    let jitter = 1.4826 * median(dts.iter().map(|d| (d - med_dt).abs()).collect()) / med_dt;
    // gap_after[i]: the interval from sample i to i+1 is a gap.
    let gap_after: Vec<bool> = dts.iter().map(|&d| d > GAP_FACTOR * med_dt).collect();
    let gaps: Vec<Gap> = dts
        .iter()
        .zip(&gap_after)
        .enumerate()
        .filter(|(_, (_, g))| **g)
        .map(|(i, (&d, _))| Gap { start_s: t[i], length_s: d })
        .collect();
    let (lo, hi) =
        y.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)));
    let span = (hi - lo).abs();
    let step = log.angle_step();
    let tiny = 1e-12 * (span + lo.abs().max(hi.abs())).max(f64::MIN_POSITIVE);

    let quant = step.map_or(0.0, |q| q / 12f64.sqrt());
    let noise_rad = noise_floor(t, y, &gap_after, med_dt).max(quant).max(tiny);

    let h_turn = (10.0 * noise_rad).max(2.0 * step.unwrap_or(0.0));
    let extremes = turning_points(t, y, h_turn, &gap_after);
    let spacing = median(extremes.windows(2).map(|w| w[1].t - w[0].t).collect());
    let period_guess = (spacing.is_finite() && spacing > 0.0).then_some(2.0 * spacing);

    // Motion under 0.01 % of the angle range counts as rest even on a noise-free log.
    let band = (5.0 * noise_rad).max(step.unwrap_or(0.0)).max(1e-4 * span);
    let duration_s = t.last().copied().unwrap_or(0.0) - t.first().copied().unwrap_or(0.0);
    let rest_start = resting_tail(t, y, band, period_guess.unwrap_or(0.1 * duration_s));

    let equilibrium_rad = equilibrium(&extremes, spacing).unwrap_or_else(|| {
        let from = rest_start.unwrap_or(0);
        let tail = y.get(from..).unwrap_or(y);
        tail.iter().sum::<f64>() / tail.len().max(1) as f64
    });
    let rest_from_s = rest_start.and_then(|i| t.get(i).copied());
    let before_rest = |time: f64| rest_from_s.is_none_or(|r| time < r);

    let crossings: Vec<Crossing> = find_crossings(t, y, equilibrium_rad, band, &gap_after)
        .into_iter()
        .filter(|c| before_rest(c.t))
        .collect();
    let local: Vec<Crossing> = midline_crossings(t, y, &extremes, spacing, &gap_after)
        .into_iter()
        .filter(|c| before_rest(c.t))
        .collect();
    let period_s = period(&local, &gaps).or_else(|| period(&crossings, &gaps));
    let peaks: Vec<Peak> = extremes
        .iter()
        .filter(|e| e.clean && before_rest(e.t))
        .map(|e| Peak { t: e.t, deflection: e.value - equilibrium_rad })
        .collect();
    let period_small_amplitude_s = small_amplitude_period(&peaks, &gaps, period_s);

    Survey {
        samples: n,
        duration_s,
        rate_hz,
        jitter,
        gaps,
        angle_range: (lo, hi),
        rest_from_s,
        equilibrium_rad,
        period_s,
        period_small_amplitude_s,
        noise_rad,
        encoder_step_rad: step,
        crossings: crossings.iter().map(|c| c.t).collect(),
        peaks,
        slips: super::slips::detect(log, noise_rad),
    }
}

/// T0 from consecutive opposite peaks not separated by a gap, each half period corrected for its
/// amplitude; only half cycles within 25 % of the measured period's half are used.
fn small_amplitude_period(peaks: &[Peak], gaps: &[Gap], period_s: Option<f64>) -> Option<f64> {
    let half = 0.5 * period_s?;
    let spans_gap = |a: f64, b: f64| gaps.iter().any(|g| g.start_s >= a && g.start_s < b);
    let t0: Vec<f64> = peaks
        .windows(2)
        .filter(|w| {
            (w[0].deflection > 0.0) != (w[1].deflection > 0.0) && !spans_gap(w[0].t, w[1].t)
        })
        .filter(|w| ((w[1].t - w[0].t) / half - 1.0).abs() < 0.25)
        .map(|w| {
            let a = 0.5 * (w[0].deflection.abs() + w[1].deflection.abs());
            2.0 * (w[1].t - w[0].t) / crate::model::period_ratio(a)
        })
        .collect();
    if t0.len() < 2 {
        return None;
    }
    let m = median(t0);
    m.is_finite().then_some(m)
}

/// Median (NaN for an empty list). Non-finite values sort last.
fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    let mid = v.len() / 2;
    let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    let upper = *m;
    if v.len() % 2 == 1 {
        return upper;
    }
    // For an even count, average with the largest of the lower half.
    let lower = v[..mid].iter().copied().fold(f64::NEG_INFINITY, f64::max);
    0.5 * (lower + upper)
}

/// True when no interval in samples `a..=b` is a gap.
fn no_gap(gap_after: &[bool], a: usize, b: usize) -> bool {
    gap_after.get(a..b).is_some_and(|s| !s.iter().any(|&g| g))
}

/// Robust std of the centre residual of 5-point local quadratic fits (see module docs).
fn noise_floor(t: &[f64], y: &[f64], gap_after: &[bool], scale: f64) -> f64 {
    let n = t.len();
    if n < 5 || scale.is_nan() || scale <= 0.0 {
        return 0.0;
    }
    let mut e = Vec::with_capacity(n);
    for i in 2..n - 2 {
        if !no_gap(gap_after, i - 2, i + 2) {
            continue;
        }
        // Normal equations in x = (t − t_i)/scale; the centre row is [1, 0, 0].
        let mut m = [[0.0f64; 3]; 3];
        let mut r = [0.0f64; 3];
        for j in i - 2..=i + 2 {
            let x = (t[j] - t[i]) / scale;
            let p = [1.0, x, x * x];
            for a in 0..3 {
                for b in 0..3 {
                    m[a][b] += p[a] * p[b];
                }
                r[a] += p[a] * (y[j] - y[i]);
            }
        }
        let Some(inv) = inverse3(&m) else { continue };
        let fit0 = inv[0][0] * r[0] + inv[0][1] * r[1] + inv[0][2] * r[2];
        let lev = inv[0][0];
        if lev < 1.0 && lev > 0.0 {
            e.push(((0.0 - fit0) / (1.0 - lev).sqrt()).abs());
        }
    }
    let m = median(e);
    if m.is_finite() { 1.4826 * m } else { 0.0 }
}

/// Inverse of a 3×3 matrix by cofactors, `None` when (nearly) singular.
fn inverse3(m: &[[f64; 3]; 3]) -> Option<[[f64; 3]; 3]> {
    let c =
        |r0: usize, r1: usize, c0: usize, c1: usize| m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0];
    let cof = [
        [c(1, 2, 1, 2), -c(1, 2, 0, 2), c(1, 2, 0, 1)],
        [-c(0, 2, 1, 2), c(0, 2, 0, 2), -c(0, 2, 0, 1)],
        [c(0, 1, 1, 2), -c(0, 1, 0, 2), c(0, 1, 0, 1)],
    ];
    let det = m[0][0] * cof[0][0] + m[0][1] * cof[0][1] + m[0][2] * cof[0][2];
    let norm: f64 = m.iter().flatten().map(|v| v.abs()).sum();
    if !det.is_finite() || det.abs() <= 1e-12 * norm.powi(3) {
        return None;
    }
    let mut inv = [[0.0; 3]; 3];
    for (a, row) in inv.iter_mut().enumerate() {
        for (b, v) in row.iter_mut().enumerate() {
            *v = cof[b][a] / det;
        }
    }
    Some(inv)
}

/// A turning point of the raw angle.
#[derive(Clone, Copy, Debug)]
struct Extreme {
    /// Sample index of the extreme (first sample of a flat top).
    index: usize,
    t: f64,
    value: f64,
    is_max: bool,
    /// Refined from neighbours on both sides with no gap.
    clean: bool,
}

/// Turning points with hysteresis `h`: an extreme counts once the angle has retreated from it by
/// more than `h`. The first and last samples are never extremes.
fn turning_points(t: &[f64], y: &[f64], h: f64, gap_after: &[bool]) -> Vec<Extreme> {
    let n = y.len();
    let mut out = Vec::new();
    if n < 3 {
        return out;
    }
    let (mut i_hi, mut i_lo) = (0usize, 0usize);
    let mut dir = 0i8;
    for i in 1..n {
        match dir {
            0 => {
                if y[i] > y[i_hi] {
                    i_hi = i;
                }
                if y[i] < y[i_lo] {
                    i_lo = i;
                }
                if y[i] < y[i_hi] - h {
                    if let Some(e) = first_extreme(t, y, i_hi, true, h, gap_after) {
                        out.push(e);
                    }
                    dir = -1;
                    i_lo = (i_hi..=i).min_by(|&a, &b| y[a].total_cmp(&y[b])).unwrap_or(i);
                } else if y[i] > y[i_lo] + h {
                    if let Some(e) = first_extreme(t, y, i_lo, false, h, gap_after) {
                        out.push(e);
                    }
                    dir = 1;
                    i_hi = (i_lo..=i).max_by(|&a, &b| y[a].total_cmp(&y[b])).unwrap_or(i);
                }
            }
            -1 => {
                if y[i] < y[i_lo] {
                    i_lo = i;
                }
                if y[i] > y[i_lo] + h {
                    out.push(refine(t, y, i_lo, false, gap_after));
                    dir = 1;
                    i_hi = i;
                }
            }
            _ => {
                if y[i] > y[i_hi] {
                    i_hi = i;
                }
                if y[i] < y[i_hi] - h {
                    out.push(refine(t, y, i_hi, true, gap_after));
                    dir = -1;
                    i_lo = i;
                }
            }
        }
    }
    out
}

/// The first extreme, at sample `j`. When the samples up to `j` show no trend (at least 10, the
/// means of their two halves within h/8) and all samples from the start to past `j` stay within
/// h/2 of their median, the article was held (or the log began at rest) and let go: the extreme is
/// put at the last sample of that still stretch, the release, with the median angle up to `j`.
/// Otherwise it is refined as usual, unless it is the first sample.
fn first_extreme(
    t: &[f64],
    y: &[f64],
    j: usize,
    is_max: bool,
    h: f64,
    gap_after: &[bool],
) -> Option<Extreme> {
    // Held means flat, not merely slow: the approach to a peak near the start trends, a hold does not.
    let lead = &y[..=j.min(y.len() - 1)];
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len().max(1) as f64;
    let flat = lead.len() >= 10
        && (mean(&lead[..lead.len() / 2]) - mean(&lead[lead.len() / 2..])).abs() < h / 8.0;
    if flat {
        let level = median(lead.to_vec());
        let still = y.iter().take_while(|&&v| (v - level).abs() <= 0.5 * h).count();
        if still > j {
            let end = still - 1;
            return Some(Extreme { index: end, t: t[end], value: level, is_max, clean: true });
        }
    }
    (j > 0).then(|| refine(t, y, j, is_max, gap_after))
}

/// Refine the extreme at sample `j` (first sample of a flat top) with the parabola through the
/// middle of the flat top and the samples just outside it.
fn refine(t: &[f64], y: &[f64], j: usize, is_max: bool, gap_after: &[bool]) -> Extreme {
    let n = y.len();
    let mut j1 = j;
    while j1 + 1 < n && y[j1 + 1].total_cmp(&y[j]).is_eq() {
        j1 += 1;
    }
    let raw = Extreme { index: j, t: 0.5 * (t[j] + t[j1]), value: y[j], is_max, clean: false };
    if j == 0 || j1 + 1 >= n || !no_gap(gap_after, j - 1, j1 + 1) {
        return raw;
    }
    let (x0, y0) = (t[j - 1], y[j - 1]);
    let (x1, y1) = (raw.t, y[j]);
    let (x2, y2) = (t[j1 + 1], y[j1 + 1]);
    // Divided differences: p(x) = y0 + d1 (x−x0) + d2 (x−x0)(x−x1).
    let d01 = (y1 - y0) / (x1 - x0);
    let d12 = (y2 - y1) / (x2 - x1);
    let d2 = (d12 - d01) / (x2 - x0);
    let curving = if is_max { d2 < 0.0 } else { d2 > 0.0 };
    if !curving || !d2.is_finite() {
        return Extreme { clean: true, ..raw };
    }
    let xv = 0.5 * (x0 + x1) - d01 / (2.0 * d2);
    if !(x0..=x2).contains(&xv) {
        return Extreme { clean: true, ..raw };
    }
    let yv = y0 + d01 * (xv - x0) + d2 * (xv - x0) * (xv - x1);
    Extreme { index: j, t: xv, value: yv, is_max, clean: true }
}

/// Median of (P₋ + 2P₀ + P₊)/4 over consecutive clean extremes (see module docs).
fn equilibrium(ext: &[Extreme], spacing: f64) -> Option<f64> {
    let ok = |a: &Extreme, b: &Extreme| {
        a.clean && b.clean && a.is_max != b.is_max && b.t - a.t <= 1.5 * spacing
    };
    let mids: Vec<f64> = ext
        .windows(3)
        .filter(|w| ok(&w[0], &w[1]) && ok(&w[1], &w[2]))
        .map(|w| 0.25 * (w[0].value + 2.0 * w[1].value + w[2].value))
        .collect();
    if !mids.is_empty() {
        return Some(median(mids));
    }
    let pairs: Vec<f64> = ext
        .windows(2)
        .filter(|w| ok(&w[0], &w[1]))
        .map(|w| 0.5 * (w[0].value + w[1].value))
        .collect();
    (!pairs.is_empty()).then(|| median(pairs))
}

/// Start index of the resting tail: the final stretch within ±`band` of its own middle, lasting at
/// least 20 samples and `min_duration`.
fn resting_tail(t: &[f64], y: &[f64], band: f64, min_duration: f64) -> Option<usize> {
    let n = y.len();
    let last = *y.last()?;
    let (mut lo, mut hi) = (last, last);
    let mut start = n - 1;
    for i in (0..n).rev() {
        let (l, h) = (lo.min(y[i]), hi.max(y[i]));
        if h - l > 2.0 * band {
            break;
        }
        (lo, hi, start) = (l, h, i);
    }
    let long = n - start >= 20 && t[n - 1] - t[start] >= min_duration && start > 0;
    long.then_some(start)
}

/// A crossing of the equilibrium.
#[derive(Clone, Copy, Debug)]
struct Crossing {
    t: f64,
    up: bool,
    /// Weight in the period fit: timing error scales as 1/amplitude, so amplitude² (1 when unknown).
    w: f64,
}

/// Crossings of `eq` with hysteresis `band`: from below `eq − band` to above `eq + band` or back,
/// timed by linear interpolation in the last interval where the sign of θ − eq changed. A crossing
/// whose interval is a gap is dropped.
fn find_crossings(t: &[f64], y: &[f64], eq: f64, band: f64, gap_after: &[bool]) -> Vec<Crossing> {
    let mut out = Vec::new();
    let mut side = 0i8;
    let mut last_change: Option<usize> = None;
    for i in 0..y.len() {
        let d = y[i] - eq;
        if i > 0 && ((y[i - 1] - eq < 0.0) != (d < 0.0)) {
            last_change = Some(i - 1);
        }
        let s = if d > band {
            1
        } else if d < -band {
            -1
        } else {
            0
        };
        if s == 0 {
            continue;
        }
        if side != 0
            && s != side
            && let Some(k) = last_change
            && !gap_after.get(k).copied().unwrap_or(true)
        {
            let (d0, d1) = (y[k] - eq, y[k + 1] - eq);
            let f = if (d1 - d0).abs() > 0.0 { -d0 / (d1 - d0) } else { 0.5 };
            out.push(Crossing {
                t: t[k] + f.clamp(0.0, 1.0) * (t[k + 1] - t[k]),
                up: s > 0,
                w: 1.0,
            });
        }
        side = s;
    }
    out
}

/// Crossings of each half cycle's own midline, the mean of the two extremes that bound it.
///
/// Under Coulomb friction each half cycle is harmonic about its own centre ±Δ (docs/checks.md §4), so
/// crossings of the global equilibrium drift later as the swing decays; crossings of the local
/// midline fall exactly at the quarter points. Under viscous decay the local midline is offset by
/// a fixed fraction of the amplitude, which shifts up and down crossings by constant times that
/// the per-direction intercepts of [`period`] absorb. Half cycles that contain a gap are skipped.
fn midline_crossings(
    t: &[f64],
    y: &[f64],
    ext: &[Extreme],
    spacing: f64,
    gap_after: &[bool],
) -> Vec<Crossing> {
    let mut out = Vec::new();
    for w in ext.windows(2) {
        let (a, b) = (w[0], w[1]);
        if !a.clean
            || !b.clean
            || a.is_max == b.is_max
            || b.t - a.t > 1.5 * spacing
            || !no_gap(gap_after, a.index, b.index)
        {
            continue;
        }
        let m = 0.5 * (a.value + b.value);
        let at = |k: usize| {
            let (d0, d1) = (y[k] - m, y[k + 1] - m);
            let f = if (d1 - d0).abs() > 0.0 { (-d0 / (d1 - d0)).clamp(0.0, 1.0) } else { 0.5 };
            t[k] + f * (t[k + 1] - t[k])
        };
        // First and last sign change between the two extremes; noise can add a few near the middle.
        let changes: Vec<usize> =
            (a.index..b.index).filter(|&k| (y[k] - m < 0.0) != (y[k + 1] - m < 0.0)).collect();
        if let (Some(&f), Some(&l)) = (changes.first(), changes.last()) {
            let amp = 0.5 * (a.value - b.value).abs();
            out.push(Crossing { t: 0.5 * (at(f) + at(l)), up: !a.is_max, w: amp * amp });
        }
    }
    out
}

/// Period from crossings by an integer half-cycle fit (see module docs).
fn period(cr: &[Crossing], gaps: &[Gap]) -> Option<f64> {
    if cr.len() < 3 {
        return None;
    }
    let spans_gap = |a: f64, b: f64| gaps.iter().any(|g| g.start_s >= a && g.start_s < b);
    let half0 = median(
        cr.windows(2)
            .filter(|w| w[0].up != w[1].up && !spans_gap(w[0].t, w[1].t))
            .map(|w| w[1].t - w[0].t)
            .collect(),
    );
    if !half0.is_finite() || half0 <= 0.0 {
        return None;
    }
    let mut half = half0;
    let mut keep = vec![true; cr.len()];
    for pass in 0..3 {
        // Half-cycle numbers: nearest integer of the right parity.
        let mut k = vec![0.0f64; cr.len()];
        for i in 1..cr.len() {
            let d = (cr[i].t - cr[i - 1].t) / half;
            let parity = if cr[i].up == cr[i - 1].up { 0.0 } else { 1.0 };
            let steps = (((d - parity) / 2.0).round() * 2.0 + parity).max(if parity > 0.0 {
                1.0
            } else {
                2.0
            });
            k[i] = k[i - 1] + steps;
        }
        let fit = |keep: &[bool]| -> Option<(f64, [f64; 2])> {
            // Weighted least squares: separate intercepts for up and down crossings, common slope.
            let mut sum = [[0.0f64; 3]; 2]; // per direction: Σw, Σw·k, Σw·t
            for (i, c) in cr.iter().enumerate().filter(|(i, _)| keep[*i]) {
                let g = usize::from(c.up);
                sum[g][0] += c.w;
                sum[g][1] += c.w * k[i];
                sum[g][2] += c.w * c.t;
            }
            let mean = |g: usize| {
                if sum[g][0] > 0.0 {
                    (sum[g][1] / sum[g][0], sum[g][2] / sum[g][0])
                } else {
                    (0.0, 0.0)
                }
            };
            let (mut sxy, mut sxx) = (0.0, 0.0);
            for (i, c) in cr.iter().enumerate().filter(|(i, _)| keep[*i]) {
                let (mk, mt) = mean(usize::from(c.up));
                sxy += c.w * (k[i] - mk) * (c.t - mt);
                sxx += c.w * (k[i] - mk) * (k[i] - mk);
            }
            let b = sxy / sxx;
            let (m0, m1) = (mean(0), mean(1));
            (b.is_finite() && b > 0.0).then_some((b, [m0.1 - b * m0.0, m1.1 - b * m1.0]))
        };
        let (b, a) = fit(&keep)?;
        half = b;
        if pass == 2 {
            break;
        }
        // One round of outlier rejection on the weight-standardised residuals.
        let wmean = cr.iter().map(|c| c.w).sum::<f64>() / cr.len() as f64;
        let res: Vec<f64> = cr
            .iter()
            .enumerate()
            .map(|(i, c)| (c.t - a[usize::from(c.up)] - b * k[i]) * (c.w / wmean).sqrt())
            .collect();
        let spread = 1.4826 * median(res.iter().map(|r| r.abs()).collect());
        let limit = (5.0 * spread).max(1e-9 * b);
        keep = res.iter().map(|r| r.abs() <= limit).collect();
        if keep.iter().filter(|&&x| x).count() < 3 {
            keep = vec![true; cr.len()];
        }
    }
    Some(2.0 * half)
}
