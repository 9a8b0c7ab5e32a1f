//! The residual figure of one run: residuals (model minus measured) against time on top, and
//! below it their histogram against the noise floor and their autocorrelation.
//!
//! - The histogram is a probability density [1/mdeg] over ±4 times the larger of the noise
//!   floor and the RMS residual (at most a handful of outliers fall outside and are not drawn),
//!   with the Gaussian of the survey's noise σ (the run's `noise_floor`) drawn over it: residuals
//!   that are noise fill the curve; misfit widens or skews them.
//! - The autocorrelation r_k ([`crate::stats::autocorrelations`], the Ljung–Box definition) is
//!   drawn over lags up to one small-amplitude period, with the band ±1.96/√N inside which
//!   about 95 % of the r_k of white noise fall (Box & Jenkins, large-sample standard error
//!   1/√N of r_k [common practice]).

use crate::stats::autocorrelations;

use super::{Chart, DEG, Mark, Panel, Role, RunView, Series, period_of, time_series};

/// Bins of the residual histogram.
pub const BINS: usize = 41;

/// Millidegrees per radian.
const MDEG: f64 = 1e3 * DEG;

/// The residual figure of one run (see the module docs).
pub fn residuals(run: &RunView<'_>, omega_n: f64, stem: &str) -> Chart {
    let r = &run.fit.residuals;
    let n = r.len();
    let sigma = run.fit.noise_floor * MDEG;
    let mut top = vec![Series::new(
        "residual",
        time_series(run.times(), r, MDEG, (f64::NEG_INFINITY, f64::INFINITY)),
        Mark::Line,
        Role::Measured,
    )];
    if let (Some(&t0), Some(&t1)) =
        (run.times().first(), run.times()[..n.min(run.times().len())].last())
        && sigma.is_finite()
        && sigma > 0.0
    {
        top.push(Series::new(
            "±2σ noise floor",
            vec![(t0, 2.0 * sigma), (t1, 2.0 * sigma)],
            Mark::Line,
            Role::Reference,
        ));
        top.push(Series::new(
            "",
            vec![(t0, -2.0 * sigma), (t1, -2.0 * sigma)],
            Mark::Line,
            Role::Reference,
        ));
    }
    Chart {
        stem: stem.to_string(),
        title: format!("{}: residuals (model minus measured)", run.name),
        x_label: "time [s]".into(),
        y_label: "residual [mdeg]".into(),
        series: top,
        below: vec![histogram(r, sigma), autocorrelation(run, omega_n)],
    }
}

/// Density histogram of the residuals [1/mdeg] with the noise-floor Gaussian over it.
fn histogram(r: &[f64], sigma: f64) -> Panel {
    let vals: Vec<f64> = r.iter().map(|v| v * MDEG).filter(|v| v.is_finite()).collect();
    let rms = (vals.iter().map(|v| v * v).sum::<f64>() / vals.len().max(1) as f64).sqrt();
    let half = 4.0 * sigma.max(rms);
    let mut series = Vec::new();
    if half.is_finite() && half > 0.0 && !vals.is_empty() {
        let w = 2.0 * half / BINS as f64;
        let mut counts = vec![0usize; BINS];
        for v in &vals {
            let b = ((v + half) / w).floor();
            if b >= 0.0 && (b as usize) < BINS {
                counts[b as usize] += 1;
            }
        }
        let total = vals.len() as f64;
        let bars: Vec<(f64, f64)> = counts
            .iter()
            .enumerate()
            .map(|(i, c)| (-half + (i as f64 + 0.5) * w, *c as f64 / (total * w)))
            .collect();
        series.push(Series::new("residuals", bars, Mark::Bars, Role::Measured));
        if sigma.is_finite() && sigma > 0.0 {
            let norm = 1.0 / (sigma * (2.0 * std::f64::consts::PI).sqrt());
            let curve: Vec<(f64, f64)> = (0..=200)
                .map(|i| {
                    let x = -half + 2.0 * half * i as f64 / 200.0;
                    (x, norm * (-0.5 * (x / sigma).powi(2)).exp())
                })
                .collect();
            series.push(Series::new(
                format!("noise σ = {sigma:.3} mdeg"),
                curve,
                Mark::Line,
                Role::Reference,
            ));
        }
    }
    Panel {
        title: "distribution against the noise floor".into(),
        x_label: "residual [mdeg]".into(),
        y_label: "density [1/mdeg]".into(),
        series,
    }
}

/// Autocorrelation of the residuals over lags up to one period, with the ±1.96/√N band.
fn autocorrelation(run: &RunView<'_>, omega_n: f64) -> Panel {
    let r = &run.fit.residuals;
    let n = r.len();
    let t = run.times();
    let dt = if t.len() >= 2 { (t[t.len() - 1] - t[0]) / (t.len() - 1) as f64 } else { 0.0 };
    let lags = if dt > 0.0 && omega_n.is_finite() && omega_n > 0.0 {
        ((period_of(omega_n) / dt).round() as usize).clamp(20, 2000)
    } else {
        20
    }
    .min(n.saturating_sub(1));
    let mut series = Vec::new();
    if lags >= 1 {
        let acf = autocorrelations(r, lags);
        let pts: Vec<(f64, f64)> =
            acf.iter().enumerate().map(|(k, v)| ((k + 1) as f64 * dt, *v)).collect();
        series.push(Series::new("r_k", pts, Mark::Stems, Role::Measured));
        let band = 1.96 / (n as f64).sqrt();
        let x1 = lags as f64 * dt;
        series.push(Series::new(
            "±1.96/√N",
            vec![(0.0, band), (x1, band)],
            Mark::Line,
            Role::Reference,
        ));
        series.push(Series::new("", vec![(0.0, -band), (x1, -band)], Mark::Line, Role::Reference));
    }
    Panel {
        title: "autocorrelation".into(),
        x_label: "lag [s]".into(),
        y_label: "r_k".into(),
        series,
    }
}
