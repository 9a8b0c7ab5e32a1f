//! Criterion benchmarks: fit.
fn main() {}
