//! Reading log text into columns of numbers: the table below any preamble, delimiter sniffing,
//! column choice by name or index, units from header suffixes, a units row or options, times
//! from a column or from a sample rate, and line-numbered errors.
//!
//! This is the only code that looks at raw bytes. It works on lossily decoded UTF-8 and indexes
//! nothing it has not checked, so it cannot panic on any input. Where the table starts is
//! found in [`layout`]; what the header names mean, in [`names`].

mod duplicates;
mod layout;
mod names;
mod stamps;

pub use layout::{MAX_PREAMBLE, Stated, is_rate_key};

use layout::{Delim, Start, number};
use names::{
    ANGLE_NAMES, COUNT_NAMES, HeaderUnit, SIGNAL_NAMES, TIME_NAMES, bare_unit, choose,
    split_header, unit_token, unitless,
};

use super::{Layout, LoadError, LoadErrorKind as K, LoadOptions, RateSource, TimeBase};
use crate::units::{AngleUnit, TimeUnit};

/// Columns read from a file, in SI units, with the file line of every sample.
pub(super) struct Table {
    pub times: Vec<f64>,
    pub angles: Vec<f64>,
    pub lines: Vec<u64>,
    pub angle_step: Option<f64>,
    pub dropped_lines: Vec<u64>,
    /// Units the columns were read in (for the plausibility messages).
    pub time_unit: TimeUnit,
    pub angle_unit: AngleUnit,
    /// Where the table was found and where its times come from.
    pub layout: Layout,
}

/// How the time of each sample is found.
enum Clock {
    /// From column `i`, in `unit`.
    Column(usize, TimeUnit),
    /// Calendar timestamps in column `i`, from the first one.
    Stamps(usize, stamps::Stamp),
    /// Row `k` of the table (bad rows included) is at k / rate.
    Rate(f64),
}

