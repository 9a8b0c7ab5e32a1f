//! Loading and validating timestamped angle logs.
//!
//! A log becomes an [`AngleLog`] only through this module, which guarantees: SI units (s, rad),
//! finite values, strictly increasing time, at least [`MIN_SAMPLES`] samples. Downstream code
//! takes `&AngleLog` and never checks again. Sample times are kept exactly as recorded: nothing
//! downstream may assume a fixed rate.

mod read;
pub use read::{MAX_PREAMBLE, Stated, is_rate_key};
pub mod segment;
pub mod slips;
pub mod survey;
pub mod write;

use std::path::Path;

use crate::units;

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
    layout: Layout,
}

/// Where a log's table was found in its file and where its times came from, for `check`.
#[derive(Clone, Debug, PartialEq)]
pub struct Layout {
    /// 1-based line of the header row; `None` for rows of angles with no header.
    pub header_line: Option<u64>,
    /// Content lines above the table (title, metadata) that were not read as data.
    pub preamble_lines: usize,
    /// Where the sample times come from.
    pub time: TimeBase,
    /// The angle column's header name (`None` without a header).
    pub angle_column: Option<String>,
    /// The signal calibration the angle was read through (`0.05V/deg`, zero 0.12), if any.
    pub signal: Option<String>,
    /// Rows merged or dropped because they repeated the time before (`--duplicate-times`).
    pub repeated_times: usize,
}

/// Where the sample times of a log come from.
#[derive(Clone, Debug, PartialEq)]
pub enum TimeBase {
    /// A time column, by its header name, in a unit.
    Column {
        /// Header name.
        name: String,
        /// Unit the column was read in.
        unit: units::TimeUnit,
    },
    /// Calendar timestamps (ISO 8601 / RFC 3339), as seconds from the first one.
    Stamps {
        /// Header name.
        name: String,
        /// The first stamp as written.
        first: String,
    },
    /// A steady sample rate: row k of the table is at k / hz seconds.
    Rate {
        /// Samples per second.
        hz: f64,
        /// Where the rate was given.
        source: RateSource,
    },
}

/// Where a sample rate was given.
#[derive(Clone, Debug, PartialEq)]
pub enum RateSource {
    /// On the command line (`--rate`) or as the run's `rate` key.
    Option,
    /// Stated in the file's preamble, at `line`, under the name `key`.
    Stated {
        /// 1-based line of the value.
        line: u64,
        /// The name the file gives it.
        key: String,
    },
}

impl Layout {
    /// The layout of samples given in memory (no file).
    fn samples() -> Layout {
        Layout {
            header_line: None,
            preamble_lines: 0,
            time: TimeBase::Column { name: "t".into(), unit: units::TimeUnit::Seconds },
            angle_column: None,
            signal: None,
            repeated_times: 0,
        }
    }

    /// One line saying where the times came from: `column 'time_s' in s`, `1000 Hz, stated at
    /// line 2 ('sample_rate')`, `500 Hz from --rate`.
    pub fn time_words(&self) -> String {
        match &self.time {
            TimeBase::Column { name, unit } => format!("column '{name}' in {unit}"),
            TimeBase::Stamps { name, first } => {
                format!("timestamps in column '{name}', as seconds from the first ({first})")
            }
            TimeBase::Rate { hz, source: RateSource::Option } => {
                format!("steady rate {hz} Hz given as an option (--rate or the run's rate key)")
            }
            TimeBase::Rate { hz, source: RateSource::Stated { line, key } } => {
                format!("steady rate {hz} Hz stated in the file at line {line} ('{key}')")
            }
        }
    }
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
            layout: Layout::samples(),
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
    /// Where the table was found in the file and where the times came from.
    pub fn layout(&self) -> &Layout {
        &self.layout
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
            layout: self.layout.clone(),
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
    /// Encoder counter width in bits (8, 16, 24 or 32) when its readings wrap: unwrapped on
    /// reading. Without it a jump of over half the counts range between samples is refused.
    pub counts_wrap: Option<u32>,
    /// Lines at the top of the file to skip before the header (a preamble the header
    /// detection does not see through); `None` finds the header (see [`read`]).
    pub skip_lines: Option<usize>,
    /// Samples per second of a log with no time column: row k is at k / rate. Overrides a time
    /// column and a rate the file states.
    pub rate_hz: Option<f64>,
    /// Drop unparseable or non-finite rows instead of refusing the file.
    pub drop_bad_rows: bool,
    /// What to do with rows that repeat the time of the row before.
    pub duplicate_times: DuplicateTimes,
    /// Calibration of an angle column that logs a signal proportional to the angle (a
    /// voltage): the angle is (signal − `signal_zero`) / scale. Replaces the angle unit.
    pub signal_scale: Option<units::SignalScale>,
    /// Signal reading at zero angle, in the signal's unit (default 0).
    pub signal_zero: Option<f64>,
    /// Fit from this time on the log's axis [s] instead of the detected release
    /// (see [`segment`]).
    pub from_s: Option<f64>,
    /// Fit up to this time on the log's axis [s] instead of the detected end of free motion.
    pub to_s: Option<f64>,
    /// Fit time-base slips as logged instead of re-timing them (see [`slips`]).
    pub keep_slips: bool,
}

/// What the loader does with a row whose time equals the row before.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum DuplicateTimes {
    /// Refuse the file at the repeated row, saying whether the times look rounded.
    #[default]
    Refuse,
    /// Keep the first row of each run of equal times, drop the others.
    KeepFirst,
    /// Replace each run of equal times by one sample with the mean angle.
    Mean,
}

