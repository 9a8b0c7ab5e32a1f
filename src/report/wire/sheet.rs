//! The sheet document `swingfit.sheet.v2` (`sheet.json` of a coefficient sheet): what the page
//! shows, every number, and the whole fit document. Built by `report::sheet::model::sheet_doc`;
//! the Markdown and HTML renderings read this document.
//!
//! ## Wire format `swingfit.sheet.v2`
//! ```text
//! { "schema": "swingfit.sheet.v2",
//!   "article": { "id", "name", "description", "rig", "operator", "notes",
//!                "mass": {value, std, unit}, "pivot_to_cg": {value, std, unit}, "gravity": "…" },
//!   "runs": [ { "label", "file", "samples", "duration_s" } ],
//!   "damping": { "choice": "auto"|"given", "fitted": ["viscous", …] },
//!   "coefficients": [ { "view": "normalized"|"physical", "key", "symbol", "quantity",
//!                       "value", "std", "expanded", "coverage_factor", "unit" } ],
//!   "comparison": { "verdict", "explained", "best": [..] | null, "envelope_law",
//!                   "candidates": [ { "damping": [..], "status", "error", "rss", "aic", "bic",
//!                                     "ljung_box_p", "rms_residual", "noise_ratio",
//!                                     "all_significant", "explains_decay" } ] } | null,
//!   "quality": { "rms_residual", "rss", "dof", "samples", "condition_number", "iterations_total",
//!                "interval_method", "runs": [ { "file", "rms_residual", "noise_floor",
//!                "noise_ratio", "ljung_box_p" } ], "flags": [ … ] },
//!   "plots": [ { "stem", "title", "svg", "png" } ],
//!   "assumptions": [ "…" ], "caution": "…",
//!   "provenance": { "tool", "version", "command_line", "generated_utc",
//!                   "inputs": [ { "role", "path", "sha256", "bytes" } ] },
//!   "fit": { …swingfit.fit.v2… } }
//! ```
//! Expanded uncertainties use k = 2 (JCGM 100:2008 §6.2.1 eq. 18 [memory]); units as in the fit
//! document. Re-running on the same inputs gives the same file except `generated_utc`.
//!
//! v1 named the per-unit-inertia view `per_unit_inertia`, the expanded uncertainty
//! `expanded_k2`, the noise ratio `ratio_to_noise`; its candidates had `"damping": "a+b"`,
//! `converged` and a string `error`, and `best` was `"a+b"`.

use serde::{Deserialize, Serialize};

pub use super::{Failure, FailureKind, Status};

/// Schema tag of the sheet JSON.
pub const SHEET_SCHEMA: &str = "swingfit.sheet.v2";

/// One line of the coefficient table.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct CoefficientRow {
    /// `normalized` (per unit inertia, the fit document's key) or `physical`.
    pub view: String,
    /// Machine key, e.g. `viscous`.
    pub key: String,
    /// Symbol, e.g. `b1` or `c`.
    pub symbol: String,
    /// What it is, in words.
    pub quantity: String,
    /// Best estimate.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Combined standard uncertainty.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// Expanded uncertainty U = k·u.
    #[serde(deserialize_with = "super::real")]
    pub expanded: f64,
    /// Coverage factor k (2).
    pub coverage_factor: f64,
    /// Unit.
    pub unit: String,
}

/// A hashed input file.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct InputDigest {
    /// "article" or "log".
    pub role: String,
    /// Path as given.
    pub path: String,
    /// SHA-256 of the file's bytes, lowercase hex.
    pub sha256: String,
    /// Size in bytes.
    pub bytes: u64,
}

/// Where the sheet came from.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Provenance {
    /// Program name.
    pub tool: String,
    /// Program version.
    pub version: String,
    /// The full command line, arguments separated by spaces (quoted when they hold spaces).
    pub command_line: String,
    /// When the sheet was made, ISO 8601 UTC.
    pub generated_utc: String,
    /// Every input file with its digest.
    pub inputs: Vec<InputDigest>,
}

/// Measured input with its standard uncertainty.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Measured {
    /// Value.
    #[serde(deserialize_with = "super::real")]
    pub value: f64,
    /// Standard uncertainty.
    #[serde(deserialize_with = "super::real")]
    pub std: f64,
    /// Unit.
    pub unit: String,
}

