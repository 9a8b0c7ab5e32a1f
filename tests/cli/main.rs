//! End-to-end tests: each module runs the real `swingfit` binary on files in a temp dir.

mod batch;
mod budget;
mod check;
#[path = "../browser/chromium.rs"]
mod chromium;
mod common;
mod compare;
mod fit;
mod plan;
mod realdata;
mod runs;
mod segment;
mod sheet;
mod simulate;
mod wire;
