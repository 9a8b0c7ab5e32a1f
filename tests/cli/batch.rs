//! End-to-end tests of `swingfit batch`.
//!
//! The logs under tests/data/batch/ come from `tests/data/batch/make_batch_logs.py` with the
//! independent SciPy reference integrator; their true physics is in truth.json.

use std::path::Path;

use crate::common::{swingfit, test_data};

/// Parse summary.csv into a header and records.
fn read_csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::Reader::from_path(path).expect("summary.csv readable");
    let header = r.headers().expect("header").iter().map(str::to_string).collect();
    let rows =
        r.records().map(|rec| rec.expect("record").iter().map(str::to_string).collect()).collect();
    (header, rows)
}

fn col(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
}

fn file_name(s: &str) -> String {
    Path::new(s).file_name().map(|f| f.to_string_lossy().into_owned()).unwrap_or_default()
}

fn truth() -> serde_json::Value {
    let text = std::fs::read_to_string(test_data("batch/truth.json")).expect("truth.json");
    serde_json::from_str(&text).expect("truth.json is JSON")
}

#[test]
fn mixed_folder_fits_the_good_logs_and_records_each_bad_one() {
    let out = tempfile::tempdir().expect("tempdir");
    let assert = swingfit()
        .arg("batch")
        .arg(test_data("batch/mixed"))
        .arg("--out")
        .arg(out.path())
        .arg("--threads")
        .arg("2")
        .assert()
        .code(2);
    let stderr = String::from_utf8_lossy(&assert.get_output().stderr).into_owned();
    // Not a terminal: no progress bar, only the one-line messages.
    for line in stderr.lines() {
        assert!(line.starts_with("swingfit: "), "unexpected stderr line {line:?}");
    }
    let (header, rows) = read_csv(&out.path().join("summary.csv"));
    let names: Vec<String> = rows.iter().map(|r| file_name(&r[col(&header, "file")])).collect();
    // Sorted by file name, every file has a row.
    assert_eq!(
        names,
        [
            "bad_empty.csv",
            "bad_short.csv",
            "bad_text.csv",
            "bad_time.csv",
            "hx2_a.csv",
            "hx2_b.csv",
            "hx2_c.csv"
        ]
    );
    let truth = truth();
    for r in &rows {
        let name = file_name(&r[col(&header, "file")]);
        let status = &r[col(&header, "status")];
        if name.starts_with("bad_") {
            assert_eq!(status, "failed", "{name}");
            assert_eq!(r[col(&header, "error_kind")], "input", "{name}");
            let msg = &r[col(&header, "error")];
            assert!(msg.contains(&name), "{name}: message {msg:?} names the file");
            assert!(stderr.contains(msg.as_str()), "{name}: error also on stderr");
            assert!(r[col(&header, "omega_n")].is_empty());
        } else {
            assert_eq!(status, "ok", "{name}: {}", r[col(&header, "error")]);
            assert_eq!(r[col(&header, "samples")], "2001");
            for key in ["omega_n", "viscous", "coulomb"] {
                let v: f64 = r[col(&header, key)].parse().expect("number");
                let s: f64 = r[col(&header, &format!("{key}_std"))].parse().expect("number");
                let lo: f64 = r[col(&header, &format!("{key}_ci95_lo"))].parse().expect("number");
                let hi: f64 = r[col(&header, &format!("{key}_ci95_hi"))].parse().expect("number");
                let t = truth[&name][key].as_f64().expect("truth value");
                // True value from truth.json (SciPy DOP853 reference); noise 0.005 deg gives
                // small but non-zero uncertainties, and the truth lies within 5 std.
                assert!(s > 0.0 && lo < v && v < hi, "{name} {key}: {v} [{lo}, {hi}]");
                assert!((v - t).abs() < 5.0 * s + 1e-3 * t, "{name} {key}: {v} ± {s}, truth {t}");
            }
        }
    }
    // The bad-text row names the line at fault (line 6: comment, header, four rows).
    let text_row = &rows[2];
    assert!(
        text_row[col(&header, "error")].contains(":6"),
        "{:?}",
        text_row[col(&header, "error")]
    );
}

