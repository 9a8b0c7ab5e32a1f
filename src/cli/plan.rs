//! `swingfit plan`: predicted uncertainties of a test not yet run, and (with `--target`) the
//! least test effort that meets target uncertainties.

use std::path::PathBuf;

use clap::Args;

use super::fit::{ArticleArgs, article};
use super::{CmdResult, Failure};
use crate::model::{DampingSet, Physics, Term};
use crate::plan::{self, Design, Plan, Record, search};
use crate::report::wire::{self, params};
use crate::report::{atomic, plan as report};

/// Arguments of `plan`.
#[derive(Args, Debug)]
pub struct PlanArgs {
    /// Expected dynamics: a params JSON (the `simulate --params` format) or a fit JSON.
    #[arg(long, value_name = "FILE")]
    pub params: Option<PathBuf>,
    /// Run of a fit JSON whose release to take (0-based).
    #[arg(long, value_name = "N")]
    pub run: Option<usize>,
    /// Expected natural frequency omega_n [rad/s] (overrides the params file).
    #[arg(long, value_name = "RAD/S", conflicts_with = "period", allow_negative_numbers = true)]
    pub omega_n: Option<f64>,
    /// Expected small-amplitude period [s], instead of --omega-n.
    #[arg(long, value_name = "S", allow_negative_numbers = true)]
    pub period: Option<f64>,
    /// Expected viscous coefficient b1 = c/J [1/s].
    #[arg(long, value_name = "1/S", allow_negative_numbers = true)]
    pub viscous: Option<f64>,
    /// Expected Coulomb coefficient b0 = tau_c/J [rad/s^2].
    #[arg(long, value_name = "RAD/S2", allow_negative_numbers = true)]
    pub coulomb: Option<f64>,
    /// Expected quadratic coefficient b2 = c_q/J [1/rad].
    #[arg(long, value_name = "1/RAD", allow_negative_numbers = true)]
    pub quadratic: Option<f64>,
    /// Terms the fit will have (default: those with a non-zero expected value).
    #[arg(long, value_name = "TERMS")]
    pub damping: Option<String>,
    /// Release angles from the hanging position [deg], comma separated (default: the params
    /// file's initial angle).
    #[arg(long, value_name = "DEG,DEG", value_delimiter = ',', allow_negative_numbers = true)]
    pub release_deg: Vec<f64>,
    /// Record length of each release [s].
    #[arg(long, value_name = "S", conflicts_with = "until_rest", allow_negative_numbers = true)]
    pub record: Option<f64>,
    /// Record each release until the article comes to rest.
    #[arg(long)]
    pub until_rest: bool,
    /// Sample rate [Hz].
    #[arg(long, value_name = "HZ", allow_negative_numbers = true)]
    pub rate: f64,
    /// Sensor noise, standard deviation [deg].
    #[arg(long, value_name = "DEG", default_value_t = 0.0, allow_negative_numbers = true)]
    pub noise_deg: f64,
    /// Encoder counts per revolution (edges; quadrature: 4 × lines).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub counts_per_rev: Option<f64>,
    /// Mass properties and gravity, for predicted physical values.
    #[command(flatten)]
    pub article: ArticleArgs,
    /// Write the plan as JSON (schema swingfit.plan.v1) to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Targets: find the least test effort whose predicted relative uncertainties meet them,
    /// e.g. `viscous=1%,quadratic=5%` (keys: omega_n, the terms, or physical keys with mass data).
    #[arg(long, value_name = "KEY=REL,…")]
    pub target: Option<String>,
    /// Search: most releases.
    #[arg(long, value_name = "N", default_value_t = 3)]
    pub max_releases: usize,
    /// Search: smallest release angle [deg].
    #[arg(long, value_name = "DEG", default_value_t = 5.0, allow_negative_numbers = true)]
    pub min_angle_deg: f64,
    /// Search: largest release angle [deg].
    #[arg(long, value_name = "DEG", default_value_t = 90.0, allow_negative_numbers = true)]
    pub max_angle_deg: f64,
    /// Search: longest record per release [s].
    #[arg(long, value_name = "S", default_value_t = 600.0, allow_negative_numbers = true)]
    pub max_record: f64,
    /// Search: set-up time counted for each release [s] (effort = releases × (record + this)).
    #[arg(long, value_name = "S", default_value_t = 60.0, allow_negative_numbers = true)]
    pub release_cost: f64,
}

fn finite(name: &str, v: f64) -> Result<f64, Failure> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(Failure::input(format!("--{name}: expected a finite number, found {v}")))
    }
}

