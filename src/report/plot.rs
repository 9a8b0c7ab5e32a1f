//! Plots of a fit: measured angle against the model, residuals, decay envelope, period against
//! amplitude and the phase portrait, drawn with plotters as SVG and PNG.
//!
//! A [`Chart`] is plain data (title, axis labels with units, series of points); the builders in
//! this module turn fit results into charts, and [`render_svg`] / [`render_png`] draw them. The
//! PNG backend draws text with the embedded Noto Sans font (registered once, so no system fonts
//! are needed). Long logs are decimated before drawing (min/max per pixel column), so no series
//! has more than a few thousand points whatever the length of the log.

use std::path::Path;
use std::sync::Once;

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::fit::RunFit;
use crate::fit::compare::Comparison;

/// Drawing width of every chart [px].
pub const WIDTH: u32 = 1200;
/// Drawing height of every chart [px].
pub const HEIGHT: u32 = 640;
/// Pixel columns used when decimating a time series (each keeps its min and max).
pub const COLUMNS: usize = 1500;
/// Most points of a parametric series (phase portrait) after thinning.
pub const MAX_PARAMETRIC: usize = 4000;

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mark {
    /// Joined by a line.
    Line,
    /// One dot per point.
    Dots,
}

/// One series of a chart.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text.
    pub label: String,
    /// Points (x, y), already decimated.
    pub points: Vec<(f64, f64)>,
    /// Line or dots.
    pub mark: Mark,
}

/// A chart as data: what is drawn, independent of the backend.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    /// File stem, e.g. `run1_overlay`.
    pub stem: String,
    /// Title above the plot.
    pub title: String,
    /// x axis label with unit.
    pub x_label: String,
    /// y axis label with unit.
    pub y_label: String,
    /// The series, drawn in order (measured first, models after).
    pub series: Vec<Series>,
}

impl Chart {
    /// Total points over every series.
    pub fn n_points(&self) -> usize {
        self.series.iter().map(|s| s.points.len()).sum()
    }
}

/// Why a chart could not be drawn.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("plot {stem}: {what}")]
pub struct PlotError {
    /// The chart's file stem.
    pub stem: String,
    /// What failed.
    pub what: String,
}

/// A list of (x, y) points.
pub type Points = Vec<(f64, f64)>;

/// One measured run with its fitted model, as the plot builders take it.
#[derive(Clone, Copy, Debug)]
pub struct RunView<'a> {
    /// Name of the run on the plots (label or file name).
    pub name: &'a str,
    /// Sample times [s].
    pub times: &'a [f64],
    /// Measured angles [rad].
    pub angles: &'a [f64],
    /// The fitted run (model angle, velocity, residuals, equilibrium).
    pub fit: &'a RunFit,
}

impl<'a> RunView<'a> {
    /// A view of one run.
    pub fn new(name: &'a str, times: &'a [f64], angles: &'a [f64], fit: &'a RunFit) -> RunView<'a> {
        RunView { name, times, angles, fit }
    }
}

/// Min/max decimation: split the x range into `columns` equal columns and keep, in each, the
/// point of least and of greatest y (in x order). Peaks and troughs survive at any zoom; the
/// result has at most 2·`columns` points. `points` must be sorted by x.
pub fn decimate(points: &[(f64, f64)], columns: usize) -> Vec<(f64, f64)> {
    if points.len() <= 2 * columns.max(1) {
        return points.to_vec();
    }
    let (x0, x1) = (points[0].0, points[points.len() - 1].0);
    let width = (x1 - x0) / columns as f64;
    if width.is_nan() || width <= 0.0 {
        return vec![points[0], points[points.len() - 1]];
    }
    let mut out = Vec::with_capacity(2 * columns);
    let mut i = 0;
    while i < points.len() {
        let col = (((points[i].0 - x0) / width) as usize).min(columns - 1);
        let (mut lo, mut hi) = (i, i);
        let mut j = i;
        while j < points.len() && (((points[j].0 - x0) / width) as usize).min(columns - 1) == col {
            if points[j].1 < points[lo].1 {
                lo = j;
            }
            if points[j].1 > points[hi].1 {
                hi = j;
            }
            j += 1;
        }
        let (a, b) = if lo <= hi { (lo, hi) } else { (hi, lo) };
        out.push(points[a]);
        if b != a {
            out.push(points[b]);
        }
        i = j;
    }
    out
}

