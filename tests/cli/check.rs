//! End-to-end tests of `swingfit check`.
