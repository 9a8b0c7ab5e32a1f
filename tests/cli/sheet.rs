//! End-to-end tests of `swingfit sheet` (and `fit --plot`): the sheet of the demo logs, safe
//! writing (refusal without --force, nothing written on a failed run), article-file errors that
//! name file, line and key, and the page in headless chromium.

use std::path::{Path, PathBuf};

use crate::common::{demo_data, swingfit};

fn files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("dir")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn stderr_of(out: &std::process::Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// `swingfit sheet` on the 15° demo log with the three-term damping (one fit, no comparison).
fn sheet_of_demo(out: &Path, extra: &[&str]) -> std::process::Output {
    swingfit()
        .arg("sheet")
        .arg(demo_data("ba7_release15_deg.csv"))
        .args(["--article", "BA-7 bracket arm", "--damping", "viscous,coulomb,quadratic", "--out"])
        .arg(out)
        .args(extra)
        .output()
        .expect("runs")
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).expect("read")).expect("json")
}

#[test]
fn sheet_of_a_demo_log_has_every_part_and_is_reproducible() {
    let dir = tempfile::tempdir().expect("tmp");
    let out = dir.path().join("ba7");
    let run = sheet_of_demo(&out, &[]);
    assert!(run.status.success(), "{}", stderr_of(&run));
    let names = files(&out);
    for stem in [
        "run1_overlay",
        "run1_first_cycles",
        "run1_last_cycles",
        "run1_phase",
        "run1_residuals",
        "run1_envelope",
        "period_amplitude",
    ] {
        assert!(names.contains(&format!("{stem}.svg")), "{stem}.svg in {names:?}");
        assert!(names.contains(&format!("{stem}.png")), "{stem}.png in {names:?}");
    }
    let doc = json(&out.join("sheet.json"));
    assert_eq!(doc["schema"], "swingfit.sheet.v2");
    assert_eq!(doc["fit"]["schema"], "swingfit.fit.v2");
    let log_bytes = std::fs::read(demo_data("ba7_release15_deg.csv")).expect("log");
    assert_eq!(
        doc["provenance"]["inputs"][0]["sha256"],
        swingfit::report::sheet::sha256_hex(&log_bytes)
    );
    assert!(doc["provenance"]["command_line"].as_str().is_some_and(|c| c.contains("sheet")));
    let utc = doc["provenance"]["generated_utc"].as_str().expect("utc");
    assert!(utc.len() == 20 && utc.ends_with('Z') && &utc[10..11] == "T", "{utc}");
    // The demo's 15° run was simulated with ωn near 5.54 rad/s (data/make_demo.py).
    let rows = doc["coefficients"].as_array().expect("rows");
    let omega = rows.iter().find(|r| r["key"] == "omega_n").expect("omega_n");
    let w = omega["value"].as_f64().expect("value");
    assert!((w - 5.5379).abs() < 0.01, "omega_n {w}");
    assert!(
        (omega["expanded"].as_f64().expect("U") - 2.0 * omega["std"].as_f64().expect("u")).abs()
            < 1e-15
    );

    // A second run on the same inputs without --force is refused and leaves the sheet alone.
    let before = std::fs::read(out.join("sheet.json")).expect("old");
    let again = sheet_of_demo(&out, &[]);
    assert_eq!(again.status.code(), Some(2));
    assert!(stderr_of(&again).contains("already exists") && stderr_of(&again).contains("--force"));
    assert_eq!(std::fs::read(out.join("sheet.json")).expect("kept"), before);

    // With --force it is replaced whole, and only the timestamp differs.
    std::fs::write(out.join("stale.txt"), "from an older run").expect("stale");
    let forced = sheet_of_demo(&out, &["--force"]);
    assert!(forced.status.success(), "{}", stderr_of(&forced));
    assert!(!out.join("stale.txt").exists());
    let mut a = json(&out.join("sheet.json"));
    let mut b: serde_json::Value = serde_json::from_slice(&before).expect("json");
    a["provenance"]["generated_utc"] = serde_json::Value::Null;
    b["provenance"]["generated_utc"] = serde_json::Value::Null;
    // The command lines differ only by --force.
    a["provenance"]["command_line"] = serde_json::Value::Null;
    b["provenance"]["command_line"] = serde_json::Value::Null;
    assert_eq!(a, b, "same inputs, same numbers");
    assert_eq!(files(dir.path()), vec!["ba7".to_string()], "no temporary directories left");

    let shot = dir.path().join("shot.png");
    crate::chromium::check_in_browser(&out, &shot, 7);
}

