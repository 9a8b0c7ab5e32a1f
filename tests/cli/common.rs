//! Helpers shared by the end-to-end tests.
#![allow(dead_code)]

use std::path::PathBuf;

/// Path of a file under tests/data/.
pub fn test_data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests").join("data").join(name)
}

/// Path of a file under data/ (the bundled demo logs).
pub fn demo_data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("data").join(name)
}

/// The `swingfit` binary, ready to take arguments.
pub fn swingfit() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("swingfit").expect("binary built")
}
