//! Batch fitting: many logs, one fit each, in parallel, summarised one row per log.
//!
//! A lab that characterises many articles, or a line that checks every pivot, fits thousands of
//! logs with the same settings. This module gathers the inputs ([`collect_inputs`]), fits each
//! one on a local rayon pool ([`run`]) and renders the summary ([`summary_csv`],
//! [`summary_jsonl`]). It never prints; the command line (`swingfit batch`) owns the progress bar,
//! the messages and the exit code.
//!
//! Guarantees:
//! - One bad file never stops the batch: its row records the error and the work goes on.
//! - Rows come back sorted by file path, whatever order the fits finish in.
//! - Every fit is independent of the others and of the thread count, so the summaries are
//!   byte-identical at any `threads` setting.
//!
//! The rows are written by `report::wire::batch` (`summary.jsonl`, `summary.csv`; schema
//! `swingfit.batch.v2`, docs/schemas.md).

use std::path::{Path, PathBuf};

use rayon::prelude::*;

use crate::article;
use crate::data::{self, LoadOptions};
use crate::fit::adequacy::Adequacy;
use crate::fit::workflow::{self, DampingChoice};
use crate::fit::{Estimate, FitOptions};
use crate::model::{DampingSet, Term};
use crate::physical::{self, ArticleInputs, PhysicalCoefficients};

/// One thing to fit.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Input {
    /// A log (CSV), fitted on its own.
    Log(PathBuf),
    /// An article file (TOML) naming the logs of one article and its mass properties.
    ///
    /// Fitted by [`fit_article`]; directories are scanned for `*.toml` too, and a log that an
    /// article names is left to its article.
    Article(PathBuf),
}

impl Input {
    /// The path as given (or as found in a directory).
    pub fn path(&self) -> &Path {
        match self {
            Input::Log(p) | Input::Article(p) => p,
        }
    }
}

/// A batch that cannot start.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum BatchError {
    /// A directory could not be listed.
    #[error("{path}: cannot list the directory: {source}")]
    ReadDir {
        /// Directory as given.
        path: String,
        /// The I/O error.
        source: std::io::Error,
    },
    /// Nothing to fit.
    #[error("no logs to fit: expected *.csv, *.tsv or *.txt logs or *.toml article files in {0}")]
    NoInputs(String),
    /// The thread pool could not be built.
    #[error("cannot start {threads} worker threads: {detail}")]
    ThreadPool {
        /// Requested threads (0: all cores).
        threads: usize,
        /// Why.
        detail: String,
    },
}

/// Extensions of the logs a directory contributes.
pub const LOG_EXTENSIONS: [&str; 3] = ["csv", "tsv", "txt"];

/// Gather the inputs: each directory contributes its `*.csv`, `*.tsv` and `*.txt` logs and its
/// `*.toml` article files (not recursively), each file
/// is taken as given (`*.toml` as an article file, anything else as a log). Sorted by path,
/// duplicates removed. A listed file that does not exist is kept: its row will say so.
pub fn collect_inputs(paths: &[PathBuf]) -> Result<Vec<Input>, BatchError> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let entries = std::fs::read_dir(p)
                .map_err(|source| BatchError::ReadDir { path: p.display().to_string(), source })?;
            for e in entries {
                let e = e.map_err(|source| BatchError::ReadDir {
                    path: p.display().to_string(),
                    source,
                })?;
                let path = e.path();
                if path.is_file() && LOG_EXTENSIONS.iter().any(|x| has_extension(&path, x)) {
                    out.push(Input::Log(path));
                } else if path.is_file() && has_extension(&path, "toml") {
                    out.push(Input::Article(path));
                }
            }
        } else if has_extension(p, "toml") {
            out.push(Input::Article(p.clone()));
        } else {
            out.push(Input::Log(p.clone()));
        }
    }
    // A log that an article file names is fitted with its article, not on its own.
    let claimed: Vec<PathBuf> = out
        .iter()
        .filter_map(|i| match i {
            Input::Article(p) => article::load(p).ok(),
            Input::Log(_) => None,
        })
        .flat_map(|spec| spec.runs.into_iter().map(|r| r.log))
        .filter_map(|p| p.canonicalize().ok())
        .collect();
    out.retain(|i| match i {
        Input::Log(p) => !p.canonicalize().is_ok_and(|c| claimed.contains(&c)),
        Input::Article(_) => true,
    });
    out.sort_by(|a, b| a.path().cmp(b.path()));
    out.dedup();
    if out.is_empty() {
        let given = paths.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(", ");
        return Err(BatchError::NoInputs(given));
    }
    Ok(out)
}

