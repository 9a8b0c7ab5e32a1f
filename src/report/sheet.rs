//! The coefficient sheet: one directory holding a printable page, its numbers and its plots.
//!
//! A test engineer hands the sheet on: `sheet.html` (self-contained, inline SVG, no scripts, A4
//! print layout), `sheet.md` (the same as text), `sheet.json` (every number, schema
//! [`SHEET_SCHEMA`], embedding the fit document of [`crate::report::wire::fit`]) and every plot as SVG
//! and PNG. The directory is built beside its destination and renamed into place only when
//! complete ([`write_sheet`]), so a failed run leaves nothing behind and an existing sheet is
//! replaced only on request.
//!
//! ## Wire format `swingfit.sheet.v1`
//! ```text
//! { "schema": "swingfit.sheet.v1",
//!   "article": { "id", "name", "description", "rig", "operator", "notes",
//!                "mass": {value, std, unit}, "pivot_to_cg": {value, std, unit}, "gravity": "…" },
//!   "runs": [ { "label", "file", "samples", "duration_s" } ],
//!   "damping": { "choice": "auto"|"given", "fitted": ["viscous", …] },
//!   "coefficients": [ { "view": "per_unit_inertia"|"physical", "key", "symbol", "quantity",
//!                       "value", "std", "expanded_k2", "unit" } ],
//!   "comparison": { "verdict", "explained", "best", "envelope_law", "candidates": [ … ] } | null,
//!   "quality": { "rms_residual", "rss", "dof", "samples", "condition_number", "iterations_total",
//!                "interval_method", "runs": [ { "file", "rms_residual", "noise_floor",
//!                "ratio_to_noise", "ljung_box_p" } ], "flags": [ … ] },
//!   "plots": [ { "stem", "title", "svg", "png" } ],
//!   "assumptions": [ "…" ], "caution": "…",
//!   "provenance": { "tool", "version", "command_line", "generated_utc",
//!                   "inputs": [ { "role", "path", "sha256", "bytes" } ] },
//!   "fit": { …swingfit.fit.v1… } }
//! ```
//! Expanded uncertainties use k = 2 (JCGM 100:2008 §6.2.1 eq. 18 [memory]); units as in the fit
//! document. Re-running on the same inputs gives the same file except `generated_utc`.

//!
//! ## Files
//! The sheet model ([`model`]) gathers what the sheet shows into [`wire::SheetDoc`];
//! [`markdown`] and [`html`] render it with the words they share from [`wording`];
//! [`provenance`] stamps the inputs' digests and [`date`] the time; [`output`] writes every file
//! into a staging directory that [`install`] puts in place.

pub mod date;
pub mod html;
pub mod install;
pub mod markdown;
pub mod model;
pub mod output;
pub mod provenance;
pub mod wording;

pub use crate::report::typeset::format_pair;
pub use date::iso8601_utc;
pub use html::{PAGE_ONE_PLOT, esc, sheet_html};
pub use install::check_destination;
pub use markdown::sheet_markdown;
pub use model::{
    CAUTION, CoefficientRow, Identity, SheetInput, assumptions, coefficient_rows, sheet_doc,
};
pub use output::{SheetError, Written, render_into, write_sheet, write_sheet_with_pdf};
pub use provenance::{InputDigest, Provenance, sha256_hex};
pub use wording::{first_sentence, result_sentences};

/// Schema tag of the sheet JSON.
pub const SHEET_SCHEMA: &str = "swingfit.sheet.v1";

/// Wire types of the sheet JSON.
pub mod wire {
    use serde::Serialize;

    /// Measured input with its standard uncertainty.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Measured {
        /// Value.
        pub value: f64,
        /// Standard uncertainty.
        pub std: f64,
        /// Unit.
        pub unit: &'static str,
    }

    /// The article block.
    #[derive(Serialize, Debug, Clone, PartialEq)]
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
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Run {
        /// Label.
        pub label: String,
        /// Log file.
        pub file: String,
        /// Samples.
        pub samples: usize,
        /// Duration [s].
        pub duration_s: f64,
    }

    /// Damping choice.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Damping {
        /// `auto` or `given`.
        pub choice: &'static str,
        /// Fitted terms.
        pub fitted: Vec<&'static str>,
    }

    /// One candidate of the comparison.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Candidate {
        /// Damping set, e.g. `viscous+coulomb`.
        pub damping: String,
        /// Whether the fit converged and was accepted.
        pub converged: bool,
        /// Why it failed, when it did.
        pub error: Option<String>,
        /// RSS [rad²].
        pub rss: f64,
        /// AIC.
        pub aic: f64,
        /// BIC.
        pub bic: f64,
        /// Smallest Ljung–Box p over runs.
        pub ljung_box_p: f64,
        /// RMS residual [rad].
        pub rms_residual: f64,
        /// Every term significant.
        pub all_significant: bool,
        /// Explains the decay.
        pub explains_decay: bool,
    }

    /// The comparison block.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Comparison {
        /// Verdict in words.
        pub verdict: String,
        /// Whether any candidate explains the decay.
        pub explained: bool,
        /// Chosen set.
        pub best: Option<String>,
        /// Envelope law of the measured peaks.
        pub envelope_law: &'static str,
        /// Candidates, ranked.
        pub candidates: Vec<Candidate>,
    }

    /// Quality of one run's fit.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct RunQuality {
        /// Log file.
        pub file: String,
        /// RMS residual [rad].
        pub rms_residual: f64,
        /// Noise floor [rad].
        pub noise_floor: f64,
        /// RMS residual over noise floor.
        pub ratio_to_noise: f64,
        /// Ljung–Box p-value.
        pub ljung_box_p: f64,
    }

    /// Fit quality.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Quality {
        /// Overall RMS residual [rad].
        pub rms_residual: f64,
        /// RSS [rad²].
        pub rss: f64,
        /// Degrees of freedom.
        pub dof: usize,
        /// Samples.
        pub samples: usize,
        /// Condition number.
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
    #[derive(Serialize, Debug, Clone, PartialEq)]
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
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct SheetDoc {
        /// `swingfit.sheet.v1`.
        pub schema: &'static str,
        /// Article.
        pub article: Article,
        /// Runs.
        pub runs: Vec<Run>,
        /// Damping.
        pub damping: Damping,
        /// Coefficient table.
        pub coefficients: Vec<super::CoefficientRow>,
        /// Comparison.
        pub comparison: Option<Comparison>,
        /// Quality.
        pub quality: Quality,
        /// Plots.
        pub plots: Vec<Plot>,
        /// Assumptions and limits.
        pub assumptions: Vec<String>,
        /// Safety and usage caution.
        pub caution: &'static str,
        /// Provenance.
        pub provenance: super::Provenance,
        /// The fit document.
        pub fit: crate::report::wire::fit::FitDoc,
    }
}
