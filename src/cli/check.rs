//! `swingfit check LOG`: load, validate and summarise one log.
//!
//! The human summary is a column of aligned labels with units (degrees where an engineer thinks
//! in degrees); `--json` prints the same survey as one JSON object (wire format below).
//!
//! The document is `report::wire::check::CheckDoc` (docs/schemas.md).

use clap::Args;

use super::{CmdResult, Failure, LoaderArgs};
use crate::data::{self, segment, survey};
use crate::report::wire;
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

/// Run `check`.
pub fn run(args: &CheckArgs) -> CmdResult {
    let log = data::load(&args.log, &args.loader.options()).map_err(Failure::input)?;
    let s = survey::survey(&log);
    let seg = segment::segment(&log, &s);
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
        print!("{}", wire::to_pretty(&wire::check::check_doc(&log, &s, &seg)));
        return Ok(());
    }
    let mut rows = summary_lines(log.source(), &s, dropped);
    rows.splice(1..1, layout_lines(log.layout()));
    rows.extend(motion_lines(&s, &seg));
    for (label, value) in rows {
        println!("{label:<14} {value}");
    }
    Ok(())
}

/// Where the table was found and where the times came from, as (label, value) rows.
fn layout_lines(l: &data::Layout) -> Vec<(&'static str, String)> {
    let table = match (l.header_line, &l.angle_column) {
        (Some(h), Some(a)) => format!("header at line {h}, angle column '{a}'"),
        (Some(h), None) => format!("header at line {h}"),
        (None, _) => "no header: one angle a row".to_string(),
    };
    let above = match l.preamble_lines {
        0 => String::new(),
        1 => ", 1 preamble line above it".to_string(),
        n => format!(", {n} preamble lines above it"),
    };
    vec![("table", format!("{table}{above}")), ("times from", l.time_words())]
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
    if let Some(p0) = s.period_small_amplitude_s {
        rows.push((
            "small-swing T0",
            format!("{p0:.5} s (each half cycle corrected for its amplitude)"),
        ));
    }
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

/// The motion segments and the time-base slips, as (label, value) rows.
fn motion_lines(s: &survey::Survey, seg: &segment::Segmentation) -> Vec<(&'static str, String)> {
    let mut rows = Vec::new();
    for x in &seg.still {
        let what = if x.held {
            format!("held at {:+.3} deg from the equilibrium", to_degrees(x.deflection_rad))
        } else {
            "at rest".to_string()
        };
        rows.push(("still", format!("{:.3} s to {:.3} s, {what}", x.from_s, x.to_s)));
    }
    if !seg.forced.is_empty() {
        let list: Vec<String> =
            seg.forced.iter().take(4).map(|(a, b)| format!("{a:.3}-{b:.3} s")).collect();
        rows.push((
            "forced",
            format!(
                "{} half cycle{} where the acceleration does not follow the restoring torque: {}{}",
                seg.forced.len(),
                if seg.forced.len() == 1 { "" } else { "s" },
                list.join(", "),
                if seg.forced.len() > 4 { ", ..." } else { "" }
            ),
        ));
    }
    match &seg.refusal {
        Some(why) => rows.push(("free swing", format!("none: {why}"))),
        None => {
            for g in &seg.segments {
                rows.push((
                    "free swing",
                    format!(
                        "{:.3} s to {:.3} s ({} samples): {}; {}",
                        g.start_s,
                        g.end_s,
                        g.end - g.start,
                        segment::start_words(&g.start_cause, g.start_s),
                        segment::end_words(&g.end_cause, g.end_s)
                    ),
                ));
            }
        }
    }
    rows.push((
        "slips",
        if s.slips.count() == 0 {
            format!("none in {} fast steps judged", s.slips.judged_steps)
        } else {
            format!(
                "{} time-base slips: {} (of {} fast steps judged)",
                s.slips.count(),
                data::slips::describe(&s.slips),
                s.slips.judged_steps
            )
        },
    ));
    rows
}
