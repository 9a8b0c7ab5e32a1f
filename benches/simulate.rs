//! Criterion benchmarks: simulate.
fn main() {}
