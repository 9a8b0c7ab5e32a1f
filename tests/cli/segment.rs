//! End-to-end tests of motion segmentation and time-base slips: synthetic logs with known truth
//! (a hold then a release, injected slips) written to a temp dir and run through the binary.

use swingfit::data::write::{LogFormat, OutputUnit, render};
use swingfit::integrate::{Method, simulate};
use swingfit::model::{Physics, Release, Term};

use crate::common::swingfit;

const EQ: f64 = 0.01;

fn physics() -> Physics {
    Physics::undamped(5.5).with_coef(Term::Viscous, 0.03).with_coef(Term::Coulomb, 0.02)
}

/// An 8 s hold at 14.6° then a free release, 200 Hz, noise 2e-4 rad, written as radians.
fn hold_log(dir: &std::path::Path) -> std::path::PathBuf {
    let rate = 200.0;
    let held = 14.6f64.to_radians();
    let mut t: Vec<f64> = (0..1600).map(|k| k as f64 / rate).collect();
    let mut y = vec![EQ + held; t.len()];
    let free: Vec<f64> = (1600..1600 + 6000).map(|k| k as f64 / rate).collect();
    let tr = simulate(
        &physics(),
        &Release { equilibrium: EQ, angle: EQ + held, velocity: 0.0 },
        &free,
        Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
    )
    .expect("valid");
    t.extend(&free);
    y.extend(&tr.angle);
    write(dir, "hold.csv", &t, &y, OutputUnit::Rad, None)
}

fn write(
    dir: &std::path::Path,
    name: &str,
    t: &[f64],
    y: &[f64],
    unit: OutputUnit,
    cpr: Option<f64>,
) -> std::path::PathBuf {
    let format =
        LogFormat { unit, counts_per_rev: cpr, noise_sd_rad: 2e-4, seed: 4, comments: vec![] };
    let bytes = render(t, y, &format).expect("render");
    let path = dir.join(name);
    std::fs::write(&path, bytes).expect("write");
    path
}

#[test]
fn check_shows_the_hold_and_the_free_swing_and_fit_says_what_it_cut() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = hold_log(dir.path());
    let out = swingfit().arg("check").arg(&path).assert().success().get_output().clone();
    let text = String::from_utf8_lossy(&out.stdout).to_string();
    assert!(text.contains("held at +14.6"), "{text}");
    assert!(text.contains("free swing     7.99") || text.contains("free swing     8.0"), "{text}");
    assert!(text.contains("after a 7.9") || text.contains("after a 8.0"), "{text}");
    let json =
        swingfit().arg("check").arg(&path).arg("--json").assert().success().get_output().clone();
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).expect("json");
    let start = v["free_segments"][0]["start_s"].as_f64().expect("start");
    assert!((start - 8.0).abs() < 0.05, "start {start}");
    assert_eq!(v["still"][0]["held"], true);

    let fit = swingfit().arg("fit").arg(&path).assert().success().get_output().clone();
    let err = String::from_utf8_lossy(&fit.stderr).to_string();
    assert!(err.contains("note:") && err.contains("released at"), "{err}");
    let table = String::from_utf8_lossy(&fit.stdout).to_string();
    assert!(table.contains("natural frequency"), "{table}");

    // batch fits the same free segment and records what it cut in the row's notes.
    let out = dir.path().join("out");
    swingfit().arg("batch").arg(&path).arg("--out").arg(&out).assert().success();
    let jsonl = std::fs::read_to_string(out.join("summary.jsonl")).expect("jsonl");
    let row: serde_json::Value =
        serde_json::from_str(jsonl.lines().next().unwrap_or("")).expect("row");
    let notes = row["notes"][0].as_str().unwrap_or("");
    assert!(notes.contains("released at 7.99") || notes.contains("released at 8.0"), "{row}");
    let samples = row["samples"].as_u64().unwrap_or(0);
    assert!((5990..=6010).contains(&samples), "the 1600 held samples are not fitted: {samples}");
}

#[test]
fn from_outside_the_log_is_refused_with_its_time_range() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = hold_log(dir.path());
    let out = swingfit()
        .arg("fit")
        .arg(&path)
        .args(["--from", "60"])
        .assert()
        .code(2)
        .get_output()
        .clone();
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(
        err.contains("--from 60 s is outside the log: the log runs from 0.000 s to 37.995 s"),
        "{err}"
    );
    assert_eq!(err.trim_end().lines().count(), 1);
    // A window of half a second leaves under two swings.
    let out = swingfit()
        .arg("fit")
        .arg(&path)
        .args(["--from", "10", "--to", "10.5"])
        .assert()
        .code(2)
        .get_output()
        .clone();
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(err.contains("under two swings") && err.contains("0.000 s to 37.995 s"), "{err}");
}

#[test]
fn slips_are_reported_by_check_and_retimed_by_fit() {
    let dir = tempfile::tempdir().expect("tempdir");
    let rate = 1000.0;
    let times: Vec<f64> = (0..15_000).map(|k| k as f64 / rate).collect();
    let tr = simulate(
        &physics(),
        &Release { equilibrium: EQ, angle: EQ + 0.8, velocity: 0.0 },
        &times,
        Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
    )
    .expect("valid");
    let mut y = tr.angle.clone();
    let mut injected = 0;
    let mut i = 500;
    while injected < 25 && i + 2 < times.len() {
        if tr.velocity[i].abs() > 2.5 {
            y[i] = tr.angle[i + 1];
            injected += 1;
            i += 300;
        } else {
            i += 1;
        }
    }
    assert_eq!(injected, 25);
    let format = LogFormat {
        unit: OutputUnit::Counts,
        counts_per_rev: Some(40_000.0),
        noise_sd_rad: 0.0,
        seed: 1,
        comments: vec![],
    };
    let path = dir.path().join("slips.csv");
    std::fs::write(&path, render(&times, &y, &format).expect("render")).expect("write");
    let out = swingfit()
        .arg("check")
        .arg(&path)
        .args(["--counts-per-rev", "40000"])
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8_lossy(&out.stdout).to_string();
    assert!(text.contains("25 time-base slips: 25 doubled step"), "{text}");
    let fit = swingfit()
        .arg("fit")
        .arg(&path)
        .args(["--counts-per-rev", "40000"])
        .assert()
        .success()
        .get_output()
        .clone();
    let err = String::from_utf8_lossy(&fit.stderr).to_string();
    assert!(err.contains("25 time-base slips re-timed"), "{err}");
}
