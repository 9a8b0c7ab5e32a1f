//! Library tests: stats.
