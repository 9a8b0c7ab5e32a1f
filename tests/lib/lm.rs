//! Library tests: lm.
