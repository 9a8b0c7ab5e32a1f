//! `swingfit simulate`: integrate the model and write a log the loader reads.
//!
//! The parameters come from a params JSON or a fit result (`report::wire::params`); the sample times from
//! `--duration`/`--rate` or from an existing log (`--times`, so that a fitted model can be
//! replayed over the measurement). Everything is checked and computed before anything is
//! written, and `--out` is written atomically, so a bad input never leaves an output file.

use std::io::Write as _;
use std::path::PathBuf;

use clap::{ArgGroup, Args, ValueEnum};

use super::{CmdResult, Failure};
use crate::data::write::{self, LogFormat, OutputUnit};
use crate::data::{self, LoadOptions};
use crate::integrate::{self, Method};
use crate::model::Term;
use crate::report::atomic::write_atomic;
use crate::report::wire::params;

/// Relative tolerance of the default Dormand–Prince integration.
pub const DP_RTOL: f64 = 1e-12;
/// Absolute tolerance of the default Dormand–Prince integration [rad, rad/s].
pub const DP_ATOL: f64 = 1e-14;
/// RK4 sub-step as a fraction of the natural period's radian, 1/ωn: 0.005/ωn (≈ 1250 steps per
/// small-amplitude period).
pub const RK4_STEP_PER_RADIAN: f64 = 0.005;
/// Most samples one run may write (guards against `--rate 1e12`).
pub const MAX_SAMPLES: f64 = 50_000_000.0;

/// The integrator `simulate` uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum, Default)]
pub enum Integrator {
    /// Adaptive Dormand–Prince 5(4), rtol 1e-12, atol 1e-14.
    #[default]
    Dp54,
    /// Classical RK4 with sub-steps of at most 0.005/ωn seconds.
    Rk4,
}

/// Unit of the written angle column.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum, Default)]
pub enum AngleUnitArg {
    /// Radians (`time_s,angle_rad`).
    #[default]
    Rad,
    /// Degrees (`time_s,angle_deg`).
    Deg,
    /// Whole encoder counts (`time_s,counts`); needs --counts-per-rev.
    Counts,
}

/// Arguments of `simulate`.
#[derive(Args, Debug)]
#[command(group(ArgGroup::new("sampling").required(true).args(["duration", "times"])))]
pub struct SimulateArgs {
    /// Parameters (JSON, per unit inertia), or the JSON written by `fit --json`.
    #[arg(long, value_name = "FILE")]
    pub params: std::path::PathBuf,
    /// Output file (default: standard output).
    #[arg(long, short, value_name = "FILE")]
    pub out: Option<std::path::PathBuf>,
    /// Length of the simulated log [s], sampled at --rate from t = 0.
    #[arg(long, value_name = "S", requires = "rate", allow_negative_numbers = true)]
    pub duration: Option<f64>,
    /// Sampling rate [Hz] for --duration.
    #[arg(long, value_name = "HZ", requires = "duration", allow_negative_numbers = true)]
    pub rate: Option<f64>,
    /// Take the sample times of this log (the release is at its first time).
    #[arg(long, value_name = "LOG.csv", conflicts_with_all = ["duration", "rate"])]
    pub times: Option<PathBuf>,
    /// Time column of the --times log: header name or 1-based index.
    #[arg(long, value_name = "NAME|N", requires = "times")]
    pub time_col: Option<String>,
    /// Angle column of the --times log: header name or 1-based index.
    #[arg(long, value_name = "NAME|N", requires = "times")]
    pub angle_col: Option<String>,
    /// Time unit of the --times log when its header has no suffix: s, ms or us.
    #[arg(long, value_name = "UNIT", requires = "times")]
    pub time_unit: Option<String>,
    /// Drop unparseable rows of the --times log instead of refusing it.
    #[arg(long, requires = "times")]
    pub drop_bad_rows: bool,
    /// Unit of the written angle column.
    #[arg(long, value_enum, default_value_t = AngleUnitArg::Rad)]
    pub angle_unit: AngleUnitArg,
    /// Encoder counts per revolution (edges; quadrature: 4 × lines): the count step of
    /// --angle-unit counts; also the scale of a counts log read by --times.
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub counts_per_rev: Option<f64>,
    /// Standard deviation of Gaussian noise added to the angle, before quantisation [deg].
    #[arg(long, value_name = "SD", default_value_t = 0.0, allow_negative_numbers = true)]
    pub noise_deg: f64,
    /// Seed of the noise generator.
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub seed: u64,
    /// Integration scheme.
    #[arg(long, value_enum, default_value_t = Integrator::Dp54)]
    pub integrator: Integrator,
    /// Run of a fit result to replay (0-based).
    #[arg(long, value_name = "N")]
    pub run: Option<usize>,
}

/// Check a number given on the command line.
fn positive(name: &str, v: f64) -> Result<f64, Failure> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(Failure::input(format!("--{name} must be a finite number > 0, found {v}")))
    }
}

