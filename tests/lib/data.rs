//! Library tests: data.