fn has_extension(p: &Path, ext: &str) -> bool {
    p.extension().and_then(|e| e.to_str()).is_some_and(|e| e.eq_ignore_ascii_case(ext))
}

/// What every fit of the batch uses.
#[derive(Clone, Debug, PartialEq)]
pub struct BatchSettings {
    /// How to read the logs.
    pub load: LoadOptions,
    /// How to fit them (bootstrap, seed; the damping comes from `damping`).
    pub fit: FitOptions,
    /// Which damping to fit (default: chosen per log by the comparison).
    pub damping: DampingChoice,
    /// Mass properties and gravity, for physical coefficients (the same article for every log).
    pub article: Option<ArticleInputs>,
    /// Worker threads (0: one per core).
    pub threads: usize,
}

/// Why one row failed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ErrorKind {
    /// The file could not be read or is not a valid log (exit 2).
    Input,
    /// The log was read but the fit was rejected with a diagnosis (exit 1).
    Rejected,
}

impl ErrorKind {
    /// Name in the summaries.
    pub fn name(self) -> &'static str {
        match self {
            ErrorKind::Input => "input",
            ErrorKind::Rejected => "rejected",
        }
    }
}

/// A failed row: the kind and the one-line message.
#[derive(Clone, Debug, PartialEq)]
pub struct RowError {
    /// Input or rejected.
    pub kind: ErrorKind,
    /// The message, as `swingfit fit` would print it.
    pub message: String,
}

/// The numbers of one successful fit.
#[derive(Clone, Debug, PartialEq)]
pub struct RowFit {
    /// The fitted damping set.
    pub damping: DampingSet,
    /// The fit's adequacy verdict.
    pub adequacy: Adequacy,
    /// Samples fitted.
    pub samples: usize,
    /// Rows dropped by `--drop-bad-rows`.
    pub dropped_rows: usize,
    /// Optimiser iterations over every continuation stage.
    pub iterations: usize,
    /// RMS residual [rad].
    pub rms_residual: f64,
    /// Noise floor of the log from the survey [rad].
    pub noise_floor: f64,
    /// ωn [rad/s].
    pub omega_n: Estimate,
    /// Fitted terms, canonical order.
    pub terms: Vec<(Term, Estimate)>,
    /// Physical coefficients, with an article.
    pub physical: Option<PhysicalCoefficients>,
    /// What was cut from the logs before fitting (rest, holds, forced swings, re-timed slips;
    /// see [`crate::data::segment`]).
    pub notes: Vec<String>,
}

/// One row of the summary.
#[derive(Clone, Debug, PartialEq)]
pub struct Row {
    /// The input's path as given or found.
    pub file: String,
    /// The fit, or why there is none.
    pub result: Result<RowFit, RowError>,
}

impl Row {
    /// The failure kind, if any.
    pub fn error_kind(&self) -> Option<ErrorKind> {
        self.result.as_ref().err().map(|e| e.kind)
    }
}

/// Fit every input on a pool of `settings.threads` workers. `on_done` is called once per input
/// as it finishes (from a worker thread; for a progress bar). Rows come back sorted by file.
pub fn run(
    inputs: &[Input],
    settings: &BatchSettings,
    on_done: &(dyn Fn(&Row) + Sync),
) -> Result<Vec<Row>, BatchError> {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(settings.threads)
        .build()
        .map_err(|e| BatchError::ThreadPool { threads: settings.threads, detail: e.to_string() })?;
    let mut rows: Vec<Row> = pool.install(|| {
        inputs
            .par_iter()
            .map(|input| {
                let row = fit_input(input, settings);
                on_done(&row);
                row
            })
            .collect()
    });
    rows.sort_by(|a, b| a.file.cmp(&b.file));
    Ok(rows)
}

