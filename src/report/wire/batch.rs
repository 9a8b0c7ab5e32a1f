//! The batch summaries: `summary.jsonl` (one `swingfit.batch.v2` object per log) and
//! `summary.csv` (the same rows, flattened), built from the rows of [`crate::batch::run`].
//!
//! ## Wire format `swingfit.batch.v2` (one JSON object per line of `summary.jsonl`)
//! ```text
//! { "schema": "swingfit.batch.v2", "file": "…", "status": "ok" | "failed",
//!   "error": { "kind": "input" | "rejected", "message": "…" } | null,
//!   "adequacy": "explained" | "approximate" | "not_explained" | null, "damping": [..] | null,
//!   "samples": n, "dropped_rows": n, "iterations": n, "rms_residual": r, "noise_floor": s,
//!   "normalized": { …as in swingfit.fit.v2… },   fitted terms only
//!   "physical": { …as in swingfit.fit.v2… }      only with mass and pivot-to-CG (or an article)
//!   "notes": [ "…" ]   what was cut before fitting (rest, holds, forced swings, re-timed slips)
//! }
//! ```
//! `normalized` and `physical` are the fit document's blocks ([`super::fit::Normalized`],
//! [`super::fit::Physical`]); on a failed row every field after `error` is null. `iterations`
//! counts every continuation stage; `rms_residual` and `noise_floor` are in rad. v1 wrote
//! `"status": "error"` with `error_kind` and `error` (the message), and only `inertia_pivot` and
//! the damping terms under `physical`, each with a `ci95` that was value ± U.
//!
//! `summary.csv` has the same content, flattened (the `error` object as `error_kind` and
//! `error`, `damping` as `viscous+coulomb`): for each per-unit-inertia coefficient `NAME` the
//! columns `NAME`, `NAME_std`, `NAME_ci95_lo`, `NAME_ci95_hi`; for J about the pivot and each
//! physical damping coefficient `phys_NAME`, `phys_NAME_std`, `phys_NAME_expanded` (U, k = 2).
//! Empty cells on failed rows. Numbers are written in Rust's shortest round-trip form.

use serde::{Deserialize, Serialize};

use super::fit::{Estimated, Expanded, Normalized, Physical, physical_doc};
use super::{Failure, FailureKind, Status};
use crate::batch::{ErrorKind, Row};
use crate::model::{DampingSet, Term};

/// Schema tag written on every line of `summary.jsonl`.
pub const BATCH_SCHEMA: &str = "swingfit.batch.v2";

/// One line of `summary.jsonl`: a fitted log, or why it has no fit (every field after `error`
/// is null then).
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct BatchRowDoc {
    /// `swingfit.batch.v2`.
    pub schema: String,
    /// The input as given or found.
    pub file: String,
    /// `ok` or `failed`.
    pub status: Status,
    /// Why there is no fit (null on an `ok` row).
    pub error: Option<Failure>,
    /// The fit's adequacy verdict.
    pub adequacy: Option<String>,
    /// Fitted terms.
    pub damping: Option<Vec<String>>,
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
    /// ωn and the fitted terms per unit inertia.
    pub normalized: Option<Normalized>,
    /// The physical coefficients (with mass properties).
    pub physical: Option<Physical>,
    /// What was cut before fitting.
    pub notes: Option<Vec<String>>,
}

