//! Loading and validating timestamped angle logs.
//!
//! A log becomes an [`AngleLog`] only through this module, which guarantees: SI units (s, rad),
//! finite values, strictly increasing time, at least [`MIN_SAMPLES`] samples. Downstream code
//! takes `&AngleLog` and never checks again. Sample times are kept exactly as recorded: nothing
//! downstream may assume a fixed rate.

mod read;
pub mod segment;
pub mod slips;
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
    /// In errors, `line` is the 1-based sample index.
    pub fn from_samples(
        source: &str,
        times: Vec<f64>,
        angles: Vec<f64>,
    ) -> Result<AngleLog, LoadError> {
        let lines: Vec<u64> = (1..=times.len() as u64).collect();
        validate(source, &times, &angles, &lines, "sample")?;
        Ok(AngleLog {
            source: source.to_string(),
            times,
            angles,
            angle_step: None,
            dropped_lines: Vec::new(),
        })
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

    /// Samples `start..end` as a log of their own named `source`, with the same checks as the
    /// loader (so a slice too short or without two swings is refused). Keeps the encoder step.
    pub fn slice(&self, start: usize, end: usize, source: String) -> Result<AngleLog, LoadError> {
        let end = end.min(self.len());
        let start = start.min(end);
        let times = self.times[start..end].to_vec();
        let angles = self.angles[start..end].to_vec();
        let lines: Vec<u64> = (start as u64 + 1..=end as u64).collect();
        validate(&source, &times, &angles, &lines, "sample")?;
        Ok(AngleLog {
            source,
            times,
            angles,
            angle_step: self.angle_step,
            dropped_lines: self.dropped_lines.clone(),
        })
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
    /// Fit from this time on the log's axis [s] instead of the detected release
    /// (see [`segment`]).
    pub from_s: Option<f64>,
    /// Fit up to this time on the log's axis [s] instead of the detected end of free motion.
    pub to_s: Option<f64>,
    /// Fit time-base slips as logged instead of re-timing them (see [`slips`]).
    pub keep_slips: bool,
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
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| LoadError {
        path: name.clone(),
        line: None,
        kind: format!("cannot read file: {}", e.to_string().to_lowercase()),
    })?;
    parse(&name, &bytes, opts)
}

/// Read the log at `path` and cut it to its free segments (see [`segment::free_runs`]): one
/// log per release, or the `from_s`/`to_s` window of `opts`. What was cut is in the notes.
pub fn load_runs(path: &Path, opts: &LoadOptions) -> Result<segment::FreeRuns, LoadError> {
    let log = load(path, opts)?;
    let mut slip_note = None;
    let log = if opts.keep_slips {
        log
    } else {
        let s = survey::survey(&log);
        if s.slips.count() > 0 {
            slip_note = Some(format!(
                "{}: {} time-base slips re-timed ({}); --keep-slips fits them as logged",
                log.source(),
                s.slips.count(),
                slips::describe(&s.slips)
            ));
        }
        slips::retime(&log, &s.slips)?
    };
    let mut runs =
        segment::free_runs(&log, segment::Window { from_s: opts.from_s, to_s: opts.to_s })?;
    if let Some(n) = slip_note {
        runs.notes.insert(0, n);
    }
    Ok(runs)
}

/// Parse and validate log bytes; `name` is used in messages. Never panics, on any input.
pub fn parse(name: &str, bytes: &[u8], opts: &LoadOptions) -> Result<AngleLog, LoadError> {
    let table = read::read(name, bytes, opts)?;
    validate(name, &table.times, &table.angles, &table.lines, "line")?;
    Ok(AngleLog {
        source: name.to_string(),
        times: table.times,
        angles: table.angles,
        angle_step: table.angle_step,
        dropped_lines: table.dropped_lines,
    })
}

/// Crossings of the midline needed for "two swings": a full swing crosses it twice.
pub const MIN_MIDLINE_CROSSINGS: usize = 4;

/// Count crossings of the midline, the median angle, with a hysteresis h of 5 % of the range
/// (θmax−θmin) on each side, so noise alone cannot add crossings: a crossing counts only when
/// the angle passes from below `mid − h` to above `mid + h` or back. (The median, not the
/// midrange, because the first swing of a decaying log would pull the midrange off centre.)
pub fn midline_crossings(angles: &[f64]) -> usize {
    let (lo, hi) = angles
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)));
    let range = hi - lo;
    if !(range.is_finite() && range > 0.0) {
        return 0;
    }
    let mut sorted = angles.to_vec();
    let m = sorted.len() / 2;
    let (_, mid, _) = sorted.select_nth_unstable_by(m, f64::total_cmp);
    let mid = *mid;
    let h = 0.05 * range;
    let mut side = 0i8;
    let mut n = 0;
    for &a in angles {
        let s = if a > mid + h {
            1
        } else if a < mid - h {
            -1
        } else {
            0
        };
        if s != 0 {
            if side != 0 && s != side {
                n += 1;
            }
            side = s;
        }
    }
    n
}

/// The checks every log passes: same length, finite, strictly increasing time, at least
/// [`MIN_SAMPLES`] samples and at least two swings. `lines[i]` names sample `i` in messages.
fn validate(
    source: &str,
    times: &[f64],
    angles: &[f64],
    lines: &[u64],
    what: &str,
) -> Result<(), LoadError> {
    let err = |line: Option<u64>, kind: String| LoadError { path: source.to_string(), line, kind };
    if times.len() != angles.len() {
        return Err(err(
            None,
            format!(
                "expected as many angles as times, found {} times and {} angles",
                times.len(),
                angles.len()
            ),
        ));
    }
    let line_of = |i: usize| lines.get(i).copied().unwrap_or(i as u64 + 1);
    for (i, (&t, &a)) in times.iter().zip(angles).enumerate() {
        if !t.is_finite() {
            return Err(err(Some(line_of(i)), format!("expected a finite time, found {t}")));
        }
        if !a.is_finite() {
            return Err(err(Some(line_of(i)), format!("expected a finite angle, found {a}")));
        }
    }
    for i in 1..times.len() {
        if times[i] <= times[i - 1] {
            return Err(err(
                Some(line_of(i)),
                format!(
                    "time {} s is not after {} s ({what} {}): expected strictly increasing time",
                    times[i],
                    times[i - 1],
                    line_of(i - 1)
                ),
            ));
        }
    }
    if times.len() < MIN_SAMPLES {
        let line = if times.is_empty() { None } else { Some(line_of(times.len() - 1)) };
        return Err(err(
            line,
            format!("only {} samples: expected at least {MIN_SAMPLES} to fit a swing", times.len()),
        ));
    }
    let n = midline_crossings(angles);
    if n < MIN_MIDLINE_CROSSINGS {
        return Err(err(
            None,
            format!(
                "angle crosses its midline only {n} times: expected at least two swings ({MIN_MIDLINE_CROSSINGS} crossings)"
            ),
        ));
    }
    Ok(())
}