/// Fit one input; never panics through (a panic inside the fit becomes a rejected row).
pub fn fit_input(input: &Input, settings: &BatchSettings) -> Row {
    let file = input.path().display().to_string();
    let attempt = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| match input {
        Input::Log(p) => fit_log(p, settings),
        Input::Article(p) => fit_article(p, settings),
    }));
    let result = attempt.unwrap_or_else(|panic| {
        let what = panic
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| panic.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown cause".into());
        Err(RowError {
            kind: ErrorKind::Rejected,
            message: format!("{file}: internal error while fitting ({what}); please report it"),
        })
    });
    Row { file, result }
}

/// Load and fit one log.
fn fit_log(path: &Path, settings: &BatchSettings) -> Result<RowFit, RowError> {
    let found = data::load_runs(path, &settings.load)
        .map_err(|e| RowError { kind: ErrorKind::Input, message: e.to_string() })?;
    let dropped_rows = found.runs.first().map_or(0, |l| l.dropped_lines().len());
    let notes = found.notes.clone();
    let rejected = |m: String| RowError {
        kind: ErrorKind::Rejected,
        message: format!("{}: {m}", path.display()),
    };
    let outcome = workflow::choose_and_fit(&found.runs, settings.damping, &settings.fit)
        .map_err(|e| rejected(e.to_string()))?
        .outcome;
    let physical = match &settings.article {
        Some(a) => Some(
            physical::physical_coefficients(a, &outcome.dynamics())
                .map_err(|e| rejected(e.to_string()))?,
        ),
        None => None,
    };
    let run = outcome.runs.first();
    Ok(RowFit {
        damping: outcome.damping,
        adequacy: outcome.adequacy.verdict,
        samples: outcome.n_obs,
        dropped_rows,
        iterations: outcome.iterations_total,
        rms_residual: outcome.rms_residual(),
        noise_floor: run.map_or(f64::NAN, |r| r.noise_floor),
        omega_n: outcome.omega_n.clone(),
        terms: outcome.terms.clone(),
        physical,
        notes,
    })
}

/// Fit one article file (`*.toml`): its logs jointly, with its own loader settings, damping
/// choice (`"auto"` runs the comparison and fits the set it names) and mass properties, so the
/// row carries physical coefficients. The batch's own loader, damping and mass options do not
/// apply to an article; its bootstrap and seed settings do.
pub fn fit_article(path: &Path, settings: &BatchSettings) -> Result<RowFit, RowError> {
    let input = |m: String| RowError { kind: ErrorKind::Input, message: m };
    let rejected = |m: String| RowError {
        kind: ErrorKind::Rejected,
        message: format!("{}: {m}", path.display()),
    };
    let spec = article::load(path).map_err(|e| input(e.to_string()))?;
    let mut notes = Vec::new();
    let logs: Vec<data::AngleLog> = spec
        .runs
        .iter()
        .map(|r| data::load_runs(&r.log, &r.load).map_err(|e| input(e.to_string())))
        .collect::<Result<Vec<_>, _>>()?
        .into_iter()
        .flat_map(|f| {
            notes.extend(f.notes);
            f.runs
        })
        .collect();
    let dropped_rows = logs.iter().map(|l| l.dropped_lines().len()).sum();
    let outcome = workflow::choose_and_fit(&logs, spec.damping, &settings.fit)
        .map_err(|e| rejected(e.to_string()))?
        .outcome;
    let physical = physical::physical_coefficients(&spec.physical, &outcome.dynamics())
        .map_err(|e| rejected(e.to_string()))?;
    Ok(RowFit {
        damping: outcome.damping,
        adequacy: outcome.adequacy.verdict,
        samples: outcome.n_obs,
        dropped_rows,
        iterations: outcome.iterations_total,
        rms_residual: outcome.rms_residual(),
        noise_floor: outcome.runs.iter().map(|r| r.noise_floor).fold(0.0, f64::max),
        omega_n: outcome.omega_n.clone(),
        terms: outcome.terms.clone(),
        physical: Some(physical),
        notes,
    })
}

