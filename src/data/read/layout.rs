//! Where the table is in a log's text: the field separator, the header row below any preamble
//! (title lines, metadata), and the values a preamble states (a sample rate).
//!
//! Loggers write a title or a block of settings above the header (`Voltage, ChA, Run #6`;
//! `trigger_start_deg, sample_rate, duration_sec` and a row of its values). The header is the
//! first row, within the first [`MAX_PREAMBLE`] content lines, that the rows below it follow:
//! most of the next few rows are numbers with as many fields as it names. A file whose rows are
//! only numbers from some line on, one a line, has no header at all (an angle a line at a
//! stated rate). Fields are split by the `csv` crate for a separator character, so a quoted
//! field may hold the separator (`"time, s"`); runs of spaces are split here (a format the
//! `csv` crate does not read), with the same quoting.

use super::names::{bare_unit, unit_token};

/// Field separator found in the header.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Delim {
    Char(char),
    Whitespace,
}

/// Separators tried, in order of preference.
pub(super) const DELIMS: [Delim; 4] =
    [Delim::Char(','), Delim::Char(';'), Delim::Char('\t'), Delim::Whitespace];

/// Content lines searched for the header (a preamble longer than this needs `--skip-lines`).
pub const MAX_PREAMBLE: usize = 50;
/// Rows below a header candidate that are judged.
const PROBE_ROWS: usize = 5;

impl Delim {
    /// The fields of one line, trimmed and unquoted.
    pub(super) fn split(self, line: &str) -> Vec<String> {
        match self {
            Delim::Char(c) if !line.contains('"') => {
                line.split(c).map(|f| f.trim().to_string()).collect()
            }
            Delim::Char(c) => {
                let mut r = reader(c, line.as_bytes());
                let mut rec = csv::StringRecord::new();
                match r.read_record(&mut rec) {
                    Ok(true) => rec.iter().map(str::to_string).collect(),
                    _ => vec![String::new()],
                }
            }
            Delim::Whitespace => split_whitespace_quoted(line),
        }
    }

    /// Name for messages.
    pub(super) fn name(self) -> &'static str {
        match self {
            Delim::Char(',') => "commas",
            Delim::Char(';') => "semicolons",
            Delim::Char('\t') => "tabs",
            Delim::Char(_) => "a separator",
            Delim::Whitespace => "spaces",
        }
    }
}

/// A csv reader of records split at `c`: no header, any number of fields, trimmed, `#` lines
/// skipped.
fn reader(c: char, bytes: &[u8]) -> csv::Reader<&[u8]> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .delimiter(u8::try_from(c).unwrap_or(b','))
        .from_reader(bytes)
}

/// Split at runs of whitespace; a double-quoted field may hold spaces (`""` is a quote).
fn split_whitespace_quoted(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let (mut quoted, mut any) = (false, false);
    let mut chars = line.chars().peekable();
    while let Some(ch) = chars.next() {
        match ch {
            '"' if quoted && chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            '"' => {
                quoted = !quoted;
                any = true;
            }
            c if c.is_whitespace() && !quoted => {
                if any || !cur.is_empty() {
                    out.push(std::mem::take(&mut cur).trim().to_string());
                    any = false;
                }
            }
            c => {
                cur.push(c);
                any = true;
            }
        }
    }
    if any || !cur.is_empty() {
        out.push(cur.trim().to_string());
    }
    out
}

/// The records of `text` split at `delim`, as (1-based file line, fields), skipping blank rows
/// and comment rows. `first_line` is the file line `text` starts on. Quoted fields are read by
/// the `csv` crate (a field holding a line break counts on the line it starts on).
pub(super) fn records(delim: Delim, text: &str, first_line: u64) -> Vec<(u64, Vec<String>)> {
    let keep = |f: &[String]| !(f.iter().all(String::is_empty) || f[0].starts_with('#'));
    match delim {
        Delim::Char(c) => {
            let mut r = reader(c, text.as_bytes());
            let mut out = Vec::new();
            let mut rec = csv::StringRecord::new();
            loop {
                match r.read_record(&mut rec) {
                    Ok(true) => {
                        let line = rec.position().map_or(1, csv::Position::line);
                        let fields: Vec<String> = rec.iter().map(str::to_string).collect();
                        if keep(&fields) {
                            out.push((first_line + line - 1, fields));
                        }
                    }
                    Ok(false) => break,
                    // The text is valid UTF-8 and comes from memory: no error is expected;
                    // stop at one rather than loop on it.
                    Err(_) => break,
                }
            }
            out
        }
        Delim::Whitespace => text
            .split('\n')
            .enumerate()
            .map(|(i, l)| {
                (first_line + i as u64, split_whitespace_quoted(l.trim_end_matches('\r')))
            })
            .filter(|(_, f)| !f.is_empty() && keep(f))
            .collect(),
    }
}

