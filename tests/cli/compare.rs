//! End-to-end tests of `swingfit compare`.