/// Keep every k-th point of a parametric curve so that at most `max` remain (first and last kept).
pub fn thin(points: &[(f64, f64)], max: usize) -> Vec<(f64, f64)> {
    if points.len() <= max.max(2) {
        return points.to_vec();
    }
    let stride = points.len().div_ceil(max.max(2) - 1);
    let mut out: Vec<(f64, f64)> = points.iter().step_by(stride).copied().collect();
    if let Some(&last) = points.last()
        && out.last() != Some(&last)
    {
        out.push(last);
    }
    out
}

/// Half-cycle peaks of a run: the model's deflection θ−θeq changes sign at the half-cycle
/// boundaries; in each half cycle the measured and the model extreme are taken.
/// Returns (measured, model) lists of (time s, |deflection| rad).
pub fn half_cycle_peaks(run: &RunView<'_>) -> (Points, Points) {
    let eq = run.fit.equilibrium.value;
    let model = &run.fit.model_angle;
    let n = run.times.len().min(run.angles.len()).min(model.len());
    let mut bounds = vec![0];
    for i in 1..n {
        if (model[i - 1] - eq).signum() != (model[i] - eq).signum() && (model[i] - eq).abs() > 0.0 {
            bounds.push(i);
        }
    }
    let (mut measured, mut fitted) = (Vec::new(), Vec::new());
    for w in bounds.windows(2) {
        let (a, b) = (w[0], w[1]);
        if b <= a + 2 || a == 0 {
            // The first interval starts mid-swing (at the release), not at a crossing.
            continue;
        }
        let pick = |v: &[f64]| {
            (a..b).max_by(|&i, &j| (v[i] - eq).abs().total_cmp(&(v[j] - eq).abs())).unwrap_or(a)
        };
        let im = pick(run.angles);
        let jm = pick(model);
        measured.push((run.times[im], (run.angles[im] - eq).abs()));
        fitted.push((run.times[jm], (model[jm] - eq).abs()));
    }
    (measured, fitted)
}

/// Upward zero crossings of deflection `v − eq`, linearly interpolated, at times `t`.
fn upward_crossings(t: &[f64], v: &[f64], eq: f64) -> Vec<f64> {
    let mut out = Vec::new();
    for i in 1..t.len().min(v.len()) {
        let (a, b) = (v[i - 1] - eq, v[i] - eq);
        if a < 0.0 && b >= 0.0 {
            out.push(t[i - 1] + (t[i] - t[i - 1]) * (-a) / (b - a));
        }
    }
    out
}

/// Period against amplitude of a run: each full cycle between two upward crossings of the
/// model, its duration and the mean of the half-cycle peaks inside it. The measured period uses
/// the measured crossing nearest each model crossing (within an eighth of a period).
/// Returns (measured, model) lists of (amplitude rad, period s).
pub fn period_points(run: &RunView<'_>) -> (Points, Points) {
    let eq = run.fit.equilibrium.value;
    let model_up = upward_crossings(run.times, &run.fit.model_angle, eq);
    let measured_up = upward_crossings(run.times, run.angles, eq);
    let (_, peaks) = half_cycle_peaks(run);
    let amp = |t0: f64, t1: f64| {
        let inside: Vec<f64> =
            peaks.iter().filter(|(t, _)| *t > t0 && *t < t1).map(|p| p.1).collect();
        if inside.is_empty() {
            None
        } else {
            Some(inside.iter().sum::<f64>() / inside.len() as f64)
        }
    };
    let nearest = |tc: f64, tol: f64| {
        measured_up
            .iter()
            .copied()
            .filter(|m| (m - tc).abs() <= tol)
            .min_by(|a, b| (a - tc).abs().total_cmp(&(b - tc).abs()))
    };
    let (mut measured, mut model) = (Vec::new(), Vec::new());
    for w in model_up.windows(2) {
        let (t0, t1) = (w[0], w[1]);
        let Some(a) = amp(t0, t1) else { continue };
        model.push((a, t1 - t0));
        let tol = (t1 - t0) / 8.0;
        if let (Some(m0), Some(m1)) = (nearest(t0, tol), nearest(t1, tol)) {
            measured.push((a, m1 - m0));
        }
    }
    (measured, model)
}

