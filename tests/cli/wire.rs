//! The wire formats read back: every document the binary writes deserializes into its type in
//! `swingfit::report::wire` and serializes again to the same bytes (so the types are the
//! formats, nulls for undefined figures included), and a fit document drives `simulate`.

use crate::common::{demo_data, swingfit, test_data};
use swingfit::report::wire;

fn s(p: &std::path::Path) -> String {
    p.display().to_string()
}

/// `text` read as `T` and written again by `write`, byte for byte.
fn round_trip<T: serde::de::DeserializeOwned>(text: &str, write: impl Fn(&T) -> String) {
    let doc: T = match serde_json::from_str(text) {
        Ok(d) => d,
        Err(e) => panic!("does not read back: {e}\n{}", &text[..text.len().min(400)]),
    };
    let again = write(&doc);
    if again != text {
        let at = again.bytes().zip(text.bytes()).take_while(|(a, b)| a == b).count();
        panic!(
            "written again differs at byte {at}: {:?} vs {:?}",
            &text[at.saturating_sub(80)..(at + 80).min(text.len())],
            &again[at.saturating_sub(80)..(at + 80).min(again.len())]
        );
    }
}

#[test]
fn fit_document_with_physical_values_round_trips_and_drives_simulate() {
    let dir = tempfile::tempdir().expect("temp dir");
    let json = dir.path().join("fit.json");
    let log = demo_data("ba7_release60_counts.csv");
    let out = swingfit()
        .args(["fit", &s(&log), "--counts-per-rev", "10000"])
        .args(["--mass", "2.5", "--mass-std", "0.01", "--pivot-to-cg", "0.3"])
        .args(["--json", &s(&json)])
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = std::fs::read_to_string(&json).expect("fit json");
    round_trip::<wire::fit::FitDoc>(&text, wire::to_pretty);
    let doc: wire::fit::FitDoc = serde_json::from_str(&text).expect("reads");
    assert!(doc.physical.is_some() && !doc.budget.is_empty() && doc.inputs.is_some());
    // The params reader takes the document back: ωn and the release of run 0.
    let p = wire::params::read(&json, None).expect("params from the fit document");
    assert_eq!(p.physics.omega_n.to_bits(), doc.normalized.omega_n.value.to_bits());
    assert_eq!(p.release.angle.to_bits(), doc.runs[0].initial_angle.value.to_bits());
}

#[test]
fn compare_document_round_trips() {
    let dir = tempfile::tempdir().expect("temp dir");
    let json = dir.path().join("compare.json");
    let log = demo_data("ba7_release15_deg.csv");
    let out = swingfit().args(["compare", &s(&log), "--json", &s(&json)]).output().expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = std::fs::read_to_string(&json).expect("compare json");
    round_trip::<wire::compare::CompareDoc>(&text, wire::to_pretty);
}

#[test]
fn check_document_round_trips() {
    for log in [demo_data("ba7_release15_deg.csv"), test_data("check/one_swing.csv")] {
        let out = swingfit().args(["check", &s(&log), "--json"]).output().expect("runs");
        let text = String::from_utf8(out.stdout).expect("utf-8");
        if out.status.code() == Some(0) {
            round_trip::<wire::check::CheckDoc>(&text, wire::to_pretty);
        }
    }
}

#[test]
fn batch_rows_round_trip_line_by_line_with_error_rows() {
    let dir = tempfile::tempdir().expect("temp dir");
    let out = swingfit()
        .args(["batch", &s(&test_data("batch/mixed")), "--out", &s(dir.path())])
        .args(["--mass", "2.5", "--pivot-to-cg", "0.3"])
        .output()
        .expect("runs");
    assert!(out.status.code().is_some_and(|c| c <= 3));
    let text = std::fs::read_to_string(dir.path().join("summary.jsonl")).expect("jsonl");
    let mut errors = 0;
    for line in text.lines() {
        round_trip::<wire::batch::BatchRowDoc>(line, |d| serde_json::to_string(d).expect("json"));
        let doc: wire::batch::BatchRowDoc = serde_json::from_str(line).expect("row");
        errors += usize::from(doc.status != wire::Status::Ok);
    }
    assert!(errors > 0, "the mixed folder has bad logs: their rows must read back too");
}

#[test]
fn sheet_document_round_trips() {
    let dir = tempfile::tempdir().expect("temp dir");
    let out_dir = dir.path().join("sheet");
    let out = swingfit()
        .args(["sheet", &s(&demo_data("ba7_article.toml")), "--out", &s(&out_dir)])
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = std::fs::read_to_string(out_dir.join("sheet.json")).expect("sheet json");
    round_trip::<wire::sheet::SheetDoc>(&text, wire::to_pretty);
}

/// The lines of a simulated log after its header comment.
fn replay(params: &std::path::Path) -> String {
    let log = demo_data("ba7_release15_deg.csv");
    let out = swingfit()
        .args(["simulate", "--params", &s(params), "--times", &s(&log)])
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout)
        .expect("utf-8")
        .lines()
        .filter(|l| !l.starts_with('#'))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn simulate_reads_an_old_fit_v1_document_as_it_reads_today_s_v2() {
    // tests/data/wire/fit_v1.json was written by the fit.v1 writer on the demo log (README there).
    let v1 = test_data("wire/fit_v1.json");
    let old: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&v1).expect("v1 file")).expect("json");
    assert_eq!(old["schema"], "swingfit.fit.v1");
    let dir = tempfile::tempdir().expect("temp dir");
    let v2 = dir.path().join("fit.json");
    let out = swingfit()
        .args(["fit", &s(&demo_data("ba7_release15_deg.csv")), "--json", &s(&v2)])
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let new: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&v2).expect("v2 file")).expect("json");
    assert_eq!(new["schema"], wire::fit::FIT_SCHEMA);
    // Same fit, same numbers: the two documents replay to the same log.
    assert_eq!(old["normalized"], new["normalized"]);
    assert_eq!(replay(&v1), replay(&v2));
}
