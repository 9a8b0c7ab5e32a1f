//! The words both page renderings share (Markdown and HTML): the identity block, the one- or
//! two-sentence result, the names of runs and coefficient views, and the typeset cells of a
//! coefficient row, so the two renderings cannot say different things.

use std::path::Path;

use crate::report::typeset;

use super::model::CoefficientRow;
use super::wire;

pub(super) fn view_name(v: &str) -> &'static str {
    if v == "physical" { "physical" } else { "per unit inertia" }
}

pub(super) fn view_title(v: &str) -> &'static str {
    if v == "physical" {
        "Physical, with the stated mass, pivot-to-CG distance and gravity"
    } else {
        "Per unit inertia (identified by the free decay alone)"
    }
}

/// The identity block of the sheet, (label, text) in order, shared by the HTML and Markdown
/// renderings so that both say the same.
pub(super) fn identity_fields(doc: &wire::SheetDoc) -> Vec<(&'static str, String)> {
    let a = &doc.article;
    let mut v: Vec<(&'static str, String)> = Vec::new();
    if a.name.is_empty() {
        v.push(("Article", "not named (give --article NAME, or use an article file)".into()));
    } else if a.id != a.name && !a.id.is_empty() {
        v.push(("Article id", a.id.clone()));
    }
    if let Some(r) = &a.rig {
        v.push(("Rig", r.clone()));
    }
    if let Some(o) = &a.operator {
        v.push(("Operator", o.clone()));
    }
    // Mass properties on one line: mass, pivot-to-CG distance (each with its standard
    // uncertainty) and gravity.
    let mut basis = Vec::new();
    if let Some(m) = &a.mass {
        basis.push(format!(
            "mass {}",
            crate::report::table::stated(m.value, m.std, "kg", "").trim()
        ));
    }
    if let Some(d) = &a.pivot_to_cg {
        basis.push(format!(
            "pivot to CG {}",
            crate::report::table::stated(d.value, d.std, "m", "").trim()
        ));
    }
    if let Some(g) = &a.gravity {
        basis.push(typeset::unit(g));
    }
    if !basis.is_empty() {
        v.push(("Mass properties", basis.join("; ")));
    }
    for r in &doc.runs {
        v.push((
            "Run",
            format!("{} — {} samples fitted; {:.2} s logged", run_name(r), r.samples, r.duration_s),
        ));
    }
    let how = if doc.damping.choice == "auto" {
        "chosen by the model comparison"
    } else {
        "as requested"
    };
    v.push(("Damping fitted", format!("{} ({how})", doc.damping.fitted.join(" + "))));
    if let Some(n) = &a.notes {
        v.push(("Notes", n.clone()));
    }
    v
}

pub(super) fn yes(b: bool) -> &'static str {
    if b { "yes" } else { "no" }
}

/// The first sentence of a verdict (up to the first ". "), for page one; the whole verdict is in
/// the evidence appendix.
pub fn first_sentence(text: &str) -> &str {
    text.find(". ").map_or(text, |i| &text[..=i])
}

/// The run as named on the sheet: its label, and the file only when it differs from the label.
pub(super) fn run_name(r: &wire::SheetRun) -> String {
    // The file by its name only (the full path is in the provenance appendix).
    let base = Path::new(&r.file)
        .file_name()
        .map_or_else(|| r.file.clone(), |n| n.to_string_lossy().into_owned());
    if r.label == r.file || base == r.label { base } else { format!("{} ({base})", r.label) }
}

/// The result in one or two sentences: the damping fitted and why.
pub fn result_sentences(doc: &wire::SheetDoc) -> String {
    let set = doc.damping.fitted.join(" + ");
    let damping = damping_sentence(doc, &set);
    format!("{} {damping}", doc.fit.adequacy.summary.trim_end())
}

/// How the damping set was chosen, in one sentence.
pub(super) fn damping_sentence(doc: &wire::SheetDoc, set: &str) -> String {
    match &doc.comparison {
        Some(c) => format!(
            "Damping {set}, chosen by comparing {} candidate sets: {}",
            c.candidates.len(),
            first_sentence(&c.verdict)
        ),
        None => format!(
            "Damping {set}, fitted as requested; no comparison of candidate sets was run (damping \"auto\" or --compare runs one)."
        ),
    }
}

/// The value, u and U cells of a coefficient row, typeset (GUM: U to two significant digits,
/// value and u to the same decimal place).
pub(super) fn coefficient_cells(r: &CoefficientRow) -> (String, String, String) {
    let (v, big) = typeset::format_pair(r.value, r.expanded);
    let (_, u) = typeset::format_pair(r.value, r.std);
    (typeset::minus(&v), typeset::minus(&u), typeset::minus(&big))
}