/// Measured angular velocity by central differences over ±k samples, with k chosen so the span
/// is about a fortieth of a period (keeps encoder steps from dominating, bias below 0.5 %).
pub fn finite_difference_velocity(t: &[f64], v: &[f64], period: f64) -> Vec<(f64, f64)> {
    let n = t.len().min(v.len());
    if n < 3 {
        return Vec::new();
    }
    let dt = (t[n - 1] - t[0]) / (n - 1) as f64;
    let k = if dt > 0.0 && period.is_finite() {
        ((period / 80.0 / dt).round() as usize).max(1)
    } else {
        1
    };
    let k = k.min((n - 1) / 2).max(1);
    (k..n - k).map(|i| (t[i], (v[i + k] - v[i - k]) / (t[i + k] - t[i - k]))).collect()
}

fn time_series(t: &[f64], v: &[f64], scale: f64, range: (f64, f64)) -> Vec<(f64, f64)> {
    let pts: Vec<(f64, f64)> = t
        .iter()
        .zip(v)
        .filter(|(x, _)| **x >= range.0 && **x <= range.1)
        .map(|(x, y)| (*x, y * scale))
        .collect();
    decimate(&pts, COLUMNS)
}

/// Which part of a run an overlay shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Window {
    /// The whole record.
    Whole,
    /// The first three cycles.
    First,
    /// The last three cycles of motion.
    Last,
}

/// Small-amplitude period of the fitted model [s].
fn period_of(omega_n: f64) -> f64 {
    2.0 * std::f64::consts::PI / omega_n
}

/// Measured angle with the fitted model, in degrees, over the chosen window.
pub fn overlay(run: &RunView<'_>, omega_n: f64, window: Window, stem: &str) -> Chart {
    let t = run.times;
    let (t0, t1) = (t.first().copied().unwrap_or(0.0), t.last().copied().unwrap_or(0.0));
    let period = period_of(omega_n);
    let (range, what) = match window {
        Window::Whole => ((t0, t1), "whole record"),
        Window::First => ((t0, (t0 + 3.0 * period).min(t1)), "first three cycles"),
        Window::Last => {
            let (_, peaks) = half_cycle_peaks(run);
            let end = peaks.last().map_or(t1, |p| (p.0 + 0.75 * period).min(t1));
            (((end - 3.0 * period).max(t0), end), "last three cycles of motion")
        }
    };
    let deg = 180.0 / std::f64::consts::PI;
    // Angles are shown from the fitted equilibrium, so an encoder run reads as a swing about
    // zero, not in the encoder's raw frame.
    let eq = run.fit.equilibrium.value;
    let from_rest = |v: &[f64]| v.iter().map(|a| a - eq).collect::<Vec<f64>>();
    Chart {
        stem: stem.to_string(),
        title: format!("{}: measured angle over the fitted model, {what}", run.name),
        x_label: "time [s]".into(),
        y_label: "angle from rest [deg]".into(),
        series: vec![
            Series {
                label: "measured".into(),
                points: time_series(t, &from_rest(run.angles), deg, range),
                mark: Mark::Line,
            },
            Series {
                label: "fitted model".into(),
                points: time_series(t, &from_rest(&run.fit.model_angle), deg, range),
                mark: Mark::Line,
            },
        ],
    }
}

/// Residuals model − measured against time of one run, in millidegrees, in its own panel (each
/// run on its own scale, so structure in either can be seen).
pub fn residuals(run: &RunView<'_>, stem: &str) -> Chart {
    let mdeg = 180.0e3 / std::f64::consts::PI;
    Chart {
        stem: stem.to_string(),
        title: format!("{}: residuals (model minus measured)", run.name),
        x_label: "time [s]".into(),
        y_label: "residual [mdeg]".into(),
        series: vec![Series {
            label: "residual".into(),
            points: time_series(
                run.times,
                &run.fit.residuals,
                mdeg,
                (f64::NEG_INFINITY, f64::INFINITY),
            ),
            mark: Mark::Line,
        }],
    }
}