#[test]
fn a_bad_second_log_writes_nothing() {
    let dir = tempfile::tempdir().expect("tmp");
    let bad = dir.path().join("bad.csv");
    std::fs::write(&bad, "time_s,angle_deg\n0.0,1.0\n0.001,banana\n").expect("bad log");
    let out = dir.path().join("sheet");
    let run = swingfit()
        .arg("sheet")
        .arg(demo_data("ba7_release15_deg.csv"))
        .arg(&bad)
        .arg("--out")
        .arg(&out)
        .output()
        .expect("runs");
    assert_eq!(run.status.code(), Some(2), "{}", stderr_of(&run));
    assert!(stderr_of(&run).contains("bad.csv"), "{}", stderr_of(&run));
    assert_eq!(files(dir.path()), vec!["bad.csv".to_string()], "nothing written");
}

/// Write `text` as an article file beside copies of nothing: logs are referred to in data/.
fn article(dir: &Path, text: &str) -> PathBuf {
    let p = dir.join("art.toml");
    std::fs::write(&p, text).expect("article");
    p
}

fn demo_article_text() -> String {
    let text = std::fs::read_to_string(demo_data("ba7_article.toml")).expect("demo article");
    let data = demo_data("");
    text.replace(
        "log = \"ba7_",
        &format!("log = \"{}/ba7_", data.display().to_string().trim_end_matches('/')),
    )
}

fn refused(dir: &Path, text: &str) -> String {
    let art = article(dir, text);
    let out = dir.join("sheet");
    let run = swingfit().arg("sheet").arg(&art).arg("--out").arg(&out).output().expect("runs");
    assert_eq!(run.status.code(), Some(2), "{}", stderr_of(&run));
    assert!(!out.exists(), "nothing written");
    let err = stderr_of(&run);
    assert_eq!(err.lines().count(), 1, "one line: {err}");
    err
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines().position(|l| l.contains(needle)).expect("needle") + 1
}

#[test]
fn article_file_errors_name_file_line_and_key() {
    let dir = tempfile::tempdir().expect("tmp");
    let good = demo_article_text();

    let text = good.replace("value = 2.40", "value = -2.40");
    let err = refused(dir.path(), &text);
    let line = line_of(&text, "value = -2.40");
    assert!(
        err.contains(&format!("art.toml:{line}: mass.value: expected a positive mass")),
        "{err}"
    );

    let text = good.replace("std = 0.002 ", "stdev = 0.002 ");
    let err = refused(dir.path(), &text);
    let line = line_of(&text, "stdev = 0.002");
    assert!(err.contains(&format!("art.toml:{line}: mass.stdev: unknown field `stdev`")), "{err}");

    let text = good.replace("counts_per_rev = 10000", "counts_per_rev = \"many\"");
    let err = refused(dir.path(), &text);
    let line = line_of(&text, "counts_per_rev = \"many\"");
    assert!(err.contains(&format!("art.toml:{line}: run.counts_per_rev: invalid type")), "{err}");

    let text = good.replace("ba7_release15_deg.csv", "ba7_release99_deg.csv");
    let err = refused(dir.path(), &text);
    let line = line_of(&text, "ba7_release99_deg.csv");
    assert!(err.contains(&format!("art.toml:{line}: run[2].log: log file ")), "{err}");
    assert!(err.contains("ba7_release99_deg.csv not found"), "{err}");
}

#[test]
fn existing_output_is_refused_before_any_work() {
    let dir = tempfile::tempdir().expect("tmp");
    let out = dir.path().join("taken");
    std::fs::create_dir(&out).expect("mkdir");
    std::fs::write(out.join("mine.txt"), "keep me").expect("file");
    let run = sheet_of_demo(&out, &[]);
    assert_eq!(run.status.code(), Some(2));
    assert!(stderr_of(&run).contains("taken: already exists; give --force to replace it"));
    assert_eq!(files(&out), vec!["mine.txt".to_string()]);
}