impl DuplicateTimes {
    /// Parse `keep-first` or `mean` (also `keep_first`, `refuse`).
    pub fn parse(s: &str) -> Option<DuplicateTimes> {
        match s.trim().to_ascii_lowercase().replace('_', "-").as_str() {
            "refuse" => Some(DuplicateTimes::Refuse),
            "keep-first" => Some(DuplicateTimes::KeepFirst),
            "mean" => Some(DuplicateTimes::Mean),
            _ => None,
        }
    }
}

impl std::str::FromStr for DuplicateTimes {
    type Err = String;
    fn from_str(s: &str) -> Result<DuplicateTimes, String> {
        DuplicateTimes::parse(s)
            .ok_or_else(|| format!("{s:?}: expected keep-first or mean (or refuse, the default)"))
    }
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
    pub kind: LoadErrorKind,
}

/// What went wrong in loading a log, by kind; each prints as one lowercase line saying what
/// was found and what was expected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum LoadErrorKind {
    /// The file could not be read.
    #[error("cannot read file: {0}")]
    Io(String),
    /// No table found: empty file, no header, a single column, no data rows.
    #[error("{0}")]
    Layout(String),
    /// The time or angle column is missing, ambiguous or not there.
    #[error("{0}")]
    Column(String),
    /// A unit is missing, unknown or contradicted (including the signal calibration).
    #[error("{0}")]
    Unit(String),
    /// A loader option (or run key) is unusable or clashes with another.
    #[error("{0}")]
    Option(String),
    /// A field is not a number or timestamp, not finite, or a row is too short.
    #[error("{0}")]
    Value(String),
    /// A row repeats the time before (rounded times or a repeated sample).
    #[error("{0}")]
    RepeatedTime(String),
    /// A time is not after the one before.
    #[error(
        "time {time} s is not after {previous} s ({what} {previous_line}): expected strictly increasing time"
    )]
    NotIncreasing {
        /// The time at fault [s].
        time: f64,
        /// The time before it [s].
        previous: f64,
        /// `line` or `sample`: what `previous_line` counts.
        what: &'static str,
        /// Line (or sample) of the time before.
        previous_line: u64,
    },
    /// Fewer than [`MIN_SAMPLES`] samples.
    #[error("only {found} samples: expected at least {MIN_SAMPLES} to fit a swing")]
    TooFewSamples {
        /// Samples found.
        found: usize,
    },
    /// Fewer than [`MIN_MIDLINE_CROSSINGS`] midline crossings.
    #[error(
        "angle crosses its midline only {crossings} times: expected at least two swings ({MIN_MIDLINE_CROSSINGS} crossings)"
    )]
    TooFewSwings {
        /// Midline crossings found.
        crossings: usize,
    },
    /// The swing is not one a rig logs in the units read (a likely unit mix-up).
    #[error("{0}")]
    Implausible(String),
    /// A `--from`/`--to` window is outside the log or leaves too little.
    #[error("{0}")]
    Window(String),
    /// No free motion: at rest or driven throughout.
    #[error("{0}")]
    NoFreeMotion(String),
}

/// Read and validate the log at `path`.
pub fn load(path: &Path, opts: &LoadOptions) -> Result<AngleLog, LoadError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| LoadError {
        path: name.clone(),
        line: None,
        kind: LoadErrorKind::Io(e.to_string().to_lowercase()),
    })?;
    parse(&name, &bytes, opts)
}

