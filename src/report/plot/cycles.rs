//! Cycle-by-cycle plots: the decay envelope (peak amplitude of each half cycle against time) and
//! the period against amplitude, both from the survey's peak and crossing detector
//! ([`crate::data::survey`], with hysteresis) run on the measured log and on the model
//! trajectory, and the comparison's one period-against-amplitude algorithm
//! ([`crate::fit::compare::period_points`]).
//!
//! ## Where the log resolves a period
//! A crossing of the equilibrium is located to about one crossing band `r` (the survey's
//! hysteresis: 5 noise standard deviations, at least one encoder step) divided by the slope of
//! the swing there, ω·A. Its timing error relative to the period is then `r / (2π A)`; a cycle
//! is drawn only when that is at most [`TIMING_LIMIT`] (0.5 %), i.e. when its amplitude is at
//! least `A_min = r / (2π · 0.005) ≈ 32 r`. Below, quantisation or noise, not the pendulum,
//! sets the measured period. Each drawn cycle carries an interval bar of ±2 u(T) with
//! `u(T) = √2 σ / (ω A)` (two crossings, each with timing standard uncertainty σ/(ωA), σ the
//! survey's noise floor).

use crate::data::AngleLog;
use crate::data::survey::{Survey, survey};
use crate::fit::compare::{self, Comparison};

use super::{Chart, DEG, MAX_PARAMETRIC, Mark, Points, Role, RunView, Series, thin};

/// Largest timing error of one crossing, relative to the period, for a cycle to be drawn.
pub const TIMING_LIMIT: f64 = 0.005;

/// The survey of the measured log.
fn measured_survey(run: &RunView<'_>) -> Survey {
    survey(run.log)
}

/// The survey of the model trajectory over the fitted samples, when it makes a valid log.
fn model_survey(run: &RunView<'_>) -> Option<Survey> {
    let m = &run.fit.model_angle;
    let n = run.times().len().min(m.len());
    AngleLog::from_samples("model", run.times()[..n].to_vec(), m[..n].to_vec())
        .ok()
        .map(|log| survey(&log))
}

/// |peak − fitted equilibrium| of each peak of `s`, as (time s, amplitude rad).
fn peaks_from_rest(s: &Survey, eq: f64) -> Points {
    s.peaks.iter().map(|p| (p.t, (p.deflection + s.equilibrium_rad - eq).abs())).collect()
}

/// Half-cycle peaks of a run from the survey's detector, measured from the fitted equilibrium:
/// (measured, model) lists of (time s, |deflection| rad).
pub fn half_cycle_peaks(run: &RunView<'_>) -> (Points, Points) {
    let eq = run.fit.equilibrium.value;
    let measured = peaks_from_rest(&measured_survey(run), eq);
    let model = model_survey(run).map(|s| peaks_from_rest(&s, eq)).unwrap_or_default();
    (measured, model)
}

/// Period against amplitude of a run, every cycle the detector finds, before the resolution
/// limit: (measured, model) lists of (amplitude rad, period s).
pub fn period_points(run: &RunView<'_>) -> (Points, Points) {
    let pts = |s: &Survey| -> Points {
        compare::period_points(s).iter().map(|p| (p.amplitude, p.period)).collect()
    };
    (pts(&measured_survey(run)), model_survey(run).map(|s| pts(&s)).unwrap_or_default())
}

/// One measured cycle on the period plot.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Cycle {
    /// Mean amplitude of its two half cycles [rad].
    pub amplitude: f64,
    /// Measured period [s].
    pub period: f64,
    /// Standard uncertainty of the period from the crossing timing [s].
    pub u: f64,
}

/// The measured cycles of a run that the log resolves, and what was left out.
#[derive(Clone, Debug, PartialEq)]
pub struct PeriodCycles {
    /// Cycles at or above the resolution limit.
    pub kept: Vec<Cycle>,
    /// Cycles below it, not drawn.
    pub dropped: usize,
    /// The resolution limit `A_min` [rad].
    pub limit: f64,
}

/// The crossing band of a survey [rad]: 5 noise standard deviations, at least one encoder step
/// (the survey's own hysteresis for crossings).
pub fn crossing_band(s: &Survey) -> f64 {
    (5.0 * s.noise_rad).max(s.encoder_step_rad.unwrap_or(0.0))
}

/// The measured cycles of `s` split at the resolution limit (see the module docs).
pub fn cycles_of(s: &Survey) -> PeriodCycles {
    let limit = crossing_band(s) / (2.0 * std::f64::consts::PI * TIMING_LIMIT);
    let mut kept = Vec::new();
    let mut dropped = 0;
    for p in compare::period_points(s) {
        if !(p.amplitude >= limit && p.period > 0.0) {
            dropped += 1;
            continue;
        }
        let omega = 2.0 * std::f64::consts::PI / p.period;
        let u = std::f64::consts::SQRT_2 * s.noise_rad / (omega * p.amplitude);
        kept.push(Cycle { amplitude: p.amplitude, period: p.period, u });
    }
    PeriodCycles { kept, dropped, limit }
}

