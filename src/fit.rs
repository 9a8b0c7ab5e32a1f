//! The estimator: fit free-decay logs of one article and report coefficients with intervals.

pub mod lm;
pub mod uncertainty;
