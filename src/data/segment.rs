//! Motion segmentation: where the free swing starts and where it ends in a log.
//!
//! Rig logs rarely hold only a free decay. The logger is started, the article rests or is held
//! at its release angle, a hand lets it go (or pushes it, or stays on it for part of the first
//! swing), it decays to rest, and it may be swung again. Only the free part obeys the equation
//! the estimator fits; rest stretches make the first continuation window empty and forced swings
//! bias every coefficient. This module finds the free segments so every fitting command fits
//! them alone, and says what it cut and why.
//!
//! # Method
//! 1. **Still stretches**: maximal stretches whose angles stay within ±band of their own middle
//!    (band as the survey's resting tail: 5 noise std, at least one encoder step and 0.01 % of the
//!    range) lasting at least 20 samples and half a period. A still stretch away from the
//!    equilibrium is a *hold*; near it, *rest*.
//! 2. **Moving spans**: what lies between still stretches. A span that follows a still stretch
//!    starts at its last sample (the release); one that precedes a still stretch ends at its
//!    first sample.
//! 3. **Forcing**: in a free swing the angular acceleration follows the restoring torque,
//!    α = −ωn² sin(θ − θeq) − b0 sgn ω − b1 ω − b2 ω|ω|. θ, ω and α are estimated by local
//!    quadratic least squares (half-width T/16, never across a span edge), and
//!    α = A sin θ + B cos θ + C sgn ω + D ω + E ω|ω| is fitted by linear least squares over the
//!    half cycles of every span, excluding in turn the half cycles it does not explain. A half
//!    cycle is *forced* when the RMS misfit of its acceleration exceeds [`FORCED_RATIO`] of the
//!    RMS acceleration the model predicts and that prediction is well above the acceleration
//!    noise (swings smaller than 4 b0/ωn² or 5 bands are not judged: near the stick zone the
//!    end of a natural decay and quantisation mimic forcing). Leading and trailing forced half cycles of a span are cut: the free segment starts
//!    at the turning point that ends the last leading forced half cycle (a swing the hand was
//!    still on), and ends at the one that starts the first trailing forced half cycle (a hand
//!    stopping the swing).
//! 4. **Free segments**: the spans that keep at least two swings (see
//!    [`super::midline_crossings`]) and [`super::MIN_SAMPLES`] samples. Each is one run.
//!
//! `--from T` / `--to T` (log time, seconds) replace the detected start or end; the other bound
//! is still detected inside the window.

mod accel;

use accel::{
    HalfCycle, Judgement, accel_gain, amplitude, half_cycles, judge, median, period_of,
    reference_fit,
};

use super::survey::Survey;
use super::{
    AngleLog, LoadError, LoadErrorKind, MIN_MIDLINE_CROSSINGS, MIN_SAMPLES, midline_crossings,
};

/// A half cycle whose acceleration misfit exceeds this fraction of the predicted RMS
/// acceleration is forced (a free swing of a clean rig stays under a few per cent: damping is in
/// the model, and the local-quadratic bias is about 1.5 % at half-width T/16).
pub const FORCED_RATIO: f64 = 0.2;

/// Why a free segment starts where it does.
#[derive(Clone, Debug, PartialEq)]
pub enum StartCause {
    /// The log begins in motion.
    LogStart,
    /// The article was at rest (near the equilibrium) and let go, or pushed.
    AfterRest {
        /// How long it rested [s].
        still_s: f64,
    },
    /// The article was held still away from the equilibrium and released.
    AfterHold {
        /// How long it was held [s].
        still_s: f64,
        /// Angle it was held at, from the equilibrium [rad].
        deflection_rad: f64,
    },
    /// The first half cycles were forced (a hand on the article) and are cut.
    AfterForcing {
        /// Forced half cycles cut.
        half_cycles: usize,
        /// Measured over predicted RMS acceleration in the first of them.
        accel_ratio: f64,
        /// Where the forced motion began [s].
        from_s: f64,
    },
    /// `--from` was given.
    Given,
}

/// Why a free segment ends where it does.
#[derive(Clone, Debug, PartialEq)]
pub enum EndCause {
    /// The log ends while the article still swings.
    LogEnd,
    /// The article comes to rest (and stays for the rest of the log, or until the next release).
    Rest,
    /// The last half cycles were forced (a hand stopping it) and are cut.
    Stopped {
        /// Forced half cycles cut.
        half_cycles: usize,
    },
    /// `--to` was given.
    Given,
}