/// The wire row of one batch row.
pub fn row_doc(row: &Row) -> BatchRowDoc {
    let empty = BatchRowDoc {
        schema: BATCH_SCHEMA.into(),
        file: row.file.clone(),
        status: Status::Failed,
        error: None,
        adequacy: None,
        damping: None,
        samples: None,
        dropped_rows: None,
        iterations: None,
        rms_residual: None,
        noise_floor: None,
        normalized: None,
        physical: None,
        notes: None,
    };
    match &row.result {
        Ok(f) => {
            let term =
                |t: Term| f.terms.iter().find(|(u, _)| *u == t).map(|(_, e)| Estimated::from(e));
            BatchRowDoc {
                status: Status::Ok,
                adequacy: Some(f.adequacy.name().into()),
                damping: Some(super::names(f.damping)),
                samples: Some(f.samples),
                dropped_rows: Some(f.dropped_rows),
                iterations: Some(f.iterations),
                rms_residual: Some(f.rms_residual),
                noise_floor: Some(f.noise_floor),
                normalized: Some(Normalized {
                    omega_n: Estimated::from(&f.omega_n),
                    viscous: term(Term::Viscous),
                    coulomb: term(Term::Coulomb),
                    quadratic: term(Term::Quadratic),
                    presliding: term(Term::Presliding),
                    stribeck: term(Term::Stribeck),
                    stribeck_velocity: term(Term::StribeckVelocity),
                }),
                physical: f.physical.as_ref().map(physical_doc),
                notes: Some(f.notes.clone()),
                ..empty
            }
        }
        Err(e) => BatchRowDoc {
            error: Some(Failure {
                kind: match e.kind {
                    ErrorKind::Input => FailureKind::Input,
                    ErrorKind::Rejected => FailureKind::Rejected,
                },
                message: e.message.clone(),
            }),
            ..empty
        },
    }
}

/// `summary.jsonl`: one `swingfit.batch.v2` object per row, in the order of `rows`.
pub fn summary_jsonl(rows: &[BatchRowDoc]) -> String {
    let mut out = String::new();
    for row in rows {
        // Plain structs always serialize; NaN becomes null.
        out.push_str(
            &serde_json::to_string(row).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}")),
        );
        out.push('\n');
    }
    out
}

/// The columns a summary needs: the batch's damping set widened by every term any row fitted
/// (an article may fit other terms), and physical columns when any row has them.
pub fn summary_columns(
    rows: &[BatchRowDoc],
    base: DampingSet,
    physical: bool,
) -> (DampingSet, bool) {
    let mut set = base;
    let mut phys = physical;
    for r in rows {
        for t in Term::ALL {
            if r.normalized.as_ref().is_some_and(|n| n.term(t).is_some()) {
                set = set.with(t);
            }
        }
        phys |= r.physical.is_some();
    }
    (set, phys)
}

/// Shortest round-trip form of a number (`NaN`, `inf` as Rust prints them).
fn num(v: f64) -> String {
    format!("{v}")
}

/// One coefficient's cells: per unit inertia (value, std, ci95 lo, hi) or physical (value,
/// std, U).
enum Cells<'a> {
    Normalized(Option<&'a Estimated>),
    Physical(Option<&'a Expanded>),
}

impl Cells<'_> {
    fn write(&self, rec: &mut Vec<String>) {
        match self {
            Cells::Normalized(Some(e)) => {
                rec.extend([num(e.value), num(e.std), num(e.ci95[0]), num(e.ci95[1])]);
            }
            Cells::Normalized(None) => rec.extend(std::iter::repeat_n(String::new(), 4)),
            Cells::Physical(Some(q)) => rec.extend([num(q.value), num(q.std), num(q.expanded)]),
            Cells::Physical(None) => rec.extend(std::iter::repeat_n(String::new(), 3)),
        }
    }
}

/// The coefficient groups of the CSV in column order: (name, physical?).
fn groups(damping: DampingSet, physical: bool) -> Vec<(String, bool)> {
    let mut v = vec![("omega_n".to_string(), false)];
    v.extend(damping.iter().map(|t| (t.name().to_string(), false)));
    if physical {
        v.push(("phys_inertia_pivot".into(), true));
        v.extend(damping.iter().map(|t| (format!("phys_{}", t.name()), true)));
    }
    v
}

