//! `swingfit compare LOG [LOG…]`: fit every candidate damping set and say which explains the decay.

use std::path::PathBuf;

use clap::Args;

use super::fit::{EstimatorArgs, RUN_CONFLICTS, load_given};
use super::{CmdResult, Failure, LoaderArgs};
use crate::fit::compare::{self, CompareOptions};
use crate::model::DampingSet;
use crate::report::wire;
use crate::report::{atomic, table};

/// Arguments of `compare`.
#[derive(Args, Debug)]
pub struct CompareArgs {
    /// Logs of one article (CSV), fitted jointly under each candidate.
    #[arg(required_unless_present = "runs")]
    pub logs: Vec<PathBuf>,
    /// A log with its own loader settings, repeated for each log (instead of LOG… and the
    /// loader options): the keys of an article file's [[run]] table.
    #[arg(long = "run", value_name = "LOG[:KEY=VALUE,...]", conflicts_with_all = RUN_CONFLICTS)]
    pub runs: Vec<String>,
    /// Loader options.
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Estimator options (--damping is not used; see --candidates).
    #[command(flatten)]
    pub estimator: EstimatorArgs,
    /// Candidate sets, separated by ';', each a comma list, e.g. "viscous;viscous,coulomb"
    /// (default: all seven non-empty subsets of viscous, coulomb, quadratic).
    #[arg(long, value_name = "SETS")]
    pub candidates: Option<String>,
    /// Write the comparison as JSON (schema swingfit.compare.v2) to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
}

/// Parse `--candidates`.
pub fn parse_candidates(s: &str) -> Result<Vec<DampingSet>, Failure> {
    s.split(';')
        .filter(|p| !p.trim().is_empty())
        .map(|p| DampingSet::parse(p).map_err(|e| Failure::input(format!("--candidates: {e}"))))
        .collect()
}

/// Run `compare`.
pub fn run(args: &CompareArgs) -> CmdResult {
    let fit = args.estimator.options()?;
    let candidates = match &args.candidates {
        Some(s) => parse_candidates(s)?,
        None => compare::default_candidates(),
    };
    if candidates.is_empty() {
        return Err(Failure::input("--candidates: no candidate sets given"));
    }
    let logs = load_given(&args.runs, &args.logs, &args.loader)?;
    let c = compare::compare(&logs, &CompareOptions { candidates, fit });
    if let Some(path) = &args.json {
        let doc = wire::to_pretty(&wire::compare::compare_doc(&c));
        atomic::write_atomic(path, doc.as_bytes())
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display())))?;
    }
    print!("{}", table::compare_table(&c));
    if let Some(note) = c.presliding_note() {
        println!("{note}");
    }
    if c.candidates.iter().all(|e| e.fit.is_err()) {
        return Err(Failure::rejected("no candidate damping set could be fitted"));
    }
    match c.selected() {
        Some(f) => super::fit::adequacy_exit(f),
        None => Ok(()),
    }
}
