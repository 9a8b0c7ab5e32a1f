//! Real free-decay logs from public MIT-licensed repositories (tests/data/realdata/README.md),
//! checked against what their sources state and against an independent SciPy fit
//! (docs/checks.md §realdata). The files are kept verbatim and read by the loader as logged
//! (a stated rate and no time column; a title line above the header), with the calibration
//! documented beside each helper. tests/cli/realdata.rs runs the same files through the binary.

use std::path::PathBuf;

use swingfit::data::segment::{self, StartCause, Window};
use swingfit::data::survey::survey;
use swingfit::data::{AngleLog, LoadOptions, load};
use swingfit::fit::{FitOptions, fit};
use swingfit::model::{DampingSet, Term};
use swingfit::units::SignalScale;

fn realdata(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/realdata").join(rel)
}

/// Rotary pendulum run `k` as the source logged it, read by the loader as is: two preamble
/// lines (the names and values of `trigger_start_deg, sample_rate, duration_sec`), then one
/// angle a line at the stated 1000 samples/s. The logged degrees are counts × (1/11) of the
/// source's 4000-edge encoder, i.e. 4000/3960 = 1.010101 logged units per true degree
/// (tests/data/realdata/README.md), given as the signal calibration, as the independent SciPy
/// fit read them (4000 counts/rev).
fn rotary(k: usize) -> AngleLog {
    let name = format!("rotary-pendulum-free-swing/pendulum_free_swing_data_0{k}.txt");
    let opts = LoadOptions {
        signal_scale: Some(SignalScale::parse("1.010101/deg").expect("scale")),
        ..LoadOptions::default()
    };
    load(&realdata(&name), &opts).expect("rotary log loads")
}

/// Seismometer log `file` as logged: a title line, a tab-separated header `Time ( s )` /
/// `Voltage ( V )`, then rows, read by the loader as is with a calibration of 1 V/rad (the
/// voltage is proportional to the angle; the source gives no factor, and ωn and the decay
/// rates do not depend on the scale).
fn seismometer(file: &str) -> Result<AngleLog, swingfit::data::LoadError> {
    let name = format!("seismometer-decay/{file}");
    let opts = LoadOptions {
        signal_scale: Some(SignalScale::parse("1V/rad").expect("scale")),
        ..LoadOptions::default()
    };
    load(&realdata(&name), &opts)
}

fn viscous_coulomb() -> FitOptions {
    FitOptions {
        damping: DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]),
        ..FitOptions::default()
    }
}

fn term(out: &swingfit::fit::FitOutcome, t: Term) -> swingfit::fit::Estimate {
    out.terms.iter().find(|(u, _)| *u == t).map(|(_, e)| e.clone()).expect("term fitted")
}

#[test]
fn rotary_run3_from_its_second_extreme_matches_the_independent_scipy_fit() {
    // docs/checks.md §realdata: SciPy output-error fit of run 3 from the second extreme on,
    // viscous + Coulomb, 4000 counts/rev at 1000 Hz: ωn 10.9669 rad/s, b1 0.198 1/s, b0 2.11 rad/s².
    let log = rotary(3);
    let s = survey(&log);
    let seg = segment::segment(&log, &s);
    let g = &seg.segments[0];
    // Flagged: the first part of the log is forced, the free swing starts at the first extreme.
    assert!(matches!(g.start_cause, StartCause::AfterForcing { .. }), "{:?}", g.start_cause);
    assert!((g.start_s - 0.126).abs() < 0.01, "first free turning point at {}", g.start_s);
    // The second extreme, where the SciPy fit starts: the next turning point of the survey.
    let second = s.peaks.iter().find(|p| p.t > g.start_s + 0.1).expect("second extreme").t;
    assert!((second - 0.441).abs() < 0.01, "second extreme at {second}");
    let runs =
        segment::free_runs(&log, Window { from_s: Some(second), to_s: None }).expect("window");
    let out = fit(&runs.runs, &viscous_coulomb()).expect("run 3 fits");
    assert!((out.omega_n.value - 10.9669).abs() < 1e-3, "omega_n {}", out.omega_n.value);
    let inside = |e: &swingfit::fit::Estimate, v: f64| e.ci95.0 <= v && v <= e.ci95.1;
    assert!(inside(&out.omega_n, 10.9669), "{:?}", out.omega_n);
    let b1 = term(&out, Term::Viscous);
    let b0 = term(&out, Term::Coulomb);
    assert!(inside(&b1, 0.198) && (b1.value - 0.198).abs() < 0.01, "{b1:?}");
    assert!(inside(&b0, 2.11) && (b0.value - 2.11).abs() < 0.05, "{b0:?}");
}