/// The article block.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Article {
    /// Identifier.
    pub id: String,
    /// Name.
    pub name: String,
    /// Description.
    pub description: String,
    /// Rig.
    pub rig: Option<String>,
    /// Operator.
    pub operator: Option<String>,
    /// Notes.
    pub notes: Option<String>,
    /// Mass.
    pub mass: Option<Measured>,
    /// Pivot-to-CG distance.
    pub pivot_to_cg: Option<Measured>,
    /// Gravity in words.
    pub gravity: Option<String>,
}

/// One run.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct SheetRun {
    /// Label.
    pub label: String,
    /// Log file.
    pub file: String,
    /// Samples.
    pub samples: usize,
    /// Duration [s].
    #[serde(deserialize_with = "super::real")]
    pub duration_s: f64,
}

/// Damping choice.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Damping {
    /// `auto` or `given`.
    pub choice: String,
    /// Fitted terms.
    pub fitted: Vec<String>,
}

/// One candidate of the comparison.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Candidate {
    /// Damping set.
    pub damping: Vec<String>,
    /// `ok` or `failed`.
    pub status: Status,
    /// Why it failed (null when it did not).
    pub error: Option<Failure>,
    /// RSS [rad²].
    #[serde(deserialize_with = "super::real")]
    pub rss: f64,
    /// AIC.
    #[serde(deserialize_with = "super::real")]
    pub aic: f64,
    /// BIC.
    #[serde(deserialize_with = "super::real")]
    pub bic: f64,
    /// Smallest Ljung–Box p over runs.
    #[serde(deserialize_with = "super::real")]
    pub ljung_box_p: f64,
    /// RMS residual [rad].
    #[serde(deserialize_with = "super::real")]
    pub rms_residual: f64,
    /// Largest RMS residual / noise floor over runs.
    #[serde(deserialize_with = "super::real")]
    pub noise_ratio: f64,
    /// Every term significant.
    pub all_significant: bool,
    /// Explains the decay.
    pub explains_decay: bool,
}

/// The comparison block.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Comparison {
    /// Verdict in words.
    pub verdict: String,
    /// Whether any candidate explains the decay.
    pub explained: bool,
    /// Chosen set.
    pub best: Option<Vec<String>>,
    /// Envelope law of the measured peaks.
    pub envelope_law: String,
    /// Candidates, ranked.
    pub candidates: Vec<Candidate>,
}

/// Quality of one run's fit.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct RunQuality {
    /// Log file.
    pub file: String,
    /// RMS residual [rad].
    #[serde(deserialize_with = "super::real")]
    pub rms_residual: f64,
    /// Noise floor [rad].
    #[serde(deserialize_with = "super::real")]
    pub noise_floor: f64,
    /// RMS residual over noise floor.
    #[serde(deserialize_with = "super::real")]
    pub noise_ratio: f64,
    /// Ljung–Box p-value.
    #[serde(deserialize_with = "super::real")]
    pub ljung_box_p: f64,
}

/// Fit quality.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Quality {
    /// Overall RMS residual [rad].
    #[serde(deserialize_with = "super::real")]
    pub rms_residual: f64,
    /// RSS [rad²].
    #[serde(deserialize_with = "super::real")]
    pub rss: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Samples.
    pub samples: usize,
    /// Condition number.
    #[serde(deserialize_with = "super::real")]
    pub condition_number: f64,
    /// Iterations over all stages.
    pub iterations_total: usize,
    /// Interval method.
    pub interval_method: String,
    /// Per run.
    pub runs: Vec<RunQuality>,
    /// Warnings.
    pub flags: Vec<String>,
}

/// One plot's files.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct Plot {
    /// File stem.
    pub stem: String,
    /// Title.
    pub title: String,
    /// SVG file name.
    pub svg: String,
    /// PNG file name.
    pub png: String,
}

/// The sheet document.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct SheetDoc {
    /// `swingfit.sheet.v2`.
    pub schema: String,
    /// Article.
    pub article: Article,
    /// Runs.
    pub runs: Vec<SheetRun>,
    /// Damping.
    pub damping: Damping,
    /// Coefficient table.
    pub coefficients: Vec<CoefficientRow>,
    /// Comparison.
    pub comparison: Option<Comparison>,
    /// Quality.
    pub quality: Quality,
    /// Plots.
    pub plots: Vec<Plot>,
    /// Assumptions and limits.
    pub assumptions: Vec<String>,
    /// Safety and usage caution.
    pub caution: String,
    /// Provenance.
    pub provenance: Provenance,
    /// The fit document.
    pub fit: super::fit::FitDoc,
}
