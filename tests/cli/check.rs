//! End-to-end tests of `swingfit check`: every bad-input file under tests/data/check/ is refused
//! with exit code 2 and a one-line message naming the file and line; good logs print a summary
//! or JSON whose numbers are checked against the analytic signal that made them.

use std::f64::consts::PI;
use std::io::Write;

use predicates::prelude::*;

use crate::common::{swingfit, test_data};

/// Run `check` on a bad file and assert exit 2 with `swingfit: <path>:<line>: <needle>`.
#[track_caller]
fn refused(file: &str, extra: &[&str], line: Option<u64>, needle: &str) {
    let path = test_data(&format!("check/{file}"));
    let shown = path.display().to_string();
    let prefix = match line {
        Some(l) => format!("swingfit: {shown}:{l}: "),
        None => format!("swingfit: {shown}: "),
    };
    let out = swingfit().arg("check").arg(&path).args(extra).assert().code(2).get_output().clone();
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(err.starts_with(&prefix), "expected prefix {prefix:?}, got {err:?}");
    assert!(err.contains(needle), "expected {needle:?} in {err:?}");
    assert_eq!(err.trim_end().lines().count(), 1, "message must be one line: {err:?}");
    assert!(out.stdout.is_empty(), "nothing may be printed on stdout: {:?}", out.stdout);
}

#[test]
fn nan_rows_are_refused_by_default() {
    refused(
        "nan_rows.csv",
        &[],
        Some(10),
        "expected a finite angle in deg (column 2 'angle_deg'), found \"NaN\"",
    );
}

#[test]
fn nan_rows_are_dropped_and_reported_on_request() {
    swingfit()
        .arg("check")
        .arg(test_data("check/nan_rows.csv"))
        .arg("--drop-bad-rows")
        .assert()
        .success()
        .stderr(
            predicate::str::contains("dropped 2 bad rows")
                .and(predicate::str::contains("lines 10, 40")),
        )
        .stdout(
            predicate::str::contains("samples        248")
                .and(predicate::str::contains("dropped lines  2: 10, 40")),
        );
}

#[test]
fn time_backwards_is_refused() {
    refused(
        "time_backwards.csv",
        &[],
        Some(30),
        "time 0.5 s is not after 0.52 s (line 29): expected strictly increasing time",
    );
}

#[test]
fn missing_column_is_refused() {
    refused(
        "missing_column.csv",
        &[],
        Some(1),
        "no angle column: expected a header such as 'angle'",
    );
}

#[test]
fn empty_file_is_refused() {
    refused("empty.csv", &[], Some(1), "empty file");
}

#[test]
fn five_rows_are_too_short() {
    refused("five_rows.csv", &[], Some(6), "only 5 samples: expected at least 50");
}

#[test]
fn ambiguous_columns_are_refused() {
    refused(
        "ambiguous.csv",
        &[],
        Some(1),
        "ambiguous angle column: 'angle_deg' (column 2) and 'theta' (column 3)",
    );
}

#[test]
fn ambiguous_columns_resolve_by_name_or_index() {
    for col in ["angle_deg", "2"] {
        swingfit()
            .arg("check")
            .arg(test_data("check/ambiguous.csv"))
            .args(["--angle-col", col, "--json"])
            .assert()
            .success()
            .stdout(predicate::str::contains("\"samples\": 250"));
    }
}

#[test]
fn unknown_delimiter_is_refused() {
    refused(
        "bad_delimiter.csv",
        &[],
        Some(1),
        "is a single column: expected time and angle columns separated by commas, semicolons, tabs or spaces",
    );
}

#[test]
fn counts_need_counts_per_rev() {
    refused(
        "counts.csv",
        &[],
        Some(1),
        "angle column 'counts' is in encoder counts: expected --counts-per-rev N",
    );
    refused("counts.csv", &["--counts-per-rev=-4"], None, "--counts-per-rev -4 is not usable");
}

#[test]
fn header_without_rows_is_refused() {
    refused("no_data.csv", &[], Some(3), "no data rows after the header (line 2)");
}

#[test]
fn unparseable_time_is_refused() {
    refused(
        "bad_number.csv",
        &[],
        Some(21),
        "expected time in s as a number (column 1 'time_s'), found \"00:00:38\"",
    );
}

#[test]
fn missing_header_is_refused() {
    refused(
        "no_header.csv",
        &[],
        Some(1),
        "expected a header row naming the columns, found only numbers",
    );
}

#[test]
fn one_lean_is_not_two_swings() {
    refused("one_swing.csv", &[], None, "expected at least two swings (4 crossings)");
}

#[test]
fn short_row_is_refused() {
    refused("short_row.csv", &[], Some(50), "expected 2 fields separated by commas, found 1");
}

#[test]
fn unknown_unit_option_is_refused() {
    refused(
        "good_deg.csv",
        &["--time-unit", "h"],
        None,
        "unknown time unit 'h': expected s, ms or us",
    );
}

#[test]
fn missing_file_is_refused() {
    swingfit()
        .args(["check", "no/such/log.csv"])
        .assert()
        .code(2)
        .stderr(predicate::str::starts_with("swingfit: no/such/log.csv: cannot read file"));
}

