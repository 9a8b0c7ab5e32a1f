//! Installing the sheet directory: the sheet is built in a temporary directory beside its
//! destination (made by the `tempfile` crate, removed on any failure) and renamed into place only
//! when complete; an existing sheet is replaced only with `--force`, moved aside first and put
//! back if the rename fails, so the destination is never left empty or half-written.

use std::fs;
use std::path::{Path, PathBuf};

use tempfile::TempDir;

use super::output::{SheetError, io_err};

/// Refuse early when `dir` exists and `force` is off (also checked again before the rename).
pub fn check_destination(dir: &Path, force: bool) -> Result<(), SheetError> {
    if dir.exists() && !force {
        return Err(SheetError::Exists(dir.display().to_string()));
    }
    if dir.exists() && !dir.is_dir() {
        return Err(SheetError::Io {
            path: dir.display().to_string(),
            what: "exists and is not a directory".into(),
        });
    }
    Ok(())
}

/// The directory `dir` will live in (`.` for a bare name).
fn parent_of(dir: &Path) -> PathBuf {
    match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// A hidden prefix for temporary directories beside `dir`: `.{name}.{tag}.`.
fn prefix(dir: &Path, tag: &str) -> String {
    let name =
        dir.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| "sheet".into());
    format!(".{name}.{tag}.")
}

/// An empty staging directory beside `dir` (its parent is created when missing), removed when
/// dropped unless [`install`] has moved it into place. Beside, not in `/tmp`, so the final rename
/// stays on one file system and is atomic there.
pub(super) fn staging_dir(dir: &Path) -> Result<TempDir, SheetError> {
    let parent = parent_of(dir);
    fs::create_dir_all(&parent).map_err(|e| io_err(&parent, "cannot create the directory", e))?;
    tempfile::Builder::new()
        .prefix(&prefix(dir, "partial"))
        .tempdir_in(&parent)
        .map_err(|e| io_err(&parent, "cannot create the temporary directory", e))
}

/// Move the complete `staging` to `dir`, replacing an existing `dir` only with `force`. The old
/// sheet is moved aside into a temporary directory of its own and put back if the new one cannot
/// be moved in; it is deleted only once the new sheet is in place.
pub(super) fn install(staging: TempDir, dir: &Path, force: bool) -> Result<(), SheetError> {
    if !dir.exists() {
        fs::rename(staging.path(), dir)
            .map_err(|e| io_err(dir, "cannot move the sheet into place", e))?;
        // Moved away: nothing is left at the temporary path to clean up.
        let _ = staging.keep();
        return Ok(());
    }
    if !force {
        return Err(SheetError::Exists(dir.display().to_string()));
    }
    let aside = tempfile::Builder::new()
        .prefix(&prefix(dir, "old"))
        .tempdir_in(parent_of(dir))
        .map_err(|e| io_err(dir, "cannot make room to move the old sheet aside", e))?;
    let old = aside.path().join("sheet");
    fs::rename(dir, &old).map_err(|e| io_err(dir, "cannot move the old sheet aside", e))?;
    if let Err(e) = fs::rename(staging.path(), dir) {
        // Put the old sheet back so the destination is never left empty.
        let _ = fs::rename(&old, dir);
        return Err(io_err(dir, "cannot move the sheet into place", e));
    }
    let _ = staging.keep();
    let path = aside.path().to_path_buf();
    aside.close().map_err(|e| io_err(&path, "cannot remove the replaced sheet", e))
}