/// `summary.csv`: a header and one row per log, in the order of `rows`. `physical` adds the
/// physical columns (pass whether an article was given); see [`summary_columns`].
pub fn summary_csv(rows: &[BatchRowDoc], damping: DampingSet, physical: bool) -> String {
    let groups = groups(damping, physical);
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
        "rms_residual",
        "noise_floor",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    for (n, phys) in &groups {
        if *phys {
            header.extend([n.clone(), format!("{n}_std"), format!("{n}_expanded")]);
        } else {
            header.extend([
                n.clone(),
                format!("{n}_std"),
                format!("{n}_ci95_lo"),
                format!("{n}_ci95_hi"),
            ]);
        }
    }
    let opt = |v: Option<String>| v.unwrap_or_default();
    let mut records: Vec<Vec<String>> = vec![header];
    for row in rows {
        let mut rec = vec![
            row.file.clone(),
            match row.status {
                Status::Ok => "ok".into(),
                Status::Failed => "failed".into(),
            },
            opt(row.adequacy.clone()),
            opt(row.damping.as_ref().map(|d| d.join("+"))),
            opt(row.error.as_ref().map(|e| match e.kind {
                FailureKind::Input => "input".into(),
                FailureKind::Rejected => "rejected".into(),
            })),
            opt(row.error.as_ref().map(|e| e.message.clone())),
            opt(row.samples.map(|n| n.to_string())),
            opt(row.dropped_rows.map(|n| n.to_string())),
            opt(row.iterations.map(|n| n.to_string())),
            opt(row.rms_residual.map(num)),
            opt(row.noise_floor.map(num)),
        ];
        let n = row.normalized.as_ref();
        let p = row.physical.as_ref();
        Cells::Normalized(n.map(|n| &n.omega_n)).write(&mut rec);
        for t in damping.iter() {
            Cells::Normalized(n.and_then(|n| n.term(t))).write(&mut rec);
        }
        if physical {
            Cells::Physical(p.map(|p| &p.inertia_pivot)).write(&mut rec);
            for t in damping.iter() {
                Cells::Physical(p.and_then(|p| p.term(t))).write(&mut rec);
            }
        }
        records.push(rec);
    }
    let mut w =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    for rec in &records {
        // Writing to a Vec cannot fail, and every record has the header's length.
        if w.write_record(rec).is_err() {
            break;
        }
    }
    let bytes = w.into_inner().unwrap_or_default();
    String::from_utf8_lossy(&bytes).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::batch::{RowError, RowFit};
    use crate::fit::Estimate;
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
        let rows = [row_doc(&ok_row("a.csv")), row_doc(&bad_row("b.csv", ErrorKind::Input))];
        let text = summary_csv(&rows, set, false);
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
            "b.csv,failed,,,input,\"b.csv:3: expected a number, found \"\"x, y\"\"\",,,,,,,,,,,,,,,,,"
        );
        let header_fields = lines[0].split(',').count();
        let mut r = csv::Reader::from_reader(text.as_bytes());
        for rec in r.records() {
            assert_eq!(rec.map(|r| r.len()).unwrap_or(0), header_fields);
        }
    }

    #[test]
    fn jsonl_is_one_object_per_row_with_nulls_on_errors() {
        let rows = [row_doc(&ok_row("a.csv")), row_doc(&bad_row("b.csv", ErrorKind::Rejected))];
        let text = summary_jsonl(&rows);
        let lines: Vec<serde_json::Value> = text
            .lines()
            .map(|l| serde_json::from_str(l).unwrap_or(serde_json::Value::Null))
            .collect();
        assert_eq!(lines.len(), 2);
        assert_eq!(lines[0]["normalized"]["coulomb"]["ci95"][1].as_f64(), Some(0.034));
        assert_eq!(lines[0]["iterations"].as_u64(), Some(12));
        assert_eq!(lines[1]["status"], "failed");
        assert_eq!(lines[1]["error"]["kind"], "rejected");
        assert!(lines[0]["error"].is_null());
        assert!(lines[1]["normalized"].is_null() && lines[1]["samples"].is_null());
    }
}
