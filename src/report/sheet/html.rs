//! The sheet as one self-contained HTML page (`sheet.html`): inline SVG, no scripts, an A4 print
//! layout whose stylesheet is the asset file `sheet.css` beside this file. Page one holds the
//! result; the appendices follow.

use std::fmt::Write as _;

use crate::report::{plot, typeset};

use super::wire;
use super::wording::{coefficient_cells, identity_fields, result_sentences, view_title, yes};

/// Escape text for HTML.
pub fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            c => o.push(c),
        }
    }
    o
}

/// The print and screen style of the page, kept as a stylesheet file of its own.
const CSS: &str = include_str!("sheet.css");

/// Make a plotters SVG scale with the page: drop the fixed size, keep a viewBox.
fn responsive_svg(svg: &str) -> String {
    let head = format!("<svg width=\"{}\" height=\"{}\"", plot::WIDTH, plot::HEIGHT);
    let body = svg.trim_start_matches(|c| c != '<');
    let body = body
        .strip_prefix("<?xml")
        .map_or(body, |rest| rest.split_once("?>").map_or(rest, |(_, b)| b.trim_start()));
    if body.starts_with(&head) {
        let rest = &body[head.len()..];
        let view = if rest.contains("viewBox") {
            String::new()
        } else {
            format!(" viewBox=\"0 0 {} {}\"", plot::WIDTH, plot::HEIGHT)
        };
        format!("<svg role=\"img\"{view}{rest}")
    } else {
        body.to_string()
    }
}

fn figure(h: &mut String, p: &wire::Plot, svg: &str, class: &str) {
    let _ = writeln!(
        h,
        "<figure id=\"plot-{}\" class=\"{class}\">\n{}\n<figcaption>{} (files {}, {})</figcaption>\n</figure>",
        esc(&p.stem),
        responsive_svg(svg),
        esc(&p.title),
        esc(&p.svg),
        esc(&p.png)
    );
}

/// The stem of the plot on page one: the first cycles of the first run, where measured samples
/// and model can both be seen.
pub const PAGE_ONE_PLOT: &str = "run1_first_cycles";

