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
//! ## Wire format `swingfit.batch.v1` (one JSON object per line of `summary.jsonl`)
//! ```text
//! { "schema": "swingfit.batch.v1", "file": "…", "status": "ok" | "error",
//!   "adequacy": "explained" | "approximate" | "not_explained" | null, "damping": [..] | null,
//!   "error_kind": null | "input" | "rejected", "error": null | "…",
//!   "samples": n, "dropped_rows": n, "iterations": n, "rms_residual": r, "noise_floor": s,
//!   "normalized": { "omega_n": P, "viscous": P, … },    fitted terms only
//!   "physical": { "inertia_pivot": P, "viscous": P, … } only with mass and pivot-to-CG
//!   "notes": [ "…" ]   what was cut before fitting (rest, holds, forced swings, re-timed slips)
//! }
//! ```
//! `P` is the fit JSON's `{ "value", "std", "ci95": [lo, hi], "unit" }` (see
//! [`crate::report::json`]); on an error row every field after `error` is null. `iterations`
//! counts every continuation stage; `rms_residual` and `noise_floor` are in rad.
//!
//! `summary.csv` has the same content, flattened: for each coefficient `NAME`, the columns
//! `NAME`, `NAME_std`, `NAME_ci95_lo`, `NAME_ci95_hi`; physical coefficients are prefixed
//! `phys_`. Empty cells on error rows. Numbers are written in Rust's shortest round-trip form.

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::Serialize;

use crate::article;
use crate::data::{self, LoadOptions};
use crate::fit::adequacy::Adequacy;
use crate::fit::workflow::{self, DampingChoice};
use crate::fit::{Estimate, FitOptions};
use crate::model::{DampingSet, Term};
use crate::physical::{self, ArticleInputs, PhysicalCoefficients, Quantity};
use crate::report::json::P;

/// Schema tag written on every line of `summary.jsonl`.
pub const BATCH_SCHEMA: &str = "swingfit.batch.v1";

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
    #[error("no logs to fit: expected *.csv files in {0}")]
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

