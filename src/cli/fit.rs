//! `swingfit fit LOG [LOG…]`: the main job. Fits the logs of one article jointly and prints the
//! coefficient table; `--json FILE` writes the `swingfit.fit.v2` document.

use std::path::PathBuf;

use clap::Args;

use super::{CmdResult, Failure, LoaderArgs};
use crate::data::{AngleLog, LoadOptions};
use crate::fit::workflow::{self, Chosen, DampingChoice};
use crate::fit::{FitOptions, FitOutcome};
use crate::model::DampingSet;
use crate::physical::{self, ArticleInputs, Gravity, Measured, PhysicalCoefficients};
use crate::report::wire::{self, fit as json};
use crate::report::{atomic, plot, table};

/// The article's mass properties and the local gravity, for physical coefficients.
#[derive(Args, Debug, Clone, Default)]
pub struct ArticleArgs {
    /// Mass of the swinging article [kg].
    #[arg(long, value_name = "KG", allow_hyphen_values = true)]
    pub mass: Option<f64>,
    /// Standard uncertainty of the mass [kg] (without it the mass is taken as exact, and said so).
    #[arg(long, value_name = "KG", allow_hyphen_values = true)]
    pub mass_std: Option<f64>,
    /// Distance from the pivot axis to the centre of gravity [m].
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub pivot_to_cg: Option<f64>,
    /// Standard uncertainty of the pivot-to-CG distance [m] (without it: taken as exact).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub pivot_to_cg_std: Option<f64>,
    /// Local gravity [m/s²] (default: standard gravity 9.80665, or from --latitude).
    #[arg(long, value_name = "M/S2", conflicts_with = "latitude", allow_hyphen_values = true)]
    pub gravity: Option<f64>,
    /// Standard uncertainty of --gravity or of the --latitude normal gravity [m/s²].
    #[arg(long, value_name = "M/S2", allow_hyphen_values = true)]
    pub gravity_std: Option<f64>,
    /// Geodetic latitude of the rig [deg], for normal gravity (WGS 84).
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    pub latitude: Option<f64>,
    /// Elevation of the rig above the ellipsoid [m], with --latitude.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub elevation: Option<f64>,
}

/// Most bootstrap refits accepted, so that a command ends in bounded time.
pub const MAX_BOOTSTRAP: usize = 1000;

/// Options of the estimator shared by `fit`, `compare`, `sheet` and `batch`.
#[derive(Args, Debug, Clone)]
pub struct EstimatorArgs {
    /// Damping terms to fit: any of viscous, coulomb, quadratic, comma separated, or "auto"
    /// (the default: compare every set and fit the one the comparison selects).
    #[arg(long, value_name = "TERMS|auto")]
    pub damping: Option<String>,
    /// Moving-block bootstrap replicates for the intervals (0: analytic intervals).
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub bootstrap: usize,
    /// Seed of the bootstrap.
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seed: u64,
}

impl EstimatorArgs {
    /// The damping choice: the given set, or automatic (no --damping, or "auto").
    pub fn choice(&self) -> Result<DampingChoice, Failure> {
        match self.damping.as_deref().map(str::trim) {
            None => Ok(DampingChoice::Auto),
            Some(w) if w.eq_ignore_ascii_case("auto") => Ok(DampingChoice::Auto),
            Some(w) => DampingSet::parse(w)
                .map(DampingChoice::Terms)
                .map_err(|e| Failure::input(format!("--damping: {e}, or \"auto\""))),
        }
    }

    /// The library's fit options (damping: the given set, or the default set for `auto`,
    /// which the workflow replaces by the one it chooses).
    pub fn options(&self) -> Result<FitOptions, Failure> {
        if self.bootstrap > MAX_BOOTSTRAP {
            return Err(Failure::input(format!(
                "--bootstrap {}: at most {MAX_BOOTSTRAP} refits (each is a whole fit; a few hundred already give the interval to a few per cent)",
                self.bootstrap
            )));
        }
        let damping = match self.choice()? {
            DampingChoice::Terms(set) => set,
            DampingChoice::Auto => crate::fit::default_damping(),
        };
        Ok(FitOptions {
            damping,
            bootstrap: (self.bootstrap > 0).then_some(self.bootstrap),
            seed: self.seed,
            ..FitOptions::default()
        })
    }
}