/// Parse one number; with a delimiter other than comma a single decimal comma is accepted.
pub(super) fn number(field: &str, delim: Delim) -> Option<f64> {
    let f = field.trim();
    if let Ok(v) = f.parse::<f64>() {
        return Some(v);
    }
    if delim != Delim::Char(',') && f.matches(',').count() == 1 && !f.contains('.') {
        return f.replace(',', ".").parse::<f64>().ok();
    }
    None
}

/// Whether every field of `line` split at `d` is a number (and there is at least one).
fn numeric(d: Delim, line: &str) -> Option<usize> {
    let f = d.split(line);
    (!f.is_empty() && f.iter().all(|x| number(x, d).is_some())).then_some(f.len())
}

/// Whether `line` is a row of numbers under any separator.
fn numeric_any(line: &str) -> bool {
    DELIMS.iter().any(|&d| numeric(d, line).is_some())
}

/// Pick the separator of a header: the first of comma, semicolon, tab, whitespace that splits
/// it into at least two fields, preferring one that splits the first data rows the same way.
pub(super) fn sniff(header: &str, rows: &[&str]) -> Option<Delim> {
    let fitting: Vec<(Delim, usize)> =
        DELIMS.iter().map(|&d| (d, d.split(header).len())).filter(|&(_, n)| n >= 2).collect();
    fitting
        .iter()
        .find(|&&(d, n)| !rows.is_empty() && rows.iter().all(|r| d.split(r).len() == n))
        .or_else(|| fitting.first())
        .map(|&(d, _)| d)
}

/// A value a preamble line states (`sample_rate` = 1000), with the file line of the value.
#[derive(Clone, Debug, PartialEq)]
pub struct Stated {
    /// 1-based file line the value is on.
    pub line: u64,
    /// The name it is given, as written.
    pub key: String,
    /// The value.
    pub value: f64,
}

/// Where the table starts, as found in the content lines.
#[derive(Debug, PartialEq)]
pub(super) enum Start {
    /// The header is content line `i` (its rows follow).
    Header(usize),
    /// No header: rows of one number each start at content line `i`.
    Bare(usize),
}

/// Find the header among the first content lines `lines` (1-based file line, text): the first
/// non-numeric line with at least two fields whose next rows mostly follow it (numbers, as
/// many fields), skipping a units row right below it; or, failing that, the first run of rows
/// of one number each (an angle a line). `None` when neither is found (the caller then takes
/// the first line as the header and its messages say what is wrong).
pub(super) fn find_start(lines: &[(u64, &str)]) -> Option<Start> {
    let n = lines.len().min(MAX_PREAMBLE);
    for h in 0..n {
        let head = lines[h].1;
        if numeric_any(head) {
            continue;
        }
        for d in DELIMS {
            let k = d.split(head).len();
            if k < 2 {
                continue;
            }
            let mut below = &lines[h + 1..];
            // A units row (no numbers, as many fields) right under the header.
            if let Some(&(_, first)) = below.first()
                && numeric(d, first).is_none()
                && d.split(first).len() == k
                && d.split(first).iter().any(|f| unit_token(bare_unit(f)).is_some())
                && below.get(1).is_some_and(|&(_, l)| numeric(d, l) == Some(k))
            {
                below = &below[1..];
            }
            let probe = &below[..below.len().min(PROBE_ROWS)];
            let good = probe.iter().filter(|&&(_, l)| numeric(d, l) == Some(k)).count();
            // A row of names under it: this one is a title, that one may be the header.
            let names_below = probe.iter().any(|&(_, l)| header_like(d, l));
            if !names_below && 2 * good >= probe.len() && good > 0 {
                return Some(Start::Header(h));
            }
        }
    }
    // Rows of one number each (no separator in them) from some line on, under one name or
    // under none.
    let single = |l: &str| numeric(Delim::Whitespace, l) == Some(1) && !l.contains(',');
    for i in 0..n {
        let probe = &lines[i..(i + PROBE_ROWS).min(lines.len())];
        if probe.len() >= 2 && probe.iter().all(|&(_, l)| single(l)) {
            let named = i > 0 && {
                let above = lines[i - 1].1;
                DELIMS.iter().all(|d| d.split(above).len() == 1) && !numeric_any(above)
            };
            return Some(if named { Start::Header(i - 1) } else { Start::Bare(i) });
        }
    }
    None
}

