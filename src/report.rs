//! Reports: terminal tables, the wire formats (JSON, CSV), plots, the coefficient sheet.

pub mod atomic;
pub mod budget;
pub mod pdf;
pub mod plan;
pub mod plot;
pub mod sheet;
pub mod table;
pub mod typeset;
pub mod verdict;
pub mod wire;
