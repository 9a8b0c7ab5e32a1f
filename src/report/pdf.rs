//! `sheet --pdf`: print the finished `sheet.html` to `sheet.pdf` with a headless Chromium, so the
//! engineer can attach the sheet to a report as it is.
//!
//! Chromium is optional: [`find_browser`] looks for it on `PATH` before any work is done, so a
//! missing browser is refused with an install hint before anything is written. The browser runs
//! with a fresh temporary profile, no network services, no sandbox (it runs as the invoking user
//! on a local file) and without the print header and footer.

use std::path::{Path, PathBuf};
use std::process::Command;

/// Executable names tried, in order, on `PATH`.
pub const BROWSER_NAMES: [&str; 3] = ["chromium", "chromium-browser", "google-chrome"];

/// What to do when no browser is found.
pub const INSTALL_HINT: &str = "sheet --pdf needs a headless Chromium on PATH (chromium, chromium-browser or google-chrome); install it (Debian/Ubuntu: apt-get install chromium) or leave out --pdf and print sheet.html from any browser";

/// Why the PDF could not be made.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PdfError {
    /// No browser on `PATH`.
    #[error("{INSTALL_HINT}")]
    NoBrowser,
    /// The browser could not be started or failed.
    #[error("{browser}: printing {html} to PDF failed: {what}")]
    Failed {
        /// The browser used.
        browser: String,
        /// The page.
        html: String,
        /// What went wrong (exit status and the browser's last message).
        what: String,
    },
}

/// The first of [`BROWSER_NAMES`] found on `PATH`.
pub fn find_browser() -> Result<PathBuf, PdfError> {
    let path = std::env::var_os("PATH").unwrap_or_default();
    for dir in std::env::split_paths(&path) {
        for name in BROWSER_NAMES {
            let candidate = dir.join(name);
            if candidate.is_file() {
                return Ok(candidate);
            }
        }
    }
    Err(PdfError::NoBrowser)
}

/// How headless Chromium is started, here and in the browser tests: no sandbox (CI runs as root),
/// no GPU, and none of the background services that would try the network.
pub const HEADLESS_FLAGS: [&str; 8] = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
];

/// Print `html` to `pdf` with `browser` (A4, the page's own print CSS, no header or footer).
pub fn print_to_pdf(browser: &Path, html: &Path, pdf: &Path) -> Result<(), PdfError> {
    let failed = |what: String| PdfError::Failed {
        browser: browser.display().to_string(),
        html: html.display().to_string(),
        what,
    };
    let abs = std::fs::canonicalize(html).map_err(|e| failed(e.to_string()))?;
    let profile = Profile::new().map_err(|e| failed(format!("no temporary profile: {e}")))?;
    let out = Command::new(browser)
        .args(HEADLESS_FLAGS)
        .arg(format!("--user-data-dir={}", profile.0.display()))
        .arg("--no-pdf-header-footer")
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg(format!("file://{}", abs.display()))
        .output()
        .map_err(|e| failed(format!("cannot start it: {e}")))?;
    let written = std::fs::read(pdf).ok().filter(|b| b.starts_with(b"%PDF"));
    if !out.status.success() || written.is_none() {
        let err = String::from_utf8_lossy(&out.stderr);
        let last = err.lines().rev().find(|l| !l.trim().is_empty()).unwrap_or("no message");
        return Err(failed(format!("{} ({last})", out.status)));
    }
    Ok(())
}

/// A fresh, empty browser profile directory, removed when dropped.
struct Profile(PathBuf);

impl Profile {
    fn new() -> std::io::Result<Profile> {
        let nanos = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map(|d| d.as_nanos())
            .unwrap_or(0);
        let dir = std::env::temp_dir()
            .join(format!("swingfit-browser-profile-{}-{nanos}", std::process::id()));
        std::fs::create_dir(&dir)?;
        Ok(Profile(dir))
    }
}

impl Drop for Profile {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}