/// Gather the inputs: each directory contributes its `*.csv` files (not recursively), each file
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
                if path.is_file() && has_extension(&path, "csv") {
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

/// The columns a summary needs: the batch's damping set widened by every term any row fitted
/// (an article may fit other terms), and physical columns when any row has them.
pub fn summary_columns(rows: &[Row], base: DampingSet, physical: bool) -> (DampingSet, bool) {
    let mut set = base;
    let mut phys = physical;
    for f in rows.iter().filter_map(|r| r.result.as_ref().ok()) {
        for (t, _) in &f.terms {
            set = set.with(*t);
        }
        phys |= f.physical.is_some();
    }
    (set, phys)
}

/// Shortest round-trip form of a number (`NaN`, `inf` as Rust prints them).
fn num(v: f64) -> String {
    format!("{v}")
}

/// Names of the coefficient groups a batch writes, in column order, with the physical ones
/// prefixed `phys_`.
fn coefficient_names(damping: DampingSet, physical: bool) -> Vec<String> {
    let mut v = vec!["omega_n".to_string()];
    v.extend(damping.iter().map(|t| t.name().to_string()));
    if physical {
        v.push("phys_inertia_pivot".into());
        v.extend(damping.iter().map(|t| format!("phys_{}", t.name())));
    }
    v
}

/// The (value, std, ci95) of every coefficient of a row, in [`coefficient_names`] order.
fn coefficient_values(
    fit: &RowFit,
    damping: DampingSet,
    physical: bool,
) -> Vec<Option<(f64, f64, f64, f64)>> {
    let est = |e: &Estimate| Some((e.value, e.std, e.ci95.0, e.ci95.1));
    let qty = |q: &Quantity| Some((q.value, q.u_c, q.value - q.expanded, q.value + q.expanded));
    let mut v = vec![est(&fit.omega_n)];
    v.extend(
        damping.iter().map(|t| fit.terms.iter().find(|(u, _)| *u == t).and_then(|(_, e)| est(e))),
    );
    if physical {
        let p = fit.physical.as_ref();
        v.push(p.and_then(|p| qty(&p.inertia_pivot)));
        for t in damping.iter() {
            let q = p.and_then(|p| p.damping[t.index()].as_ref());
            v.push(q.and_then(qty));
        }
    }
    v
}

/// `summary.csv`: a header and one row per log, in the order of `rows`. `physical` adds the
/// physical columns (pass whether an article was given).
pub fn summary_csv(rows: &[Row], damping: DampingSet, physical: bool) -> String {
    let names = coefficient_names(damping, physical);
    let mut header: Vec<String> = [
        "file",
        "status",
        "adequacy",
        "damping",
        "error_kind",
        "error",
        "samples",
        "dropped_rows",
        "iterations",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    header.extend(["rms_residual".to_string(), "noise_floor".to_string()]);
    for n in &names {
        header.extend([
            n.clone(),
            format!("{n}_std"),
            format!("{n}_ci95_lo"),
            format!("{n}_ci95_hi"),
        ]);
    }
    let mut w =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    let mut records: Vec<Vec<String>> = vec![header];
    for row in rows {
        let mut rec = vec![row.file.clone()];
        match &row.result {
            Ok(f) => {
                rec.extend([
                    "ok".into(),
                    f.adequacy.name().into(),
                    f.damping.names().join("+"),
                    String::new(),
                    String::new(),
                ]);
                rec.extend([
                    f.samples.to_string(),
                    f.dropped_rows.to_string(),
                    f.iterations.to_string(),
                ]);
                rec.extend([num(f.rms_residual), num(f.noise_floor)]);
                for c in coefficient_values(f, damping, physical) {
                    match c {
                        Some((v, s, lo, hi)) => rec.extend([num(v), num(s), num(lo), num(hi)]),
                        None => rec.extend(std::iter::repeat_n(String::new(), 4)),
                    }
                }
            }
            Err(e) => {
                rec.extend([
                    "error".into(),
                    String::new(),
                    String::new(),
                    e.kind.name().into(),
                    e.message.clone(),
                ]);
                rec.extend(std::iter::repeat_n(String::new(), 5 + 4 * names.len()));
            }
        }
        records.push(rec);
    }
    for rec in &records {
        // Writing to a Vec cannot fail, and every record has the header's length.
        if w.write_record(rec).is_err() {
            break;
        }
    }
    let bytes = w.into_inner().unwrap_or_default();
    String::from_utf8_lossy(&bytes).into_owned()
}

/// One line of `summary.jsonl`.
#[derive(Serialize, Debug)]
struct JsonRow<'a> {
    schema: &'static str,
    file: &'a str,
    status: &'static str,
    adequacy: Option<&'static str>,
    damping: Option<Vec<&'static str>>,
    error_kind: Option<&'static str>,
    error: Option<&'a str>,
    samples: Option<usize>,
    dropped_rows: Option<usize>,
    iterations: Option<usize>,
    rms_residual: Option<f64>,
    noise_floor: Option<f64>,
    normalized: Option<serde_json::Map<String, serde_json::Value>>,
    physical: Option<serde_json::Map<String, serde_json::Value>>,
    notes: Option<&'a [String]>,
}

fn p_value(p: P) -> serde_json::Value {
    serde_json::to_value(p).unwrap_or(serde_json::Value::Null)
}

/// `summary.jsonl`: one `swingfit.batch.v1` object per row, in the order of `rows`.
pub fn summary_jsonl(rows: &[Row]) -> String {
    let mut out = String::new();
    for row in rows {
        let line = match &row.result {
            Ok(f) => {
                let mut normalized = serde_json::Map::new();
                normalized.insert("omega_n".into(), p_value(P::from(&f.omega_n)));
                for (t, e) in &f.terms {
                    normalized.insert(t.name().into(), p_value(P::from(e)));
                }
                let physical = f.physical.as_ref().map(|p| {
                    let mut m = serde_json::Map::new();
                    m.insert("inertia_pivot".into(), p_value(P::from(&p.inertia_pivot)));
                    for t in Term::ALL {
                        if let Some(q) = &p.damping[t.index()] {
                            m.insert(t.name().into(), p_value(P::from(q)));
                        }
                    }
                    m
                });
                JsonRow {
                    schema: BATCH_SCHEMA,
                    file: &row.file,
                    status: "ok",
                    adequacy: Some(f.adequacy.name()),
                    damping: Some(f.damping.names()),
                    error_kind: None,
                    error: None,
                    samples: Some(f.samples),
                    dropped_rows: Some(f.dropped_rows),
                    iterations: Some(f.iterations),
                    rms_residual: Some(f.rms_residual),
                    noise_floor: Some(f.noise_floor),
                    normalized: Some(normalized),
                    physical,
                    notes: Some(&f.notes),
                }
            }
            Err(e) => JsonRow {
                schema: BATCH_SCHEMA,
                file: &row.file,
                status: "error",
                adequacy: None,
                damping: None,
                error_kind: Some(e.kind.name()),
                error: Some(&e.message),
                samples: None,
                dropped_rows: None,
                iterations: None,
                rms_residual: None,
                noise_floor: None,
                normalized: None,
                physical: None,
                notes: None,
            },
        };
        // Plain structs and string-keyed maps always serialize; NaN becomes null.
        out.push_str(
            &serde_json::to_string(&line).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}")),
        );
        out.push('\n');
    }
    out
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
    fn csv_has_one_column_group_per_fitted_coefficient_and_quotes_messages() {
        let set = DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]);
        let text = summary_csv(&[ok_row("a.csv"), bad_row("b.csv", ErrorKind::Input)], set, false);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 3);
        assert_eq!(
            lines[0],
            "file,status,adequacy,damping,error_kind,error,samples,dropped_rows,iterations,rms_residual,noise_floor,\
             omega_n,omega_n_std,omega_n_ci95_lo,omega_n_ci95_hi,viscous,viscous_std,viscous_ci95_lo,viscous_ci95_hi,\
             coulomb,coulomb_std,coulomb_ci95_lo,coulomb_ci95_hi"
        );
        assert_eq!(
            lines[1],
            "a.csv,ok,explained,viscous+coulomb,,,2001,0,12,0.000085,0.000087,4.75,0.125,4.5,5,0.0625,0.0078125,0.046875,0.078125,0.03,0.002,0.026,0.034"
        );
        // The message has a comma and quotes: csv quoting keeps it one field.
        assert_eq!(
            lines[2],
            "b.csv,error,,,input,\"b.csv:3: expected a number, found \"\"x, y\"\"\",,,,,,,,,,,,,,,,,"
        );
        let header_fields = lines[0].split(',').count();
        let mut r = csv::Reader::from_reader(text.as_bytes());
        for rec in r.records() {
            assert_eq!(rec.map(|r| r.len()).unwrap_or(0), header_fields);
        }
    }

    #[test]
    fn jsonl_is_one_object_per_row_with_nulls_on_errors() {
        let text = summary_jsonl(&[ok_row("a.csv"), bad_row("b.csv", ErrorKind::Rejected)]);
        let lines: Vec<serde_json::Value> = text
            .lines()
            .map(|l| serde_json::from_str(l).unwrap_or(serde_json::Value::Null))
            .collect();
        assert_eq!(lines.len(), 2);
        assert_eq!(lines[0]["normalized"]["coulomb"]["ci95"][1].as_f64(), Some(0.034));
        assert_eq!(lines[0]["iterations"].as_u64(), Some(12));
        assert_eq!(lines[1]["status"], "error");
        assert_eq!(lines[1]["error_kind"], "rejected");
        assert!(lines[1]["normalized"].is_null() && lines[1]["samples"].is_null());
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
        for f in ["b.csv", "a.CSV", "notes.txt", "art.toml", "sub/c.csv"] {
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
