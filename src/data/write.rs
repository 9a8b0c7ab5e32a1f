//! Writing logs in a format the loader reads (radians, degrees or encoder counts), with optional noise and quantisation.
//!
//! `simulate` uses this to turn a trajectory into a log that looks like a measurement: Gaussian
//! sensor noise first, then the encoder's rounding to whole counts, then the unit of the angle
//! column. The output is CSV with `#` comment lines, a header the loader recognises
//! (`time_s,angle_rad`, `time_s,angle_deg` or `time_s,counts`) and numbers written with the
//! shortest decimal form that reads back to the same `f64`, so nothing is lost on the way.

use std::f64::consts::TAU;
use std::fmt::Write as _;

use rand::SeedableRng;
use rand::rngs::StdRng;
use rand_distr::{Distribution, Normal};

/// Unit of the angle column of a written log.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum OutputUnit {
    /// Radians, column `angle_rad`.
    #[default]
    Rad,
    /// Degrees, column `angle_deg`.
    Deg,
    /// Whole encoder counts, column `counts` (needs counts per revolution).
    Counts,
}

impl OutputUnit {
    /// Parse `rad`, `deg` or `counts` (case-insensitive).
    pub fn parse(s: &str) -> Option<OutputUnit> {
        match s.trim().to_ascii_lowercase().as_str() {
            "rad" => Some(OutputUnit::Rad),
            "deg" => Some(OutputUnit::Deg),
            "counts" => Some(OutputUnit::Counts),
            _ => None,
        }
    }

    /// The name used on the command line.
    pub fn name(self) -> &'static str {
        match self {
            OutputUnit::Rad => "rad",
            OutputUnit::Deg => "deg",
            OutputUnit::Counts => "counts",
        }
    }

    /// Header of the angle column.
    pub fn column(self) -> &'static str {
        match self {
            OutputUnit::Rad => "angle_rad",
            OutputUnit::Deg => "angle_deg",
            OutputUnit::Counts => "counts",
        }
    }
}

/// How to write a log.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct LogFormat {
    /// Unit of the angle column.
    pub unit: OutputUnit,
    /// Encoder counts per revolution (edges): the count step 2π/N that [`OutputUnit::Counts`]
    /// rounds to; required for counts, checked but unused for radians and degrees.
    pub counts_per_rev: Option<f64>,
    /// Standard deviation of the Gaussian noise added before quantisation [rad]; 0 for none.
    pub noise_sd_rad: f64,
    /// Seed of the noise generator (same seed, same noise).
    pub seed: u64,
    /// Comment lines written before the header, each after `# ` (newlines become spaces).
    pub comments: Vec<String>,
}

/// Why a log could not be written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum WriteError {
    /// Counts output without counts per revolution.
    #[error("counts output needs counts_per_rev (encoder counts per revolution)")]
    MissingCountsPerRev,
    /// Counts per revolution not finite and positive.
    #[error("counts_per_rev must be a finite number > 0, found {0}")]
    BadCountsPerRev(f64),
    /// Noise level not finite and non-negative.
    #[error("noise standard deviation must be a finite number >= 0, found {0}")]
    BadNoise(f64),
    /// Times and angles of different lengths.
    #[error("times and angles differ in length ({times} vs {angles})")]
    LengthMismatch {
        /// Number of times.
        times: usize,
        /// Number of angles.
        angles: usize,
    },
    /// A time or angle is NaN or infinite.
    #[error("sample {index} is not finite (time {time}, angle {angle})")]
    NonFinite {
        /// 0-based sample index.
        index: usize,
        /// Its time.
        time: f64,
        /// Its angle [rad].
        angle: f64,
    },
}

/// Encoder count step [rad] for `counts_per_rev` counts per revolution: 2π/N.
pub fn count_step(counts_per_rev: f64) -> Result<f64, WriteError> {
    if counts_per_rev.is_finite() && counts_per_rev > 0.0 {
        Ok(TAU / counts_per_rev)
    } else {
        Err(WriteError::BadCountsPerRev(counts_per_rev))
    }
}

/// Add independent Gaussian noise of standard deviation `sd` [rad] to every angle, from a
/// generator seeded with `seed` (`StdRng`, so the same seed gives the same noise on one build).
pub fn add_noise(angles: &mut [f64], sd: f64, seed: u64) -> Result<(), WriteError> {
    if !(sd.is_finite() && sd >= 0.0) {
        return Err(WriteError::BadNoise(sd));
    }
    if sd == 0.0 {
        return Ok(());
    }
    // Invariant: sd is finite and > 0 here, which is all Normal::new requires.
    let normal = Normal::new(0.0, sd).map_err(|_| WriteError::BadNoise(sd))?;
    let mut rng = StdRng::seed_from_u64(seed);
    for a in angles.iter_mut() {
        *a += normal.sample(&mut rng);
    }
    Ok(())
}

/// The whole number of count steps nearest to `angle` (rounding half away from zero).
pub fn to_counts(angle: f64, step: f64) -> f64 {
    // `+ 0.0` turns −0 into 0 so that a count is never written as "-0".
    (angle / step).round() + 0.0
}

