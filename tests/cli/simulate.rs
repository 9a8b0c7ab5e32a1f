//! End-to-end tests of `swingfit simulate`.
