//! Writing output files whole or not at all: write to a temporary file beside the target, then rename.
//!
//! A reader (or a later run) never sees a half-written log, report or sheet: either the old file
//! is still there or the new one is complete. The temporary file lives in the target's own
//! directory so that the final rename stays on one file system and is atomic there.

use std::fs::{self, File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporary files made by one process in the same directory.
static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Write `bytes` to `path` atomically: a temporary file in the same directory is written,
/// flushed to disk and renamed over `path`. On any failure the temporary file is removed and
/// `path` is left as it was.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let file_name = path.file_name().ok_or_else(|| {
        io::Error::new(io::ErrorKind::InvalidInput, format!("{}: not a file name", path.display()))
    })?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let (tmp, mut file) = create_temp(&dir, &file_name.to_string_lossy())?;
    let result = file.write_all(bytes).and_then(|()| file.sync_all()).and_then(|()| {
        drop(file);
        fs::rename(&tmp, path)
    });
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

/// Create a fresh temporary file `.<name>.<pid>.<n>.tmp` in `dir`, never reusing an existing one.
fn create_temp(dir: &Path, name: &str) -> io::Result<(PathBuf, File)> {
    let pid = std::process::id();
    loop {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let tmp = dir.join(format!(".{name}.{pid}.{n}.tmp"));
        match OpenOptions::new().write(true).create_new(true).open(&tmp) {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_whole_file_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path().join("log.csv");
        write_atomic(&p, b"first\n").expect("write");
        write_atomic(&p, b"second\n").expect("rewrite");
        assert_eq!(fs::read(&p).expect("read"), b"second\n");
        assert_eq!(fs::read_dir(dir.path()).expect("dir").count(), 1);
    }

    #[test]
    fn missing_directory_fails_and_writes_nothing() {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path().join("no-such-dir").join("log.csv");
        assert!(write_atomic(&p, b"x").is_err());
        assert_eq!(fs::read_dir(dir.path()).expect("dir").count(), 0);
    }

    #[test]
    fn refuses_a_path_without_file_name() {
        assert_eq!(
            write_atomic(Path::new("/"), b"x").map_err(|e| e.kind()),
            Err(io::ErrorKind::InvalidInput)
        );
    }
}