#[test]
fn demo_article_sheet_has_physical_coefficients() {
    let dir = tempfile::tempdir().expect("tmp");
    let art = article(
        dir.path(),
        &demo_article_text()
            .replace("damping = \"auto\"", "damping = [\"viscous\", \"coulomb\", \"quadratic\"]"),
    );
    let out = dir.path().join("sheet");
    let run = swingfit().arg("sheet").arg(&art).arg("--out").arg(&out).output().expect("runs");
    assert!(run.status.success(), "{}", stderr_of(&run));
    let doc = json(&out.join("sheet.json"));
    assert_eq!(doc["article"]["name"], "BA-7 bracket arm");
    assert_eq!(doc["runs"].as_array().map(Vec::len), Some(2));
    assert_eq!(doc["provenance"]["inputs"][0]["role"], "article");
    let rows = doc["coefficients"].as_array().expect("rows");
    let j = rows.iter().find(|r| r["key"] == "inertia_pivot").expect("J");
    // J = m g d / ωn² (docs/checks.md §1 [common practice]) with the article's m, d and standard g.
    let w =
        rows.iter().find(|r| r["key"] == "omega_n").and_then(|r| r["value"].as_f64()).expect("ωn");
    let expect = 2.40 * 9.80665 * 0.215 / (w * w);
    let got = j["value"].as_f64().expect("J");
    assert!((got - expect).abs() < 1e-9 * expect, "{got} vs {expect}");
    assert!(files(&out).contains(&"run2_phase.png".to_string()));
    // The terminal table writes units and numbers as the sheet does.
    let stdout = String::from_utf8_lossy(&run.stdout);
    for symbol in
        ["kg·m²", "N·m·s/rad", "rad/s²", "N·m·s²/rad²", "rad²", "ζ", "δ", "quality factor Q"]
    {
        assert!(stdout.contains(symbol), "terminal lacks {symbol}:\n{stdout}");
    }
    for ascii in ["kg*m^2", "N*m", "^2", "NaN"] {
        assert!(!stdout.contains(ascii), "terminal shows {ascii}:\n{stdout}");
    }
    // Numbers of the tables (not the fit's notes, which quote settings) use the minus sign.
    let tables = stdout.split("\nNote:").next().unwrap_or("");
    assert!(!tables.contains("e-"), "hyphen-minus in an exponent:\n{tables}");
    // The encoder run's initial velocity is negative: written with the minus sign U+2212.
    assert!(stdout.lines().any(|l| l.contains("ba7_release60_counts.csv") && l.contains('−')));
}

#[test]
fn fit_plot_writes_the_overlay() {
    let dir = tempfile::tempdir().expect("tmp");
    let svg = dir.path().join("fit.svg");
    let png = dir.path().join("fit.png");
    for p in [&svg, &png] {
        let run = swingfit()
            .arg("fit")
            .arg(demo_data("ba7_release15_deg.csv"))
            .args(["--damping", "viscous,coulomb,quadratic", "--plot"])
            .arg(p)
            .output()
            .expect("runs");
        assert!(run.status.success(), "{}", stderr_of(&run));
    }
    let text = std::fs::read_to_string(&svg).expect("svg");
    assert!(
        text.contains("time [s]")
            && text.contains("angle from rest [deg]")
            && text.contains("fitted model")
    );
    assert_eq!(&std::fs::read(&png).expect("png")[..4], b"\x89PNG");
    let bad = swingfit()
        .arg("fit")
        .arg(demo_data("ba7_release15_deg.csv"))
        .args(["--plot", "fit.gif"])
        .output()
        .expect("runs");
    assert_eq!(bad.status.code(), Some(2));
    assert!(stderr_of(&bad).contains(".svg or .png"));
}

