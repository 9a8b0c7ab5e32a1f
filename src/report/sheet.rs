//! The coefficient sheet: one directory holding a printable page, its numbers and its plots.
//!
//! A test engineer hands the sheet on: `sheet.html` (self-contained, inline SVG, no scripts, A4
//! print layout), `sheet.md` (the same as text), `sheet.json` (every number, schema
//! [`SHEET_SCHEMA`], embedding the fit document of [`crate::report::wire::fit`]) and every plot as SVG
//! and PNG. The directory is built beside its destination and renamed into place only when
//! complete ([`write_sheet`]), so a failed run leaves nothing behind and an existing sheet is
//! replaced only on request.
//!
//! The JSON layout (`swingfit.sheet.v2`) is [`wire::SheetDoc`], in the wire layer
//! (`report/wire/sheet.rs`); re-running on the same inputs gives the same file except
//! `generated_utc`.
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

/// The sheet's JSON types live in the wire layer.
pub use crate::report::wire::sheet as wire;
pub use wire::SHEET_SCHEMA;
