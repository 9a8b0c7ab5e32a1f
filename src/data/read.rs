//! Reading log text into columns of numbers: comment and blank lines, delimiter sniffing, column
//! choice by name or index, units from header suffixes or options, and line-numbered errors.
//!
//! This is the only code that looks at raw bytes. It works on lossily decoded UTF-8 and indexes
//! nothing it has not checked, so it cannot panic on any input.

use super::{LoadError, LoadOptions};
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
}

/// Field separator found in the header.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Delim {
    Char(char),
    Whitespace,
}

impl Delim {
    fn split(self, line: &str) -> Vec<&str> {
        match self {
            Delim::Char(c) => line.split(c).map(str::trim).collect(),
            Delim::Whitespace => line.split_whitespace().collect(),
        }
    }
    fn name(self) -> &'static str {
        match self {
            Delim::Char(',') => "commas",
            Delim::Char(';') => "semicolons",
            Delim::Char('\t') => "tabs",
            Delim::Char(_) => "a separator",
            Delim::Whitespace => "spaces",
        }
    }
}

/// Header names taken for the time column when none is chosen.
/// A column named only by a unit (`ms`, `sec`) also counts, in that unit.
const TIME_NAMES: &[&str] = &[
    "t",
    "time",
    "timestamp",
    "time_stamp",
    "tstamp",
    "elapsed",
    "s",
    "sec",
    "secs",
    "seconds",
    "ms",
    "msec",
    "us",
    "usec",
];
/// Header names taken for the angle column when none is chosen.
const ANGLE_NAMES: &[&str] = &[
    "angle",
    "theta",
    "θ",
    "phi",
    "pos",
    "position",
    "deflection",
    "enc",
    "encoder",
    "counts",
    "count",
    "ticks",
    "rad",
    "radians",
    "deg",
    "degrees",
];
/// Angle names that mean encoder counts when no unit is given.
const COUNT_NAMES: &[&str] = &["enc", "encoder", "counts", "count", "ticks"];

/// A unit found in a header name.
#[derive(Clone, Copy, Debug, PartialEq)]
enum HeaderUnit {
    Time(TimeUnit),
    Angle(AngleUnit),
}

fn unit_token(tok: &str) -> Option<HeaderUnit> {
    TimeUnit::parse(tok)
        .map(HeaderUnit::Time)
        .or_else(|| AngleUnit::parse(tok).map(HeaderUnit::Angle))
}

/// Split a header name into its base (lowercase) and unit: `t_ms`, `angle [deg]`, `time(s)`.
fn split_header(name: &str) -> (String, Option<HeaderUnit>) {
    let lower = name.trim().to_lowercase();
    if let Some(open) = lower.find(['[', '(']) {
        let inner = lower[open + 1..].trim_end_matches([']', ')']).trim();
        if let Some(u) = unit_token(inner) {
            return (lower[..open].trim().to_string(), Some(u));
        }
    }
    if let Some(pos) = lower.rfind(['_', '-', ' ', '.']) {
        let (base, suffix) = (&lower[..pos], &lower[pos + 1..]);
        if let Some(u) = unit_token(suffix)
            && !base.trim().is_empty()
        {
            return (base.trim().to_string(), Some(u));
        }
    }
    (lower, None)
}

/// A unit token without the brackets or parentheses it may be written in: `[s]`, `( deg )`.
fn bare_unit(s: &str) -> &str {
    let s = s.trim();
    s.strip_prefix(['[', '(']).and_then(|r| r.strip_suffix([']', ')'])).map_or(s, str::trim)
}