/// One free segment: samples `start..end` of the log.
#[derive(Clone, Debug, PartialEq)]
pub struct Segment {
    /// First sample.
    pub start: usize,
    /// One past the last sample.
    pub end: usize,
    /// Time of the first sample [s].
    pub start_s: f64,
    /// Time of the last sample [s].
    pub end_s: f64,
    /// Why it starts there.
    pub start_cause: StartCause,
    /// Why it ends there.
    pub end_cause: EndCause,
}

/// A still stretch (rest or hold).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Still {
    /// First and last sample time [s].
    pub from_s: f64,
    /// Last sample time [s].
    pub to_s: f64,
    /// Median angle minus equilibrium [rad].
    pub deflection_rad: f64,
    /// True when away from the equilibrium (a hold, not rest).
    pub held: bool,
}

/// Everything the segmentation found in one log.
#[derive(Clone, Debug, PartialEq)]
pub struct Segmentation {
    /// Free segments, in time order (empty when the log has none).
    pub segments: Vec<Segment>,
    /// Still stretches, in time order.
    pub still: Vec<Still>,
    /// Half cycles judged forced, as (start, end) times [s].
    pub forced: Vec<(f64, f64)>,
    /// Half cycles that could be judged (prediction above the acceleration noise).
    pub judged_half_cycles: usize,
    /// Reference fit of the free acceleration: ωn [rad/s], when it could be made.
    pub omega_n: Option<f64>,
    /// Why there is no free segment, when there is none.
    pub refusal: Option<String>,
}

/// An explicit window on the log's time axis [s].
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Window {
    /// Fit from this time.
    pub from_s: Option<f64>,
    /// Fit to this time.
    pub to_s: Option<f64>,
}

