//! Header names and the units they state: which column is the time and which the angle
//! (`t`, `time`, `theta`, `encoder`, a column named by its unit), and the unit in a suffix or
//! in brackets (`t_ms`, `angle [deg]`, `Time ( s )`, `"time, s"`).

use super::super::{LoadError, LoadErrorKind as K};
use crate::units::{AngleUnit, TimeUnit};

/// Header names taken for the time column when none is chosen.
/// A column named only by a unit (`ms`, `sec`) also counts, in that unit.
pub(super) const TIME_NAMES: &[&str] = &[
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
pub(super) const ANGLE_NAMES: &[&str] = &[
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
/// Names of a column holding a calibrated signal (a voltage, a reading) taken as the angle
/// column when a signal scale is given and no angle column is named.
pub(super) const SIGNAL_NAMES: &[&str] = &[
    "voltage", "volts", "volt", "v", "signal", "output", "reading", "value", "cha", "chb", "ch1",
    "ch2", "ain0", "ain1", "a0", "a1",
];
/// Angle names that mean encoder counts when no unit is given.
pub(super) const COUNT_NAMES: &[&str] = &["enc", "encoder", "counts", "count", "ticks"];

/// A unit found in a header name.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum HeaderUnit {
    Time(TimeUnit),
    Angle(AngleUnit),
}

pub(super) fn unit_token(tok: &str) -> Option<HeaderUnit> {
    TimeUnit::parse(tok)
        .map(HeaderUnit::Time)
        .or_else(|| AngleUnit::parse(tok).map(HeaderUnit::Angle))
}

/// Split a header name into its base (lowercase) and unit: `t_ms`, `angle [deg]`, `time(s)`.
pub(super) fn split_header(name: &str) -> (String, Option<HeaderUnit>) {
    let lower = name.trim().to_lowercase();
    if let Some(open) = lower.find(['[', '(']) {
        let inner = lower[open + 1..].trim_end_matches([']', ')']).trim();
        if let Some(u) = unit_token(inner) {
            return (base_of(&lower[..open]), Some(u));
        }
    }
    if let Some(pos) = lower.rfind(['_', '-', ' ', '.']) {
        let (base, suffix) = (&lower[..pos], &lower[pos + 1..]);
        if let Some(u) = unit_token(suffix)
            && !base.trim().is_empty()
        {
            return (base_of(base), Some(u));
        }
    }
    (lower, None)
}

/// The base of a header name before its unit, without the separator written before the unit
/// (`time, s` → `time`).
fn base_of(s: &str) -> String {
    s.trim().trim_end_matches([',', ';', ':']).trim().to_string()
}

/// A unit token without the brackets or parentheses it may be written in: `[s]`, `( deg )`.
pub(super) fn bare_unit(s: &str) -> &str {
    let s = s.trim();
    s.strip_prefix(['[', '(']).and_then(|r| r.strip_suffix([']', ')'])).map_or(s, str::trim)
}

/// For a header name that gives no unit: the name to suggest a suffix on, and why (no unit
/// written, or one swingfit does not know).
pub(super) fn unitless(name: &str) -> (String, String) {
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

pub(super) fn unquote(s: &str) -> &str {
    let s = s.trim();
    s.strip_prefix('"').and_then(|r| r.strip_suffix('"')).unwrap_or(s).trim()
}

/// Builds a [`LoadError`] of a kind, at a line, with a message.
pub(super) type ErrAt<'a> = dyn Fn(fn(String) -> K, Option<u64>, String) -> LoadError + 'a;

/// Choose a column: by name or 1-based index when given, else by the usual names.
pub(super) fn choose(
    err: &ErrAt<'_>,
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
                    K::Column,
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
                K::Column,
                Some(hline),
                format!("no {what} column named '{g}': expected one of {list}"),
            )),
            _ => Err(err(
                K::Column,
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
            K::Column,
            Some(hline),
            format!(
                "no {what} column: expected a header such as {} (columns: {list}), or choose one with {flag}",
                usual.iter().take(4).map(|n| format!("'{n}'")).collect::<Vec<_>>().join(", ")
            ),
        )),
        [a, b, ..] => Err(err(
            K::Column,
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
