//! The batch summaries: `summary.jsonl` (one `swingfit.batch.v1` object per log) and
//! `summary.csv` (the same rows, flattened), built from the rows of [`crate::batch::run`].
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
//! [`super::fit`]); on an error row every field after `error` is null. `iterations`
//! counts every continuation stage; `rms_residual` and `noise_floor` are in rad.
//!
//! `summary.csv` has the same content, flattened: for each coefficient `NAME`, the columns
//! `NAME`, `NAME_std`, `NAME_ci95_lo`, `NAME_ci95_hi`; physical coefficients are prefixed
//! `phys_`. Empty cells on error rows. Numbers are written in Rust's shortest round-trip form.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::fit::P;
use crate::batch::{Row, RowFit};
use crate::fit::Estimate;
use crate::model::{DampingSet, Term};
use crate::physical::Quantity;

/// Schema tag written on every line of `summary.jsonl`.
pub const BATCH_SCHEMA: &str = "swingfit.batch.v1";

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

/// One line of `summary.jsonl`: a fitted log, or why it has no fit (every field after `error`
/// is null then).
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct BatchRowDoc {
    /// `swingfit.batch.v1`.
    pub schema: String,
    /// The input as given or found.
    pub file: String,
    /// `ok` or `error`.
    pub status: String,
    /// The fit's adequacy verdict.
    pub adequacy: Option<String>,
    /// Fitted terms.
    pub damping: Option<Vec<String>>,
    /// `input` or `rejected`.
    pub error_kind: Option<String>,
    /// The message, as `swingfit fit` would print it.
    pub error: Option<String>,
    /// Samples fitted.
    pub samples: Option<usize>,
    /// Rows dropped by `--drop-bad-rows`.
    pub dropped_rows: Option<usize>,
    /// Iterations over every continuation stage.
    pub iterations: Option<usize>,
    /// RMS residual [rad].
    pub rms_residual: Option<f64>,
    /// Noise floor [rad].
    pub noise_floor: Option<f64>,
    /// ωn and the fitted terms per unit inertia, by key.
    pub normalized: Option<BTreeMap<String, P>>,
    /// J about the pivot and the physical damping coefficients, by key (with an article).
    pub physical: Option<BTreeMap<String, P>>,
    /// What was cut before fitting.
    pub notes: Option<Vec<String>>,
}

/// The wire row of one batch row.
pub fn row_doc(row: &Row) -> BatchRowDoc {
    match &row.result {
        Ok(f) => {
            let mut normalized = BTreeMap::new();
            normalized.insert("omega_n".to_string(), P::from(&f.omega_n));
            for (t, e) in &f.terms {
                normalized.insert(t.name().to_string(), P::from(e));
            }
            let physical = f.physical.as_ref().map(|p| {
                let mut m = BTreeMap::new();
                m.insert("inertia_pivot".to_string(), P::from(&p.inertia_pivot));
                for t in Term::ALL {
                    if let Some(q) = &p.damping[t.index()] {
                        m.insert(t.name().to_string(), P::from(q));
                    }
                }
                m
            });
            BatchRowDoc {
                schema: BATCH_SCHEMA.into(),
                file: row.file.clone(),
                status: "ok".into(),
                adequacy: Some(f.adequacy.name().into()),
                damping: Some(super::names(f.damping)),
                error_kind: None,
                error: None,
                samples: Some(f.samples),
                dropped_rows: Some(f.dropped_rows),
                iterations: Some(f.iterations),
                rms_residual: Some(f.rms_residual),
                noise_floor: Some(f.noise_floor),
                normalized: Some(normalized),
                physical,
                notes: Some(f.notes.clone()),
            }
        }
        Err(e) => BatchRowDoc {
            schema: BATCH_SCHEMA.into(),
            file: row.file.clone(),
            status: "error".into(),
            adequacy: None,
            damping: None,
            error_kind: Some(e.kind.name().into()),
            error: Some(e.message.clone()),
            samples: None,
            dropped_rows: None,
            iterations: None,
            rms_residual: None,
            noise_floor: None,
            normalized: None,
            physical: None,
            notes: None,
        },
    }
}

/// `summary.jsonl`: one `swingfit.batch.v1` object per row, in the order of `rows`.
pub fn summary_jsonl(rows: &[Row]) -> String {
    let mut out = String::new();
    for row in rows {
        // Plain structs and string-keyed maps always serialize; NaN becomes null.
        out.push_str(
            &serde_json::to_string(&row_doc(row))
                .unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}")),
        );
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::batch::{ErrorKind, RowError};
    use crate::fit::adequacy::Adequacy;

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
}
