//! End-to-end tests on the real logs of tests/data/realdata (sources, licences and stated
//! values in its README.md; check values in docs/checks.md §realdata), read AS LOGGED by the
//! binary: the rotary logs (two preamble lines, then one angle a line at the stated 1000
//! samples/s) and the seismometer logs (a title line, a tab-separated header `Time ( s )`,
//! `Voltage ( V )`). What swingfit does on each is in docs/realdata.md.

use crate::common::{swingfit, test_data};

fn rotary(k: usize) -> String {
    test_data(&format!("realdata/rotary-pendulum-free-swing/pendulum_free_swing_data_0{k}.txt"))
        .display()
        .to_string()
}

fn seismometer(file: &str) -> String {
    test_data(&format!("realdata/seismometer-decay/{file}")).display().to_string()
}

/// The rotary logs' degrees are counts × (1/11) of a 4000-edge encoder, 1.0101 (= 4000/3960)
/// logged "degrees" per true degree (tests/data/realdata/README.md): the calibration states it.
const ROTARY_SCALE: &str = "1.010101/deg";

fn run(args: &[&str]) -> (bool, String, String) {
    let out = swingfit().args(args).output().expect("runs");
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// `fit ARGS --json FILE`: the document and the exit code and stderr.
fn fit_json_code(args: &[&str]) -> (serde_json::Value, Option<i32>, String) {
    let dir = tempfile::tempdir().expect("tmp");
    let path = dir.path().join("fit.json");
    let p = path.display().to_string();
    let out = swingfit().arg("fit").args(args).args(["--json", &p]).output().expect("runs");
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    let text = std::fs::read_to_string(&path).unwrap_or_else(|_| panic!("no json: {err}"));
    (serde_json::from_str(&text).expect("parse"), out.status.code(), err)
}

/// `fit ARGS --json FILE` that must succeed.
fn fit_json(args: &[&str]) -> serde_json::Value {
    let (j, code, err) = fit_json_code(args);
    assert_eq!(code, Some(0), "{err}");
    j
}

fn normalized(j: &serde_json::Value, key: &str) -> (f64, f64, f64) {
    let p = &j["normalized"][key];
    let f = |v: &serde_json::Value| v.as_f64().unwrap_or(f64::NAN);
    (f(&p["value"]), f(&p["ci95"][0]), f(&p["ci95"][1]))
}

#[test]
fn rotary_logs_load_as_logged_with_the_rate_from_their_preamble() {
    for k in 1..=3 {
        let (ok, out, err) = run(&["check", &rotary(k), "--angle-unit", "deg"]);
        assert!(ok, "run {k}: {err}");
        assert!(out.contains("samples        5000"), "{out}");
        assert!(
            out.contains(
                "times from     steady rate 1000 Hz stated in the file at line 2 ('sample_rate')"
            ),
            "{out}"
        );
        assert!(out.contains("no header: one angle a row, 2 preamble lines above it"), "{out}");
        assert!(out.contains("rate           1000.00 Hz"), "{out}");
    }
    // Without a unit for the bare angles, refused saying what to give.
    let (ok, _, err) = run(&["check", &rotary(1)]);
    assert!(!ok && err.contains(":3: one column of angles with no header: expected its unit"));
}

#[test]
fn rotary_hand_contact_is_flagged_and_the_fit_starts_at_the_first_free_swing() {
    // README: the hand is still on the arm during the first swing of runs 1 and 3.
    for (k, from) in [(1, "0.720"), (3, "0.126")] {
        let (ok, out, err) = run(&["check", &rotary(k), "--signal-scale", ROTARY_SCALE]);
        assert!(ok, "{err}");
        assert!(out.contains("where the acceleration does not follow the restoring torque"));
        assert!(out.contains(&format!("free from the turning point at {from} s")), "{out}");
        let (ok, _, err) = run(&["fit", &rotary(k), "--signal-scale", ROTARY_SCALE]);
        assert!(ok, "{err}");
        assert!(err.contains(&format!("fitting {from} s to 4.999 s")), "{err}");
        assert!(err.contains("did not follow the restoring torque"), "{err}");
    }
}

#[test]
fn rotary_run3_fit_agrees_with_the_independent_scipy_fit() {
    // docs/checks.md §realdata: SciPy output-error fit of run 3 from its second extreme on
    // (0.441 s), viscous + Coulomb, 4000 counts/rev at 1000 Hz: ωn 10.9669 rad/s, b1 0.198 1/s,
    // b0 2.11 rad/s². Here from the file as logged, with the stated calibration.
    let j = fit_json(&[
        &rotary(3),
        "--signal-scale",
        ROTARY_SCALE,
        "--from",
        "0.441",
        "--damping",
        "viscous,coulomb",
    ]);
    let (w, wlo, whi) = normalized(&j, "omega_n");
    assert!((w - 10.9669).abs() < 1e-3, "omega_n {w}");
    assert!(wlo <= 10.9669 && 10.9669 <= whi, "[{wlo}, {whi}]");
    let (b1, lo, hi) = normalized(&j, "viscous");
    assert!((b1 - 0.198).abs() < 0.01 && lo <= 0.198 && 0.198 <= hi, "b1 {b1} [{lo}, {hi}]");
    let (b0, lo, hi) = normalized(&j, "coulomb");
    assert!((b0 - 2.11).abs() < 0.05 && lo <= 2.11 && 2.11 <= hi, "b0 {b0} [{lo}, {hi}]");
    // Read as plain degrees (1 % too large) the amplitude-dependent period shifts ωn by
    // about 6e-3 rad/s: the calibration matters at this precision.
    let j = fit_json(&[
        &rotary(3),
        "--angle-unit",
        "deg",
        "--from",
        "0.441",
        "--damping",
        "viscous,coulomb",
    ]);
    let (w_deg, _, _) = normalized(&j, "omega_n");
    assert!((w_deg - w).abs() > 2e-3 && (w_deg - w).abs() < 2e-2, "{w_deg} vs {w}");
}

#[test]
fn seismometer_voltage_logs_load_as_logged_through_a_calibration() {
    // The voltage is proportional to the angle; the source gives no factor (README), so 1 V/rad:
    // ωn and the decay rates do not depend on it.
    let (ok, out, err) = run(&["check", &seismometer("blow5.txt"), "--signal-scale", "1V/rad"]);
    assert!(ok, "{err}");
    assert!(out.contains("header at line 2, angle column 'Voltage ( V )', 1 preamble line"));
    assert!(out.contains("times from     column 'Time ( s )' in s"), "{out}");
    assert!(out.contains("forced         4 half cycles"), "{out}");
    // Without a calibration: refused, saying how to give one.
    let (ok, _, err) = run(&["check", &seismometer("blow5.txt")]);
    assert!(!ok && err.contains("--signal-scale"), "{err}");
    // One swing only: refused by the loader.
    let (ok, _, err) = run(&["fit", &seismometer("blow8_5.txt"), "--signal-scale", "1V/rad"]);
    assert!(!ok && err.contains("expected at least two swings"), "{err}");
}

#[test]
fn seismometer_decay_constant_holds_the_sources_value_when_the_window_is_given() {
    // docs/checks.md §realdata: the source's envelope fit of blow 2_5 gives C = 0.0334 ± 0.0021
    // 1/s; an independent viscous output-error fit gives b1/2 ≈ 0.028 1/s.
    let log = seismometer("blow_2_5.txt");
    let (ok, _, err) = run(&["fit", &log, "--signal-scale", "1V/rad"]);
    assert!(!ok && err.contains("driven: acceleration does not follow the restoring torque"));
    let (j, code, err) =
        fit_json_code(&[&log, "--signal-scale", "1V/rad", "--from", "0", "--damping", "viscous"]);
    // The fit is written, and said loudly not to be a calibration (docs/realdata.md: the
    // residual follows the swing, this instrument's signal is not quite a free pendulum's).
    assert_eq!(code, Some(3), "{err}");
    assert!(err.contains("not a calibration"), "{err}");
    let (b1, lo, hi) = normalized(&j, "viscous");
    assert!((b1 / 2.0 - 0.028).abs() < 0.003, "b1/2 {}", b1 / 2.0);
    assert!(lo / 2.0 <= 0.0334 && 0.0334 <= hi / 2.0, "C outside [{}, {}]", lo / 2.0, hi / 2.0);
}

#[test]
fn realdata_as_run_keys_in_one_joint_fit() {
    // The three rotary runs of one arm, each read with its own keys, in one joint fit.
    let runs: Vec<String> = (1..=3)
        .map(|k| format!("{}:signal_scale={ROTARY_SCALE},label=run{k}", rotary(k)))
        .collect();
    let mut args = vec!["--damping", "viscous,coulomb"];
    for r in &runs {
        args.extend_from_slice(&["--run", r]);
    }
    let j = fit_json(&args);
    let (w, _, _) = normalized(&j, "omega_n");
    // docs/realdata.md: the runs fitted one by one give 10.932 to 10.966 rad/s.
    assert!((w - 10.95).abs() < 0.03, "joint omega_n {w}");
}