/// Uniform sample times 0, 1/rate, …, up to and including `duration` (within rounding).
fn uniform_times(duration: f64, rate: f64) -> Result<Vec<f64>, Failure> {
    let duration = positive("duration", duration)?;
    let rate = positive("rate", rate)?;
    let last = (duration * rate * (1.0 + 1e-12)).floor();
    if last + 1.0 > MAX_SAMPLES {
        return Err(Failure::input(format!(
            "--duration {duration} at --rate {rate} gives more than {MAX_SAMPLES} samples"
        )));
    }
    if last < 1.0 {
        return Err(Failure::input(format!(
            "--duration {duration} at --rate {rate} gives fewer than 2 samples"
        )));
    }
    // Casting is exact: last is a whole number in [1, MAX_SAMPLES].
    Ok((0..=last as u64).map(|i| i as f64 / rate).collect())
}

/// Run `simulate`.
pub fn run(args: &SimulateArgs) -> CmdResult {
    // Everything the command line says is checked before any work.
    let unit = match args.angle_unit {
        AngleUnitArg::Rad => OutputUnit::Rad,
        AngleUnitArg::Deg => OutputUnit::Deg,
        AngleUnitArg::Counts => OutputUnit::Counts,
    };
    if let Some(n) = args.counts_per_rev {
        positive("counts-per-rev", n)?;
    } else if unit == OutputUnit::Counts {
        return Err(Failure::input("--angle-unit counts needs --counts-per-rev"));
    }
    if !(args.noise_deg.is_finite() && args.noise_deg >= 0.0) {
        return Err(Failure::input(format!(
            "--noise-deg must be a finite number >= 0, found {}",
            args.noise_deg
        )));
    }
    let p = params::read(&args.params, args.run).map_err(Failure::input)?;

    let (times, source) = match (&args.times, args.duration, args.rate) {
        (Some(path), _, _) => {
            let opts = LoadOptions {
                time_col: args.time_col.clone(),
                angle_col: args.angle_col.clone(),
                time_unit: args.time_unit.clone(),
                angle_unit: None,
                counts_per_rev: args.counts_per_rev,
                drop_bad_rows: args.drop_bad_rows,
                ..LoadOptions::default()
            };
            let log = data::load(path, &opts).map_err(Failure::input)?;
            (log.times().to_vec(), format!("times={}", path.display()))
        }
        (None, Some(d), Some(r)) => (uniform_times(d, r)?, format!("duration={d} rate={r}")),
        // clap's "sampling" group and `requires` make this unreachable; still no panic.
        _ => return Err(Failure::input("give --duration S --rate HZ, or --times LOG.csv")),
    };

    let method = match args.integrator {
        Integrator::Dp54 => Method::DormandPrince { rtol: DP_RTOL, atol: DP_ATOL },
        Integrator::Rk4 => Method::Rk4 { max_step: RK4_STEP_PER_RADIAN / p.physics.omega_n },
    };
    let traj = integrate::simulate(&p.physics, &p.release, &times, method).map_err(|e| {
        Failure::input(format!("{}: integration failed: {e}", args.params.display()))
    })?;

    let ph = &p.physics;
    let mut coefs: Vec<String> =
        Term::ALL.iter().map(|t| format!("{}={}", t, ph.coef(*t))).collect();
    coefs.push(format!("breakaway={}", ph.static_level()));
    let comment = format!(
        "made by swingfit {} simulate: params={} omega_n={} {} equilibrium={} initial_angle={} \
         initial_velocity={} {source} integrator={} angle_unit={}{} noise_deg={} seed={}",
        env!("CARGO_PKG_VERSION"),
        args.params.display(),
        ph.omega_n,
        coefs.join(" "),
        p.release.equilibrium,
        p.release.angle,
        p.release.velocity,
        match args.integrator {
            Integrator::Dp54 => "dp54",
            Integrator::Rk4 => "rk4",
        },
        unit.name(),
        args.counts_per_rev.map(|n| format!(" counts_per_rev={n}")).unwrap_or_default(),
        args.noise_deg,
        args.seed,
    );
    let format = LogFormat {
        unit,
        counts_per_rev: args.counts_per_rev,
        noise_sd_rad: args.noise_deg.to_radians(),
        seed: args.seed,
        comments: vec![comment],
    };
    let bytes = write::render(&traj.times, &traj.angle, &format).map_err(|e| {
        Failure::input(format!("{}: cannot write the log: {e}", args.params.display()))
    })?;

    match &args.out {
        Some(path) => write_atomic(path, &bytes)
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display()))),
        None => {
            let mut out = std::io::stdout().lock();
            match out.write_all(&bytes).and_then(|()| out.flush()) {
                // A reader that stops early (`| head`) is not an error.
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                r => r.map_err(|e| Failure::input(format!("standard output: {e}"))),
            }
        }
    }
}
