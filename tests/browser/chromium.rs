//! Shared by both test binaries: open a coefficient sheet in headless chromium and check that it
//! renders, logs nothing to the console and shows every plot and the coefficient table.
//!
//! Chromium is a test requirement (installed by `.ci/run`); when it is missing the check fails
//! with a message saying so, it never skips silently.
#![allow(dead_code)]

use std::path::Path;

/// Run headless chromium on `url`, dumping the DOM; returns (dom, stderr).
fn run_chromium(url: &str, screenshot: &Path) -> (String, String) {
    let bin = Path::new("/usr/bin/chromium");
    assert!(
        bin.exists(),
        "/usr/bin/chromium is missing: run the chromium install step of .ci/run (apt-get install -y chromium)"
    );
    let profile = tempfile::tempdir().expect("temp dir");
    let common = [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--enable-logging=stderr",
        "--v=0",
        "--window-size=1240,1754",
    ];
    let run = |extra: &str| {
        std::process::Command::new(bin)
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
pub fn check_in_browser(sheet_dir: &Path, screenshot: &Path, n_plots: usize) {
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