/// Segment a log (see the module docs). Never panics.
pub fn segment(log: &AngleLog, s: &Survey) -> Segmentation {
    let t = log.times();
    let y = log.angles();
    let n = t.len();
    let (lo, hi) =
        y.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)));
    let span = (hi - lo).abs();
    let step = log.angle_step().unwrap_or(0.0);
    let band = (5.0 * s.noise_rad).max(step).max(1e-4 * span);
    let duration = t[n - 1] - t[0];
    let period = period_of(s).unwrap_or(0.25 * duration).max(1e-9);
    let eq = s.equilibrium_rad;

    // 1. Still stretches.
    let min_still = 0.5 * period;
    let mut stills: Vec<(usize, usize)> = Vec::new();
    let mut i = 0;
    while i < n {
        let (mut l, mut h) = (y[i], y[i]);
        let mut j = i + 1;
        while j < n {
            let (l2, h2) = (l.min(y[j]), h.max(y[j]));
            if h2 - l2 > 2.0 * band {
                break;
            }
            (l, h) = (l2, h2);
            j += 1;
        }
        if j - i >= 20 && t[j - 1] - t[i] >= min_still {
            // Two still stretches a few samples apart are one (noise broke the band).
            match stills.last_mut() {
                Some(last) if i <= last.1 + 3 => last.1 = j,
                _ => stills.push((i, j)),
            }
            i = j;
        } else {
            i += 1;
        }
    }
    let still: Vec<Still> = stills
        .iter()
        .map(|&(a, b)| {
            let d = median(y[a..b].to_vec()) - eq;
            Still { from_s: t[a], to_s: t[b - 1], deflection_rad: d, held: d.abs() > 3.0 * band }
        })
        .collect();

    // 2. Moving spans, with the still stretch before and after each.
    let mut spans: Vec<(usize, usize, Option<usize>, Option<usize>)> = Vec::new();
    let mut cursor = 0usize;
    let mut before: Option<usize> = None;
    for (k, &(a, b)) in stills.iter().enumerate() {
        if a > cursor {
            let start = if before.is_some() { cursor.saturating_sub(1) } else { cursor };
            spans.push((start, (a + 1).min(n), before, Some(k)));
        }
        cursor = b;
        before = Some(k);
    }
    if cursor < n {
        let start = if before.is_some() { cursor.saturating_sub(1) } else { cursor };
        spans.push((start, n, before, None));
    }
    spans.retain(|&(a, b, _, _)| b > a + 4);

    let mut out = Segmentation {
        segments: Vec::new(),
        still: still.clone(),
        forced: Vec::new(),
        judged_half_cycles: 0,
        omega_n: None,
        refusal: None,
    };
    if spans.is_empty() {
        out.refusal = Some(format!(
            "at rest for the whole log: the angle stays within {:.3e} rad of {:.4} deg",
            band,
            crate::units::to_degrees(median(y.to_vec()))
        ));
        return out;
    }

    // 3. Derivatives and half cycles of every span, then the reference fit.
    let h = period / 16.0;
    let med_dt = if s.rate_hz.is_finite() && s.rate_hz > 0.0 { 1.0 / s.rate_hz } else { 1e-3 };
    let stride = ((period / 64.0) / med_dt).round().max(1.0) as usize;
    let noise = s.noise_rad.max(step / 12f64.sqrt()).max(1e-15);
    let halves: Vec<Vec<HalfCycle>> =
        spans.iter().map(|&(a, b, _, _)| half_cycles(t, y, a, b, h, stride, noise)).collect();
    let all: Vec<&HalfCycle> = halves.iter().flatten().collect();
    let mut keep = vec![true; all.len()];
    let mut coef = None;
    for _ in 0..4 {
        let Some(c) = reference_fit(&all, &keep) else { break };
        coef = Some(c);
        let next: Vec<bool> =
            all.iter().map(|hc| !matches!(judge(hc, &c), Judgement::Forced(_))).collect();
        if next == keep || next.iter().filter(|&&k| k).count() < 2 {
            break;
        }
        keep = next;
    }
    let Some(c) = coef else {
        out.refusal = Some(
            "no free segment: the motion is too short or too slow to show two swings".to_string(),
        );
        return out;
    };
    let w2 = (c[0] * c[0] + c[1] * c[1]).sqrt();
    out.omega_n = Some(w2.sqrt());
    // Swings near the stick zone of the fitted Coulomb term (or a few noise bands) are not
    // judged: there the end of a natural decay and quantisation mimic forcing.
    let eq_fit = c[1].atan2(-c[0]);
    let small = (4.0 * c[2].abs() / w2.max(1e-300)).max(5.0 * band);
    let verdicts: Vec<Vec<Judgement>> = halves
        .iter()
        .map(|hs| {
            hs.iter()
                .map(|hc| {
                    if amplitude(hc, eq_fit) < small { Judgement::Unjudged } else { judge(hc, &c) }
                })
                .collect()
        })
        .collect();
    out.judged_half_cycles =
        verdicts.iter().flatten().filter(|j| **j != Judgement::Unjudged).count();
    let free_judged = verdicts.iter().flatten().filter(|j| matches!(j, Judgement::Free(_))).count();
    for (hs, vs) in halves.iter().zip(&verdicts) {
        for (hc, v) in hs.iter().zip(vs) {
            if matches!(v, Judgement::Forced(_)) {
                out.forced.push((t[hc.start], t[hc.end]));
            }
        }
    }
    if out.judged_half_cycles > 0 && free_judged == 0 {
        let worst = verdicts
            .iter()
            .flatten()
            .filter_map(|j| if let Judgement::Forced(r) = j { Some(*r) } else { None })
            .fold(f64::INFINITY, f64::min);
        out.refusal = Some(format!(
            "driven: acceleration does not follow the restoring torque in any of {} half cycles (misfit at least {:.0} % of the free-swing acceleration)",
            out.judged_half_cycles,
            100.0 * worst
        ));
        return out;
    }

    // 4. Free segments.
    for (k, &(a, b, pre, post)) in spans.iter().enumerate() {
        let (hs, vs) = (&halves[k], &verdicts[k]);
        let lead = vs.iter().take_while(|v| !matches!(v, Judgement::Free(_))).count();
        let lead_forced = vs[..lead].iter().filter(|v| matches!(v, Judgement::Forced(_))).count();
        let trail = vs.iter().rev().take_while(|v| !matches!(v, Judgement::Free(_))).count();
        // A hand stop happens at a real amplitude: trailing half cycles under 5 % of the span's
        // largest swing are the natural end of the decay, whatever their misfit.
        let span_amp = hs.iter().map(|hc| amplitude(hc, eq_fit)).fold(0.0, f64::max);
        let trail_forced = (hs.len() - trail..hs.len())
            .filter(|&i| {
                matches!(vs[i], Judgement::Forced(_)) && amplitude(&hs[i], eq_fit) > 0.05 * span_amp
            })
            .count();
        let mut start = a;
        let mut start_cause = match pre {
            None => StartCause::LogStart,
            Some(p) if still[p].held => StartCause::AfterHold {
                still_s: still[p].to_s - still[p].from_s,
                deflection_rad: still[p].deflection_rad,
            },
            Some(p) => StartCause::AfterRest { still_s: still[p].to_s - still[p].from_s },
        };
        if lead_forced > 0 && lead < hs.len() {
            start = hs[lead].start;
            // The measured/predicted RMS acceleration of the first forced half cycle.
            let first = vs.iter().position(|v| matches!(v, Judgement::Forced(_))).unwrap_or(0);
            start_cause = StartCause::AfterForcing {
                half_cycles: lead_forced,
                accel_ratio: hs.get(first).map_or(f64::NAN, |hc| accel_gain(hc, &c)),
                from_s: t[a],
            };
        }
        let mut end = b;
        let mut end_cause = if post.is_some() { EndCause::Rest } else { EndCause::LogEnd };
        if trail_forced > 0 && trail < hs.len() {
            end = (hs[hs.len() - trail - 1].end + 1).min(b);
            end_cause = EndCause::Stopped { half_cycles: trail_forced };
        }
        if end <= start + 1 {
            continue;
        }
        if end - start < MIN_SAMPLES || midline_crossings(&y[start..end]) < MIN_MIDLINE_CROSSINGS {
            continue;
        }
        out.segments.push(Segment {
            start,
            end,
            start_s: t[start],
            end_s: t[end - 1],
            start_cause,
            end_cause,
        });
    }
    if out.segments.is_empty() {
        out.refusal = Some(format!(
            "no free segment of two swings: found {} moving stretch{} and {} forced half cycle{}",
            spans.len(),
            if spans.len() == 1 { "" } else { "es" },
            out.forced.len(),
            if out.forced.len() == 1 { "" } else { "s" }
        ));
    }
    out
}