/// Half-cycle peak amplitude of run `k` against time: measured peaks (dots) and the model of the
/// fit, or of every converged candidate of a comparison (lines, best first), one chart per run so
/// the candidates can be told apart.
pub fn envelope(r: &RunView<'_>, k: usize, comparison: Option<&Comparison>, stem: &str) -> Chart {
    let deg = 180.0 / std::f64::consts::PI;
    let mut series = Vec::new();
    let (measured, model) = half_cycle_peaks(r);
    let measured: Vec<(f64, f64)> = match comparison.and_then(|c| c.measured_peaks.get(k)) {
        Some(p) if !p.is_empty() => p.iter().map(|p| (p.t, p.deflection.abs() * deg)).collect(),
        _ => measured.iter().map(|(t, a)| (*t, a * deg)).collect(),
    };
    series.push(Series {
        label: "measured peaks".into(),
        points: thin(&measured, MAX_PARAMETRIC),
        mark: Mark::Dots,
    });
    match comparison {
        Some(c) => {
            for cand in c.candidates.iter().filter(|c| c.fit.is_ok()) {
                if let Some(p) = cand.model_peaks.get(k)
                    && !p.is_empty()
                {
                    let pts: Vec<(f64, f64)> =
                        p.iter().map(|p| (p.t, p.deflection.abs() * deg)).collect();
                    let best = c.best == Some(cand.damping);
                    series.push(Series {
                        label: format!(
                            "model {}{}",
                            cand.damping,
                            if best { " (chosen)" } else { "" }
                        ),
                        points: thin(&pts, MAX_PARAMETRIC),
                        mark: Mark::Line,
                    });
                }
            }
        }
        None => {
            let pts: Vec<(f64, f64)> = model.iter().map(|(t, a)| (*t, a * deg)).collect();
            series.push(Series {
                label: "fitted model".into(),
                points: thin(&pts, MAX_PARAMETRIC),
                mark: Mark::Line,
            });
        }
    }
    Chart {
        stem: stem.to_string(),
        title: format!("{}: decay envelope, peak amplitude of each half cycle", r.name),
        x_label: "time [s]".into(),
        y_label: "peak amplitude [deg]".into(),
        series,
    }
}

/// Period against amplitude: measured cycles (dots) and the model curve.
pub fn period_amplitude(
    runs: &[RunView<'_>],
    comparison: Option<&Comparison>,
    stem: &str,
) -> Chart {
    let deg = 180.0 / std::f64::consts::PI;
    let mut measured = Vec::new();
    let mut model = Vec::new();
    for (k, r) in runs.iter().enumerate() {
        let (m, f) = period_points(r);
        match comparison.and_then(|c| c.period_points.get(k)) {
            Some(p) if !p.is_empty() => {
                measured.extend(p.iter().map(|p| (p.amplitude * deg, p.period)))
            }
            _ => measured.extend(m.iter().map(|(a, p)| (a * deg, *p))),
        }
        model.extend(f.iter().map(|(a, p)| (a * deg, *p)));
    }
    let mut curve: Vec<(f64, f64)> = match comparison {
        Some(c) if !c.period_curve.is_empty() => {
            c.period_curve.iter().map(|(a, p)| (a * deg, *p)).collect()
        }
        _ => model,
    };
    curve.sort_by(|a, b| a.0.total_cmp(&b.0));
    Chart {
        stem: stem.to_string(),
        title: "Period against amplitude".into(),
        x_label: "amplitude [deg]".into(),
        y_label: "period [s]".into(),
        series: vec![
            Series {
                label: "measured cycles".into(),
                points: thin(&measured, MAX_PARAMETRIC),
                mark: Mark::Dots,
            },
            Series {
                label: "fitted model".into(),
                points: thin(&curve, MAX_PARAMETRIC),
                mark: Mark::Line,
            },
        ],
    }
}

/// Phase portrait: angular velocity against angle (deflection from rest), measured velocity by
/// finite differences and the model's.
pub fn phase_portrait(run: &RunView<'_>, omega_n: f64, stem: &str) -> Chart {
    let deg = 180.0 / std::f64::consts::PI;
    let eq = run.fit.equilibrium.value;
    let vel = finite_difference_velocity(run.times, run.angles, period_of(omega_n));
    let n = run.times.len().min(run.angles.len());
    let k = n.saturating_sub(vel.len()) / 2;
    let measured: Vec<(f64, f64)> = vel
        .iter()
        .enumerate()
        .map(|(i, (_, w))| ((run.angles[i + k] - eq) * deg, w * deg))
        .collect();
    let model: Vec<(f64, f64)> = run
        .fit
        .model_angle
        .iter()
        .zip(&run.fit.model_velocity)
        .map(|(a, w)| ((a - eq) * deg, w * deg))
        .collect();
    Chart {
        stem: stem.to_string(),
        title: format!("{}: phase portrait", run.name),
        x_label: "angle from rest [deg]".into(),
        y_label: "angular velocity [deg/s]".into(),
        series: vec![
            Series {
                label: "measured (finite differences)".into(),
                points: thin(&measured, MAX_PARAMETRIC),
                mark: Mark::Line,
            },
            Series {
                label: "fitted model".into(),
                points: thin(&model, MAX_PARAMETRIC),
                mark: Mark::Line,
            },
        ],
    }
}

/// Colours of the series in order: measured in dark grey, models in strong colours.
/// Colour of the measured series: near black, drawn on top.
const MEASURED: RGBColor = RGBColor(25, 25, 25);
/// Colour of a single model line: a light red, wide, under the data.
const MODEL: RGBColor = RGBColor(244, 150, 150);
/// Colours of rejected candidates: pale, so the chosen model stands out.
const MUTED: [RGBColor; 3] =
    [RGBColor(170, 190, 215), RGBColor(185, 210, 180), RGBColor(205, 190, 215)];

const PALETTE: [RGBColor; 8] = [
    RGBColor(90, 90, 90),
    RGBColor(214, 39, 40),
    RGBColor(31, 119, 180),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
    RGBColor(23, 190, 207),
    RGBColor(140, 86, 75),
];

fn bounds(chart: &Chart, pick: impl Fn(&(f64, f64)) -> f64) -> (f64, f64) {
    let (lo, hi) = chart
        .series
        .iter()
        .flat_map(|s| s.points.iter())
        .map(pick)
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), v| (l.min(v), h.max(v)));
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    let span = hi - lo;
    let pad = if span > 0.0 { 0.04 * span } else { lo.abs().max(1.0) * 0.05 };
    (lo - pad, hi + pad)
}

