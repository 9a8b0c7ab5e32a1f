//! `swingfit check LOG`: load, validate and summarise one log.
//!
//! The human summary is a column of aligned labels with units (degrees where an engineer thinks
//! in degrees); `--json` prints the same survey as one JSON object (wire format below).
//!
//! # Wire format (`--json`)
//! `source`, `samples`, `duration_s`, `rate_hz`, `jitter` (robust interval spread / median),
//! `gaps` (list of `{start_s, length_s}`), `angle_min_rad`, `angle_max_rad`, `rest_from_s`
//! (null when the log does not end at rest), `equilibrium_rad`, `period_s` (null when too few
//! crossings), `crossings`, `half_cycles` (peaks found), `first_peak_rad`, `noise_rad`,
//! `encoder_step_rad` (null unless counts), `dropped_lines` (1-based file lines).

use clap::Args;
use serde::Serialize;

use super::{CmdResult, Failure, LoaderArgs};
use crate::data::{self, survey};
use crate::units::to_degrees;

/// Arguments of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The log to check (CSV).
    pub log: std::path::PathBuf,
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,
}

/// JSON view of a survey (serialize only; see the module docs).
#[derive(Serialize)]
struct CheckJson<'a> {
    source: &'a str,
    samples: usize,
    duration_s: f64,
    rate_hz: f64,
    jitter: f64,
    gaps: Vec<GapJson>,
    angle_min_rad: f64,
    angle_max_rad: f64,
    rest_from_s: Option<f64>,
    equilibrium_rad: f64,
    period_s: Option<f64>,
    crossings: usize,
    half_cycles: usize,
    first_peak_rad: Option<f64>,
    noise_rad: f64,
    encoder_step_rad: Option<f64>,
    dropped_lines: &'a [u64],
}

#[derive(Serialize)]
struct GapJson {
    start_s: f64,
    length_s: f64,
}

/// Run `check`.
pub fn run(args: &CheckArgs) -> CmdResult {
    let log = data::load(&args.log, &args.loader.options()).map_err(Failure::input)?;
    let s = survey::survey(&log);
    let dropped = log.dropped_lines();
    if !dropped.is_empty() {
        eprintln!(
            "swingfit: note: dropped {} bad rows of {}: lines {}",
            dropped.len(),
            log.source(),
            list_lines(dropped)
        );
    }
    if args.json {
        let j = CheckJson {
            source: log.source(),
            samples: s.samples,
            duration_s: s.duration_s,
            rate_hz: s.rate_hz,
            jitter: s.jitter,
            gaps: s
                .gaps
                .iter()
                .map(|g| GapJson { start_s: g.start_s, length_s: g.length_s })
                .collect(),
            angle_min_rad: s.angle_range.0,
            angle_max_rad: s.angle_range.1,
            rest_from_s: s.rest_from_s,
            equilibrium_rad: s.equilibrium_rad,
            period_s: s.period_s,
            crossings: s.crossings.len(),
            half_cycles: s.peaks.len(),
            first_peak_rad: s.peaks.first().map(|p| p.deflection),
            noise_rad: s.noise_rad,
            encoder_step_rad: s.encoder_step_rad,
            dropped_lines: dropped,
        };
        let text = serde_json::to_string_pretty(&j)
            .map_err(|e| Failure::input(format!("cannot write json: {e}")))?;
        println!("{text}");
        return Ok(());
    }
    for (label, value) in summary_lines(log.source(), &s, dropped) {
        println!("{label:<14} {value}");
    }
    Ok(())
}

/// Lines as "7, 12, 40" (the first 20, then a count).
fn list_lines(lines: &[u64]) -> String {
    let mut s = lines.iter().take(20).map(u64::to_string).collect::<Vec<_>>().join(", ");
    if lines.len() > 20 {
        s.push_str(&format!(" and {} more", lines.len() - 20));
    }
    s
}

/// The human summary, as (label, value) rows.
fn summary_lines(source: &str, s: &survey::Survey, dropped: &[u64]) -> Vec<(&'static str, String)> {
    let deg = |r: f64| format!("{:.3} deg", to_degrees(r));
    let mut rows = vec![
        ("log", source.to_string()),
        ("samples", s.samples.to_string()),
        ("duration", format!("{:.3} s", s.duration_s)),
        (
            "rate",
            format!("{:.2} Hz median, jitter {:.2} % of the interval", s.rate_hz, 100.0 * s.jitter),
        ),
    ];
    let gaps = match s.gaps.as_slice() {
        [] => "none".to_string(),
        g => {
            let longest = g.iter().map(|g| g.length_s).fold(0.0, f64::max);
            let first: Vec<String> = g
                .iter()
                .take(3)
                .map(|g| format!("{:.3} s at {:.3} s", g.length_s, g.start_s))
                .collect();
            format!(
                "{} (longest {longest:.3} s): {}{}",
                g.len(),
                first.join(", "),
                if g.len() > 3 { ", ..." } else { "" }
            )
        }
    };
    rows.push(("gaps", gaps));
    rows.push(("angle range", format!("{} to {}", deg(s.angle_range.0), deg(s.angle_range.1))));
    rows.push((
        "equilibrium",
        format!("{} ({:.6} rad)", deg(s.equilibrium_rad), s.equilibrium_rad),
    ));
    rows.push((
        "period",
        match s.period_s {
            Some(p) => format!("{p:.5} s from {} crossings of the equilibrium", s.crossings.len()),
            None => format!("not found ({} crossings of the equilibrium)", s.crossings.len()),
        },
    ));
    rows.push((
        "half cycles",
        match (s.peaks.first(), s.peaks.last()) {
            (Some(a), Some(b)) => format!(
                "{}, first peak {:+.3} deg at {:.3} s, last {:+.3} deg at {:.3} s",
                s.peaks.len(),
                to_degrees(a.deflection),
                a.t,
                to_degrees(b.deflection),
                b.t
            ),
            _ => "none found".to_string(),
        },
    ));
    rows.push((
        "noise floor",
        format!("{:.4} deg ({:.3e} rad)", to_degrees(s.noise_rad), s.noise_rad),
    ));
    if let Some(q) = s.encoder_step_rad {
        rows.push(("encoder step", format!("{:.4} deg ({:.3e} rad)", to_degrees(q), q)));
    }
    rows.push((
        "at rest",
        match s.rest_from_s {
            Some(r) => format!("from {r:.3} s to the end"),
            None => "no (still swinging at the end of the log)".to_string(),
        },
    ));
    rows.push((
        "dropped lines",
        if dropped.is_empty() {
            "none".to_string()
        } else {
            format!("{}: {}", dropped.len(), list_lines(dropped))
        },
    ));
    rows
}
