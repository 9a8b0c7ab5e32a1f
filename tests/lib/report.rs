//! Library tests: report.