#[test]
fn rotary_hand_released_runs_are_flagged_and_fitted_from_the_first_free_swing() {
    // tests/data/realdata/README.md: the hand is still on the arm during the first swing of
    // runs 1 and 3. Each run is fitted by default from the first free turning point; the three
    // runs are one arm, so their ωn agree.
    let mut omegas = Vec::new();
    for k in 1..=3 {
        let log = rotary(k);
        let runs = segment::free_runs(&log, Window::default()).expect("free runs");
        assert_eq!(runs.runs.len(), 1);
        let g = &runs.segmentation.segments[0];
        assert!(
            matches!(g.start_cause, StartCause::AfterForcing { .. }),
            "run {k}: {:?}",
            g.start_cause
        );
        assert!(runs.notes.iter().any(|n| n.contains("did not follow the restoring torque")));
        assert!(g.start_s < 0.8, "run {k}: free from {}", g.start_s);
        let out = fit(&runs.runs, &viscous_coulomb()).expect("fits");
        omegas.push(out.omega_n.value);
    }
    // Run 1: two half cycles forced (the hand on the whole first swing), free from 0.720 s.
    let seg1 = segment::free_runs(&rotary(1), Window::default()).expect("run 1");
    match seg1.segmentation.segments[0].start_cause {
        StartCause::AfterForcing { half_cycles, accel_ratio, .. } => {
            assert_eq!(half_cycles, 2);
            assert!(accel_ratio < 0.5, "measured/free acceleration {accel_ratio}");
        }
        ref c => panic!("{c:?}"),
    }
    let spread = omegas.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        - omegas.iter().cloned().fold(f64::INFINITY, f64::min);
    assert!(spread < 0.05, "omega_n of the three runs {omegas:?}");
    assert!(omegas.iter().all(|w| (w - 10.96).abs() < 0.04), "{omegas:?}");
}

#[test]
fn seismometer_decay_constant_agrees_with_the_source_when_the_window_is_given() {
    // docs/checks.md §realdata: the source's exponential envelope fit of blow 2_5 gives
    // C = 0.0334 ± 0.0021 1/s; an independent viscous output-error fit gives b1/2 ≈ 0.028 1/s.
    let log = seismometer("blow_2_5.txt").expect("loads");
    // By default it is refused: the acceleration is near zero through the middle of each swing
    // (docs/realdata.md), which no free pendulum does.
    let e = segment::free_runs(&log, Window::default()).expect_err("not a free swing");
    assert!(e.kind.to_string().contains("driven"), "{e}");
    let runs = segment::free_runs(&log, Window { from_s: Some(0.0), to_s: None }).expect("window");
    let opts =
        FitOptions { damping: DampingSet::from_terms(&[Term::Viscous]), ..FitOptions::default() };
    let out = fit(&runs.runs, &opts).expect("viscous fit");
    let b1 = term(&out, Term::Viscous);
    let (lo, hi) = (b1.ci95.0 / 2.0, b1.ci95.1 / 2.0);
    assert!((b1.value / 2.0 - 0.028).abs() < 0.003, "b1/2 {}", b1.value / 2.0);
    assert!(lo <= 0.0334 && 0.0334 <= hi, "stated C 0.0334 outside [{lo}, {hi}]");
    // Period: 2π/ωn against the 14.9 s the survey times from its crossings.
    assert!((2.0 * std::f64::consts::PI / out.omega_n.value - 14.9).abs() < 0.5);
}

#[test]
fn seismometer_short_log_is_refused_and_the_long_one_is_cut() {
    let e = seismometer("blow8_5.txt").expect_err("too few swings");
    assert!(e.kind.to_string().contains("expected at least two swings"), "{e}");
    let log = seismometer("blow5.txt").expect("loads");
    let runs = segment::free_runs(&log, Window::default()).expect("free part");
    let g = &runs.segmentation.segments[0];
    assert!(matches!(g.start_cause, StartCause::AfterForcing { .. }), "{:?}", g.start_cause);
    assert!(g.start_s > 20.0 && g.start_s < 40.0, "free from {}", g.start_s);
}
