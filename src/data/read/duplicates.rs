//! Rows that repeat the time of the row before: refused by default, naming the line and telling
//! rounded times from repeated samples; merged on request (`--duplicate-times keep-first|mean`).
//!
//! A logger that prints its clock to a fixed number of significant figures (or decimals) repeats
//! a time once the printed step grows past the sample interval (4 figures: a 0.1 s step from
//! 100 s on, at 50 Hz every time repeats). That is a rounding, not a repeated sample, and the
//! message says so and what to do (time the rows by their rate); a repeat finer than the sample
//! interval is a repeated sample.

use super::Table;
use crate::data::DuplicateTimes;

/// Decimals a number was written with (`12.340` → 3, `12` → 0); `None` in exponent form.
pub(super) fn decimals(raw: &str) -> Option<u32> {
    let raw = raw.trim();
    if raw.contains(['e', 'E']) {
        return None;
    }
    Some(raw.rsplit_once(['.', ',']).map_or(0, |(_, d)| d.len() as u32))
}

/// Four significant figures without trailing zeros, for messages.
fn sig4(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let d = (3 - x.abs().log10().floor() as i32).clamp(0, 9) as usize;
    let s = format!("{x:.d$}");
    if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s }
}

/// Refuse or merge the repeated times of `t` (already in seconds). `decimals[i]` is how row i's
/// time was written; `unit_s` the seconds per unit of the column. Returns how many rows were
/// merged or dropped, or (line, message) for a refusal.
pub(super) fn resolve(
    t: &mut Table,
    decimals: &[Option<u32>],
    unit_s: f64,
    mode: DuplicateTimes,
) -> Result<usize, (u64, String)> {
    let n = t.times.len();
    let Some(i) = (1..n).find(|&i| t.times[i].total_cmp(&t.times[i - 1]).is_eq()) else {
        return Ok(0);
    };
    if mode == DuplicateTimes::Refuse {
        let line = t.lines[i];
        let prev = t.lines[i - 1];
        let dt = (t.times[n - 1] - t.times[0]) / (n - 1) as f64;
        let dec = decimals.get(i).copied().flatten();
        let step = dec.map(|d| 10f64.powi(-(d as i32)) * unit_s);
        let proceed = "--duplicate-times keep-first keeps the first of each repeated time, mean averages the rows that share one";
        return Err(match (dec, step) {
            (Some(d), Some(r)) if r >= 0.9 * dt && dt > 0.0 => {
                // Where the printed step became this coarse: the start of the run of rows
                // written with as few decimals.
                let mut j = i;
                while j > 0 && decimals.get(j - 1).copied().flatten() == Some(d) {
                    j -= 1;
                }
                // The sample interval from the rows printed finer, where it is there to read.
                let mut fine: Vec<f64> =
                    t.times[..j.max(1)].windows(2).map(|w| w[1] - w[0]).collect();
                let dt = if fine.len() >= 2 {
                    let m = fine.len() / 2;
                    *fine.select_nth_unstable_by(m, f64::total_cmp).1
                } else {
                    dt
                };
                let raw = t.times[i] / unit_s;
                let figures =
                    d + if raw.abs() >= 1.0 { raw.abs().log10().floor() as u32 + 1 } else { 0 };
                (
                    line,
                    format!(
                        "time {} s repeats the one on line {prev}: the times are printed to {figures} significant figures, a step of {} s from {} s on, coarser than the {} s between samples: they are rounded, not repeated samples; give --rate {} to time the rows by the sample rate if it is steady, or proceed with {proceed}",
                        sig4(t.times[i]),
                        sig4(r),
                        sig4(t.times[j]),
                        sig4(dt),
                        sig4(1.0 / dt),
                    ),
                )
            }
            (_, step) => (
                line,
                format!(
                    "time {} s repeats the one on line {prev} (a repeated sample: {}the samples come every {} s): expected strictly increasing time; {proceed}",
                    sig4(t.times[i]),
                    step.map(|r| format!("the times are printed to {} s and ", sig4(r)))
                        .unwrap_or_default(),
                    sig4(dt),
                ),
            ),
        });
    }
    let (mut times, mut angles, mut lines) =
        (Vec::with_capacity(n), Vec::with_capacity(n), Vec::with_capacity(n));
    let mut k = 0;
    while k < n {
        let mut e = k + 1;
        while e < n && t.times[e].total_cmp(&t.times[k]).is_eq() {
            e += 1;
        }
        let a = match mode {
            DuplicateTimes::Mean => t.angles[k..e].iter().sum::<f64>() / (e - k) as f64,
            _ => t.angles[k],
        };
        times.push(t.times[k]);
        angles.push(a);
        lines.push(t.lines[k]);
        k = e;
    }
    let merged = n - times.len();
    (t.times, t.angles, t.lines) = (times, angles, lines);
    Ok(merged)
}