/// Read the log at `path` and cut it to its free segments (see [`segment::free_runs`]): one
/// log per release, or the `from_s`/`to_s` window of `opts`. What was cut is in the notes.
pub fn load_runs(path: &Path, opts: &LoadOptions) -> Result<segment::FreeRuns, LoadError> {
    let log = load(path, opts)?;
    let mut slip_note = None;
    let log = if opts.keep_slips {
        let s = survey::survey(&log);
        if s.slips.count() > 0 {
            slip_note = Some(format!(
                "{}: {} time-base slips kept as logged (--keep-slips): {}; the residuals will show the logger's clock, not the damping",
                log.source(),
                s.slips.count(),
                slips::describe(&s.slips)
            ));
        }
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
    plausible(name, &table)?;
    Ok(AngleLog {
        source: name.to_string(),
        times: table.times,
        angles: table.angles,
        angle_step: table.angle_step,
        dropped_lines: table.dropped_lines,
        layout: table.layout,
    })
}

/// Swing periods a log may show [s]; outside, its time unit is almost surely wrong.
pub const PERIOD_RANGE_S: (f64, f64) = (0.05, 100.0);
/// Fewest samples per swing period (the Nyquist limit).
pub const MIN_SAMPLES_PER_PERIOD: f64 = 2.0;

/// Refuse a log whose swing is not one a pendulum rig logs in the units it was read in: period
/// outside [`PERIOD_RANGE_S`], under [`MIN_SAMPLES_PER_PERIOD`] samples a period, or a
/// deflection past ±180° from the equilibrium (the median angle). The message names the likely
/// unit mix-up and how to state the right unit. Units are never guessed: this only refuses.
fn plausible(name: &str, t: &read::Table) -> Result<(), LoadError> {
    use crate::units::{AngleUnit, TimeUnit};
    let err = |what: String| LoadError {
        path: name.to_string(),
        line: None,
        kind: LoadErrorKind::Implausible(what),
    };
    let crossings = midline_crossing_times(&t.times, &t.angles);
    if let (Some(first), Some(last)) = (crossings.first(), crossings.last())
        && crossings.len() >= 2
        && is_smooth(&t.angles)
    {
        let period = 2.0 * (last - first) / (crossings.len() - 1) as f64;
        let (lo, hi) = PERIOD_RANGE_S;
        if !(lo..=hi).contains(&period) {
            let as_read = t.time_unit.to_seconds();
            let fits = |u: TimeUnit| (lo..=hi).contains(&(period / as_read * u.to_seconds()));
            let likely = [TimeUnit::Seconds, TimeUnit::Millis, TimeUnit::Micros]
                .into_iter()
                .find(|&u| u != t.time_unit && fits(u));
            let hint = match likely {
                Some(u) => format!(
                    "times look like {} read as {}: give --time-unit {u} or name the column time_{u}",
                    time_unit_words(u),
                    time_unit_words(t.time_unit)
                ),
                None => "check the time column and its unit (--time-unit s|ms|us)".to_string(),
            };
            return Err(err(format!(
                "swing period {} s (times read in {}) is outside {lo} to {hi} s; {hint}",
                sig(period),
                t.time_unit
            )));
        }
        let mut dt: Vec<f64> = t.times.windows(2).map(|w| w[1] - w[0]).collect();
        let m = dt.len() / 2;
        if m < dt.len() {
            let (_, med, _) = dt.select_nth_unstable_by(m, f64::total_cmp);
            let per = period / *med;
            if per < MIN_SAMPLES_PER_PERIOD {
                return Err(err(format!(
                    "only {} samples per swing period of {} s: expected at least {MIN_SAMPLES_PER_PERIOD} (the swing is aliased); log faster, or check the time unit",
                    sig(per),
                    sig(period)
                )));
            }
        }
    }
    let mut sorted = t.angles.clone();
    let m = sorted.len() / 2;
    if m < sorted.len() {
        let (_, mid, _) = sorted.select_nth_unstable_by(m, f64::total_cmp);
        let mid = *mid;
        let reach = t.angles.iter().map(|a| (a - mid).abs()).fold(0.0, f64::max);
        if reach > std::f64::consts::PI {
            let raw = reach / t.angle_unit.to_radians(Some(1.0)).unwrap_or(1.0);
            let hint = match t.angle_unit {
                AngleUnit::Radians if raw.to_radians() <= std::f64::consts::PI => {
                    "angles look like degrees read as radians: give --angle-unit deg or name the column angle_deg".to_string()
                }
                AngleUnit::Radians | AngleUnit::Degrees | AngleUnit::Gradians
                    if raw * 1e-3 <= std::f64::consts::PI =>
                {
                    format!(
                        "angles look like milliradians read as {}: give --angle-unit mrad or name the column angle_mrad",
                        t.angle_unit
                    )
                }
                AngleUnit::Counts => "angles look like encoder counts with the wrong --counts-per-rev: give the edges per revolution (quadrature: 4 per line), or --counts-wrap BITS if the counter wraps".to_string(),
                _ => format!(
                    "check the angle column and its unit (read as {}; --angle-unit rad|mrad|deg|grad|counts)",
                    t.angle_unit
                ),
            };
            return Err(err(format!(
                "angle reaches {} deg from the equilibrium (read in {}), past ±180 deg; {hint}",
                sig(reach.to_degrees()),
                t.angle_unit
            )));
        }
    }
    Ok(())
}

/// Whether the angle moves smoothly from sample to sample, so its midline crossings time a
/// swing: the RMS step is under half the √2 × RMS deflection that sensor noise alone would
/// give (a swing with over about 12 samples a period). A log at rest, all noise, is not, and its
/// crossings say nothing about the time unit (the segmentation refuses it, saying why).
fn is_smooth(angles: &[f64]) -> bool {
    let n = angles.len() as f64;
    let mean = angles.iter().sum::<f64>() / n;
    let var = angles.iter().map(|a| (a - mean).powi(2)).sum::<f64>() / n;
    let step = angles.windows(2).map(|w| (w[1] - w[0]).powi(2)).sum::<f64>() / (n - 1.0).max(1.0);
    step < 0.25 * 2.0 * var
}

fn time_unit_words(u: crate::units::TimeUnit) -> &'static str {
    match u {
        crate::units::TimeUnit::Seconds => "seconds",
        crate::units::TimeUnit::Millis => "milliseconds",
        crate::units::TimeUnit::Micros => "microseconds",
    }
}