/// The runs to fit from one log, with what was cut, in words.
#[derive(Clone, Debug)]
pub struct FreeRuns {
    /// One log per free segment (or the window given).
    pub runs: Vec<AngleLog>,
    /// What was found and cut, one line each, for the user.
    pub notes: Vec<String>,
    /// The segmentation itself.
    pub segmentation: Segmentation,
}

/// The free segments of `log` as logs of their own, or the window given, refused with what was
/// found when there is no free segment. A log whose free segment is the whole log comes back
/// unchanged (same source name); several segments are named `SOURCE [release K of N]`.
pub fn free_runs(log: &AngleLog, window: Window) -> Result<FreeRuns, LoadError> {
    let t = log.times();
    let n = t.len();
    let (t_first, t_last) = (t[0], t[n - 1]);
    let err = |k: fn(String) -> LoadErrorKind, what: String| LoadError {
        path: log.source().to_string(),
        line: None,
        kind: k(what),
    };
    let range = format!("the log runs from {t_first:.3} s to {t_last:.3} s");
    for (flag, v) in [("--from", window.from_s), ("--to", window.to_s)] {
        if let Some(v) = v
            && (!v.is_finite() || v < t_first || v > t_last)
        {
            return Err(err(
                LoadErrorKind::Window,
                format!("{flag} {v} s is outside the log: {range}"),
            ));
        }
    }
    if let (Some(a), Some(b)) = (window.from_s, window.to_s)
        && a >= b
    {
        return Err(err(
            LoadErrorKind::Window,
            format!("--from {a} s is not before --to {b} s: {range}"),
        ));
    }
    let a = window.from_s.map_or(0, |v| t.partition_point(|x| *x < v));
    let b = window.to_s.map_or(n, |v| t.partition_point(|x| *x <= v));
    let windowed = if a > 0 || b < n {
        log.slice(a, b, log.source().to_string()).map_err(|e| {
            err(LoadErrorKind::Window, format!(
                "--from/--to leave {} samples from {:.3} s to {:.3} s, under two swings ({}): {range}",
                b.saturating_sub(a),
                t.get(a).copied().unwrap_or(t_first),
                t.get(b.saturating_sub(1)).copied().unwrap_or(t_last),
                e.kind
            ))
        })?
    } else {
        log.clone()
    };
    let s = super::survey::survey(&windowed);
    let seg = segment(&windowed, &s);
    let wt = windowed.times();
    let mut notes = Vec::new();
    let mut segments = seg.segments.clone();
    if window.from_s.is_some() || window.to_s.is_some() {
        // One run: the given bounds, the other detected inside the window.
        let start =
            if window.from_s.is_some() { 0 } else { segments.first().map_or(0, |g| g.start) };
        let end = if window.to_s.is_some() {
            windowed.len()
        } else {
            segments.iter().find(|g| g.end > start).map_or(windowed.len(), |g| g.end)
        };
        if end <= start + 1 {
            return Err(err(
                LoadErrorKind::Window,
                format!("--from/--to leave no free swing: {range}"),
            ));
        }
        let first = segments.first().cloned();
        segments = vec![Segment {
            start,
            end,
            start_s: wt[start],
            end_s: wt[end - 1],
            start_cause: if window.from_s.is_some() {
                StartCause::Given
            } else {
                first.as_ref().map_or(StartCause::LogStart, |g| g.start_cause.clone())
            },
            end_cause: if window.to_s.is_some() {
                EndCause::Given
            } else {
                first.as_ref().map_or(EndCause::LogEnd, |g| g.end_cause.clone())
            },
        }];
    } else if let Some(why) = &seg.refusal {
        return Err(err(
            LoadErrorKind::NoFreeMotion,
            format!("{why}: {range}; choose a window with --from/--to"),
        ));
    }
    let many = segments.len() > 1;
    let mut runs = Vec::new();
    for (k, g) in segments.iter().enumerate() {
        let name = if many {
            format!("{} [release {} of {}]", log.source(), k + 1, segments.len())
        } else {
            log.source().to_string()
        };
        let run = if g.start == 0 && g.end == windowed.len() {
            AngleLog { source: name, ..windowed.clone() }
        } else {
            windowed.slice(g.start, g.end, name).map_err(|e| {
                err(
                    LoadErrorKind::Window,
                    format!(
                        "the free swing from {:.3} s to {:.3} s is unusable ({}): {range}",
                        g.start_s, g.end_s, e.kind
                    ),
                )
            })?
        };
        let cut_before = g.start_s - t_first;
        let cut_after = t_last - g.end_s;
        if cut_before > 0.0 || cut_after > 0.0 || many {
            notes.push(format!(
                "{}: fitting {:.3} s to {:.3} s ({} samples): {}; {}",
                run.source(),
                g.start_s,
                g.end_s,
                run.len(),
                start_words(&g.start_cause, g.start_s),
                end_words(&g.end_cause, g.end_s)
            ));
        }
        runs.push(run);
    }
    Ok(FreeRuns { runs, notes, segmentation: seg })
}