/// The exit code a batch ends with: 2 when any input was bad, else 1 when some fit was
/// rejected, else 3 when some fit does not explain its log, else 0.
pub fn exit_code(rows: &[Row]) -> u8 {
    if rows.iter().any(|r| r.error_kind() == Some(ErrorKind::Input)) {
        2
    } else if rows.iter().any(|r| r.error_kind() == Some(ErrorKind::Rejected)) {
        1
    } else if rows
        .iter()
        .any(|r| r.result.as_ref().is_ok_and(|f| f.adequacy == Adequacy::NotExplained))
    {
        3
    } else {
        0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn est(value: f64, std: f64, unit: &'static str) -> Estimate {
        Estimate { value, std, ci95: (value - 2.0 * std, value + 2.0 * std), unit }
    }

    fn ok_row(file: &str) -> Row {
        Row {
            file: file.into(),
            result: Ok(RowFit {
                damping: DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]),
                adequacy: Adequacy::Explained,
                samples: 2001,
                dropped_rows: 0,
                iterations: 12,
                rms_residual: 8.5e-5,
                noise_floor: 8.7e-5,
                omega_n: est(4.75, 0.125, "rad/s"),
                terms: vec![
                    (Term::Viscous, est(0.0625, 0.0078125, "1/s")),
                    (Term::Coulomb, est(0.03, 2e-3, "rad/s^2")),
                ],
                physical: None,
                notes: vec![],
            }),
        }
    }

    fn bad_row(file: &str, kind: ErrorKind) -> Row {
        Row {
            file: file.into(),
            result: Err(RowError {
                kind,
                message: format!("{file}:3: expected a number, found \"x, y\""),
            }),
        }
    }

    #[test]
    fn exit_code_puts_bad_input_before_rejection() {
        let ok = ok_row("a.csv");
        assert_eq!(exit_code(std::slice::from_ref(&ok)), 0);
        assert_eq!(exit_code(&[ok.clone(), bad_row("b", ErrorKind::Rejected)]), 1);
        assert_eq!(
            exit_code(&[bad_row("b", ErrorKind::Rejected), bad_row("c", ErrorKind::Input), ok]),
            2
        );
    }

    #[test]
    fn inputs_are_sorted_deduplicated_and_typed_by_extension() {
        let dir = std::env::temp_dir().join(format!("swingfit-batch-unit-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("sub")).unwrap_or(());
        for f in ["b.csv", "a.CSV", "notes.md", "c.tsv", "d.txt", "art.toml", "sub/c.csv"] {
            std::fs::write(dir.join(f), "x").unwrap_or(());
        }
        let got = collect_inputs(&[dir.clone(), dir.join("b.csv"), dir.join("x.toml")])
            .unwrap_or_default();
        let _ = std::fs::remove_dir_all(&dir);
        assert_eq!(
            got,
            vec![
                Input::Log(dir.join("a.CSV")),
                Input::Article(dir.join("art.toml")),
                Input::Log(dir.join("b.csv")),
                Input::Log(dir.join("c.tsv")),
                Input::Log(dir.join("d.txt")),
                Input::Article(dir.join("x.toml"))
            ]
        );
        let empty =
            std::env::temp_dir().join(format!("swingfit-batch-empty-{}", std::process::id()));
        std::fs::create_dir_all(&empty).unwrap_or(());
        let err = collect_inputs(std::slice::from_ref(&empty));
        let _ = std::fs::remove_dir_all(&empty);
        assert!(matches!(err, Err(BatchError::NoInputs(_))));
    }
}
