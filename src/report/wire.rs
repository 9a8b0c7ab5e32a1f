//! The wire layer: every JSON and CSV format swingfit writes, and reads back, in one place.
//!
//! Other programs read these files, so their layouts are a contract: each document carries a
//! `schema` tag, keys are added freely, and a key is never renamed or removed without a new
//! version. The types here are the formats: each derives `Serialize` and `Deserialize` (a test
//! per schema writes a document, reads it back and writes it again, byte for byte), and each is
//! built from the library's results by one function. The core types (`FitOutcome`,
//! `Comparison`, `Survey`) are not serializable; only this layer knows the keys.
//!
//! | schema | file | type | built by |
//! |---|---|---|---|
//! | `swingfit.fit.v2` | `fit --json` | [`fit::FitDoc`] | [`fit::fit_doc`] |
//! | `swingfit.compare.v2` | `compare --json` | [`compare::CompareDoc`] | [`compare::compare_doc`] |
//! | `swingfit.batch.v2` | `batch`: `summary.jsonl`, `summary.csv` | [`batch::BatchRowDoc`] | [`batch::row_doc`], [`batch::summary_jsonl`], [`batch::summary_csv`] |
//! | `swingfit.check.v1` | `check --json` | [`check::CheckDoc`] | [`check::check_doc`] |
//! | `swingfit.sheet.v2` | `sheet`: `sheet.json` | [`sheet::SheetDoc`] | `report::sheet::sheet_doc` |
//! | params | `simulate --params`, `plan --params` (read) | [`params::PlainParams`] | [`params::read`] |
//!
//! The plan's `swingfit.plan.v1` is still in `report/plan.rs`. Every schema is listed with its
//! keys and units in docs/schemas.md (a test walks the types and fails on a key it does not
//! list). One name per concept across the schemas: `std`, `ci95` (fitted values), `expanded` with
//! `coverage_factor` (physical values, [`fit::Expanded`]), `damping` as a list of names,
//! `normalized`, `noise_ratio`, and `status` with an `error` of shape [`Failure`].
//!
//! Numbers: serde_json writes a NaN or an infinity as `null`; the readers take `null` back as
//! NaN for the figures that can be undefined (see [`real`]).

pub mod batch;
pub mod check;
pub mod compare;
pub mod fit;
pub mod params;
pub mod sheet;

use serde::{Deserialize, Deserializer, Serialize};

/// Serialize any wire document as pretty JSON with a final newline.
pub fn to_pretty<T: Serialize>(doc: &T) -> String {
    // Serializing these plain structs cannot fail (no maps with non-string keys); NaN becomes null.
    let mut s =
        serde_json::to_string_pretty(doc).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    s.push('\n');
    s
}

/// Whether a candidate, a row or a document has a result: `"ok"` or `"failed"` in every schema.
#[derive(Serialize, Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// There is a result.
    Ok,
    /// There is none; `error` says why.
    Failed,
}

/// The kind of a failure.
#[derive(Serialize, Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum FailureKind {
    /// The file could not be read or is not a valid log (exit 2).
    Input,
    /// The input was read but the fit was rejected with a diagnosis (exit 1).
    Rejected,
}

/// Why there is no result: the one failure shape of every schema (`error` of a comparison
/// candidate, of a sheet candidate and of a batch row; null when `status` is `ok`).
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq, Eq)]
pub struct Failure {
    /// Input or rejected.
    pub kind: FailureKind,
    /// The one-line message, as the command line prints it.
    pub message: String,
}

/// The names of a damping set's terms, canonical order (the `damping` key of every schema).
pub fn names(set: crate::model::DampingSet) -> Vec<String> {
    set.names().into_iter().map(String::from).collect()
}

/// Read a number that may have been written as `null` (a NaN or an infinity on the way out)
/// back as NaN: `#[serde(deserialize_with = "real")]`.
pub fn real<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
}
