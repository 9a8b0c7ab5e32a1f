//! Where a sheet came from: the program, its command line, the time and a SHA-256 digest of every
//! input file, so that a reader can tell whether a sheet belongs to the files in front of them.

use std::fmt::Write as _;
use std::fs;
use std::path::Path;
use std::time::SystemTime;

use sha2::{Digest, Sha256};

use super::date::iso8601_utc;

pub use crate::report::wire::sheet::{InputDigest, Provenance};

impl InputDigest {
    /// Hash the file at `path`.
    pub fn of_file(role: &str, path: &Path) -> std::io::Result<InputDigest> {
        let bytes = fs::read(path)?;
        Ok(InputDigest {
            role: role.to_string(),
            path: path.display().to_string(),
            sha256: sha256_hex(&bytes),
            bytes: bytes.len() as u64,
        })
    }
}

impl Provenance {
    /// Provenance stamped now, for `args` (program name first) and `inputs`.
    pub fn now(args: &[String], inputs: Vec<InputDigest>) -> Provenance {
        Provenance {
            tool: "swingfit".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            command_line: args
                .iter()
                .map(|a| {
                    if a.contains(char::is_whitespace) || a.is_empty() {
                        format!("'{a}'")
                    } else {
                        a.clone()
                    }
                })
                .collect::<Vec<_>>()
                .join(" "),
            generated_utc: iso8601_utc(SystemTime::now()),
            inputs,
        }
    }
}

/// SHA-256 of `bytes` as lowercase hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    let mut s = String::with_capacity(64);
    for b in digest.iter() {
        let _ = write!(s, "{b:02x}");
    }
    s
}