/// For a header name that gives no unit: the name to suggest a suffix on, and why (no unit
/// written, or one swingfit does not know).
fn unitless(name: &str) -> (String, String) {
    let lower = name.trim().to_lowercase();
    let (base, written) = match lower.find(['[', '(']) {
        Some(open) => (
            lower[..open].trim().to_string(),
            Some(lower[open + 1..].trim_end_matches([']', ')']).trim().to_string()),
        ),
        None => match lower.rfind(['_', '-', ' ', '.']).filter(|&p| p > 0 && p + 1 < lower.len()) {
            Some(p) => (lower[..p].to_string(), Some(lower[p + 1..].to_string())),
            None => (lower.clone(), None),
        },
    };
    let stem: String = base.chars().filter(|c| c.is_alphanumeric() || *c == '_').collect();
    let stem = if stem.is_empty() { "col".to_string() } else { stem };
    match written {
        Some(w) if !w.is_empty() => (stem, format!("has a unit swingfit does not know ('{w}')")),
        _ => (stem, "has no unit in its header".to_string()),
    }
}

fn unquote(s: &str) -> &str {
    let s = s.trim();
    s.strip_prefix('"').and_then(|r| r.strip_suffix('"')).unwrap_or(s).trim()
}

/// Parse one number; with a delimiter other than comma a single decimal comma is accepted.
fn number(field: &str, delim: Delim) -> Option<f64> {
    let f = unquote(field);
    if let Ok(v) = f.parse::<f64>() {
        return Some(v);
    }
    if delim != Delim::Char(',') && f.matches(',').count() == 1 && !f.contains('.') {
        return f.replace(',', ".").parse::<f64>().ok();
    }
    None
}

/// Pick the separator: the first of comma, semicolon, tab, whitespace that splits the header into
/// at least two fields, preferring one that splits the first data rows the same way.
fn sniff(header: &str, rows: &[&str]) -> Option<Delim> {
    let cands = [Delim::Char(','), Delim::Char(';'), Delim::Char('\t'), Delim::Whitespace];
    let fitting: Vec<(Delim, usize)> =
        cands.iter().map(|&d| (d, d.split(header).len())).filter(|&(_, n)| n >= 2).collect();
    fitting
        .iter()
        .find(|&&(d, n)| !rows.is_empty() && rows.iter().all(|r| d.split(r).len() == n))
        .or_else(|| fitting.first())
        .map(|&(d, _)| d)
}

/// Choose a column: by name or 1-based index when given, else by the usual names.
fn choose(
    err: &dyn Fn(Option<u64>, String) -> LoadError,
    hline: u64,
    header: &[String],
    given: Option<&str>,
    what: &str,
    usual: &[&str],
    flag: &str,
) -> Result<usize, LoadError> {
    let list = header.join(", ");
    if let Some(g) = given {
        let g = g.trim();
        if !g.is_empty() && g.bytes().all(|b| b.is_ascii_digit()) {
            return match g.parse::<usize>() {
                Ok(i) if i >= 1 && i <= header.len() => Ok(i - 1),
                _ => Err(err(
                    Some(hline),
                    format!(
                        "{what} column {g} does not exist: expected 1 to {} (columns: {list})",
                        header.len()
                    ),
                )),
            };
        }
        let matches: Vec<usize> = (0..header.len())
            .filter(|&i| header[i].trim().eq_ignore_ascii_case(unquote(g)))
            .collect();
        return match matches.as_slice() {
            [i] => Ok(*i),
            [] => Err(err(
                Some(hline),
                format!("no {what} column named '{g}': expected one of {list}"),
            )),
            _ => Err(err(
                Some(hline),
                format!(
                    "{what} column name '{g}' appears more than once: give its index with {flag}"
                ),
            )),
        };
    }
    let matches: Vec<usize> = (0..header.len())
        .filter(|&i| {
            // A name with a bracketed unit (`angle (V)`) is of its kind whatever the unit, so
            // an unknown unit is refused as such, not as a missing column.
            let lower = header[i].trim().to_lowercase();
            let bracketed = lower.find(['[', '(']).map(|p| lower[..p].trim().to_string());
            usual.contains(&split_header(&header[i]).0.as_str())
                || bracketed.is_some_and(|b| usual.contains(&b.as_str()))
        })
        .collect();
    match matches.as_slice() {
        [i] => Ok(*i),
        [] => Err(err(
            Some(hline),
            format!(
                "no {what} column: expected a header such as {} (columns: {list}), or choose one with {flag}",
                usual.iter().take(4).map(|n| format!("'{n}'")).collect::<Vec<_>>().join(", ")
            ),
        )),
        [a, b, ..] => Err(err(
            Some(hline),
            format!(
                "ambiguous {what} column: '{}' (column {}) and '{}' (column {}) both qualify: choose one with {flag}",
                header[*a],
                a + 1,
                header[*b],
                b + 1
            ),
        )),
    }
}