/// Read the columns of a log. Does not check ordering or length (the caller validates).
pub(super) fn read(name: &str, bytes: &[u8], opts: &LoadOptions) -> Result<Table, LoadError> {
    let err = |k: fn(String) -> K, line: Option<u64>, what: String| LoadError {
        path: name.to_string(),
        line,
        kind: k(what),
    };
    if opts.signal_zero.is_some() && opts.signal_scale.is_none() {
        return Err(err(K::Option,
            None,
            "--signal-zero is the reading at zero angle of a calibrated signal: expected --signal-scale with it".into(),
        ));
    }
    let text = String::from_utf8_lossy(bytes);
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    if text.trim().is_empty() {
        return Err(err(
            K::Layout,
            Some(1),
            "empty file: expected a header row and data rows".into(),
        ));
    }
    // (1-based line number, byte offset, content) of every line; then those that are not blank
    // or a comment, and not among the first `--skip-lines`.
    let mut offset = 0usize;
    let all: Vec<(u64, usize, &str)> = text
        .split('\n')
        .enumerate()
        .map(|(i, l)| {
            let at = offset;
            offset += l.len() + 1;
            (i as u64 + 1, at, l.trim_end_matches('\r'))
        })
        .collect();
    let is_content = |l: &str| !l.trim().is_empty() && !l.trim_start().starts_with('#');
    let last_line = all.iter().rev().find(|(_, _, l)| !l.trim().is_empty()).map_or(1, |x| x.0);
    let skip = opts.skip_lines.unwrap_or(0) as u64;
    let content: Vec<(u64, &str)> = all
        .iter()
        .filter(|(n, _, l)| *n > skip && is_content(l))
        .map(|&(n, _, l)| (n, l))
        .collect();
    if content.is_empty() {
        let kind = if skip > 0 && all.iter().any(|(_, _, l)| is_content(l)) {
            format!(
                "--skip-lines {skip} skips every row (the file has {last_line} lines): expected a header row and data rows after them"
            )
        } else {
            "only comments: expected a header row and data rows".into()
        };
        return Err(err(K::Layout, Some(last_line), kind));
    }
    let start = match opts.skip_lines {
        Some(_)
            if Delim::Whitespace.split(content[0].1).len() == 1
                && number(content[0].1, Delim::Whitespace).is_some() =>
        {
            Start::Bare(0)
        }
        Some(_) => Start::Header(0),
        None => layout::find_start(&content).unwrap_or(Start::Header(0)),
    };
    let first = match start {
        Start::Header(i) | Start::Bare(i) => i,
    };
    let top_line = content.get(first).map_or(1, |c| c.0);
    // Values stated above the table (skipped lines included), and the sample rate among them.
    let preamble: Vec<(u64, &str)> = all
        .iter()
        .filter(|(n, _, l)| *n < top_line && is_content(l))
        .map(|&(n, _, l)| (n, l))
        .collect();
    let stated = layout::stated(&preamble);
    let rate = match (opts.rate_hz, stated.iter().find(|s| is_rate_key(&s.key))) {
        (Some(hz), _) if hz.is_finite() && hz > 0.0 => Some((hz, RateSource::Option)),
        (Some(hz), _) => {
            return Err(err(
                K::Option,
                None,
                format!(
                    "--rate {hz} is not a sample rate: expected a positive number of samples per second"
                ),
            ));
        }
        (None, Some(s)) if s.value.is_finite() && s.value > 0.0 => {
            Some((s.value, RateSource::Stated { line: s.line, key: s.key.clone() }))
        }
        (None, Some(s)) => {
            return Err(err(
                K::Value,
                Some(s.line),
                format!(
                    "'{}' states a sample rate of {}: expected a positive number of samples per second (or give --rate HZ)",
                    s.key, s.value
                ),
            ));
        }
        (None, None) => None,
    };
    let line_start = |line: u64| {
        all.get(line.saturating_sub(1) as usize).map_or(text.len(), |x| x.1.min(text.len()))
    };

    let (header, hline, delim, rows) = match start {
        Start::Bare(i) => {
            let bline = content[i].0;
            let Some((hz, _)) = rate else {
                return Err(err(K::Layout,
                    Some(bline),
                    "rows of one number each with no header above them: expected a sample rate (--rate HZ, or a preamble line naming sample_rate) and the angle unit (--angle-unit)".into(),
                ));
            };
            let _ = hz;
            let rows: Vec<(u64, Vec<String>)> =
                content[i..].iter().map(|&(n, l)| (n, Delim::Whitespace.split(l))).collect();
            (vec![String::new()], bline, Delim::Whitespace, rows)
        }
        Start::Header(i) => {
            let (hline, header_text) = content[i];
            let probe: Vec<&str> = content[i + 1..].iter().take(5).map(|&(_, l)| l).collect();
            let delim = match layout::sniff(header_text, &probe) {
                Some(d) => d,
                // One named column: an angle at a stated rate.
                None if rate.is_some() => Delim::Whitespace,
                None => {
                    return Err(err(
                        K::Layout,
                        Some(hline),
                        format!(
                            "header \"{}\" is a single column: expected time and angle columns separated by commas, semicolons, tabs or spaces (or one angle column with --rate HZ)",
                            header_text.trim()
                        ),
                    ));
                }
            };
            let header = if layout::sniff(header_text, &probe).is_some() {
                delim.split(header_text)
            } else {
                vec![names::unquote(header_text).to_string()]
            };
            let body = &text[line_start(hline + 1)..];
            let rows = if hline as usize >= all.len() {
                Vec::new()
            } else {
                layout::records(delim, body, hline + 1)
            };
            (header, hline, delim, rows)
        }
    };
    let bare = matches!(start, Start::Bare(_));
    if !bare && header.iter().all(|h| number(h, delim).is_some()) {
        return Err(err(
            K::Layout,
            Some(hline),
            "expected a header row naming the columns, found only numbers".into(),
        ));
    }
    let choose_time =
        || choose(&err, hline, &header, opts.time_col.as_deref(), "time", TIME_NAMES, "--time-col");
    // The time column, unless the times come from a sample rate: `--rate` always; a stated rate
    // when no time column is named or found.
    let ti = match rate {
        Some(_) if opts.rate_hz.is_some() || bare => {
            if let Some(c) = &opts.time_col {
                return Err(err(
                    K::Option,
                    None,
                    format!(
                        "--time-col {c} and {} both give the times: choose one",
                        if bare { "a log of angles only" } else { "--rate" }
                    ),
                ));
            }
            None
        }
        Some(_) if opts.time_col.is_none() => choose_time().ok(),
        _ => Some(choose_time()?),
    };
    let signal = opts.signal_scale.as_ref();
    let mut angle_names = ANGLE_NAMES.to_vec();
    if signal.is_some() {
        angle_names.extend_from_slice(SIGNAL_NAMES);
    }
    let ai = if bare || header.len() == 1 && ti.is_none() {
        0
    } else {
        choose(
            &err,
            hline,
            &header,
            opts.angle_col.as_deref(),
            "angle",
            &angle_names,
            "--angle-col",
        )
        .map_err(|mut e| {
            // A voltage column and no calibration: say how to give one.
            if signal.is_none()
                && opts.angle_col.is_none()
                && header.iter().any(|h| {
                    let lower = h.trim().to_lowercase();
                    let name = lower.find(['[', '(']).map_or(split_header(h).0, |p| {
                        lower[..p].trim().to_string()
                    });
                    SIGNAL_NAMES.contains(&name.as_str())
                })
                && let K::Column(s) = &mut e.kind
            {
                s.push_str(
                    "; a signal proportional to the angle (a voltage) is read with --signal-scale VALUE[UNIT]/deg (e.g. 0.05V/deg) and --signal-zero",
                );
            }
            e
        })?
    };
    if ti == Some(ai) {
        return Err(err(
            K::Column,
            Some(hline),
            format!("time and angle are both column {}: expected two different columns", ai + 1),
        ));
    }
    let tname = ti.map_or("", |i| header[i].as_str());
    let (tbase, tunit_h) = ti.map_or((String::new(), None), |i| split_header(&header[i]));
    let (abase, aunit_h) = split_header(&header[ai]);
    // A units row right under the header (`s,deg`, `[ms];(rad)`) states the units of the
    // columns whose names do not; it is not a data row.
    let mut rows = rows;
    let mut row_units = (None, None);
    if !bare && let Some((_, f)) = rows.first() {
        let tok = |i: Option<usize>| {
            i.and_then(|i| f.get(i)).map(|s| bare_unit(names::unquote(s))).and_then(unit_token)
        };
        let (tu, au) = (tok(ti), tok(Some(ai)));
        if matches!(tu, Some(HeaderUnit::Time(_))) || matches!(au, Some(HeaderUnit::Angle(_))) {
            if let Some(HeaderUnit::Time(u)) = tu {
                row_units.0 = Some(u);
            }
            if let Some(HeaderUnit::Angle(u)) = au {
                row_units.1 = Some(u);
            }
            rows.remove(0);
        }
    }

    // Calendar timestamps: the first row's time is one and is not a number.
    let first_stamp = ti
        .and_then(|i| rows.first().and_then(|(_, f)| f.get(i)))
        .filter(|f| number(f, delim).is_none())
        .and_then(|f| stamps::parse(f).map(|s| (s, f.clone())));
    let clock = match (ti, &rate) {
        (None, Some((hz, _))) => Clock::Rate(*hz),
        (None, None) => Clock::Rate(f64::NAN),
        (Some(ti), _) if let Some((first, _)) = first_stamp => {
            if let Some(u) = &opts.time_unit {
                return Err(err(
                    K::Option,
                    None,
                    format!(
                        "--time-unit {u} is for times in numbers, but column '{tname}' holds timestamps: drop the option"
                    ),
                ));
            }
            Clock::Stamps(ti, first)
        }
        (Some(ti), _) => Clock::Column(
            ti,
            match opts.time_unit.as_deref() {
                Some(u) => TimeUnit::parse(u).ok_or_else(|| {
                    err(K::Unit, None, format!("unknown time unit '{u}': expected s, ms or us"))
                })?,
                None => match (tunit_h, row_units.0) {
                    (Some(HeaderUnit::Time(u)), _) | (_, Some(u)) => u,
                    _ if let Some(u) = TimeUnit::parse(&tbase) => u,
                    _ => {
                        let (stem, why) = unitless(tname);
                        return Err(err(
                            K::Unit,
                            Some(hline),
                            format!(
                                "time column '{tname}' {why}: name it {stem}_s, {stem}_ms or {stem}_us, or give --time-unit s|ms|us"
                            ),
                        ));
                    }
                },
            },
        ),
    };
    let time_unit = match clock {
        Clock::Column(_, u) => u,
        Clock::Stamps(..) | Clock::Rate(_) => TimeUnit::Seconds,
    };
    if let Some(sc) = signal {
        let clash = match (&opts.angle_unit, opts.counts_per_rev) {
            (Some(u), _) => Some(format!("--angle-unit {u}")),
            (None, Some(n)) => Some(format!("--counts-per-rev {n}")),
            (None, None) => None,
        };
        if let Some(c) = clash {
            return Err(err(
                K::Option,
                None,
                format!("--signal-scale {sc} and {c} both say how to read the angle: choose one"),
            ));
        }
        // The column's unit, written in brackets, must be the scale's signal unit.
        let written = header[ai]
            .find(['[', '('])
            .map(|p| header[ai][p + 1..].trim_end_matches([']', ')']).trim().to_string());
        if let (Some(w), Some(u)) = (&written, &sc.signal_unit)
            && !w.is_empty()
            && w != u
        {
            return Err(err(
                K::Unit,
                Some(hline),
                format!(
                    "angle column '{}' is in {w}, but --signal-scale {sc} is per {u}: give the scale in {w} per angle unit",
                    header[ai]
                ),
            ));
        }
    }
    let angle_unit = match opts.angle_unit.as_deref() {
        _ if let Some(sc) = signal => sc.angle_unit,
        Some(u) => AngleUnit::parse(u).ok_or_else(|| {
            err(
                K::Unit,
                None,
                format!("unknown angle unit '{u}': expected rad, mrad, deg, grad or counts"),
            )
        })?,
        None if bare => {
            return Err(err(K::Unit,
                Some(hline),
                "one column of angles with no header: expected its unit, --angle-unit rad|mrad|deg|grad|counts".into(),
            ));
        }
        None => match (aunit_h, row_units.1) {
            (Some(HeaderUnit::Angle(u)), _) | (_, Some(u)) => u,
            _ if let Some(u) = AngleUnit::parse(&abase) => u,
            _ if COUNT_NAMES.contains(&abase.as_str()) || opts.counts_per_rev.is_some() => {
                AngleUnit::Counts
            }
            _ => {
                let (stem, why) = unitless(&header[ai]);
                return Err(err(
                    K::Unit,
                    Some(hline),
                    format!(
                        "angle column '{}' {why}: name it {stem}_rad or {stem}_deg (or _mrad, _grad, _counts), or give --angle-unit rad|mrad|deg|grad|counts",
                        header[ai]
                    ),
                ));
            }
        },
    };
    let to_rad = match angle_unit.to_radians(opts.counts_per_rev) {
        _ if let Some(sc) = signal => sc.radians_per_signal(),
        Some(f) => f,
        None => {
            return Err(match opts.counts_per_rev {
                None => err(
                    K::Unit,
                    Some(hline),
                    format!(
                        "angle column '{}' is in encoder counts: expected --counts-per-rev N (edges per revolution; quadrature gives 4 per line)",
                        header[ai]
                    ),
                ),
                Some(n) => err(
                    K::Option,
                    None,
                    format!(
                        "--counts-per-rev {n} is not usable: expected a positive number of edges per revolution"
                    ),
                ),
            });
        }
    };
    if let Some(b) = opts.counts_wrap {
        if !WRAP_BITS.contains(&b) {
            return Err(err(
                K::Option,
                None,
                format!("--counts-wrap {b} is not a counter width: expected 8, 16, 24 or 32 bits"),
            ));
        }
        if angle_unit != AngleUnit::Counts {
            return Err(err(
                K::Option,
                Some(hline),
                format!(
                    "--counts-wrap is for encoder counts, but angle column '{}' is in {angle_unit}: drop the option or give --angle-unit counts",
                    header[ai]
                ),
            ));
        }
    }
    let angle_step = (angle_unit == AngleUnit::Counts).then_some(to_rad);
    let time = match (&clock, &rate) {
        (Clock::Column(i, u), _) => TimeBase::Column { name: header[*i].clone(), unit: *u },
        (Clock::Stamps(i, _), _) => TimeBase::Stamps {
            name: header[*i].clone(),
            first: first_stamp.as_ref().map_or_else(String::new, |f| f.1.clone()),
        },
        (Clock::Rate(hz), Some((_, source))) => TimeBase::Rate { hz: *hz, source: source.clone() },
        (Clock::Rate(hz), None) => TimeBase::Rate { hz: *hz, source: RateSource::Option },
    };
    let layout = Layout {
        header_line: (!bare).then_some(hline),
        preamble_lines: preamble.len(),
        time,
        angle_column: if bare { None } else { Some(header[ai].clone()) },
        signal: signal.map(|sc| match opts.signal_zero {
            Some(z) => format!("{sc}, zero at {z}{}", sc.signal_unit.as_deref().unwrap_or("")),
            None => sc.to_string(),
        }),
        repeated_times: 0,
    };
    let zero = opts.signal_zero.unwrap_or(0.0);
    if !zero.is_finite() {
        return Err(err(
            K::Option,
            None,
            format!("--signal-zero {zero}: expected a finite reading"),
        ));
    }
    let angle_in = match signal {
        Some(sc) => sc.signal_unit.clone().unwrap_or_else(|| "signal units".into()),
        None => angle_unit.to_string(),
    };
    // Decimals each time was written with (for telling rounded times from repeated samples).
    let mut decimals: Vec<Option<u32>> = Vec::new();

    let mut table = Table {
        times: Vec::new(),
        angles: Vec::new(),
        lines: Vec::new(),
        angle_step,
        dropped_lines: Vec::new(),
        time_unit,
        angle_unit,
        layout,
    };
    let need = ti.unwrap_or(0).max(ai) + 1;
    for (k, (line, fields)) in rows.iter().enumerate() {
        let value = |i: usize, what: &str, unit: String| -> Result<f64, String> {
            let raw = fields.get(i).map_or("", String::as_str);
            match number(raw, delim) {
                Some(v) if v.is_finite() => Ok(v),
                Some(_) => Err(format!(
                    "expected a finite {what} in {unit} (column {}), found \"{raw}\"",
                    column_name(&header, i)
                )),
                None => Err(format!(
                    "expected {what} in {unit} as a number (column {}), found \"{raw}\"",
                    column_name(&header, i)
                )),
            }
        };
        let parsed = if fields.len() < need {
            Err(format!(
                "expected {} fields separated by {}, found {}",
                header.len(),
                delim.name(),
                fields.len()
            ))
        } else {
            let raw_t = |i: usize| fields.get(i).map_or("", String::as_str);
            let t = match clock {
                Clock::Column(i, u) => value(i, "time", u.to_string())
                    .map(|t| (t * u.to_seconds(), duplicates::decimals(raw_t(i)))),
                Clock::Stamps(i, first) => match stamps::parse(raw_t(i)) {
                    Some(s) => Ok((s.since(first), Some(s.decimals))),
                    None => Err(format!(
                        "expected an ISO 8601 timestamp such as 2026-12-02T18:21:52.125Z (column {}), found \"{}\"",
                        column_name(&header, i),
                        raw_t(i)
                    )),
                },
                Clock::Rate(hz) => Ok((k as f64 / hz, None)),
            };
            t.and_then(|t| value(ai, "angle", angle_in.clone()).map(|a| (t, a)))
        };
        match parsed {
            Ok(((t, dec), a)) => {
                table.times.push(t);
                table.angles.push(if signal.is_some() { a - zero } else { a });
                table.lines.push(*line);
                decimals.push(dec);
            }
            Err(_) if opts.drop_bad_rows => table.dropped_lines.push(*line),
            Err(kind) => return Err(err(K::Value, Some(*line), kind)),
        }
    }
    if angle_unit == AngleUnit::Counts {
        unwrap_counts(&mut table.angles, &table.lines, opts.counts_wrap)
            .map_err(|(line, kind)| err(K::Value, Some(line), kind))?;
    }
    for a in &mut table.angles {
        *a *= to_rad;
    }
    if table.times.windows(2).any(|w| w[1].total_cmp(&w[0]).is_eq()) {
        let unit_s = match clock {
            Clock::Column(_, u) => u.to_seconds(),
            _ => 1.0,
        };
        table.layout.repeated_times =
            duplicates::resolve(&mut table, &decimals, unit_s, opts.duplicate_times)
                .map_err(|(line, kind)| err(K::RepeatedTime, Some(line), kind))?;
    }
    if table.times.is_empty() {
        let kind = if table.dropped_lines.is_empty() {
            format!("no data rows after the header (line {hline}): expected rows of numbers")
        } else {
            format!(
                "no data rows left after dropping {} bad rows: expected rows of numbers",
                table.dropped_lines.len()
            )
        };
        return Err(err(K::Layout, Some(last_line.max(hline)), kind));
    }
    Ok(table)
}

