//! `swingfit fit LOG [LOG…]`: the main job. Fits the logs of one article jointly and prints the
//! coefficient table; `--json FILE` writes the `swingfit.fit.v1` document.

use std::path::PathBuf;

use clap::Args;

use super::{CmdResult, Failure, LoaderArgs};
use crate::data::AngleLog;
use crate::fit::{self, FitOptions, FitOutcome};
use crate::model::DampingSet;
use crate::physical::{self, ArticleInputs, Gravity, Measured, PhysicalCoefficients};
use crate::report::{atomic, json, plot, table};

/// The article's mass properties and the local gravity, for physical coefficients.
#[derive(Args, Debug, Clone, Default)]
pub struct ArticleArgs {
    /// Mass of the swinging article [kg].
    #[arg(long, value_name = "KG", allow_hyphen_values = true)]
    pub mass: Option<f64>,
    /// Standard uncertainty of the mass [kg].
    #[arg(long, value_name = "KG", default_value_t = 0.0, allow_hyphen_values = true)]
    pub mass_std: f64,
    /// Distance from the pivot axis to the centre of gravity [m].
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub pivot_to_cg: Option<f64>,
    /// Standard uncertainty of the pivot-to-CG distance [m].
    #[arg(long, value_name = "M", default_value_t = 0.0, allow_hyphen_values = true)]
    pub pivot_to_cg_std: f64,
    /// Local gravity [m/s²] (default: standard gravity 9.80665, or from --latitude).
    #[arg(long, value_name = "M/S2", conflicts_with = "latitude", allow_hyphen_values = true)]
    pub gravity: Option<f64>,
    /// Standard uncertainty of --gravity [m/s²].
    #[arg(long, value_name = "M/S2", default_value_t = 0.0, allow_hyphen_values = true)]
    pub gravity_std: f64,
    /// Geodetic latitude of the rig [deg], for normal gravity (WGS 84).
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    pub latitude: Option<f64>,
    /// Elevation of the rig above the ellipsoid [m], with --latitude.
    #[arg(long, value_name = "M", default_value_t = 0.0, allow_hyphen_values = true)]
    pub elevation: f64,
}

/// Options of the estimator shared by `fit`, `compare`, `sheet` and `batch`.
#[derive(Args, Debug, Clone)]
pub struct EstimatorArgs {
    /// Damping terms to fit: any of viscous, coulomb, quadratic, comma separated.
    #[arg(long, value_name = "TERMS", default_value = "viscous,coulomb")]
    pub damping: String,
    /// Moving-block bootstrap replicates for the intervals (0: analytic intervals).
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub bootstrap: usize,
    /// Seed of the bootstrap.
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seed: u64,
}

impl EstimatorArgs {
    /// The library's fit options.
    pub fn options(&self) -> Result<FitOptions, Failure> {
        let damping = DampingSet::parse(&self.damping)
            .map_err(|e| Failure::input(format!("--damping: {e}")))?;
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
    #[arg(required = true)]
    pub logs: Vec<PathBuf>,
    /// Loader options.
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Estimator options.
    #[command(flatten)]
    pub estimator: EstimatorArgs,
    /// Mass properties and gravity.
    #[command(flatten)]
    pub article: ArticleArgs,
    /// Write the fit as JSON (schema swingfit.fit.v1) to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Draw the measured angle with the fitted model to FILE (.svg or .png).
    #[arg(long, value_name = "FILE.svg|FILE.png")]
    pub plot: Option<PathBuf>,
    /// Print the GUM uncertainty budget of every physical value (needs --mass and --pivot-to-cg).
    #[arg(long)]
    pub budget: bool,
}

/// Load every log, or fail on the first bad one.
pub fn load_all(paths: &[PathBuf], loader: &LoaderArgs) -> Result<Vec<AngleLog>, Failure> {
    let opts = loader.options();
    paths
        .iter()
        .map(|p| {
            let found = crate::data::load_runs(p, &opts).map_err(Failure::input)?;
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
    match (args.mass, args.pivot_to_cg) {
        (None, None) => Ok(None),
        (Some(_), None) | (None, Some(_)) => Err(Failure::input(
            "--mass and --pivot-to-cg go together: give both for physical coefficients",
        )),
        (Some(m), Some(d)) => {
            let gravity = match (args.gravity, args.latitude) {
                (Some(g), _) => Gravity::given(g, args.gravity_std),
                (None, Some(lat)) => Gravity::at_location(lat, args.elevation, args.gravity_std),
                (None, None) => Ok(Gravity::standard()),
            }
            .map_err(|e| Failure::input(format!("gravity: {e}")))?;
            let inputs = ArticleInputs {
                mass: Measured { value: m, u: args.mass_std },
                pivot_to_cg: Measured { value: d, u: args.pivot_to_cg_std },
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

/// Run `fit`.
pub fn run(args: &FitArgs) -> CmdResult {
    let options = args.estimator.options()?;
    if let Some(p) = &args.plot {
        plot::check_chart_path(p).map_err(Failure::input)?;
    }
    let article = article(&args.article)?;
    if args.budget && article.is_none() {
        return Err(Failure::input(
            "--budget needs the physical inputs: give --mass and --pivot-to-cg (with their --mass-std and --pivot-to-cg-std)",
        ));
    }
    let logs = load_all(&args.logs, &args.loader)?;
    let outcome = fit::fit(&logs, &options).map_err(Failure::rejected)?;
    let physical = physical_of(&outcome, article.as_ref())?;
    if let Some(path) = &args.json {
        let doc = json::to_pretty(&json::fit_doc(&outcome, physical.as_ref()));
        atomic::write_atomic(path, doc.as_bytes())
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display())))?;
    }
    if let Some(path) = &args.plot {
        let names: Vec<String> = logs.iter().map(|l| l.source().to_string()).collect();
        let runs: Vec<plot::RunView<'_>> = logs
            .iter()
            .zip(&outcome.runs)
            .zip(&names)
            .map(|((l, r), n)| plot::RunView::new(n, l.times(), l.angles(), r))
            .collect();
        let chart = plot::fit_overlay(&runs, outcome.omega_n.value, "fit");
        plot::write_chart(&chart, path).map_err(Failure::input)?;
    }
    print!("{}", table::fit_table(&outcome, physical.as_ref()));
    if let (true, Some(p)) = (args.budget, &physical) {
        println!();
        print!("{}", crate::report::budget::budget_table(&p.budgets));
    }
    Ok(())
}