/// Read the columns of a log. Does not check ordering or length (the caller validates).
pub(super) fn read(name: &str, bytes: &[u8], opts: &LoadOptions) -> Result<Table, LoadError> {
    let err = |line: Option<u64>, kind: String| LoadError { path: name.to_string(), line, kind };
    let text = String::from_utf8_lossy(bytes);
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    if text.trim().is_empty() {
        return Err(err(Some(1), "empty file: expected a header row and data rows".into()));
    }
    // (1-based line number, content) of every line that is not blank or a comment.
    let mut last_line = 0u64;
    let content: Vec<(u64, &str)> = text
        .split('\n')
        .enumerate()
        .map(|(i, l)| {
            if !l.trim().is_empty() {
                last_line = i as u64 + 1;
            }
            (i as u64 + 1, l.trim_end_matches('\r'))
        })
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'))
        .collect();
    let Some(&(hline, header_text)) = content.first() else {
        return Err(err(
            Some(last_line.max(1)),
            "only comments: expected a header row and data rows".into(),
        ));
    };
    let rows = &content[1..];
    let probe: Vec<&str> = rows.iter().take(5).map(|&(_, l)| l).collect();
    let Some(delim) = sniff(header_text, &probe) else {
        return Err(err(
            Some(hline),
            format!(
                "header \"{}\" is a single column: expected time and angle columns separated by commas, semicolons, tabs or spaces",
                header_text.trim()
            ),
        ));
    };
    let header: Vec<String> =
        delim.split(header_text).into_iter().map(|h| unquote(h).to_string()).collect();
    if header.iter().all(|h| number(h, delim).is_some()) {
        return Err(err(
            Some(hline),
            "expected a header row naming the columns, found only numbers".into(),
        ));
    }
    let ti =
        choose(&err, hline, &header, opts.time_col.as_deref(), "time", TIME_NAMES, "--time-col")?;
    let ai = choose(
        &err,
        hline,
        &header,
        opts.angle_col.as_deref(),
        "angle",
        ANGLE_NAMES,
        "--angle-col",
    )?;
    if ti == ai {
        return Err(err(
            Some(hline),
            format!("time and angle are both column {}: expected two different columns", ti + 1),
        ));
    }
    let (tbase, tunit_h) = split_header(&header[ti]);
    let (abase, aunit_h) = split_header(&header[ai]);
    // A units row right under the header (`s,deg`, `[ms];(rad)`) states the units of the
    // columns whose names do not; it is not a data row.
    let mut rows = rows;
    let mut row_units = (None, None);
    if let Some(&(_, first)) = rows.first() {
        let f = delim.split(first);
        let tok = |i: usize| f.get(i).map(|s| bare_unit(unquote(s))).and_then(unit_token);
        let (tu, au) = (tok(ti), tok(ai));
        if matches!(tu, Some(HeaderUnit::Time(_))) || matches!(au, Some(HeaderUnit::Angle(_))) {
            if let Some(HeaderUnit::Time(u)) = tu {
                row_units.0 = Some(u);
            }
            if let Some(HeaderUnit::Angle(u)) = au {
                row_units.1 = Some(u);
            }
            rows = &rows[1..];
        }
    }

    let time_unit = match opts.time_unit.as_deref() {
        Some(u) => TimeUnit::parse(u)
            .ok_or_else(|| err(None, format!("unknown time unit '{u}': expected s, ms or us")))?,
        None => match (tunit_h, row_units.0) {
            (Some(HeaderUnit::Time(u)), _) | (_, Some(u)) => u,
            _ if let Some(u) = TimeUnit::parse(&tbase) => u,
            _ => {
                let (stem, why) = unitless(&header[ti]);
                return Err(err(
                    Some(hline),
                    format!(
                        "time column '{}' {why}: name it {stem}_s, {stem}_ms or {stem}_us, or give --time-unit s|ms|us",
                        header[ti]
                    ),
                ));
            }
        },
    };
    let angle_unit = match opts.angle_unit.as_deref() {
        Some(u) => AngleUnit::parse(u).ok_or_else(|| {
            err(None, format!("unknown angle unit '{u}': expected rad, mrad, deg, grad or counts"))
        })?,
        None => match (aunit_h, row_units.1) {
            (Some(HeaderUnit::Angle(u)), _) | (_, Some(u)) => u,
            _ if let Some(u) = AngleUnit::parse(&abase) => u,
            _ if COUNT_NAMES.contains(&abase.as_str()) || opts.counts_per_rev.is_some() => {
                AngleUnit::Counts
            }
            _ => {
                let (stem, why) = unitless(&header[ai]);
                return Err(err(
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
        Some(f) => f,
        None => {
            return Err(match opts.counts_per_rev {
                None => err(
                    Some(hline),
                    format!(
                        "angle column '{}' is in encoder counts: expected --counts-per-rev N (edges per revolution; quadrature gives 4 per line)",
                        header[ai]
                    ),
                ),
                Some(n) => err(
                    None,
                    format!(
                        "--counts-per-rev {n} is not usable: expected a positive number of edges per revolution"
                    ),
                ),
            });
        }
    };
    if let Some(b) = opts.counts_wrap {
        if ![8, 16, 24, 32].contains(&b) {
            return Err(err(
                None,
                format!("--counts-wrap {b} is not a counter width: expected 8, 16, 24 or 32 bits"),
            ));
        }
        if angle_unit != AngleUnit::Counts {
            return Err(err(
                Some(hline),
                format!(
                    "--counts-wrap is for encoder counts, but angle column '{}' is in {angle_unit}: drop the option or give --angle-unit counts",
                    header[ai]
                ),
            ));
        }
    }
    let to_s = time_unit.to_seconds();
    let angle_step = (angle_unit == AngleUnit::Counts).then_some(to_rad);

    let mut table = Table {
        times: Vec::new(),
        angles: Vec::new(),
        lines: Vec::new(),
        angle_step,
        dropped_lines: Vec::new(),
        time_unit,
        angle_unit,
    };
    let need = ti.max(ai) + 1;
    for &(line, row) in rows {
        let fields = delim.split(row);
        let value = |i: usize, what: &str, unit: String| -> Result<f64, String> {
            let raw = fields.get(i).copied().unwrap_or("");
            match number(raw, delim) {
                Some(v) if v.is_finite() => Ok(v),
                Some(_) => Err(format!(
                    "expected a finite {what} in {unit} (column {} '{}'), found \"{}\"",
                    i + 1,
                    header[i],
                    unquote(raw)
                )),
                None => Err(format!(
                    "expected {what} in {unit} as a number (column {} '{}'), found \"{}\"",
                    i + 1,
                    header[i],
                    unquote(raw)
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
            value(ti, "time", time_unit.to_string())
                .and_then(|t| value(ai, "angle", angle_unit.to_string()).map(|a| (t, a)))
        };
        match parsed {
            Ok((t, a)) => {
                table.times.push(t * to_s);
                table.angles.push(a);
                table.lines.push(line);
            }
            Err(_) if opts.drop_bad_rows => table.dropped_lines.push(line),
            Err(kind) => return Err(err(Some(line), kind)),
        }
    }
    if angle_unit == AngleUnit::Counts {
        unwrap_counts(&mut table.angles, &table.lines, opts.counts_wrap)
            .map_err(|(line, kind)| err(Some(line), kind))?;
    }
    for a in &mut table.angles {
        *a *= to_rad;
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
        return Err(err(Some(last_line.max(hline)), kind));
    }
    Ok(table)
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