/// The measured cycles of a run split at its resolution limit.
pub fn period_cycles(run: &RunView<'_>) -> PeriodCycles {
    cycles_of(&measured_survey(run))
}

/// Half-cycle peak amplitude of run `k` against time: measured peaks (dots) and the model of the
/// fit, or with a comparison the chosen candidate's model strong and every other converged
/// candidate muted (one legend entry for them all).
pub fn envelope(r: &RunView<'_>, k: usize, comparison: Option<&Comparison>, stem: &str) -> Chart {
    let to_deg = |p: &Points| -> Points { p.iter().map(|(t, a)| (*t, a * DEG)).collect() };
    let (measured, model) = half_cycle_peaks(r);
    let mut series = vec![Series::new(
        "measured peaks",
        thin(&to_deg(&measured), MAX_PARAMETRIC),
        Mark::Dots,
        Role::Measured,
    )];
    match comparison {
        Some(c) => {
            let mut others = 0;
            for cand in c.candidates.iter().filter(|c| c.fit.is_ok()) {
                let Some(p) = cand.model_peaks.get(k).filter(|p| !p.is_empty()) else {
                    continue;
                };
                let pts: Points = p.iter().map(|p| (p.t, p.deflection.abs() * DEG)).collect();
                let (label, role) = if c.best == Some(cand.damping) {
                    (format!("model {} (chosen)", cand.damping), Role::Chosen)
                } else {
                    others += 1;
                    let label = if others == 1 { "other candidates" } else { "" };
                    (label.to_string(), Role::Other)
                };
                series.push(Series::new(label, thin(&pts, MAX_PARAMETRIC), Mark::Line, role));
            }
        }
        None => series.push(Series::new(
            "fitted model",
            thin(&to_deg(&model), MAX_PARAMETRIC),
            Mark::Line,
            Role::Model,
        )),
    }
    Chart {
        stem: stem.to_string(),
        title: format!("{}: decay envelope, peak amplitude of each half cycle", r.name),
        x_label: "time [s]".into(),
        y_label: "peak amplitude [deg]".into(),
        series,
        below: Vec::new(),
    }
}

/// Period against amplitude: the measured cycles the logs resolve (dots with ±2u bars) and the
/// model curve (the comparison's reference model, or the fitted model's own cycles).
pub fn period_amplitude(
    runs: &[RunView<'_>],
    comparison: Option<&Comparison>,
    stem: &str,
) -> Chart {
    let mut measured = Vec::new();
    let mut err = Vec::new();
    let mut model = Vec::new();
    let (mut dropped, mut limit) = (0usize, 0.0_f64);
    for r in runs {
        let c = period_cycles(r);
        dropped += c.dropped;
        limit = limit.max(c.limit);
        for cy in &c.kept {
            measured.push((cy.amplitude * DEG, cy.period));
            err.push(2.0 * cy.u);
        }
        let (_, f) = period_points(r);
        model.extend(f.iter().filter(|(a, _)| *a >= c.limit).map(|(a, p)| (a * DEG, *p)));
    }
    let mut curve: Points = match comparison {
        Some(c) if !c.period_curve.is_empty() => {
            c.period_curve.iter().filter(|(a, _)| *a >= limit).map(|(a, p)| (a * DEG, *p)).collect()
        }
        _ => model,
    };
    curve.sort_by(|a, b| a.0.total_cmp(&b.0));
    // Thin the measured cycles and their bars alike.
    let stride = measured.len().div_ceil(MAX_PARAMETRIC).max(1);
    let keep = |i: &usize| i.is_multiple_of(stride);
    let pts: Points = (0..measured.len()).filter(keep).map(|i| measured[i]).collect();
    let bars: Vec<f64> = (0..err.len()).filter(keep).map(|i| err[i]).collect();
    let mut dots = Series::new("measured cycles (±2u)", pts, Mark::Dots, Role::Measured);
    dots.y_err = bars;
    let below = if dropped > 0 {
        format!(", {dropped} cycles below {:.2}° not resolved", limit * DEG)
    } else {
        String::new()
    };
    Chart {
        stem: stem.to_string(),
        title: format!("Period against amplitude (where the logs resolve it{below})"),
        x_label: "amplitude [deg]".into(),
        y_label: "period [s]".into(),
        series: vec![
            dots,
            Series::new("fitted model", thin(&curve, MAX_PARAMETRIC), Mark::Line, Role::Model),
        ],
        below: Vec::new(),
    }
}