/// Arguments of `fit`.
#[derive(Args, Debug)]
pub struct FitArgs {
    /// Logs of one article (CSV), fitted jointly.
    #[arg(required_unless_present = "runs")]
    pub logs: Vec<PathBuf>,
    /// A log with its own loader settings, repeated for each log (instead of LOG… and the
    /// loader options): the keys of an article file's [[run]] table.
    #[arg(long = "run", value_name = "LOG[:KEY=VALUE,...]", conflicts_with_all = RUN_CONFLICTS)]
    pub runs: Vec<String>,
    /// Loader options.
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Estimator options.
    #[command(flatten)]
    pub estimator: EstimatorArgs,
    /// Mass properties and gravity.
    #[command(flatten)]
    pub article: ArticleArgs,
    /// Write the fit as JSON (schema swingfit.fit.v2) to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Draw the measured angle with the fitted model to FILE (.svg or .png).
    #[arg(long, value_name = "FILE.svg|FILE.png")]
    pub plot: Option<PathBuf>,
    /// Print the GUM uncertainty budget of every physical value (needs --mass and --pivot-to-cg).
    #[arg(long)]
    pub budget: bool,
}

/// What `--run` cannot be combined with: logs given otherwise, or loader options for all logs.
pub const RUN_CONFLICTS: [&str; 16] = [
    "logs",
    "time_col",
    "angle_col",
    "time_unit",
    "angle_unit",
    "counts_per_rev",
    "counts_wrap",
    "skip_lines",
    "rate",
    "duplicate_times",
    "signal_scale",
    "signal_zero",
    "drop_bad_rows",
    "from",
    "to",
    "keep_slips",
];

/// The logs of the command: every `--run` with its own settings, or the LOGs with the loader
/// options; loaded, or fail on the first bad one.
pub fn load_given(
    runs: &[String],
    paths: &[PathBuf],
    loader: &LoaderArgs,
) -> Result<Vec<AngleLog>, Failure> {
    if runs.is_empty() {
        load_all(paths, loader)
    } else {
        load_each(&super::runs::parse_all(runs)?)
    }
}

/// Load every log, or fail on the first bad one.
pub fn load_all(paths: &[PathBuf], loader: &LoaderArgs) -> Result<Vec<AngleLog>, Failure> {
    let opts = loader.options();
    let each: Vec<(PathBuf, LoadOptions)> =
        paths.iter().map(|p| (p.clone(), opts.clone())).collect();
    load_each(&each)
}

/// Load every log with its own settings, or fail on the first bad one.
pub fn load_each(logs: &[(PathBuf, LoadOptions)]) -> Result<Vec<AngleLog>, Failure> {
    logs.iter()
        .map(|(p, opts)| {
            let found = crate::data::load_runs(p, opts).map_err(Failure::input)?;
            let dropped = found.runs.first().map_or(0, |l| l.dropped_lines().len());
            if dropped > 0 {
                eprintln!(
                    "swingfit: {}: dropped {} bad row{} (--drop-bad-rows)",
                    p.display(),
                    dropped,
                    if dropped == 1 { "" } else { "s" }
                );
            }
            for note in &found.notes {
                eprintln!("swingfit: note: {note}");
            }
            Ok(found.runs)
        })
        .collect::<Result<Vec<Vec<AngleLog>>, Failure>>()
        .map(|v| v.into_iter().flatten().collect())
}

