//! Units of time and angle in logs, and their conversion to SI.
//!
//! A log may record time in seconds, milliseconds or microseconds and angle in radians,
//! milliradians, degrees, gradians (gon) or encoder counts. The loader learns the unit from a header suffix (`t_ms`, `angle_deg`,
//! `time [s]`) or from an option, and converts every value to seconds and radians once, here.

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
}
