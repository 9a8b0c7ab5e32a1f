//! Library tests: physical.