/// Whitespace collapsed, and Markdown quote markers dropped, so a wrapped quote compares equal.
fn flat(text: &str) -> String {
    text.lines()
        .map(|l| l.trim_start().trim_start_matches('>'))
        .collect::<Vec<_>>()
        .join(" ")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

#[test]
fn one_safety_text_in_help_readme_and_sheet() {
    let text = flat(swingfit::safety::SAFETY);
    assert!(text.contains("Never touch, catch or stop a moving article by hand"));
    let help = swingfit().arg("--help").output().expect("runs");
    assert!(help.status.success());
    assert!(flat(&String::from_utf8_lossy(&help.stdout)).contains(&text), "--help shows it");
    let readme = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md"))
        .expect("readme");
    assert!(flat(&readme).contains(&text), "README quotes it word for word");
    let dir = tempfile::tempdir().expect("tmp");
    let out = dir.path().join("s");
    let run = swingfit()
        .arg("sheet")
        .arg(demo_data("ba7_release15_deg.csv"))
        .args(["--damping", "viscous,coulomb,quadratic", "--out"])
        .arg(&out)
        .output()
        .expect("runs");
    assert!(run.status.success(), "{}", stderr_of(&run));
    let md = std::fs::read_to_string(out.join("sheet.md")).expect("md");
    assert!(flat(&md).contains(&text), "the sheet carries it");
    // No name given: the sheet says so, invents none, and names the run once.
    let html = std::fs::read_to_string(out.join("sheet.html")).expect("html");
    assert!(!html.contains("unnamed article") && html.contains("not named"));
    assert_eq!(html.matches("ba7_release15_deg.csv —").count(), 1, "run named once");
    assert!(!html.contains("ba7_release15_deg.csv ("), "no doubled run name");
}

/// The most pages the two-run demo sheet may print on (stated in docs/sheet.md).
const DEMO_PAGE_LIMIT: usize = 4;

#[test]
fn sheet_pdf_of_the_demo_article_reads_right_in_print() {
    let dir = tempfile::tempdir().expect("tmp");
    let out = dir.path().join("ba7");
    if crate::chromium::browser("sheet --pdf check").is_none()
        || !crate::chromium::pdf_tools("sheet --pdf check")
    {
        return;
    }
    let run = swingfit()
        .arg("sheet")
        .arg(demo_data("ba7_article.toml"))
        .arg("--pdf")
        .arg("--out")
        .arg(&out)
        .output()
        .expect("runs");
    assert!(run.status.success(), "{}", stderr_of(&run));
    let pdf = out.join("sheet.pdf");
    let pages = crate::chromium::pdf_pages(&pdf);
    assert!((2..=DEMO_PAGE_LIMIT).contains(&pages), "{pages} pages");
    if let Some(keep) = std::env::var_os("SWINGFIT_KEEP_PDF") {
        std::fs::copy(&pdf, keep).expect("keep pdf");
    }
    // Page one is the result: coefficient table with unit symbols, the verdict, the sign-off.
    let one = crate::chromium::pdf_text(&pdf, 1, 1);
    for want in [
        "Coefficients",
        "moment of inertia about the pivot",
        "kg·m²",
        "N·m·s/rad",
        "Result",
        "chosen by comparing 7 candidate sets",
        "explains the decay",
        "performed by",
        "checked by",
    ] {
        assert!(one.contains(want), "page one lacks {want:?}:\n{one}");
    }
    assert!(!one.contains("Appendix A"), "appendices start on a new page");
    let all = crate::chromium::pdf_text(&pdf, 1, pages);
    for bad in ["NaN", "*m^2", "kg*m", "`", "**", "|---", "unnamed article"] {
        assert!(!all.contains(bad), "{bad:?} in the printed sheet");
    }
    assert!(all.contains("Appendix F. Safety and use"));
}

#[test]
fn sheet_pdf_without_a_browser_is_refused_and_writes_nothing() {
    let dir = tempfile::tempdir().expect("tmp");
    let out = dir.path().join("s");
    let run = swingfit()
        .env("PATH", dir.path())
        .arg("sheet")
        .arg(demo_data("ba7_release15_deg.csv"))
        .args(["--damping", "viscous", "--pdf", "--out"])
        .arg(&out)
        .output()
        .expect("runs");
    assert_eq!(run.status.code(), Some(2), "{}", stderr_of(&run));
    assert!(stderr_of(&run).contains("apt-get install chromium"), "{}", stderr_of(&run));
    assert_eq!(files(dir.path()), Vec::<String>::new(), "nothing written");
}