#[test]
fn good_file_summary_reads_at_a_glance() {
    // good_deg.csv: 2° + 10° e^{-0.05 t} cos(2π t / 1.6), 50 Hz, 250 samples (make_files.py).
    swingfit().arg("check").arg(test_data("check/good_deg.csv")).assert().success().stdout(
        predicate::str::contains("samples        250")
            .and(predicate::str::contains("rate           50.00 Hz"))
            .and(predicate::str::contains("gaps           none"))
            .and(predicate::str::contains("dropped lines  none")),
    );
}

/// Damped oscillator in encoder counts with millisecond stamps and an offset, written to a temp file.
fn counts_log(path: &std::path::Path) {
    // θ = θeq + A e^{−σt} cos(ωd t): zero crossings exactly π/ωd apart (Thomson & Dahleh §2.6
    // [memory], docs/checks.md §3). Values of the docs/checks.md §3 worked example: ωd = 3.83517519156557 rad/s.
    let (wd, sigma, eq, amp, cpr) = (3.83517519156557, 0.0375, 0.4, 0.6, 8192.0);
    let mut f = std::fs::File::create(path).unwrap_or_else(|e| panic!("temp file: {e}"));
    let mut text = String::from("# invented rig: counts and milliseconds\nt_ms,counts\n");
    for i in 0..4000 {
        let t = 0.015 * f64::from(i);
        let th = eq + amp * (-sigma * t).exp() * (wd * t).cos();
        text.push_str(&format!("{:.3},{}\n", t * 1e3, (th / (2.0 * PI) * cpr).round()));
    }
    f.write_all(text.as_bytes()).unwrap_or_else(|e| panic!("write: {e}"));
}

#[test]
fn json_has_the_promised_keys_and_values() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("tempdir: {e}"));
    let path = dir.path().join("enc.csv");
    counts_log(&path);
    let out = swingfit()
        .arg("check")
        .arg(&path)
        .args(["--counts-per-rev", "8192", "--json"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap_or_else(|e| panic!("json: {e}"));
    for key in [
        "samples",
        "duration_s",
        "rate_hz",
        "period_s",
        "equilibrium_rad",
        "noise_rad",
        "gaps",
        "jitter",
        "dropped_lines",
    ] {
        assert!(v.get(key).is_some(), "missing key {key}");
    }
    assert_eq!(v["samples"].as_u64(), Some(4000));
    let truth = 2.0 * PI / 3.83517519156557; // docs/checks.md §3: T_d = 1.63830463885920 s
    let period = v["period_s"].as_f64().unwrap_or(f64::NAN);
    assert!((period / truth - 1.0).abs() < 1e-3, "period {period} vs {truth}");
    let eq = v["equilibrium_rad"].as_f64().unwrap_or(f64::NAN);
    let q = 2.0 * PI / 8192.0;
    assert!((eq - 0.4).abs() < q, "equilibrium {eq}");
    let step = v["encoder_step_rad"].as_f64().unwrap_or(f64::NAN);
    assert!((step - q).abs() < 1e-15);
    // Noise of a rounded signal is at least q/√12 (Widrow & Kollár, docs/checks.md §9 [memory]).
    assert!(v["noise_rad"].as_f64().unwrap_or(0.0) >= q / 12f64.sqrt());
    assert_eq!(v["gaps"].as_array().map(Vec::len), Some(0));
}

#[test]
fn a_header_without_units_is_refused_with_how_to_state_them() {
    refused(
        "no_unit.csv",
        &[],
        Some(2),
        "time column 'time' has no unit in its header: name it time_s, time_ms or time_us, or give --time-unit s|ms|us",
    );
    refused(
        "no_unit.csv",
        &["--time-unit", "s"],
        Some(2),
        "angle column 'angle' has no unit in its header: name it angle_rad or angle_deg",
    );
    swingfit()
        .args(["check", "--time-unit", "s", "--angle-unit", "deg"])
        .arg(test_data("check/no_unit.csv"))
        .assert()
        .success()
        .stdout(predicate::str::contains("angle range    -7.608 deg to 12.000 deg"));
}

#[test]
fn milliseconds_under_a_bare_time_header_are_refused_with_the_mix_up_named() {
    // The header says nothing of the unit: refused as unstated.
    refused("ms_as_s.csv", &[], Some(2), "time column 'time' has no unit");
    // Stated wrongly as seconds: the period of 1600 s names the mix-up.
    refused(
        "ms_as_s.csv",
        &["--time-unit", "s"],
        None,
        "times look like milliseconds read as seconds: give --time-unit ms or name the column time_ms",
    );
    swingfit()
        .args(["check", "--time-unit", "ms"])
        .arg(test_data("check/ms_as_s.csv"))
        .assert()
        .success()
        .stdout(predicate::str::contains("period         1.60000 s"));
}

#[test]
fn degrees_under_a_radians_header_are_refused_with_the_mix_up_named() {
    refused(
        "deg_as_rad.csv",
        &[],
        None,
        "angles look like degrees read as radians: give --angle-unit deg or name the column angle_deg",
    );
}

#[test]
fn units_in_brackets_and_in_a_units_row_are_read() {
    for file in ["bracket_units.csv", "units_row.csv"] {
        swingfit().arg("check").arg(test_data(&format!("check/{file}"))).assert().success().stdout(
            predicate::str::contains("angle range    -7.608 deg to 12.000 deg")
                .and(predicate::str::contains("period         1.60000 s")),
        );
    }
}
