//! Library tests: integrate.