/// Four significant figures, for messages.
fn sig(x: f64) -> String {
    if x != 0.0 && (x.abs() >= 1e5 || x.abs() < 1e-3) {
        format!("{x:.3e}")
    } else {
        let d = (3 - x.abs().log10().floor() as i32).clamp(0, 6) as usize;
        format!("{x:.d$}")
    }
}

/// Times of the midline crossings counted by [`midline_crossings`] (the sample at which the
/// angle is first seen on the new side).
fn midline_crossing_times(times: &[f64], angles: &[f64]) -> Vec<f64> {
    let (lo, hi) = angles
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)));
    let range = hi - lo;
    let mut out = Vec::new();
    if !(range.is_finite() && range > 0.0) {
        return out;
    }
    let mut sorted = angles.to_vec();
    let m = sorted.len() / 2;
    let (_, mid, _) = sorted.select_nth_unstable_by(m, f64::total_cmp);
    let mid = *mid;
    let h = 0.05 * range;
    let mut side = 0i8;
    for (&t, &a) in times.iter().zip(angles) {
        let s = if a > mid + h {
            1
        } else if a < mid - h {
            -1
        } else {
            0
        };
        if s != 0 {
            if side != 0 && s != side {
                out.push(t);
            }
            side = s;
        }
    }
    out
}

/// Crossings of the midline needed for "two swings": a full swing crosses it twice.
pub const MIN_MIDLINE_CROSSINGS: usize = 4;

/// Count crossings of the midline, the median angle, with a hysteresis h of 5 % of the range
/// (θmax−θmin) on each side, so noise alone cannot add crossings: a crossing counts only when
/// the angle passes from below `mid − h` to above `mid + h` or back. (The median, not the
/// midrange, because the first swing of a decaying log would pull the midrange off centre.)
pub fn midline_crossings(angles: &[f64]) -> usize {
    let index: Vec<f64> = (0..angles.len()).map(|i| i as f64).collect();
    midline_crossing_times(&index, angles).len()
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
    let err =
        |line: Option<u64>, kind: LoadErrorKind| LoadError { path: source.to_string(), line, kind };
    if times.len() != angles.len() {
        return Err(err(
            None,
            LoadErrorKind::Value(format!(
                "expected as many angles as times, found {} times and {} angles",
                times.len(),
                angles.len()
            )),
        ));
    }
    let line_of = |i: usize| lines.get(i).copied().unwrap_or(i as u64 + 1);
    for (i, (&t, &a)) in times.iter().zip(angles).enumerate() {
        if !t.is_finite() {
            let what = format!("expected a finite time, found {t}");
            return Err(err(Some(line_of(i)), LoadErrorKind::Value(what)));
        }
        if !a.is_finite() {
            let what = format!("expected a finite angle, found {a}");
            return Err(err(Some(line_of(i)), LoadErrorKind::Value(what)));
        }
    }
    for i in 1..times.len() {
        if times[i] <= times[i - 1] {
            return Err(err(
                Some(line_of(i)),
                LoadErrorKind::NotIncreasing {
                    time: times[i],
                    previous: times[i - 1],
                    what: if what == "sample" { "sample" } else { "line" },
                    previous_line: line_of(i - 1),
                },
            ));
        }
    }
    if times.len() < MIN_SAMPLES {
        let line = if times.is_empty() { None } else { Some(line_of(times.len() - 1)) };
        return Err(err(line, LoadErrorKind::TooFewSamples { found: times.len() }));
    }
    let n = midline_crossings(angles);
    if n < MIN_MIDLINE_CROSSINGS {
        return Err(err(None, LoadErrorKind::TooFewSwings { crossings: n }));
    }
    Ok(())
}