fn draw<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, chart: &Chart) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    root.fill(&WHITE).map_err(e)?;
    let (x0, x1) = bounds(chart, |p| p.0);
    let (y0, y1) = bounds(chart, |p| p.1);
    let mut cc = ChartBuilder::on(&root)
        .caption(&chart.title, ("sans-serif", 30))
        .margin(14)
        .margin_right(40)
        .x_label_area_size(70)
        .y_label_area_size(110)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(e)?;
    cc.configure_mesh()
        .x_desc(&chart.x_label)
        .y_desc(&chart.y_label)
        .label_style(("sans-serif", 22))
        .axis_desc_style(("sans-serif", 24))
        .light_line_style(RGBColor(235, 235, 235))
        .draw()
        .map_err(e)?;
    // Measured series (the first, or any labelled "measured") are drawn last, dark and thin, so
    // the data lie visibly over the lighter, wider model lines; in a comparison (one model
    // labelled "(chosen)") the chosen model is drawn strong and the rejected ones muted.
    let measured = |i: usize, s: &Series| i == 0 || s.label.contains("measured");
    let candidates = chart.series.iter().any(|s| s.label.contains("(chosen)"));
    let (data, models): (Vec<usize>, Vec<usize>) =
        (0..chart.series.len()).partition(|&i| measured(i, &chart.series[i]));
    for (rank, i) in models.iter().chain(&data).copied().enumerate() {
        let s = &chart.series[i];
        let chosen = s.label.contains("(chosen)");
        let (color, width) = if measured(i, s) {
            (MEASURED, 1)
        } else if candidates && !chosen {
            (MUTED[rank % MUTED.len()], 1)
        } else if candidates {
            (PALETTE[1], 3)
        } else {
            (MODEL, 4)
        };
        let pts = s.points.iter().copied().filter(|(x, y)| x.is_finite() && y.is_finite());
        let anno = match s.mark {
            Mark::Line => {
                cc.draw_series(LineSeries::new(pts, color.stroke_width(width))).map_err(e)?
            }
            Mark::Dots => {
                let r = if measured(i, s) { 3 } else { 2 };
                cc.draw_series(pts.map(move |p| Circle::new(p, r, color.filled()))).map_err(e)?
            }
        };
        anno.label(&s.label).legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 24, y)], color.stroke_width(3))
        });
    }
    cc.configure_series_labels()
        .label_font(("sans-serif", 22))
        .background_style(WHITE.mix(0.85))
        .border_style(RGBColor(160, 160, 160))
        .position(SeriesLabelPosition::UpperRight)
        .draw()
        .map_err(e)?;
    root.present().map_err(e)?;
    Ok(())
}

static FONT: Once = Once::new();

/// Register the embedded Noto Sans as "sans-serif" (once per process): the bitmap backend draws
/// glyphs with it and both backends measure text with it to lay out labels and legends.
fn register_font() {
    FONT.call_once(|| {
        // Noto Sans Regular is a valid TrueType font shipped inside ttf-noto-sans; a failure here
        // would surface as a drawing error below, never as a panic.
        let _ =
            plotters::style::register_font("sans-serif", FontStyle::Normal, ttf_noto_sans::REGULAR);
    });
}

