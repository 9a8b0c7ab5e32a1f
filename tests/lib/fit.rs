//! Library tests: fit.