/// Render a log: comment lines, header, one row per sample. Noise and quantisation are applied
/// as `format` says; `angles` are the noise-free angles [rad].
pub fn render(times: &[f64], angles: &[f64], format: &LogFormat) -> Result<Vec<u8>, WriteError> {
    if times.len() != angles.len() {
        return Err(WriteError::LengthMismatch { times: times.len(), angles: angles.len() });
    }
    if let Some((index, (&time, &angle))) =
        times.iter().zip(angles).enumerate().find(|(_, (t, a))| !(t.is_finite() && a.is_finite()))
    {
        return Err(WriteError::NonFinite { index, time, angle });
    }
    let step = match (format.unit, format.counts_per_rev) {
        (_, Some(n)) => Some(count_step(n)?),
        (OutputUnit::Counts, None) => return Err(WriteError::MissingCountsPerRev),
        (_, None) => None,
    };
    let mut values = angles.to_vec();
    add_noise(&mut values, format.noise_sd_rad, format.seed)?;

    let mut out = String::with_capacity(32 * (times.len() + 2));
    for c in &format.comments {
        let line = c.replace(['\r', '\n'], " ");
        let _ = writeln!(out, "# {line}");
    }
    let _ = writeln!(out, "time_s,{}", format.unit.column());
    for (&t, &a) in times.iter().zip(&values) {
        // Rust's `{}` for f64 writes the shortest decimal that parses back to the same value.
        let _ = match (format.unit, step) {
            (OutputUnit::Counts, Some(q)) => writeln!(out, "{t},{}", to_counts(a, q)),
            (OutputUnit::Deg, _) => writeln!(out, "{t},{}", a.to_degrees()),
            // Radians; counts without a step were refused above.
            (_, _) => writeln!(out, "{t},{a}"),
        };
    }
    Ok(out.into_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lines(bytes: Vec<u8>) -> Vec<String> {
        String::from_utf8(bytes).expect("utf-8").lines().map(str::to_string).collect()
    }

    #[test]
    fn radians_round_trip_exactly() {
        let t = [0.0, 0.1, 0.30000000000000004];
        let a = [1.0 / 3.0, -2.5e-17, std::f64::consts::PI];
        let f = LogFormat { comments: vec!["a\nb".into()], ..LogFormat::default() };
        let l = lines(render(&t, &a, &f).expect("render"));
        assert_eq!(l[0], "# a b");
        assert_eq!(l[1], "time_s,angle_rad");
        for (i, row) in l[2..].iter().enumerate() {
            let (ts, as_) = row.split_once(',').expect("two columns");
            assert_eq!(ts.parse::<f64>().expect("t").to_bits(), t[i].to_bits());
            assert_eq!(as_.parse::<f64>().expect("a").to_bits(), a[i].to_bits());
        }
    }

    #[test]
    fn counts_round_to_nearest_and_never_write_minus_zero() {
        // 10000 counts/rev: step 0.036° (docs/checks.md §9 table, [common practice]).
        let q = count_step(10000.0).expect("step");
        assert!((q.to_degrees() - 0.036).abs() <= 1e-15);
        let a = [0.4 * q, -0.4 * q, 1.6 * q, -2.5 * q];
        let f = LogFormat {
            unit: OutputUnit::Counts,
            counts_per_rev: Some(10000.0),
            ..LogFormat::default()
        };
        let l = lines(render(&[0.0, 1.0, 2.0, 3.0], &a, &f).expect("render"));
        assert_eq!(l[0], "time_s,counts");
        let c: Vec<&str> = l[1..].iter().map(|r| r.split_once(',').expect("row").1).collect();
        assert_eq!(c, ["0", "0", "2", "-3"]);
    }

    #[test]
    fn refuses_bad_settings() {
        let f = LogFormat { unit: OutputUnit::Counts, ..LogFormat::default() };
        assert_eq!(render(&[0.0], &[0.0], &f), Err(WriteError::MissingCountsPerRev));
        let f = LogFormat { counts_per_rev: Some(-1.0), ..LogFormat::default() };
        assert_eq!(render(&[0.0], &[0.0], &f), Err(WriteError::BadCountsPerRev(-1.0)));
        let f = LogFormat { noise_sd_rad: f64::INFINITY, ..LogFormat::default() };
        assert_eq!(render(&[0.0], &[0.0], &f), Err(WriteError::BadNoise(f64::INFINITY)));
        let f = LogFormat::default();
        assert!(matches!(
            render(&[0.0], &[f64::NAN], &f),
            Err(WriteError::NonFinite { index: 0, .. })
        ));
        assert!(matches!(render(&[0.0], &[], &f), Err(WriteError::LengthMismatch { .. })));
    }

    #[test]
    fn noise_is_seeded_and_of_the_requested_size() {
        let mut a = vec![0.0; 20000];
        add_noise(&mut a, 0.01, 5).expect("noise");
        let mut b = vec![0.0; 20000];
        add_noise(&mut b, 0.01, 5).expect("noise");
        assert_eq!(a, b);
        let n = a.len() as f64;
        let sd = (a.iter().map(|x| x * x).sum::<f64>() / n).sqrt();
        // Relative standard error of a std from 20000 samples ≈ 0.5 %; allow 3 %.
        assert!((sd - 0.01).abs() <= 3e-4, "sd {sd}");
    }
}