/// Column `i` for messages: `2 'theta_rad'`, or `1` when the table has no header.
fn column_name(header: &[String], i: usize) -> String {
    match header.get(i).map(|h| h.trim()) {
        Some(h) if !h.is_empty() => format!("{} '{h}'", i + 1),
        _ => format!("{}", i + 1),
    }
}

/// Counter widths `--counts-wrap` takes.
const WRAP_BITS: [u32; 4] = [8, 16, 24, 32];

/// Unwrap raw counts of a counter `bits` wide: the first reading is taken in the signed range
/// [−2^(bits−1), 2^(bits−1)), each step as the shortest one modulo 2^bits. Without `bits`, a step
/// of more than half the column's range is refused at its line, suggesting the option (a wrapped
/// counter jumps by nearly its whole width; a swing sampled at least 2 times a period cannot).
fn unwrap_counts(
    counts: &mut [f64],
    lines: &[u64],
    bits: Option<u32>,
) -> Result<(), (u64, String)> {
    let Some(bits) = bits else {
        let (lo, hi) = counts
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)));
        let range = hi - lo;
        for i in 1..counts.len() {
            let step = counts[i] - counts[i - 1];
            if range > 0.0 && step.abs() > 0.5 * range {
                let width = WRAP_BITS.iter().copied().find(|&b| 2f64.powi(b as i32) > range);
                let hint = match width {
                    Some(b) => {
                        format!("if the counter wraps, give --counts-wrap {b} (its width in bits)")
                    }
                    None => "check the counts column".to_string(),
                };
                return Err((
                    lines.get(i).copied().unwrap_or(0),
                    format!(
                        "counts jump by {step} between consecutive samples, more than half their range of {range}: {hint}"
                    ),
                ));
            }
        }
        return Ok(());
    };
    let m = 2f64.powi(bits as i32);
    let signed = |d: f64| {
        let r = d.rem_euclid(m);
        if r >= 0.5 * m { r - m } else { r }
    };
    let mut prev = match counts.first() {
        Some(&c) => c,
        None => return Ok(()),
    };
    let mut acc = signed(prev);
    for c in counts.iter_mut() {
        let raw = *c;
        acc += signed(raw - prev);
        prev = raw;
        *c = acc;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::layout::sniff;
    use super::*;

    #[test]
    fn header_units() {
        assert_eq!(split_header("t_ms"), ("t".into(), Some(HeaderUnit::Time(TimeUnit::Millis))));
        assert_eq!(
            split_header("Angle [deg]"),
            ("angle".into(), Some(HeaderUnit::Angle(AngleUnit::Degrees)))
        );
        assert_eq!(split_header("counts"), ("counts".into(), None));
        assert_eq!(
            split_header("time(s)"),
            ("time".into(), Some(HeaderUnit::Time(TimeUnit::Seconds)))
        );
    }

    #[test]
    fn sniffing() {
        assert_eq!(sniff("t;angle", &["0,1;2,5"]), Some(Delim::Char(';')));
        assert_eq!(sniff("t angle", &["0 1"]), Some(Delim::Whitespace));
        assert_eq!(sniff("t\tangle", &["0\t1"]), Some(Delim::Char('\t')));
        assert_eq!(sniff("t|angle", &["0|1"]), None);
        assert_eq!(number("2,5", Delim::Char(';')), Some(2.5));
        assert_eq!(number("2,5", Delim::Char(',')), None);
    }

    #[test]
    fn columns_named_by_their_unit() {
        assert_eq!(
            split_header("encoder_counts"),
            ("encoder".into(), Some(HeaderUnit::Angle(AngleUnit::Counts)))
        );
        let mut text = String::from("ms,deg\n");
        for i in 0..10 {
            text.push_str(&format!("{},{}\n", 10 * i, i));
        }
        let t = read("u.csv", text.as_bytes(), &LoadOptions::default()).map_err(|e| e.to_string());
        let t = t.unwrap_or_else(|e| panic!("{e}"));
        assert!((t.times[3] - 0.03).abs() < 1e-15);
        assert!((t.angles[3] - 3f64.to_radians()).abs() < 1e-15);
    }
}
