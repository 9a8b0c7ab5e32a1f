//! End-to-end tests of `swingfit batch`.
