//! The calendar date and time of a sheet's stamp, ISO 8601 in UTC, computed from the system clock
//! without a date crate (one conversion from days since 1970 to a proleptic Gregorian date).

use std::time::{SystemTime, UNIX_EPOCH};

/// `t` as ISO 8601 UTC with whole seconds, e.g. `2026-12-02T01:22:42Z`. Times before 1970 are
/// clamped to the epoch.
pub fn iso8601_utc(t: SystemTime) -> String {
    let secs = t.duration_since(UNIX_EPOCH).map(|d| d.as_secs()).unwrap_or(0) as i64;
    let (days, rem) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", rem / 3600, rem % 3600 / 60, rem % 60)
}

/// Proleptic Gregorian date of a day count since 1970-01-01 (H. Hinnant, "chrono-compatible
/// low-level date algorithms", days_from_civil inverse [common practice]).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}
