//! Loading and validating timestamped angle logs.
//!
//! (Interface fixed by the lead; bodies to be written in issue 2.)
//!
//! A log becomes an [`AngleLog`] only through this module, which guarantees: SI units (s, rad),
//! finite values, strictly increasing time, at least [`MIN_SAMPLES`] samples. Downstream code
//! takes `&AngleLog` and never checks again. Sample times are kept exactly as recorded: nothing
//! downstream may assume a fixed rate.

pub mod survey;
pub mod write;

use std::path::Path;

/// Fewest samples a log may have and still be fitted.
pub const MIN_SAMPLES: usize = 50;

/// A validated log in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct AngleLog {
    source: String,
    times: Vec<f64>,
    angles: Vec<f64>,
    angle_step: Option<f64>,
    dropped_lines: Vec<u64>,
}

impl AngleLog {
    /// Build a log from samples already in SI units, with the same checks as the loader
    /// (finite, strictly increasing, long enough). `source` names it in messages.
    pub fn from_samples(
        source: &str,
        times: Vec<f64>,
        angles: Vec<f64>,
    ) -> Result<AngleLog, LoadError> {
        let _ = (source, times, angles);
        todo!("issue 2")
    }

    /// Where the log came from (file path as given), for messages.
    pub fn source(&self) -> &str {
        &self.source
    }
    /// Sample times [s], strictly increasing.
    pub fn times(&self) -> &[f64] {
        &self.times
    }
    /// Angles [rad].
    pub fn angles(&self) -> &[f64] {
        &self.angles
    }
    /// Number of samples.
    pub fn len(&self) -> usize {
        self.times.len()
    }
    /// Always false (a log has at least [`MIN_SAMPLES`] samples); for clippy.
    pub fn is_empty(&self) -> bool {
        self.times.is_empty()
    }
    /// Encoder quantum [rad] when the angle came in counts.
    pub fn angle_step(&self) -> Option<f64> {
        self.angle_step
    }
    /// 1-based file lines dropped by `--drop-bad-rows`.
    pub fn dropped_lines(&self) -> &[u64] {
        &self.dropped_lines
    }
}

/// How to read a file: column choice, units, tolerance of bad rows.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LoadOptions {
    /// Time column by name or 1-based index; `None` auto-detects.
    pub time_col: Option<String>,
    /// Angle column by name or 1-based index; `None` auto-detects.
    pub angle_col: Option<String>,
    /// Time unit (`s`, `ms`, `us`); `None` takes it from the header suffix, else seconds.
    pub time_unit: Option<String>,
    /// Angle unit (`rad`, `deg`, `counts`); `None` takes it from the header, else radians.
    pub angle_unit: Option<String>,
    /// Encoder counts per revolution (edges, i.e. 4 × lines for quadrature).
    pub counts_per_rev: Option<f64>,
    /// Drop unparseable or non-finite rows instead of refusing the file.
    pub drop_bad_rows: bool,
}

/// A load failure: the file, the 1-based line when one is at fault, and what was expected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{path}{}: {kind}", line.map(|l| format!(":{l}")).unwrap_or_default())]
pub struct LoadError {
    /// File as given.
    pub path: String,
    /// 1-based line, when one line is at fault.
    pub line: Option<u64>,
    /// What went wrong.
    pub kind: String,
}

/// Read and validate the log at `path`.
pub fn load(path: &Path, opts: &LoadOptions) -> Result<AngleLog, LoadError> {
    let _ = (path, opts);
    todo!("issue 2")
}

/// Parse and validate log bytes; `name` is used in messages. Never panics, on any input.
pub fn parse(name: &str, bytes: &[u8], opts: &LoadOptions) -> Result<AngleLog, LoadError> {
    let _ = (name, bytes, opts);
    todo!("issue 2")
}
