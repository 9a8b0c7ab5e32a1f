//! Calendar timestamps in a time column (ISO 8601 / RFC 3339: `2026-12-02T18:21:52.125Z`,
//! `2026-12-02 19:21:52.125+01:00`), read as seconds from the first sample.
//!
//! Written here rather than taken from a date crate: the loader needs one thing, the difference
//! between two instants to the microsecond, and no time zone database (an offset is part of the
//! stamp; a stamp without one is read on the logger's own clock). The date is turned into a
//! day count with the proleptic Gregorian leap-year rule, and the whole seconds and the fraction
//! are kept apart, so a difference keeps its sub-microsecond digits (an f64 of seconds since 1970
//! keeps only about 0.2 µs).

/// One instant: whole seconds since 1970-01-01T00:00:00Z and the fraction of a second, with
/// the number of decimals the fraction was written with.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Stamp {
    pub secs: i64,
    pub frac: f64,
    pub decimals: u32,
}

impl Stamp {
    /// Seconds from `first` to `self`.
    pub fn since(self, first: Stamp) -> f64 {
        (self.secs - first.secs) as f64 + (self.frac - first.frac)
    }
}

/// Days from 1970-01-01 to the given date of the proleptic Gregorian calendar.
fn days_since_epoch(year: i64, month: u32, day: u32) -> i64 {
    // Count from 1 March of year 0 so that the leap day falls at the end of a counted year.
    let (y, m) = if month <= 2 { (year - 1, month + 9) } else { (year, month - 3) };
    let days_in_years = 365 * y + y.div_euclid(4) - y.div_euclid(100) + y.div_euclid(400);
    // Days from 1 March to the first of month m (March = 0): 31, 30, 31, 30, 31, 31, 30, ...
    let days_in_months = (153 * i64::from(m) + 2) / 5;
    // 719468 days from 0000-03-01 to 1970-01-01.
    days_in_years + days_in_months + i64::from(day) - 1 - 719_468
}

fn is_leap(year: i64) -> bool {
    year % 4 == 0 && (year % 100 != 0 || year % 400 == 0)
}

fn days_in_month(year: i64, month: u32) -> u32 {
    match month {
        2 if is_leap(year) => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// Exactly `n` ASCII digits at the start of `s`, as a number, and the rest.
fn digits(s: &str, n: usize) -> Option<(u32, &str)> {
    let head = s.get(..n)?;
    if !head.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    Some((head.parse().ok()?, &s[n..]))
}

/// Parse `YYYY-MM-DD(T| )hh:mm[:ss[.fff…]][Z|±hh:mm|±hhmm|±hh]`; `None` if it is not one.
pub(super) fn parse(s: &str) -> Option<Stamp> {
    let s = s.trim();
    let (year, r) = digits(s, 4)?;
    let r = r.strip_prefix('-')?;
    let (month, r) = digits(r, 2)?;
    let r = r.strip_prefix('-')?;
    let (day, r) = digits(r, 2)?;
    let r = r.strip_prefix(['T', 't', ' '])?;
    let (hour, r) = digits(r, 2)?;
    let r = r.strip_prefix(':')?;
    let (minute, mut r) = digits(r, 2)?;
    let mut second = 0;
    let (mut frac, mut decimals) = (0.0, 0);
    if let Some(rest) = r.strip_prefix(':') {
        let (sec, rest) = digits(rest, 2)?;
        second = sec;
        r = rest;
        if let Some(rest) = r.strip_prefix(['.', ',']) {
            let n = rest.bytes().take_while(u8::is_ascii_digit).count();
            if n == 0 {
                return None;
            }
            frac = format!("0.{}", &rest[..n]).parse().ok()?;
            decimals = n as u32;
            r = &rest[n..];
        }
    }
    let offset_min: i64 = match r {
        "" | "Z" | "z" => 0,
        _ => {
            let sign = match r.as_bytes().first() {
                Some(b'+') => 1,
                Some(b'-') => -1,
                _ => return None,
            };
            let r = &r[1..];
            let (oh, rest) = digits(r, 2)?;
            let om = match rest {
                "" => 0,
                _ => {
                    digits(rest.strip_prefix(':').unwrap_or(rest), 2)
                        .filter(|(_, tail)| tail.is_empty())?
                        .0
                }
            };
            if oh > 23 || om > 59 {
                return None;
            }
            sign * i64::from(oh * 60 + om)
        }
    };
    let year = i64::from(year);
    if !(1..=12).contains(&month)
        || day < 1
        || day > days_in_month(year, month)
        || hour > 23
        || minute > 59
        || second > 60
    {
        return None;
    }
    let local =
        days_since_epoch(year, month, day) * 86_400 + i64::from(hour * 3600 + minute * 60 + second);
    Some(Stamp { secs: local - offset_min * 60, frac, decimals })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn epoch_days() {
        // 2000-03-01 is day 11017 since 1970-01-01 [common practice: Unix day numbers].
        assert_eq!(days_since_epoch(1970, 1, 1), 0);
        assert_eq!(days_since_epoch(2000, 3, 1), 11_017);
        assert_eq!(days_since_epoch(1969, 12, 31), -1);
    }

    #[test]
    fn offsets_and_fractions() {
        let z = parse("2026-12-31T23:59:59.75Z").map(|s| (s.secs, s.frac, s.decimals));
        // 2026-12-31 is day 20818; 20818 × 86400 + 86399.
        assert_eq!(z, Some((20_818 * 86_400 + 86_399, 0.75, 2)));
        let a = parse("2027-01-01T00:59:59.750+01:00");
        assert_eq!(a.map(|s| s.secs), z.map(|z| z.0));
        assert_eq!(parse("2027-01-01 01:00:00-0030").map(|s| s.secs), z.map(|z| z.0 + 5401));
        for bad in ["2026-02-29T00:00:00", "2026-13-01T00:00", "12.5", "2026-01-01T00:00+1", ""] {
            assert_eq!(parse(bad), None, "{bad}");
        }
    }
}
