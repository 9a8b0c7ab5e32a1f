//! The sheet as Markdown text (`sheet.md`): the same sections and numbers as the HTML page, for
//! readers and tools that work with plain text.

use std::fmt::Write as _;

use crate::report::typeset;

use super::wire;
use super::wording::{coefficient_cells, identity_fields, result_sentences, view_name, yes};

/// The sheet as Markdown text.
pub fn sheet_markdown(doc: &wire::SheetDoc) -> String {
    let mut s = String::new();
    let a = &doc.article;
    if a.name.is_empty() {
        let _ = writeln!(s, "# Coefficient sheet\n");
    } else {
        let _ = writeln!(s, "# Coefficient sheet: {}\n", a.name);
    }
    if !a.description.is_empty() {
        let _ = writeln!(s, "{}\n", a.description);
    }
    let _ = writeln!(s, "## Article and test\n");
    for (k, v) in identity_fields(doc) {
        let _ = writeln!(s, "- **{k}:** {v}");
    }
    let _ = writeln!(s, "\n## Coefficients\n");
    let _ = writeln!(s, "| view | quantity | symbol | value | u | U (k = 2) | unit |");
    let _ = writeln!(s, "|---|---|---|---:|---:|---:|---|");
    for r in &doc.coefficients {
        let (v, u, big) = coefficient_cells(r);
        let _ = writeln!(
            s,
            "| {} | {} | {} | {v} | {u} | {big} | {} |",
            view_name(&r.view),
            r.quantity,
            r.symbol,
            typeset::unit(&r.unit)
        );
    }
    let _ = writeln!(s, "\n**Result.** {}", result_sentences(doc));
    if let Some(c) = &doc.comparison {
        let _ = writeln!(s, "\n## Model verdict\n\n{}\n", c.verdict);
        let _ = writeln!(s, "Measured envelope law: {}.\n", c.envelope_law);
        let _ = writeln!(
            s,
            "| damping | converged | RMS [rad] | AIC | BIC | Ljung–Box p | all significant | explains decay |"
        );
        let _ = writeln!(s, "|---|---|---:|---:|---:|---:|---|---|");
        for e in &c.candidates {
            if e.status == wire::Status::Failed {
                let why = e.error.as_ref().map_or("the fit did not converge", |f| &f.message);
                let _ = writeln!(
                    s,
                    "| {} | failed: {} | | | | | | |",
                    e.damping.join("+"),
                    why.replace('|', "/")
                );
                continue;
            }
            let _ = writeln!(
                s,
                "| {} | yes | {} | {} | {} | {} | {} | {} |",
                e.damping.join("+"),
                typeset::num(e.rms_residual, 3),
                typeset::num(e.aic, 6),
                typeset::num(e.bic, 6),
                typeset::p_value(e.ljung_box_p),
                yes(e.all_significant),
                yes(e.explains_decay)
            );
        }
    }
    let q = &doc.quality;
    let _ = writeln!(s, "\n## Fit quality\n");
    let _ = writeln!(
        s,
        "RMS residual {} rad over {} samples ({} degrees of freedom); condition number {}; {} iterations; intervals: {}.\n",
        typeset::num(q.rms_residual, 3),
        q.samples,
        q.dof,
        typeset::num(q.condition_number, 3),
        q.iterations_total,
        q.interval_method
    );
    let _ = writeln!(s, "| run | RMS residual [rad] | noise floor [rad] | ratio | Ljung–Box p |");
    let _ = writeln!(s, "|---|---:|---:|---:|---:|");
    for r in &q.runs {
        let _ = writeln!(
            s,
            "| {} | {} | {} | {} | {} |",
            r.file,
            typeset::num(r.rms_residual, 3),
            typeset::num(r.noise_floor, 3),
            typeset::num(r.noise_ratio, 3),
            typeset::p_value(r.ljung_box_p)
        );
    }
    for f in &q.flags {
        let _ = writeln!(s, "\n> warning: {f}");
    }
    let _ = writeln!(s, "\n## Plots\n");
    for p in &doc.plots {
        let _ = writeln!(s, "- {}: [{}]({}) ([PNG]({}))", p.title, p.svg, p.svg, p.png);
    }
    let _ = writeln!(s, "\n## Assumptions and limits\n");
    for x in &doc.assumptions {
        let _ = writeln!(s, "- {x}");
    }
    let p = &doc.provenance;
    let _ = writeln!(s, "\n## Provenance\n");
    let _ = writeln!(s, "- {} {}, generated {}", p.tool, p.version, p.generated_utc);
    let _ = writeln!(s, "- command: `{}`", p.command_line);
    for i in &p.inputs {
        let _ = writeln!(s, "- {} {} ({} bytes) sha256 {}", i.role, i.path, i.bytes, i.sha256);
    }
    let _ = writeln!(s, "\n## Safety and use\n\n{}", doc.caution);
    // A figure that could not be computed reads "not available", never `NaN`.
    s.replace("NaN", "not available")
}