/// The sheet as one self-contained HTML page; `svgs` are the rendered charts, in `doc.plots` order.
/// Page one holds the result (identity, coefficients, verdict, the fit plot, sign-off); the rest
/// follows as appendices, the first starting a new printed page.
pub fn sheet_html(doc: &wire::SheetDoc, svgs: &[String]) -> String {
    let mut h = String::new();
    let a = &doc.article;
    let title = if a.name.is_empty() {
        "Coefficient sheet".to_string()
    } else {
        format!("Coefficient sheet: {}", a.name)
    };
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n<main id=\"page-one\">\n",
        esc(&title)
    );
    let _ = writeln!(h, "<header id=\"identity\">\n<h1>{}</h1>", esc(&title));
    if !a.description.is_empty() {
        let _ = writeln!(h, "<p class=\"desc\">{}</p>", esc(&a.description));
    }
    let _ = writeln!(h, "<dl class=\"ident\">");
    for (k, v) in identity_fields(doc) {
        let _ = writeln!(h, "<dt>{}</dt><dd>{}</dd>", esc(k), esc(&v));
    }
    let _ = writeln!(h, "</dl>\n</header>");

    let _ = writeln!(h, "<section id=\"coefficients\">\n<h2>Coefficients</h2>");
    let _ = writeln!(
        h,
        "<table class=\"coefficients\">\n<thead><tr><th>quantity</th><th>symbol</th><th>value</th><th>u</th><th>U (k = 2)</th><th>unit</th></tr></thead>\n<tbody>"
    );
    let mut view = "";
    for r in &doc.coefficients {
        if r.view != view {
            view = &r.view;
            let _ =
                writeln!(h, "<tr class=\"view\"><th colspan=\"6\">{}</th></tr>", view_title(view));
        }
        let (v, u, big) = coefficient_cells(r);
        let _ = writeln!(
            h,
            "<tr data-key=\"{}:{}\"><td>{}</td><td>{}</td><td class=\"num\">{v}</td><td class=\"num\">{u}</td><td class=\"num\">{big}</td><td>{}</td></tr>",
            r.view,
            r.key,
            esc(&r.quantity),
            esc(&r.symbol),
            esc(&typeset::unit(&r.unit))
        );
    }
    let _ = writeln!(
        h,
        "</tbody>\n</table>\n<p class=\"note\">u: combined standard uncertainty; U = 2u: expanded uncertainty, coverage factor k = 2 (about 95 % for a normal distribution); values rounded to the decimal place of U (two significant digits of U). Full precision in sheet.json.</p>\n</section>"
    );

    let _ = writeln!(h, "<section id=\"verdict\">\n<h2>Result</h2>");
    let _ = writeln!(
        h,
        "<p class=\"verdict\">{}</p>",
        typeset::code_spans_html(&result_sentences(doc))
    );
    for f in &doc.quality.flags {
        let _ = writeln!(h, "<p class=\"warn\">Warning: {}</p>", typeset::code_spans_html(f));
    }
    let _ = writeln!(h, "</section>");

    let mut page_one_done = false;
    if let Some((p, svg)) = doc.plots.iter().zip(svgs).find(|(p, _)| p.stem == PAGE_ONE_PLOT) {
        figure(&mut h, p, svg, "main");
        page_one_done = true;
    }
    let _ = writeln!(
        h,
        "<section id=\"signoff\">\n<table class=\"signoff\">\n<tbody>\n<tr><th>performed by</th><td>{}</td><th>date</th><td></td><th>checked by</th><td></td><th>date</th><td></td></tr>\n</tbody>\n</table>\n</section>\n</main>",
        esc(a.operator.as_deref().unwrap_or(""))
    );

    let _ = writeln!(
        h,
        "<section id=\"evidence\" class=\"appendix first\">\n<h2>Appendix A. Evidence per candidate damping set</h2>"
    );
    match &doc.comparison {
        Some(c) => {
            let _ = writeln!(
                h,
                "<p>{}</p>\n<p>Measured envelope law: {}.</p>",
                typeset::code_spans_html(&c.verdict),
                esc(&c.envelope_law)
            );
            let _ = writeln!(
                h,
                "<table class=\"candidates\">\n<thead><tr><th>damping</th><th>RMS residual [rad]</th><th>AIC</th><th>BIC</th><th>Ljung–Box p</th><th>all terms significant</th><th>explains decay</th></tr></thead>\n<tbody>"
            );
            for e in &c.candidates {
                let chosen = c.best.as_ref() == Some(&e.damping);
                let name = format!(
                    "{}{}",
                    esc(&e.damping.join("+")).replace('+', "+<wbr>"),
                    if chosen { " <b>(chosen)</b>" } else { "" }
                );
                match (&e.error, e.status) {
                    (Some(m), _) => {
                        let _ = writeln!(
                            h,
                            "<tr class=\"failed\"><td>{name}</td><td colspan=\"6\">failed: {}</td></tr>",
                            typeset::code_spans_html(&m.message)
                        );
                    }
                    (None, wire::Status::Failed) => {
                        let _ = writeln!(
                            h,
                            "<tr class=\"failed\"><td>{name}</td><td colspan=\"6\">failed: the fit did not converge</td></tr>"
                        );
                    }
                    (None, wire::Status::Ok) => {
                        let _ = writeln!(
                            h,
                            "<tr><td>{name}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td><td>{}</td></tr>",
                            typeset::num(e.rms_residual, 3),
                            typeset::num(e.aic, 6),
                            typeset::num(e.bic, 6),
                            typeset::p_value(e.ljung_box_p),
                            yes(e.all_significant),
                            yes(e.explains_decay)
                        );
                    }
                }
            }
            let _ = writeln!(h, "</tbody>\n</table>");
        }
        None => {
            let _ = writeln!(h, "<p>{}</p>", typeset::code_spans_html(&result_sentences(doc)));
        }
    }
    let _ = writeln!(h, "</section>");

    let q = &doc.quality;
    let _ = writeln!(
        h,
        "<section id=\"quality\" class=\"appendix\">\n<h2>Appendix B. Fit quality</h2>"
    );
    let _ = writeln!(
        h,
        "<p>RMS residual {} rad over {} samples ({} degrees of freedom); condition number of the scaled normal equations {}; {} iterations; intervals: {}.</p>",
        typeset::num(q.rms_residual, 3),
        q.samples,
        q.dof,
        typeset::num(q.condition_number, 3),
        q.iterations_total,
        esc(&q.interval_method)
    );
    let _ = writeln!(
        h,
        "<table>\n<thead><tr><th>run</th><th>RMS residual [rad]</th><th>noise floor [rad]</th><th>ratio</th><th>Ljung–Box p</th></tr></thead>\n<tbody>"
    );
    for r in &q.runs {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
            esc(&r.file),
            typeset::num(r.rms_residual, 3),
            typeset::num(r.noise_floor, 3),
            typeset::num(r.noise_ratio, 3),
            typeset::p_value(r.ljung_box_p)
        );
    }
    let _ = writeln!(h, "</tbody>\n</table>\n</section>");

    let _ = writeln!(
        h,
        "<section id=\"plots\" class=\"appendix\">\n<h2>Appendix C. Plots per run</h2>\n<div class=\"grid\">"
    );
    for (p, svg) in doc.plots.iter().zip(svgs) {
        if page_one_done && p.stem == PAGE_ONE_PLOT {
            continue;
        }
        figure(&mut h, p, svg, "half");
    }
    let _ = writeln!(h, "</div>\n</section>");

    let _ = writeln!(
        h,
        "<section id=\"assumptions\" class=\"appendix\">\n<h2>Appendix D. Assumptions and limits</h2>\n<ul>"
    );
    for x in &doc.assumptions {
        let _ = writeln!(h, "<li>{}</li>", esc(x));
    }
    let _ = writeln!(h, "</ul>\n</section>");

    let p = &doc.provenance;
    let _ = writeln!(
        h,
        "<section id=\"provenance\" class=\"appendix\">\n<h2>Appendix E. Provenance</h2>"
    );
    let _ = writeln!(
        h,
        "<p>{} {}, generated {} (UTC).</p>\n<p>Command: <code>{}</code></p>",
        esc(&p.tool),
        esc(&p.version),
        esc(&p.generated_utc),
        esc(&p.command_line)
    );
    let _ = writeln!(
        h,
        "<table>\n<thead><tr><th>input</th><th>file</th><th>bytes</th><th>SHA-256</th></tr></thead>\n<tbody>"
    );
    for i in &p.inputs {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"mono\">{}</td></tr>",
            esc(&i.role),
            esc(&i.path),
            i.bytes,
            esc(&i.sha256)
        );
    }
    let _ = writeln!(h, "</tbody>\n</table>\n</section>");
    let _ = writeln!(
        h,
        "<section id=\"caution\" class=\"appendix\">\n<h2>Appendix F. Safety and use</h2>\n<p class=\"caution\">{}</p>\n</section>\n</body>\n</html>",
        esc(&doc.caution)
    );
    h
}
