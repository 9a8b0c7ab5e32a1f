//! Plots of a fit: measured angle against the model, residuals with their distribution and
//! autocorrelation, decay envelope, period against amplitude and the phase portrait, drawn with
//! plotters as SVG and PNG.
//!
//! A [`Chart`] is plain data (title, axis labels with units, series of points, optional panels
//! below the main one); the builders here and in [`cycles`] and [`residual`] turn fit results
//! into charts, and [`render_svg`] / [`render_png`] ([`draw`]) draw them. Every angle is measured
//! from the fitted equilibrium, so an encoder run reads as a swing about zero. Peaks and
//! crossings come from the one detector of the data survey ([`crate::data::survey`]); the
//! plots do not detect them again. Long logs are decimated before drawing (min/max per pixel
//! column), so no series has more than a few thousand points whatever the length of the log.

pub mod cycles;
pub mod draw;
pub mod residual;

use std::path::Path;

use crate::data::AngleLog;
use crate::fit::RunFit;
use crate::fit::compare::Comparison;

pub use cycles::{
    Cycle, PeriodCycles, envelope, half_cycle_peaks, period_amplitude, period_cycles, period_points,
};
pub use draw::{render_png, render_svg};
pub use residual::residuals;

/// Drawing width of every chart [px].
pub const WIDTH: u32 = 1200;
/// Drawing height of every chart [px].
pub const HEIGHT: u32 = 640;
/// Pixel columns used when decimating a time series (each keeps its min and max).
pub const COLUMNS: usize = 1500;
/// Most points of a parametric series (phase portrait) after thinning.
pub const MAX_PARAMETRIC: usize = 4000;
/// Degrees per radian.
pub(crate) const DEG: f64 = 180.0 / std::f64::consts::PI;

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mark {
    /// Joined by a line.
    Line,
    /// One dot per point (with vertical interval bars when the series has `y_err`).
    Dots,
    /// Histogram bars centred on each x, as wide as the spacing of the points, from zero to y.
    Bars,
    /// A vertical stem from zero to each point (autocorrelations).
    Stems,
}

/// What a series is, which decides its colour, width and drawing order: models first (the
/// rejected candidates muted), then the measured data on top, then reference curves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Role {
    /// Measured data: near black, thin, drawn over the models.
    Measured,
    /// The fitted model: a light, wide line under the data.
    Model,
    /// The model of the chosen damping set among compared candidates: strong.
    Chosen,
    /// A rejected candidate: muted; only the first one carries a legend entry.
    Other,
    /// A reference drawn over the data (noise Gaussian, confidence band, noise floor).
    Reference,
}

/// One series of a chart.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text; empty for no legend entry.
    pub label: String,
    /// Points (x, y), already decimated.
    pub points: Vec<(f64, f64)>,
    /// Line, dots, bars or stems.
    pub mark: Mark,
    /// What the series is.
    pub role: Role,
    /// Half-widths of vertical interval bars, one per point, or empty for none.
    pub y_err: Vec<f64>,
}

impl Series {
    /// A series without interval bars.
    pub fn new(label: impl Into<String>, points: Vec<(f64, f64)>, mark: Mark, role: Role) -> Self {
        Series { label: label.into(), points, mark, role, y_err: Vec::new() }
    }
}

/// A panel drawn below a chart's main plot (e.g. the residual histogram).
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// Caption of the panel.
    pub title: String,
    /// x axis label with unit.
    pub x_label: String,
    /// y axis label with unit.
    pub y_label: String,
    /// The series.
    pub series: Vec<Series>,
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
    /// The series of the main plot.
    pub series: Vec<Series>,
    /// Panels side by side below the main plot (none for most charts).
    pub below: Vec<Panel>,
}

impl Chart {
    /// Total points over every series of every panel.
    pub fn n_points(&self) -> usize {
        self.series
            .iter()
            .chain(self.below.iter().flat_map(|p| p.series.iter()))
            .map(|s| s.points.len())
            .sum()
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
    /// The measured log (times, angles, encoder step).
    pub log: &'a AngleLog,
    /// The fitted run (model angle, velocity, residuals, equilibrium).
    pub fit: &'a RunFit,
}

impl<'a> RunView<'a> {
    /// A view of one run.
    pub fn new(name: &'a str, log: &'a AngleLog, fit: &'a RunFit) -> RunView<'a> {
        RunView { name, log, fit }
    }
    /// Sample times [s].
    pub fn times(&self) -> &'a [f64] {
        self.log.times()
    }
    /// Measured angles [rad].
    pub fn angles(&self) -> &'a [f64] {
        self.log.angles()
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

/// `(t, v·scale)` over the time `range`, decimated for drawing.
pub(crate) fn time_series(t: &[f64], v: &[f64], scale: f64, range: (f64, f64)) -> Vec<(f64, f64)> {
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
pub(crate) fn period_of(omega_n: f64) -> f64 {
    2.0 * std::f64::consts::PI / omega_n
}

/// Measured angle with the fitted model, in degrees from the fitted equilibrium, over the chosen
/// window.
pub fn overlay(run: &RunView<'_>, omega_n: f64, window: Window, stem: &str) -> Chart {
    let t = run.times();
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
            Series::new(
                "measured",
                time_series(t, &from_rest(run.angles()), DEG, range),
                Mark::Line,
                Role::Measured,
            ),
            Series::new(
                "fitted model",
                time_series(t, &from_rest(&run.fit.model_angle), DEG, range),
                Mark::Line,
                Role::Model,
            ),
        ],
        below: Vec::new(),
    }
}

/// Phase portrait: angular velocity against angle (deflection from rest), measured velocity by
/// finite differences and the model's.
pub fn phase_portrait(run: &RunView<'_>, omega_n: f64, stem: &str) -> Chart {
    let eq = run.fit.equilibrium.value;
    let angles = run.angles();
    let vel = finite_difference_velocity(run.times(), angles, period_of(omega_n));
    let n = run.times().len().min(angles.len());
    let k = n.saturating_sub(vel.len()) / 2;
    let measured: Vec<(f64, f64)> =
        vel.iter().enumerate().map(|(i, (_, w))| ((angles[i + k] - eq) * DEG, w * DEG)).collect();
    let model: Vec<(f64, f64)> = run
        .fit
        .model_angle
        .iter()
        .zip(&run.fit.model_velocity)
        .map(|(a, w)| ((a - eq) * DEG, w * DEG))
        .collect();
    Chart {
        stem: stem.to_string(),
        title: format!("{}: phase portrait", run.name),
        x_label: "angle from rest [deg]".into(),
        y_label: "angular velocity [deg/s]".into(),
        series: vec![
            Series::new(
                "measured (finite differences)",
                thin(&measured, MAX_PARAMETRIC),
                Mark::Line,
                Role::Measured,
            ),
            Series::new("fitted model", thin(&model, MAX_PARAMETRIC), Mark::Line, Role::Model),
        ],
        below: Vec::new(),
    }
}

/// Every chart of a sheet: per run the overlays (whole, first, last cycles), the phase portrait,
/// the decay envelope and the residuals with their histogram and autocorrelation; then period
/// against amplitude.
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
        charts.push(residuals(r, omega_n, &format!("run{n}_residuals")));
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
        y_label: "angle from rest [deg]".into(),
        series,
        below: Vec::new(),
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
