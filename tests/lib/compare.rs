//! Library tests: compare.
