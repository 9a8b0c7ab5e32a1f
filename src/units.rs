//! Units of time and angle in logs, and their conversion to SI.
//!
//! A log may record time in seconds, milliseconds or microseconds and angle in radians,
//! milliradians, degrees, gradians (gon) or encoder counts. The loader learns the unit from a header suffix (`t_ms`, `angle_deg`,
//! `time [s]`) or from an option, and converts every value to seconds and radians once, here.
//! A sensor that logs a signal proportional to the angle is read through its [`SignalScale`].

use std::f64::consts::PI;
use std::fmt;

/// Unit of the time column.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TimeUnit {
    /// Seconds.
    Seconds,
    /// Milliseconds.
    Millis,
    /// Microseconds.
    Micros,
}

impl TimeUnit {
    /// Parse a unit token (`s`, `sec`, `ms`, `us`, `µs`), case-insensitive.
    pub fn parse(token: &str) -> Option<TimeUnit> {
        match token.trim().to_ascii_lowercase().as_str() {
            "s" | "sec" | "secs" | "seconds" => Some(TimeUnit::Seconds),
            "ms" | "msec" | "millis" => Some(TimeUnit::Millis),
            "us" | "usec" | "micros" | "µs" | "μs" => Some(TimeUnit::Micros),
            _ => None,
        }
    }

    /// Seconds per one unit.
    pub fn to_seconds(self) -> f64 {
        match self {
            TimeUnit::Seconds => 1.0,
            TimeUnit::Millis => 1e-3,
            TimeUnit::Micros => 1e-6,
        }
    }
}

impl fmt::Display for TimeUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            TimeUnit::Seconds => "s",
            TimeUnit::Millis => "ms",
            TimeUnit::Micros => "us",
        })
    }
}

/// Unit of the angle column.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AngleUnit {
    /// Radians.
    Radians,
    /// Milliradians.
    Milliradians,
    /// Degrees.
    Degrees,
    /// Gradians (gon): 400 to the turn.
    Gradians,
    /// Encoder counts (needs counts per revolution).
    Counts,
}

impl AngleUnit {
    /// Parse a unit token (`rad`, `mrad`, `deg`, `grad`/`gon`, `counts`), case-insensitive.
    pub fn parse(token: &str) -> Option<AngleUnit> {
        match token.trim().to_ascii_lowercase().as_str() {
            "rad" | "rads" | "radians" => Some(AngleUnit::Radians),
            "mrad" | "mrads" | "milliradians" => Some(AngleUnit::Milliradians),
            "deg" | "degs" | "degrees" | "°" => Some(AngleUnit::Degrees),
            "grad" | "grads" | "gradians" | "gon" | "gons" => Some(AngleUnit::Gradians),
            "counts" | "count" | "cnt" | "ticks" | "edges" => Some(AngleUnit::Counts),
            _ => None,
        }
    }

    /// Radians per one unit; for counts, `counts_per_rev` edges make one turn.
    /// Returns `None` for counts without a usable (finite, positive) `counts_per_rev`.
    pub fn to_radians(self, counts_per_rev: Option<f64>) -> Option<f64> {
        match self {
            AngleUnit::Radians => Some(1.0),
            AngleUnit::Milliradians => Some(1e-3),
            AngleUnit::Degrees => Some(PI / 180.0),
            AngleUnit::Gradians => Some(PI / 200.0),
            AngleUnit::Counts => match counts_per_rev {
                Some(n) if n.is_finite() && n > 0.0 => Some(2.0 * PI / n),
                _ => None,
            },
        }
    }
}

impl fmt::Display for AngleUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            AngleUnit::Radians => "rad",
            AngleUnit::Milliradians => "mrad",
            AngleUnit::Degrees => "deg",
            AngleUnit::Gradians => "grad",
            AngleUnit::Counts => "counts",
        })
    }
}

/// The calibration of a sensor that logs a signal proportional to the angle (a voltage, a
/// reading): so many signal units per angle unit, written `0.05V/deg`, `2.5 mV/mrad`,
/// `1.0101/deg`. The angle is (signal − zero) / `per` in `angle_unit`.
#[derive(Clone, Debug, PartialEq)]
pub struct SignalScale {
    /// Signal units per one `angle_unit` (non-zero, finite; negative when the signal falls as
    /// the angle grows).
    pub per: f64,
    /// The signal's unit as written (`V`, `mV`), if any.
    pub signal_unit: Option<String>,
    /// The angle unit the scale is given per (not counts).
    pub angle_unit: AngleUnit,
}