#[test]
fn one_and_two_threads_write_byte_identical_summaries() {
    let one = tempfile::tempdir().expect("tempdir");
    let two = tempfile::tempdir().expect("tempdir");
    for (dir, n) in [(&one, "1"), (&two, "2")] {
        swingfit()
            .arg("batch")
            .arg(test_data("batch/mixed"))
            .args(["--damping", "viscous,coulomb"])
            .arg("--out")
            .arg(dir.path())
            .args(["--threads", n])
            .assert()
            .code(2);
    }
    for f in ["summary.csv", "summary.jsonl"] {
        let a = std::fs::read(one.path().join(f)).expect("read");
        let b = std::fs::read(two.path().join(f)).expect("read");
        assert!(a.len() > 500, "{f} has content");
        assert!(a == b, "{f} differs between 1 and 2 threads");
    }
}

#[test]
fn listed_good_logs_exit_zero_and_jsonl_carries_every_coefficient() {
    let out = tempfile::tempdir().expect("tempdir");
    // Listed out of order, one twice: rows come back sorted and once each.
    swingfit()
        .arg("batch")
        .arg(test_data("batch/mixed/hx2_c.csv"))
        .arg(test_data("batch/mixed/hx2_a.csv"))
        .arg(test_data("batch/mixed/hx2_c.csv"))
        .arg("--out")
        .arg(out.path())
        .assert()
        .success()
        .stdout(predicates::str::contains("2 logs, 2 fitted, 0 failed"));
    let text = std::fs::read_to_string(out.path().join("summary.jsonl")).expect("jsonl");
    let lines: Vec<serde_json::Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).expect("each line is one JSON object"))
        .collect();
    assert_eq!(lines.len(), 2);
    let truth = truth();
    for (line, name) in lines.iter().zip(["hx2_a.csv", "hx2_c.csv"]) {
        assert_eq!(line["schema"], "swingfit.batch.v2");
        assert_eq!(file_name(line["file"].as_str().expect("file")), name);
        assert_eq!(line["status"], "ok");
        assert!(line["error"].is_null());
        // The damping is chosen per log by the comparison, with the fit's adequacy verdict.
        assert_eq!(line["adequacy"], "explained", "{name}");
        assert_eq!(line["damping"], serde_json::json!(["viscous", "coulomb"]), "{name}");
        let wn = &line["normalized"]["omega_n"];
        let t = truth[name]["omega_n"].as_f64().expect("truth");
        let v = wn["value"].as_f64().expect("value");
        let s = wn["std"].as_f64().expect("std");
        // Truth from the SciPy reference (truth.json).
        assert!((v - t).abs() < 5.0 * s + 1e-4 * t, "{name}: omega_n {v} ± {s}, truth {t}");
        assert_eq!(wn["unit"], "rad/s");
        assert!(line["normalized"]["viscous"]["ci95"].as_array().is_some_and(|a| a.len() == 2));
        assert!(line["normalized"].get("quadratic").is_none(), "quadratic was not fitted");
        let rms = line["rms_residual"].as_f64().expect("rms");
        // Noise added was 0.005 deg = 8.7e-5 rad; a good fit leaves about that.
        assert!(rms > 4e-5 && rms < 2e-4, "{name}: rms {rms}");
    }
}

#[test]
fn a_log_at_rest_throughout_is_an_input_row_saying_so() {
    // still.csv never moves: there is no free swing to fit (issue 11), so the row is bad input.
    let out = tempfile::tempdir().expect("tempdir");
    swingfit()
        .arg("batch")
        .arg(test_data("batch/rejected"))
        .arg(test_data("batch/mixed/hx2_b.csv"))
        .arg("--out")
        .arg(out.path())
        .assert()
        .code(2)
        .stderr(predicates::str::contains("still.csv"));
    let (header, rows) = read_csv(&out.path().join("summary.csv"));
    assert_eq!(rows.len(), 2);
    assert_eq!(file_name(&rows[0][col(&header, "file")]), "hx2_b.csv");
    assert_eq!(rows[0][col(&header, "status")], "ok");
    assert_eq!(file_name(&rows[1][col(&header, "file")]), "still.csv");
    assert_eq!(rows[1][col(&header, "status")], "failed");
    assert_eq!(rows[1][col(&header, "error_kind")], "input");
    assert!(rows[1][col(&header, "error")].contains("at rest for the whole log"));
}