/// Words for a start cause.
pub fn start_words(c: &StartCause, at: f64) -> String {
    match c {
        StartCause::LogStart => "in motion from the start of the log".into(),
        StartCause::AfterRest { still_s } => {
            format!("released at {at:.3} s after {still_s:.3} s at rest")
        }
        StartCause::AfterHold { still_s, deflection_rad } => format!(
            "released at {at:.3} s after a {still_s:.3} s hold at {:+.3} deg from the equilibrium",
            crate::units::to_degrees(*deflection_rad)
        ),
        StartCause::AfterForcing { half_cycles, accel_ratio, from_s } => format!(
            "forced from {from_s:.3} s: the first {half_cycles} half cycle{} did not follow the restoring torque (measured {:.0} % of the free-swing acceleration); free from the turning point at {at:.3} s",
            if *half_cycles == 1 { "" } else { "s" },
            100.0 * accel_ratio
        ),
        StartCause::Given => format!("from {at:.3} s as given by --from"),
    }
}

/// Words for an end cause.
pub fn end_words(c: &EndCause, at: f64) -> String {
    match c {
        EndCause::LogEnd => "still swinging at the end of the log".into(),
        EndCause::Rest => format!("at rest from {at:.3} s"),
        EndCause::Stopped { half_cycles } => format!(
            "stopped: the last {half_cycles} half cycle{} before rest did not follow the restoring torque and are cut at {at:.3} s",
            if *half_cycles == 1 { "" } else { "s" }
        ),
        EndCause::Given => format!("to {at:.3} s as given by --to"),
    }
}