/// Draw `chart` as an SVG document.
pub fn render_svg(chart: &Chart) -> Result<String, PlotError> {
    register_font();
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (WIDTH, HEIGHT)).into_drawing_area();
        draw(root, chart).map_err(|what| PlotError { stem: chart.stem.clone(), what })?;
    }
    Ok(out)
}

/// Draw `chart` as a PNG file at `path` (the file name must end in `.png`).
pub fn render_png(chart: &Chart, path: &Path) -> Result<(), PlotError> {
    register_font();
    let root = BitMapBackend::new(path, (WIDTH, HEIGHT)).into_drawing_area();
    draw(root, chart).map_err(|what| PlotError { stem: chart.stem.clone(), what })
}

/// Every chart of a sheet: per run the overlays (whole, first, last cycles), the phase portrait,
/// the decay envelope and the residuals; then period against amplitude.
pub fn sheet_charts(
    runs: &[RunView<'_>],
    omega_n: f64,
    comparison: Option<&Comparison>,
) -> Vec<Chart> {
    let mut charts = Vec::new();
    for (k, r) in runs.iter().enumerate() {
        let n = k + 1;
        charts.push(overlay(r, omega_n, Window::Whole, &format!("run{n}_overlay")));
        charts.push(overlay(r, omega_n, Window::First, &format!("run{n}_first_cycles")));
        charts.push(overlay(r, omega_n, Window::Last, &format!("run{n}_last_cycles")));
        charts.push(phase_portrait(r, omega_n, &format!("run{n}_phase")));
        charts.push(envelope(r, k, comparison, &format!("run{n}_envelope")));
        charts.push(residuals(r, &format!("run{n}_residuals")));
    }
    charts.push(period_amplitude(runs, comparison, "period_amplitude"));
    charts
}

/// The fitted model over each whole run on one chart (what `fit --plot` draws).
pub fn fit_overlay(runs: &[RunView<'_>], omega_n: f64, stem: &str) -> Chart {
    if let [one] = runs {
        return overlay(one, omega_n, Window::Whole, stem);
    }
    let mut series = Vec::new();
    for r in runs {
        for s in overlay(r, omega_n, Window::Whole, stem).series {
            series.push(Series { label: format!("{}: {}", r.name, s.label), ..s });
        }
    }
    Chart {
        stem: stem.to_string(),
        title: "Measured angle and fitted model, whole records".into(),
        x_label: "time [s]".into(),
        y_label: "angle [deg]".into(),
        series,
    }
}

/// Refuse a plot file name that ends neither in `.svg` nor in `.png` (before any work is done).
pub fn check_chart_path(path: &Path) -> Result<(), PlotError> {
    let ext = path.extension().map(|e| e.to_string_lossy().to_ascii_lowercase());
    if matches!(ext.as_deref(), Some("svg" | "png")) {
        Ok(())
    } else {
        Err(PlotError {
            stem: "fit".into(),
            what: format!("{}: expected a file name ending in .svg or .png", path.display()),
        })
    }
}

/// Write `chart` to `path` as SVG or PNG by its extension, whole or not at all (drawn to a
/// temporary file beside `path`, then renamed).
pub fn write_chart(chart: &Chart, path: &Path) -> Result<(), PlotError> {
    let fail = |what: String| PlotError { stem: chart.stem.clone(), what };
    let ext =
        path.extension().map(|e| e.to_string_lossy().to_ascii_lowercase()).unwrap_or_default();
    match ext.as_str() {
        "svg" => {
            let svg = render_svg(chart)?;
            crate::report::atomic::write_atomic(path, svg.as_bytes())
                .map_err(|e| fail(format!("{}: cannot write: {e}", path.display())))
        }
        "png" => {
            let name =
                path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default();
            let tmp = path.with_file_name(format!(".{name}.{}.tmp.png", std::process::id()));
            let result = render_png(chart, &tmp).and_then(|()| {
                std::fs::rename(&tmp, path)
                    .map_err(|e| fail(format!("{}: cannot write: {e}", path.display())))
            });
            if result.is_err() {
                let _ = std::fs::remove_file(&tmp);
            }
            result
        }
        _ => Err(fail(format!("{}: expected a file name ending in .svg or .png", path.display()))),
    }
}
