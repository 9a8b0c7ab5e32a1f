//! `swingfit sheet ARTICLE.toml --out DIR` or `swingfit sheet LOG… --out DIR`: fit an article and
//! write its coefficient sheet (HTML, Markdown, JSON and every plot) into a new directory.
//!
//! Everything that can be refused is refused before any output exists: the article file, the
//! logs, an existing DIR without `--force`, a rejected fit. The sheet is then built beside DIR
//! and renamed into place whole.

use std::path::{Path, PathBuf};

use clap::Args;

use super::fit::{ArticleArgs, EstimatorArgs, article, load_all, physical_of};
use super::{CmdResult, Failure, LoaderArgs};
use crate::article::{self as article_file, DampingChoice};
use crate::fit::workflow;
use crate::report::plot::RunView;
use crate::report::sheet::{self, Identity, InputDigest, Provenance, SheetInput};

/// Arguments of `sheet`.
#[derive(Args, Debug)]
pub struct SheetArgs {
    /// One article file (.toml), or the logs of one article (CSV).
    #[arg(required = true, value_name = "ARTICLE.toml|LOG")]
    pub inputs: Vec<PathBuf>,
    /// Directory to create for the sheet.
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Replace DIR whole if it exists.
    #[arg(long)]
    pub force: bool,
    /// Name of the article on the sheet (logs mode; the article file has its own).
    #[arg(long, value_name = "NAME")]
    pub article: Option<String>,
    /// Compare every damping set and fit the one the comparison picks.
    #[arg(long)]
    pub compare: bool,
    /// Also write sheet.pdf, printed by a headless Chromium (refused, exit 2, when none is
    /// installed).
    #[arg(long)]
    pub pdf: bool,
    /// Loader options (logs mode).
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Estimator options (`--damping auto` compares, like `--compare`).
    #[command(flatten)]
    pub estimator: EstimatorArgs,
    /// Mass properties and gravity (logs mode).
    #[command(flatten)]
    pub mass: ArticleArgs,
}

/// What the inputs resolve to before any log is read.
struct Plan {
    identity: Identity,
    physical: Option<crate::physical::ArticleInputs>,
    /// (path, loader options, label) of every log.
    logs: Vec<(PathBuf, LoaderArgs, String)>,
    damping: DampingChoice,
    article_file: Option<PathBuf>,
}

fn is_article_file(p: &Path) -> bool {
    p.extension().is_some_and(|e| e.eq_ignore_ascii_case("toml"))
}

fn loader_of(o: &crate::data::LoadOptions) -> LoaderArgs {
    LoaderArgs {
        time_col: o.time_col.clone(),
        angle_col: o.angle_col.clone(),
        time_unit: o.time_unit.clone(),
        angle_unit: o.angle_unit.clone(),
        counts_per_rev: o.counts_per_rev,
        counts_wrap: o.counts_wrap,
        skip_lines: o.skip_lines,
        rate: o.rate_hz,
        duplicate_times: Some(o.duplicate_times),
        signal_scale: o.signal_scale.clone(),
        signal_zero: o.signal_zero,
        drop_bad_rows: o.drop_bad_rows,
        from: o.from_s,
        to: o.to_s,
        keep_slips: o.keep_slips,
    }
}

fn file_label(p: &Path) -> String {
    p.file_name().map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned())
}

