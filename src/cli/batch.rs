//! `swingfit batch (DIR | FILE…) --out DIR`: fit many logs, one fit each, in parallel, and write
//! `DIR/summary.csv` and `DIR/summary.jsonl` (one row per log, sorted by file).
//!
//! Exit status: 0 every log fitted; 3 some fit does not explain its log; 2 some input was bad (unreadable or invalid log, article file
//! not yet supported) or the batch could not start; otherwise 1 (some fit was rejected). The
//! summaries are written in every case where the batch ran.

use std::io::IsTerminal;
use std::num::NonZeroUsize;
use std::path::PathBuf;

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};

use super::fit::{ArticleArgs, EstimatorArgs, article};
use super::{CmdResult, Failure, LoaderArgs};
use crate::batch::{self, BatchSettings, Row};
use crate::report::{atomic, wire};

/// Arguments of `batch`.
#[derive(Args, Debug)]
pub struct BatchArgs {
    /// Folders (their *.csv, *.tsv and *.txt logs and *.toml article files) and/or files; each log
    /// is fitted on its own.
    #[arg(required = true, value_name = "DIR|FILE")]
    pub inputs: Vec<PathBuf>,
    /// Folder for summary.csv and summary.jsonl (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Worker threads (default: one per core).
    #[arg(long, value_name = "N")]
    pub threads: Option<NonZeroUsize>,
    /// Loader options.
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Estimator options.
    #[command(flatten)]
    pub estimator: EstimatorArgs,
    /// Mass properties and gravity (the same article for every log).
    #[command(flatten)]
    pub article: ArticleArgs,
}

/// Run `batch`.
pub fn run(args: &BatchArgs) -> CmdResult {
    let fit = args.estimator.options()?;
    let article = article(&args.article)?;
    let inputs = batch::collect_inputs(&args.inputs).map_err(Failure::input)?;
    std::fs::create_dir_all(&args.out).map_err(|e| {
        Failure::input(format!("{}: cannot create the output folder: {e}", args.out.display()))
    })?;
    let settings = BatchSettings {
        load: args.loader.options(),
        fit,
        damping: args.estimator.choice()?,
        article,
        threads: args.threads.map_or(0, NonZeroUsize::get),
    };
    let bar = if std::io::stderr().is_terminal() {
        let bar = ProgressBar::new(inputs.len() as u64);
        if let Ok(style) = ProgressStyle::with_template(
            "{bar:40} {pos}/{len} logs, {elapsed} elapsed, ~{eta} left {msg}",
        ) {
            bar.set_style(style);
        }
        bar
    } else {
        ProgressBar::hidden()
    };
    let on_done = |row: &Row| {
        bar.inc(1);
        bar.set_message(row.file.clone());
    };
    let rows = batch::run(&inputs, &settings, &on_done).map_err(Failure::input)?;
    bar.finish_and_clear();

    let csv_path = args.out.join("summary.csv");
    let jsonl_path = args.out.join("summary.jsonl");
    let docs: Vec<wire::batch::BatchRowDoc> = rows.iter().map(wire::batch::row_doc).collect();
    let (columns, physical) =
        wire::batch::summary_columns(&docs, settings.fit.damping, settings.article.is_some());
    for (path, text) in [
        (&csv_path, wire::batch::summary_csv(&docs, columns, physical)),
        (&jsonl_path, wire::batch::summary_jsonl(&docs)),
    ] {
        atomic::write_atomic(path, text.as_bytes())
            .map_err(|e| Failure::input(format!("{}: cannot write: {e}", path.display())))?;
    }

    let failed: Vec<&Row> = rows.iter().filter(|r| r.result.is_err()).collect();
    for r in &failed {
        if let Err(e) = &r.result {
            eprintln!("swingfit: {} ({})", e.message, e.kind.name());
        }
    }
    println!(
        "batch: {} log{}, {} fitted, {} failed; summary in {} and {}",
        rows.len(),
        if rows.len() == 1 { "" } else { "s" },
        rows.len() - failed.len(),
        failed.len(),
        csv_path.display(),
        jsonl_path.display()
    );
    match batch::exit_code(&rows) {
        0 => Ok(()),
        3 => Err(Failure {
            code: 3,
            message: format!(
                "the model does not explain some logs: their rows (adequacy not_explained in {}) are not a calibration",
                csv_path.display()
            ),
        }),
        code => Err(Failure {
            code,
            message: format!(
                "{} of {} logs failed (see {})",
                failed.len(),
                rows.len(),
                csv_path.display()
            ),
        }),
    }
}