#[test]
fn article_files_are_fitted_jointly_and_bad_ones_recorded() {
    // The demo article (data/ba7_article.toml, damping "auto"): its two logs are fitted jointly
    // with its own loader settings and mass properties; J = 0.1650 kg·m² by construction
    // (data/README.md). A misspelt article key is an input error row naming file, line and key.
    let dir = tempfile::tempdir().expect("tempdir");
    let bad = dir.path().join("hx2.toml");
    std::fs::write(&bad, "id = \"HX-2\"\nlogs = [\"hx2_a.csv\"]\n").expect("write");
    let out = dir.path().join("out");
    swingfit()
        .arg("batch")
        .arg(crate::common::demo_data("ba7_article.toml"))
        .arg(&bad)
        .arg("--out")
        .arg(&out)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("hx2.toml:2"));
    let (header, rows) = read_csv(&out.join("summary.csv"));
    assert_eq!(rows.len(), 2);
    let row =
        |name: &str| rows.iter().find(|r| file_name(&r[col(&header, "file")]) == name).expect(name);
    let ba7 = row("ba7_article.toml");
    assert_eq!(ba7[col(&header, "status")], "ok");
    // The physical interval is J ± U (k = 2).
    let j: f64 = ba7[col(&header, "phys_inertia_pivot")].parse().unwrap();
    let u: f64 = ba7[col(&header, "phys_inertia_pivot_expanded")].parse().unwrap();
    let (lo, hi) = (j - u, j + u);
    assert!(lo <= 0.1650 && 0.1650 <= hi, "J interval [{lo}, {hi}]");
    // "auto" chose all three terms, so the summary has a quadratic column with a value.
    assert!(!ba7[col(&header, "quadratic")].is_empty());
    assert_eq!(row("hx2.toml")[col(&header, "error_kind")], "input");
}

#[test]
fn empty_folder_and_zero_threads_are_usage_errors() {
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("out");
    swingfit()
        .arg("batch")
        .arg(dir.path())
        .arg("--out")
        .arg(&out)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("no logs to fit"));
    assert!(!out.join("summary.csv").exists());
    swingfit()
        .arg("batch")
        .arg(test_data("batch/mixed"))
        .arg("--out")
        .arg(&out)
        .args(["--threads", "0"])
        .assert()
        .code(2);
}

#[test]
fn physical_columns_appear_with_mass_and_pivot_to_cg() {
    let out = tempfile::tempdir().expect("tempdir");
    swingfit()
        .arg("batch")
        .arg(test_data("batch/mixed/hx2_a.csv"))
        .args(["--mass", "1.5", "--pivot-to-cg", "0.2"])
        .arg("--out")
        .arg(out.path())
        .assert()
        .success();
    let (header, rows) = read_csv(&out.path().join("summary.csv"));
    let j: f64 = rows[0][col(&header, "phys_inertia_pivot")].parse().expect("number");
    let wn: f64 = rows[0][col(&header, "omega_n")].parse().expect("number");
    // J = m g d / ωn² with standard gravity 9.80665 (docs/checks.md §1, common practice).
    let expected = 1.5 * 9.80665 * 0.2 / (wn * wn);
    assert!((j - expected).abs() < 1e-9 * expected, "J {j}, expected {expected}");
    assert!(header.iter().any(|h| h == "phys_coulomb_expanded"));
}

#[test]
fn a_folder_with_an_article_fits_its_logs_once_with_the_article() {
    let dir = tempfile::tempdir().expect("tempdir");
    for f in ["ba7_article.toml", "ba7_release60_counts.csv", "ba7_release15_deg.csv"] {
        std::fs::copy(crate::common::demo_data(f), dir.path().join(f)).expect("copy");
    }
    let out = dir.path().join("out");
    swingfit().arg("batch").arg(dir.path()).arg("--out").arg(&out).assert().success();
    let (header, rows) = read_csv(&out.join("summary.csv"));
    let files: Vec<String> = rows.iter().map(|r| file_name(&r[col(&header, "file")])).collect();
    assert_eq!(files, vec!["ba7_article.toml"]);
}