/// The expected dynamics and the release the params file implies.
fn expected(args: &PlanArgs) -> Result<(Physics, Option<f64>), Failure> {
    let (mut physics, release) = match &args.params {
        Some(p) => {
            let sp = params::read(p, args.run).map_err(Failure::input)?;
            (sp.physics, Some((sp.release.angle - sp.release.equilibrium).abs()))
        }
        None => (Physics::undamped(0.0), None),
    };
    if let Some(w) = args.omega_n {
        physics.omega_n = finite("omega-n", w)?;
    }
    if let Some(t) = args.period {
        if !(t.is_finite() && t > 0.0) {
            return Err(Failure::input(format!(
                "--period: expected a positive period in s, found {t}"
            )));
        }
        physics.omega_n = std::f64::consts::TAU / t;
    }
    for (t, v) in [
        (Term::Viscous, args.viscous),
        (Term::Coulomb, args.coulomb),
        (Term::Quadratic, args.quadratic),
    ] {
        if let Some(v) = v {
            physics.damping[t.index()] = finite(t.name(), v)?;
        }
    }
    if physics.omega_n == 0.0 {
        return Err(Failure::input(
            "no expected dynamics: give --params FILE, or --omega-n (or --period) and the expected damping (--viscous, --coulomb, --quadratic)",
        ));
    }
    physics.validate().map_err(|e| Failure::input(format!("expected dynamics: {e}")))?;
    Ok((physics, release))
}

/// The plan the arguments describe.
pub fn plan_of(args: &PlanArgs) -> Result<Plan, Failure> {
    let (physics, release) = expected(args)?;
    let damping = match &args.damping {
        Some(s) => DampingSet::parse(s).map_err(|e| Failure::input(format!("--damping: {e}")))?,
        None => {
            let set = physics.active_terms();
            if set.is_empty() {
                return Err(Failure::input(
                    "the expected dynamics have no damping term: give the expected magnitude of at least one (--viscous, --coulomb, --quadratic)",
                ));
            }
            set
        }
    };
    let searching = args.target.is_some();
    let releases: Vec<f64> = if args.release_deg.is_empty() {
        match release {
            _ if searching => vec![0.5 * (args.min_angle_deg + args.max_angle_deg).to_radians()],
            Some(a) => vec![a],
            None => {
                return Err(Failure::input(
                    "no release angle: give --release-deg DEG[,DEG…] (or a params file with initial_angle)",
                ));
            }
        }
    } else {
        args.release_deg.iter().map(|d| d.to_radians()).collect()
    };
    let record = match (args.record, args.until_rest) {
        (Some(s), _) => Record::Seconds(s),
        (None, true) => Record::UntilRest,
        (None, false) if searching => Record::Seconds(args.max_record),
        (None, false) => {
            return Err(Failure::input("no record length: give --record S or --until-rest"));
        }
    };
    let design = Design {
        releases,
        record,
        rate_hz: args.rate,
        noise_rad: args.noise_deg.to_radians(),
        counts_per_rev: args.counts_per_rev,
    };
    let plan = Plan { physics, damping, design, article: article(&args.article)? };
    plan::validate(&plan).map_err(Failure::input)?;
    Ok(plan)
}

/// Run `plan`.
pub fn run(args: &PlanArgs) -> CmdResult {
    let plan = plan_of(args)?;
    if let Some(t) = &args.target {
        return run_search(args, &plan, t);
    }
    let pred = plan::predict(&plan).map_err(|e| match e {
        plan::PlanError::Singular { .. } | plan::PlanError::Unresolved { .. } => {
            Failure::rejected(e)
        }
        _ => Failure::input(e),
    })?;
    if let Some(path) = &args.json {
        let doc = wire::to_pretty(&report::plan_doc(&plan, &pred, None));
        atomic::write_atomic(path, doc.as_bytes())
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display())))?;
    }
    print!("{}", report::plan_table(&plan, &pred));
    Ok(())
}

/// Run the design search of `plan --target`.
fn run_search(args: &PlanArgs, base: &Plan, targets: &str) -> CmdResult {
    let targets =
        search::parse_targets(targets).map_err(|e| Failure::input(format!("--target: {e}")))?;
    let bounds = search::Bounds {
        max_releases: args.max_releases,
        min_angle: args.min_angle_deg.to_radians(),
        max_angle: args.max_angle_deg.to_radians(),
        max_record_s: args.max_record,
        release_cost_s: args.release_cost,
    };
    let outcome = search::search(base, &targets, &bounds).map_err(Failure::input)?;
    let search_doc = report::search_doc(&targets, &bounds, &outcome);
    match outcome {
        search::SearchOutcome::Found(f) => {
            let plan = Plan { design: f.design.clone(), ..base.clone() };
            if let Some(path) = &args.json {
                let doc =
                    wire::to_pretty(&report::plan_doc(&plan, &f.prediction, Some(search_doc)));
                atomic::write_atomic(path, doc.as_bytes()).map_err(|e| {
                    Failure::input(format!("{}: cannot write: {e}", path.display()))
                })?;
            }
            print!("{}", report::found_text(&targets, &f));
            println!();
            print!("{}", report::plan_table(&plan, &f.prediction));
            Ok(())
        }
        search::SearchOutcome::Blocked(b) => {
            Err(Failure::rejected(report::blocked_text(&targets, &bounds, &b)))
        }
    }
}
