//! The command line: clap arguments as typed, turned into library calls.
//!
//! This is the only module that prints or decides an exit code:
//! 0 success; 1 the data were read but the fit or comparison was rejected with a diagnosis;
//! 2 bad input, bad usage or an I/O failure.
//! Each subcommand lives in its own file under `cli/`.

#![allow(clippy::print_stdout, clippy::print_stderr)]

mod batch;
mod check;
mod compare;
pub mod fit;
mod plan;
mod runs;
pub mod sheet;
mod simulate;

use std::ffi::OsString;
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand};

use crate::data::LoadOptions;

/// Error that ends a command: the message printed, and the exit code.
#[derive(Debug)]
pub struct Failure {
    /// Exit code (1 rejected fit, 2 bad input or usage).
    pub code: u8,
    /// One-line message, printed after `swingfit: `.
    pub message: String,
}

impl Failure {
    /// Bad input, usage or I/O: exit 2.
    pub fn input(message: impl std::fmt::Display) -> Failure {
        Failure { code: 2, message: message.to_string() }
    }
    /// The data were read but the result is rejected: exit 1.
    pub fn rejected(message: impl std::fmt::Display) -> Failure {
        Failure { code: 1, message: message.to_string() }
    }
}

/// Result of a subcommand.
pub type CmdResult = Result<(), Failure>;

#[derive(Parser, Debug)]
#[command(
    name = "swingfit",
    version,
    about = "Moment of inertia and damping of a swinging test article, from its angle logs",
    after_help = crate::safety::SAFETY
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Load and validate one log and summarise it.
    Check(check::CheckArgs),
    /// Integrate the pendulum model and write a log.
    Simulate(simulate::SimulateArgs),
    /// Fit the logs of one article and report its coefficients with intervals.
    Fit(fit::FitArgs),
    /// Fit every candidate damping set and say which one explains the decay.
    Compare(compare::CompareArgs),
    /// Fit an article and write its coefficient sheet (HTML, Markdown, JSON and plots) to a directory.
    Sheet(sheet::SheetArgs),
    /// Fit many logs, one fit each, in parallel, and write a summary row per log.
    Batch(batch::BatchArgs),
    /// Predict the uncertainties of a test not yet run, or find the least test meeting targets.
    Plan(plan::PlanArgs),
}

/// Loader options shared by every command that reads logs.
#[derive(Args, Debug, Clone, Default)]
pub struct LoaderArgs {
    /// Time column: header name or 1-based index (default: detected from the header).
    #[arg(long, value_name = "NAME|N")]
    pub time_col: Option<String>,
    /// Angle column: header name or 1-based index (default: detected from the header).
    #[arg(long, value_name = "NAME|N")]
    pub angle_col: Option<String>,
    /// Time unit when the header does not state one: s, ms or us (never guessed).
    #[arg(long, value_name = "UNIT")]
    pub time_unit: Option<String>,
    /// Angle unit when the header does not state one: rad, mrad, deg, grad or counts.
    #[arg(long, value_name = "UNIT")]
    pub angle_unit: Option<String>,
    /// Encoder counts per revolution, counting edges (quadrature: 4 × lines).
    #[arg(long, value_name = "N")]
    pub counts_per_rev: Option<f64>,
    /// Encoder counter width in bits when its readings wrap (8, 16, 24 or 32): unwrap them.
    #[arg(long, value_name = "BITS")]
    pub counts_wrap: Option<u32>,
    /// Skip the first N lines of the file (a preamble above the header that is not found
    /// by itself).
    #[arg(long, value_name = "N")]
    pub skip_lines: Option<usize>,
    /// Samples per second, for a log with no time column (row k at k / HZ s); overrides a
    /// time column and a rate stated in the file.
    #[arg(long, value_name = "HZ")]
    pub rate: Option<f64>,
    /// Rows that repeat the time before: keep-first or mean (default: refuse, naming the line).
    #[arg(long, value_name = "keep-first|mean")]
    pub duplicate_times: Option<crate::data::DuplicateTimes>,
    /// Calibration of an angle column that logs a signal (a voltage): signal units per angle
    /// unit, e.g. 0.05V/deg; the angle is (signal - zero) / scale.
    #[arg(long, value_name = "VALUE[UNIT]/deg")]
    pub signal_scale: Option<crate::units::SignalScale>,
    /// Signal reading at zero angle, in the signal's unit (with --signal-scale; default 0).
    #[arg(long, value_name = "VALUE", allow_hyphen_values = true)]
    pub signal_zero: Option<f64>,
    /// Drop rows with unparseable or non-finite values (reported) instead of refusing the file.
    #[arg(long)]
    pub drop_bad_rows: bool,
    /// Fit from this time on the log's time axis [s] (default: the detected release).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub from: Option<f64>,
    /// Fit up to this time on the log's time axis [s] (default: the detected end of free motion).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub to: Option<f64>,
    /// Fit time-base slips as logged instead of re-timing them.
    #[arg(long)]
    pub keep_slips: bool,
}

impl LoaderArgs {
    /// The library's view of these options.
    pub fn options(&self) -> LoadOptions {
        LoadOptions {
            time_col: self.time_col.clone(),
            angle_col: self.angle_col.clone(),
            time_unit: self.time_unit.clone(),
            angle_unit: self.angle_unit.clone(),
            counts_per_rev: self.counts_per_rev,
            counts_wrap: self.counts_wrap,
            skip_lines: self.skip_lines,
            rate_hz: self.rate,
            duplicate_times: self.duplicate_times.unwrap_or_default(),
            signal_scale: self.signal_scale.clone(),
            signal_zero: self.signal_zero,
            drop_bad_rows: self.drop_bad_rows,
            from_s: self.from,
            to_s: self.to,
            keep_slips: self.keep_slips,
        }
    }
}

/// Run the program on `args` (including the program name) and return the exit code.
pub fn main<I, T>(args: I) -> ExitCode
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    let result = match cli.command {
        Command::Check(a) => check::run(&a),
        Command::Simulate(a) => simulate::run(&a),
        Command::Fit(a) => fit::run(&a),
        Command::Compare(a) => compare::run(&a),
        Command::Sheet(a) => sheet::run(&a),
        Command::Batch(a) => batch::run(&a),
        Command::Plan(a) => plan::run(&a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            eprintln!("swingfit: {}", f.message);
            ExitCode::from(f.code)
        }
    }
}
