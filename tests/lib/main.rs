//! Library-level tests, one module per stage, checked against outside sources where named.

#[path = "../browser/chromium.rs"]
mod chromium;
mod compare;
mod coverage;
mod data;
mod fit;
mod integrate;
mod lm;
mod physical;
mod plan;
mod realdata;
mod reference;
mod report;
mod schemas;
mod segment;
mod stats;
mod synth;
mod tidy;
