//! End-to-end tests of `swingfit fit`.