/// Whether `line` split at `d` is a row of two or more names (no field is a number).
fn header_like(d: Delim, line: &str) -> bool {
    let f = d.split(line);
    f.len() >= 2 && f.iter().all(|x| number(x, d).is_none())
}

/// Values stated in the preamble `lines` (above the header or the data): a row of names with a
/// row of as many numbers right under it (`trigger_start_deg, sample_rate, duration_sec` /
/// `90, 1000, 5`), or one `name = value` / `name: value` line (a unit word after the value is
/// allowed: `sample rate: 1000 Hz`).
pub(super) fn stated(lines: &[(u64, &str)]) -> Vec<Stated> {
    let mut out = Vec::new();
    for (i, &(_, names)) in lines.iter().enumerate() {
        if let Some(&(vline, values)) = lines.get(i + 1)
            && !numeric_any(names)
        {
            for d in DELIMS {
                let (k, v) = (d.split(names), d.split(values));
                if k.len() == v.len() && numeric(d, values).is_some() {
                    for (key, val) in k.iter().zip(&v) {
                        if let Some(x) = number(val, d) {
                            out.push(Stated { line: vline, key: key.clone(), value: x });
                        }
                    }
                    break;
                }
            }
        }
    }
    for &(line, text) in lines {
        if let Some((key, rest)) = text.split_once(['=', ':']) {
            let word = rest.split_whitespace().next().unwrap_or("");
            if let Ok(value) = word.parse::<f64>()
                && !key.trim().is_empty()
            {
                out.push(Stated { line, key: key.trim().to_string(), value });
            }
        }
    }
    out
}

/// Whether a stated name names the sample rate (`sample_rate`, `Sampling rate`, `fs`,
/// `rate_hz`, `samples per second`), in samples per second.
pub fn is_rate_key(key: &str) -> bool {
    let k: String = key
        .trim()
        .to_lowercase()
        .chars()
        .map(|c| if c.is_alphanumeric() { c } else { '_' })
        .collect();
    let k = k.trim_matches('_');
    let sampling = k.contains("sampl") || k.contains("acq");
    k == "fs"
        || k == "rate"
        || k == "rate_hz"
        || k == "hz"
        || sampling && (k.contains("rate") || k.contains("freq") || k.contains("per_s"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoted_fields_hold_the_separator() {
        assert_eq!(Delim::Char(',').split("\"time, s\",angle_deg"), ["time, s", "angle_deg"]);
        assert_eq!(Delim::Whitespace.split("\"time s\"  deg"), ["time s", "deg"]);
        assert_eq!(sniff("\"time, s\",\"angle, deg\"", &["0,1"]), Some(Delim::Char(',')));
    }

    #[test]
    fn preamble_and_rate() {
        let l = [
            (1, "trigger_start_deg, sample_rate, duration_sec"),
            (2, "90, 1000, 5 "),
            (3, "-90.36"),
            (4, "-90.64"),
            (5, "-90.91"),
        ];
        assert_eq!(find_start(&l), Some(Start::Bare(2)));
        let s = stated(&l[..2]);
        let rate: Vec<&Stated> = s.iter().filter(|s| is_rate_key(&s.key)).collect();
        assert_eq!(rate.len(), 1);
        assert_eq!((rate[0].line, rate[0].value), (2, 1000.0));
        let t = [
            (1, "Voltage, ChA, Run #6"),
            (2, "Time ( s )\tVoltage ( V )"),
            (3, "0.0000\t0.191"),
            (4, "0.1000\t0.196"),
        ];
        assert_eq!(find_start(&t), Some(Start::Header(1)));
        assert!(!is_rate_key("duration_sec") && is_rate_key("Sampling rate (Hz)"));
    }
}