fn plan(args: &SheetArgs) -> Result<Plan, Failure> {
    let given = args.estimator.choice()?;
    let auto_flag =
        args.compare || (args.estimator.damping.is_some() && given == DampingChoice::Auto);
    match args.inputs.as_slice() {
        [one] if is_article_file(one) => {
            if args.mass.mass.is_some() || args.mass.pivot_to_cg.is_some() || args.article.is_some()
            {
                return Err(Failure::input(format!(
                    "{}: the article file gives the name, mass and pivot-to-CG; drop --article, --mass and --pivot-to-cg",
                    one.display()
                )));
            }
            let spec = article_file::load(one).map_err(Failure::input)?;
            let damping = if auto_flag { DampingChoice::Auto } else { spec.damping };
            Ok(Plan {
                identity: Identity {
                    id: spec.id.clone(),
                    name: spec.name.clone(),
                    description: spec.description.clone(),
                    rig: spec.rig.clone(),
                    operator: spec.operator.clone(),
                    notes: spec.notes.clone(),
                    mass: Some(spec.physical.mass),
                    pivot_to_cg: Some(spec.physical.pivot_to_cg),
                    gravity: Some(spec.gravity_words.clone()),
                },
                logs: spec
                    .runs
                    .iter()
                    .map(|r| {
                        (
                            r.log.clone(),
                            loader_of(&r.load),
                            r.label.clone().unwrap_or_else(|| file_label(&r.log)),
                        )
                    })
                    .collect(),
                physical: Some(spec.physical),
                damping,
                article_file: Some(one.clone()),
            })
        }
        paths => {
            if let Some(p) = paths.iter().find(|p| is_article_file(p)) {
                return Err(Failure::input(format!(
                    "{}: an article file must be the only input (logs are listed inside it)",
                    p.display()
                )));
            }
            let physical = article(&args.mass)?;
            let damping = if args.compare { DampingChoice::Auto } else { given };
            // No name given: the sheet says so rather than inventing one.
            let name = args.article.clone().unwrap_or_default();
            Ok(Plan {
                identity: Identity {
                    id: name.clone(),
                    name,
                    mass: physical.as_ref().map(|a| a.mass),
                    pivot_to_cg: physical.as_ref().map(|a| a.pivot_to_cg),
                    gravity: physical.as_ref().map(|a| a.gravity.describe()),
                    ..Identity::default()
                },
                logs: paths
                    .iter()
                    .map(|p| (p.clone(), args.loader.clone(), file_label(p)))
                    .collect(),
                physical,
                damping,
                article_file: None,
            })
        }
    }
}

/// Run `sheet`.
pub fn run(args: &SheetArgs) -> CmdResult {
    let plan = plan(args)?;
    sheet::check_destination(&args.out, args.force).map_err(Failure::input)?;
    let browser = if args.pdf {
        Some(crate::report::pdf::find_browser().map_err(Failure::input)?)
    } else {
        None
    };
    let base = args.estimator.options()?;
    let mut logs = Vec::new();
    for (path, loader, _) in &plan.logs {
        logs.extend(load_all(std::slice::from_ref(path), loader)?);
    }
    let mut inputs = Vec::new();
    if let Some(a) = &plan.article_file {
        inputs.push(
            InputDigest::of_file("article", a)
                .map_err(|e| Failure::input(format!("{}: {e}", a.display())))?,
        );
    }
    for (path, _, _) in &plan.logs {
        inputs.push(
            InputDigest::of_file("log", path)
                .map_err(|e| Failure::input(format!("{}: {e}", path.display())))?,
        );
    }
    let chosen = workflow::choose_and_fit(&logs, plan.damping, &base).map_err(Failure::rejected)?;
    let choice = crate::report::verdict::choice_line(&chosen);
    let outcome = &chosen.outcome;
    let comparison = chosen.comparison();
    let physical = physical_of(outcome, plan.physical.as_ref())?;
    let runs: Vec<RunView<'_>> = logs
        .iter()
        .zip(&outcome.runs)
        .zip(&plan.logs)
        .map(|((l, r), (_, _, label))| RunView::new(label, l, r))
        .collect();
    let argv: Vec<String> = std::env::args_os().map(|a| a.to_string_lossy().into_owned()).collect();
    let input = SheetInput {
        identity: plan.identity,
        runs,
        fit: outcome,
        physical: physical.as_ref(),
        comparison,
        damping_auto: matches!(plan.damping, DampingChoice::Auto),
        provenance: Provenance::now(&argv, inputs),
    };
    let written = sheet::write_sheet_with_pdf(&args.out, args.force, &input, browser.as_deref())
        .map_err(Failure::input)?;
    println!("wrote {} ({} files)", written.dir.display(), written.files.len());
    print!(
        "{}",
        crate::report::table::fit_table(
            outcome,
            physical.as_ref(),
            plan.physical.as_ref(),
            Some(&choice)
        )
    );
    super::fit::adequacy_exit(outcome)
}
