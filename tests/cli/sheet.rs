//! End-to-end tests of `swingfit sheet`.
