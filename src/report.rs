//! Reports: terminal tables, JSON wire formats, plots, the coefficient sheet.

pub mod atomic;
pub mod json;
pub mod table;