/// The article's physical inputs, when mass and pivot-to-CG are both given.
pub fn article(args: &ArticleArgs) -> Result<Option<ArticleInputs>, Failure> {
    // An uncertainty, or a qualifier, without the value it belongs to is a mistake, not a no-op.
    for (given, option, needs) in [
        (args.mass_std.is_some() && args.mass.is_none(), "--mass-std", "--mass"),
        (
            args.pivot_to_cg_std.is_some() && args.pivot_to_cg.is_none(),
            "--pivot-to-cg-std",
            "--pivot-to-cg",
        ),
        (
            args.gravity_std.is_some() && args.gravity.is_none() && args.latitude.is_none(),
            "--gravity-std",
            "--gravity or --latitude",
        ),
        (args.elevation.is_some() && args.latitude.is_none(), "--elevation", "--latitude"),
    ] {
        if given {
            return Err(Failure::input(format!(
                "{option} was given without {needs}: give the value it belongs to, or drop {option}"
            )));
        }
    }
    let gravity_std = args.gravity_std.unwrap_or(0.0);
    match (args.mass, args.pivot_to_cg) {
        (None, None) => Ok(None),
        (Some(_), None) | (None, Some(_)) => Err(Failure::input(
            "--mass and --pivot-to-cg go together: give both for physical coefficients",
        )),
        (Some(m), Some(d)) => {
            let gravity = match (args.gravity, args.latitude) {
                (Some(g), _) => Gravity::given(g, gravity_std),
                (None, Some(lat)) => {
                    Gravity::at_location(lat, args.elevation.unwrap_or(0.0), gravity_std)
                }
                (None, None) => Ok(Gravity::standard()),
            }
            .map_err(|e| Failure::input(format!("gravity: {e}")))?;
            let inputs = ArticleInputs {
                mass: Measured { value: m, u: args.mass_std.unwrap_or(0.0) },
                pivot_to_cg: Measured { value: d, u: args.pivot_to_cg_std.unwrap_or(0.0) },
                gravity,
                r_mass_pivot: 0.0,
            };
            physical::check_article(&inputs).map_err(Failure::input)?;
            Ok(Some(inputs))
        }
    }
}

/// Physical coefficients of a fit.
pub fn physical_of(
    fit: &FitOutcome,
    article: Option<&ArticleInputs>,
) -> Result<Option<PhysicalCoefficients>, Failure> {
    article
        .map(|a| physical::physical_coefficients(a, &fit.dynamics()).map_err(Failure::rejected))
        .transpose()
}

/// The exit of a command whose fit was printed: status 3 when the model does not explain the
/// log (the numbers were printed under the not-a-calibration banner).
pub fn adequacy_exit(fit: &FitOutcome) -> CmdResult {
    if fit.adequacy.verdict == crate::fit::adequacy::Adequacy::NotExplained {
        Err(Failure {
            code: 3,
            message: "the model does not explain the log: the numbers printed are not a calibration (see the adequacy line)".into(),
        })
    } else {
        Ok(())
    }
}

/// Choose the damping (or take the given set) and fit.
pub fn choose_and_fit(logs: &[AngleLog], estimator: &EstimatorArgs) -> Result<Chosen, Failure> {
    let choice = estimator.choice()?;
    let base = estimator.options()?;
    workflow::choose_and_fit(logs, choice, &base).map_err(Failure::rejected)
}

/// Run `fit`.
pub fn run(args: &FitArgs) -> CmdResult {
    args.estimator.options()?;
    if let Some(p) = &args.plot {
        plot::check_chart_path(p).map_err(Failure::input)?;
    }
    let article = article(&args.article)?;
    if args.budget && article.is_none() {
        return Err(Failure::input(
            "--budget needs the physical inputs: give --mass and --pivot-to-cg (with their --mass-std and --pivot-to-cg-std)",
        ));
    }
    let logs = load_given(&args.runs, &args.logs, &args.loader)?;
    let chosen = choose_and_fit(&logs, &args.estimator)?;
    let outcome = &chosen.outcome;
    let choice = crate::report::verdict::choice_line(&chosen);
    let physical = physical_of(outcome, article.as_ref())?;
    if let Some(path) = &args.json {
        let mut doc = json::fit_doc(outcome, physical.as_ref());
        doc.damping_choice = Some(choice.clone());
        doc.inputs = physical.as_ref().and(article.as_ref()).map(json::inputs_doc);
        let doc = wire::to_pretty(&doc);
        atomic::write_atomic(path, doc.as_bytes())
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display())))?;
    }
    if let Some(path) = &args.plot {
        let names: Vec<String> = logs.iter().map(|l| l.source().to_string()).collect();
        let runs: Vec<plot::RunView<'_>> = logs
            .iter()
            .zip(&outcome.runs)
            .zip(&names)
            .map(|((l, r), n)| plot::RunView::new(n, l, r))
            .collect();
        let chart = plot::fit_overlay(&runs, outcome.omega_n.value, "fit");
        plot::write_chart(&chart, path).map_err(Failure::input)?;
    }
    print!("{}", table::fit_table(outcome, physical.as_ref(), article.as_ref(), Some(&choice)));
    if let (true, Some(p)) = (args.budget, &physical) {
        println!();
        print!("{}", crate::report::budget::budget_table(&p.budgets));
    }
    adequacy_exit(outcome)
}