impl SignalScale {
    /// Parse `VALUE[UNIT]/ANGLE_UNIT`; `Err` says what was expected.
    pub fn parse(text: &str) -> Result<SignalScale, String> {
        let expected = "expected VALUE[UNIT]/ANGLE_UNIT such as 0.05V/deg or 1.0101/deg";
        let Some((left, right)) = text.rsplit_once('/') else {
            return Err(format!("{text:?}: {expected}"));
        };
        let angle_unit = match AngleUnit::parse(right) {
            Some(AngleUnit::Counts) | None => {
                return Err(format!(
                    "{text:?}: '{}' is not an angle unit: {expected} (rad, mrad, deg or grad)",
                    right.trim()
                ));
            }
            Some(u) => u,
        };
        let left = left.trim();
        // The number is the longest start of the text that reads as one; the unit follows.
        let split = (1..=left.len())
            .rev()
            .find(|&i| left.is_char_boundary(i) && left[..i].trim().parse::<f64>().is_ok())
            .unwrap_or(0);
        let (num, unit) = left.split_at(split);
        let per: f64 = num
            .trim()
            .parse()
            .map_err(|_| format!("{text:?}: '{}' is not a number: {expected}", num.trim()))?;
        if !per.is_finite() || per == 0.0 {
            return Err(format!("{text:?}: the scale must be a finite, non-zero number"));
        }
        let unit = unit.trim();
        Ok(SignalScale {
            per,
            signal_unit: (!unit.is_empty()).then(|| unit.to_string()),
            angle_unit,
        })
    }

    /// Radians per one signal unit.
    pub fn radians_per_signal(&self) -> f64 {
        self.angle_unit.to_radians(None).unwrap_or(1.0) / self.per
    }
}

impl fmt::Display for SignalScale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}{}/{}", self.per, self.signal_unit.as_deref().unwrap_or(""), self.angle_unit)
    }
}

impl std::str::FromStr for SignalScale {
    type Err = String;
    fn from_str(s: &str) -> Result<SignalScale, String> {
        SignalScale::parse(s)
    }
}

/// Radians to degrees.
pub fn to_degrees(rad: f64) -> f64 {
    rad * 180.0 / PI
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_step_matches_quadrature_table() {
        // docs/checks.md §9 (Widrow & Kollár [memory]; quadrature ×4 [common practice]):
        // 2500 lines → 10000 counts/rev → q = 0.000628318530718 rad.
        let q = AngleUnit::Counts.to_radians(Some(10000.0)).unwrap_or(f64::NAN);
        assert!((q - 0.000628318530718).abs() < 1e-15);
        assert_eq!(AngleUnit::Counts.to_radians(None), None);
        assert_eq!(AngleUnit::Counts.to_radians(Some(0.0)), None);
        assert_eq!(TimeUnit::parse("MS"), Some(TimeUnit::Millis));
        assert!((TimeUnit::Micros.to_seconds() - 1e-6).abs() < 1e-21);
    }

    #[test]
    fn signal_scales() {
        let s = SignalScale::parse("0.05V/deg").unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(
            (s.per, s.signal_unit.as_deref(), s.angle_unit),
            (0.05, Some("V"), AngleUnit::Degrees)
        );
        // 0.05 V per degree: 1 V is 20 degrees.
        assert!((s.radians_per_signal() - 20f64.to_radians()).abs() < 1e-15);
        let s = SignalScale::parse("2.5e-3 mV / rad").unwrap_or_else(|e| panic!("{e}"));
        assert_eq!((s.per, s.signal_unit.as_deref()), (2.5e-3, Some("mV")));
        assert_eq!(SignalScale::parse("1.0101/deg").map(|s| s.signal_unit), Ok(None));
        for bad in ["0.05V", "0/deg", "x/deg", "1/counts", "1V/V"] {
            assert!(SignalScale::parse(bad).is_err(), "{bad}");
        }
    }
}
