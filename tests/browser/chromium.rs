//! Shared by both test binaries: open a coefficient sheet in headless chromium and check that it
//! renders, logs nothing to the console and shows every plot and the coefficient table.
//!
//! Chromium is optional for `cargo test --release` on a machine with only a Rust toolchain: when
//! `/usr/bin/chromium` is missing the check prints a loud `SKIPPED` line to stderr and returns.
//! `.ci/run` installs chromium and sets `SWINGFIT_REQUIRE_BROWSER=1`, which turns a missing
//! browser into a failure, so CI always proves the sheet in a real browser.
#![allow(dead_code)]

use std::path::Path;

/// The browser to use, or `None` (after a loud notice) when it is missing and not required.
/// Panics when `SWINGFIT_REQUIRE_BROWSER` is set and the browser is missing.
pub fn browser(test: &str) -> Option<&'static Path> {
    let bin = Path::new("/usr/bin/chromium");
    if bin.exists() {
        return Some(bin);
    }
    let required = std::env::var_os("SWINGFIT_REQUIRE_BROWSER").is_some_and(|v| v != "0");
    assert!(
        !required,
        "/usr/bin/chromium is missing and SWINGFIT_REQUIRE_BROWSER is set: run the chromium install step of .ci/run (apt-get install -y chromium)"
    );
    // Written to the process's stderr directly: the test harness captures `eprintln!` of passing
    // tests, and this notice must be seen.
    use std::io::Write as _;
    let _ = writeln!(
        std::io::stderr(),
        "SKIPPED {test}: /usr/bin/chromium is not installed, so the coefficient sheet was NOT checked in a browser \
         (apt-get install -y chromium, or run .ci/run, which requires it)"
    );
    None
}

/// Run headless chromium on `url`, dumping the DOM; returns (dom, stderr).
fn run_chromium(url: &str, screenshot: &Path) -> (String, String) {
    let bin = Path::new("/usr/bin/chromium");
    let profile = tempfile::tempdir().expect("temp dir");
    let common = ["--enable-logging=stderr", "--v=0", "--window-size=1240,1754"];
    let run = |extra: &str| {
        std::process::Command::new(bin)
            .args(swingfit::report::pdf::HEADLESS_FLAGS)
            .args(common)
            .arg(format!(
                "--user-data-dir={}",
                profile.path().join(extra.len().to_string()).display()
            ))
            .arg(extra)
            .arg(url)
            .output()
            .expect("chromium runs")
    };
    let shot = run(&format!("--screenshot={}", screenshot.display()));
    assert!(
        shot.status.success(),
        "chromium screenshot failed: {}",
        String::from_utf8_lossy(&shot.stderr)
    );
    let dom = run("--dump-dom");
    assert!(
        dom.status.success(),
        "chromium dump-dom failed: {}",
        String::from_utf8_lossy(&dom.stderr)
    );
    let stderr = format!(
        "{}{}",
        String::from_utf8_lossy(&shot.stderr),
        String::from_utf8_lossy(&dom.stderr)
    );
    (String::from_utf8_lossy(&dom.stdout).into_owned(), stderr)
}

/// Check a sheet directory in the browser: renders, no console messages, every plot and the
/// coefficient table present, a full-page screenshot written.
/// Skips loudly (see [`browser`]) when no browser is installed and none is required.
pub fn check_in_browser(sheet_dir: &Path, screenshot: &Path, n_plots: usize) {
    if browser("sheet browser check").is_none() {
        return;
    }
    let url = format!("file://{}", sheet_dir.join("sheet.html").display());
    let (dom, stderr) = run_chromium(&url, screenshot);
    let console: Vec<&str> =
        stderr.lines().filter(|l| l.contains("CONSOLE") || l.contains("Uncaught")).collect();
    assert!(console.is_empty(), "console messages: {console:?}");
    assert!(dom.contains("<table class=\"coefficients\">"), "coefficient table rendered");
    assert_eq!(dom.matches("<figure id=\"plot-").count(), n_plots);
    assert_eq!(dom.matches("<svg").count(), n_plots);
    assert!(dom.contains("id=\"caution\"") && dom.contains("id=\"provenance\""));
    let png = std::fs::read(screenshot).expect("screenshot written");
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert!(png.len() > 20_000, "screenshot has content ({} bytes)", png.len());
}

/// The poppler tools that read a printed PDF back (`pdftotext`, `pdfinfo`), or `false` (after a
/// loud notice) when they are missing and no browser check is required; panics when
/// `SWINGFIT_REQUIRE_BROWSER` is set and they are missing (`.ci/run` installs poppler-utils).
pub fn pdf_tools(test: &str) -> bool {
    let present = ["/usr/bin/pdftotext", "/usr/bin/pdfinfo"].iter().all(|p| Path::new(p).exists());
    if present {
        return true;
    }
    let required = std::env::var_os("SWINGFIT_REQUIRE_BROWSER").is_some_and(|v| v != "0");
    assert!(
        !required,
        "pdftotext/pdfinfo are missing and SWINGFIT_REQUIRE_BROWSER is set: apt-get install -y poppler-utils (as .ci/run does)"
    );
    use std::io::Write as _;
    let _ = writeln!(
        std::io::stderr(),
        "SKIPPED {test}: pdftotext/pdfinfo (poppler-utils) are not installed, so the printed sheet was NOT read back"
    );
    false
}

/// Pages of a PDF (pdfinfo).
pub fn pdf_pages(pdf: &Path) -> usize {
    let out = std::process::Command::new("/usr/bin/pdfinfo").arg(pdf).output().expect("pdfinfo");
    assert!(out.status.success(), "pdfinfo {}", pdf.display());
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .find_map(|l| l.strip_prefix("Pages:").map(|n| n.trim().parse().expect("page count")))
        .expect("Pages line")
}

/// Text of pages `first..=last` of a PDF (pdftotext, reading order).
pub fn pdf_text(pdf: &Path, first: usize, last: usize) -> String {
    let out = std::process::Command::new("/usr/bin/pdftotext")
        .args(["-f", &first.to_string(), "-l", &last.to_string()])
        .arg(pdf)
        .arg("-")
        .output()
        .expect("pdftotext");
    assert!(out.status.success(), "pdftotext {}", pdf.display());
    String::from_utf8_lossy(&out.stdout).into_owned()
}
