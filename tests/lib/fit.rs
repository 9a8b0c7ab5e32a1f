//! Library tests: the estimator. Recovery of known parameters, interval coverage by Monte
//! Carlo, joint fits, encoder logs, gradients against central differences, and fits of the
//! committed SciPy reference trajectories (tests/reference/, an independent integrator).

use nalgebra::DVector;
use swingfit::data::AngleLog;
use swingfit::fit::lm::LeastSquares;
use swingfit::fit::problem::{Layout, RunData, TrajectoryProblem, repeat_weights};
use swingfit::fit::{FitError, FitOptions, FitOutcome, fit};
use swingfit::model::{DampingSet, Term};

use crate::synth::{Case, physics, release, uniform};

fn set(terms: &[Term]) -> DampingSet {
    DampingSet::from_terms(terms)
}

fn opts(d: DampingSet) -> FitOptions {
    FitOptions { damping: d, ..FitOptions::default() }
}

/// Every fitted physics value lies within its 95 % interval of the truth.
fn assert_covers(f: &FitOutcome, truth: &swingfit::model::Physics) {
    let (lo, hi) = f.omega_n.ci95;
    assert!(
        lo <= truth.omega_n && truth.omega_n <= hi,
        "omega_n {} not in [{lo}, {hi}]",
        truth.omega_n
    );
    for (t, e) in &f.terms {
        let v = truth.coef(*t);
        assert!(
            e.ci95.0 <= v && v <= e.ci95.1,
            "{t}: truth {v} not in [{}, {}] (fit {})",
            e.ci95.0,
            e.ci95.1,
            e.value
        );
    }
}

#[test]
fn recovers_each_damping_set_from_noisy_logs() {
    let w = 4.2;
    let cases = [
        (set(&[Term::Viscous]), physics(w, 0.05, 0.0, 0.0), 0.5),
        (set(&[Term::Coulomb]), physics(w, 0.0, 0.03, 0.0), 0.4),
        (set(&[Term::Quadratic]), physics(w, 0.0, 0.0, 0.04), 1.0),
        (set(&[Term::Viscous, Term::Coulomb]), physics(w, 0.03, 0.02, 0.0), 0.6),
        (set(&[Term::Viscous, Term::Coulomb, Term::Quadratic]), physics(w, 0.02, 0.015, 0.02), 1.2),
    ];
    for (i, (d, p, a0)) in cases.into_iter().enumerate() {
        let case = Case {
            physics: p,
            release: release(0.02, a0),
            times: uniform(40.0, 100.0),
            noise_rad: 2e-4,
            counts_per_rev: None,
            seed: 100 + i as u64,
        };
        let f = fit(&[case.log("synthetic.csv")], &opts(d)).unwrap_or_else(|e| panic!("{d}: {e}"));
        assert_covers(&f, &p);
        // The residual is the noise: RMS within 5 % of the 2e-4 rad put in.
        assert!((f.rms_residual() / 2e-4 - 1.0).abs() < 0.05, "{d}: rms {}", f.rms_residual());
        assert!((f.runs[0].equilibrium.value - 0.02).abs() < 1e-4);
    }
}

#[test]
fn encoder_log_with_offset_and_jittered_times() {
    // 4096 counts/rev (1024-line quadrature), equilibrium 0.3 rad in the encoder frame,
    // timestamps with up to ±40 % jitter and two dropped stretches.
    let mut times = Vec::new();
    let mut t = 0.0;
    let mut k = 0u64;
    while t < 60.0 {
        let frac = ((k.wrapping_mul(2654435761) % 1000) as f64 / 1000.0 - 0.5) * 0.8;
        let tt = t + frac * 0.005;
        if !(12.0..12.7).contains(&tt) && !(30.0..31.5).contains(&tt) {
            times.push(tt);
        }
        t += 0.005;
        k += 1;
    }
    let p = physics(5.0, 0.02, 0.01, 0.0);
    let case = Case {
        physics: p,
        release: release(0.3, 0.7),
        times,
        noise_rad: 1e-4,
        counts_per_rev: Some(4096.0),
        seed: 9,
    };
    let log = case.log("encoder.csv");
    assert!(log.angle_step().is_some());
    let f = fit(&[log], &opts(set(&[Term::Viscous, Term::Coulomb]))).expect("fit");
    assert_covers(&f, &p);
    assert!((f.runs[0].equilibrium.value - 0.3).abs() < 2e-4);
}

#[test]
fn joint_fit_of_two_releases_separates_quadratic_from_viscous() {
    let p = physics(3.5, 0.02, 0.0, 0.03);
    let d = set(&[Term::Viscous, Term::Quadratic]);
    let logs: Vec<AngleLog> = [(0.25, 1), (1.0, 2)]
        .iter()
        .map(|&(a0, seed)| {
            Case {
                physics: p,
                release: release(-0.01, a0),
                times: uniform(30.0, 50.0),
                noise_rad: 3e-4,
                counts_per_rev: None,
                seed,
            }
            .log("run.csv")
        })
        .collect();
    let joint = fit(&logs, &opts(d)).expect("joint fit");
    assert_covers(&joint, &p);
    assert_eq!(joint.runs.len(), 2);
    // The joint fit pins b2 better than the small release alone.
    let small = fit(&logs[..1], &opts(d)).expect("small release fit");
    let sd = |f: &FitOutcome| f.term(Term::Quadratic).map(|e| e.std).unwrap_or(f64::NAN);
    assert!(sd(&joint) < 0.5 * sd(&small), "joint {} vs small {}", sd(&joint), sd(&small));
}

#[test]
fn monte_carlo_coverage_of_the_95_percent_intervals() {
    // 400 seeded noise realisations of one test; the intervals must hold the truth in 92–98 %
    // of cases and the mean reported standard uncertainty must match the scatter within 15 %.
    let p = physics(4.0, 0.04, 0.02, 0.0);
    let d = set(&[Term::Viscous, Term::Coulomb]);
    let times = uniform(20.0, 50.0);
    let base = Case {
        physics: p,
        release: release(0.0, 0.5),
        times,
        noise_rad: 5e-4,
        counts_per_rev: None,
        seed: 0,
    };
    let reps = 400;
    let mut hits = [0usize; 3];
    let mut values = vec![Vec::new(); 3];
    let mut stds = vec![Vec::new(); 3];
    for r in 0..reps {
        let case = Case { seed: 5000 + r as u64, ..base.clone() };
        let f = fit(&[case.log("mc.csv")], &opts(d)).expect("every realisation converges");
        let ests = [
            f.omega_n.clone(),
            f.term(Term::Viscous).cloned().unwrap(),
            f.term(Term::Coulomb).cloned().unwrap(),
        ];
        let truth = [p.omega_n, p.coef(Term::Viscous), p.coef(Term::Coulomb)];
        for k in 0..3 {
            if ests[k].ci95.0 <= truth[k] && truth[k] <= ests[k].ci95.1 {
                hits[k] += 1;
            }
            values[k].push(ests[k].value);
            stds[k].push(ests[k].std);
        }
    }
    for k in 0..3 {
        let cover = hits[k] as f64 / reps as f64;
        assert!((0.92..=0.98).contains(&cover), "parameter {k}: coverage {cover}");
        let n = reps as f64;
        let mean = values[k].iter().sum::<f64>() / n;
        let scatter =
            (values[k].iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        let reported = stds[k].iter().sum::<f64>() / n;
        assert!(
            (reported / scatter - 1.0).abs() < 0.15,
            "parameter {k}: reported {reported} vs scatter {scatter}"
        );
    }
}

#[test]
fn gradient_matches_central_differences() {
    // ½ d(RSS)/dx = Jᵀr: the sensitivity normal equations against central differences of the cost,
    // on a Coulomb case with many reversals.
    let p = physics(4.0, 0.03, 0.05, 0.02);
    let case = Case {
        physics: p,
        release: release(0.05, 0.6),
        times: uniform(10.0, 100.0),
        noise_rad: 1e-3,
        counts_per_rev: None,
        seed: 3,
    };
    let log = case.log("grad.csv");
    let layout = Layout { damping: DampingSet::FULL, n_runs: 1 };
    let w = repeat_weights(log.angles());
    let problem = TrajectoryProblem {
        layout,
        runs: vec![RunData {
            times: log.times(),
            angles: log.angles(),
            weights: &w,
            max_step: 0.002,
        }],
    };
    // Slightly off the truth so the gradient is not zero.
    let x = DVector::from_vec(vec![4.01, 0.031, 0.049, 0.021, 0.051, 0.655, 0.01]);
    let lin = problem.linearize(&x).expect("linearize");
    for k in 0..x.len() {
        let h = 1e-6 * x[k].abs().max(1e-3);
        let mut xp = x.clone();
        let mut xm = x.clone();
        xp[k] += h;
        xm[k] -= h;
        let g = 0.5 * (problem.cost(&xp).unwrap() - problem.cost(&xm).unwrap()) / (2.0 * h);
        let rel = (g - lin.jtr[k]).abs() / lin.jtr[k].abs().max(1e-9);
        assert!(rel < 1e-4, "parameter {k}: finite difference {g} vs Jtr {}", lin.jtr[k]);
    }
}

#[test]
fn repeated_readings_count_once() {
    let w = repeat_weights(&[1.0, 1.0, 1.0, 2.0, 3.0, 3.0]);
    let expect = [1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0, 1.0, 0.5, 0.5];
    for (a, b) in w.iter().zip(expect) {
        assert!((a - b).abs() < 1e-15);
    }
}

#[test]
fn growing_oscillation_is_rejected_not_reported() {
    // An amplitude that grows cannot be damping: every coefficient is pushed to its bound of zero
    // and the fit must fail with a diagnosis instead of printing numbers.
    let times = uniform(20.0, 100.0);
    let angles: Vec<f64> = times.iter().map(|t| 0.2 * (0.03 * t).exp() * (4.0 * t).cos()).collect();
    let log = AngleLog::from_samples("growing.csv", times, angles).expect("log");
    let err = fit(&[log], &opts(set(&[Term::Viscous]))).expect_err("must be rejected");
    assert!(matches!(err, FitError::AtBound { term: Term::Viscous, .. }), "{err}");
    assert!(err.to_string().contains("pinned at zero"));
}

/// Read a committed SciPy reference case (tests/reference/make_reference.py output).
fn reference_case(name: &str) -> (AngleLog, serde_json::Value) {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/reference");
    let log = swingfit::data::load(&dir.join(format!("{name}.csv")), &Default::default())
        .expect("reference csv");
    let params: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join(format!("{name}.json"))).unwrap())
            .unwrap();
    (log, params)
}

#[test]
fn fits_the_scipy_reference_trajectories_exactly() {
    // Source: tests/data/reference/*.csv, made by SciPy solve_ivp DOP853 (rtol 1e-12) with true
    // stick–slip events — an integrator independent of swingfit. Noise-free, so the fit must
    // return the parameters the script used to far better than any test tolerance.
    for (name, d) in [
        ("viscous_only", set(&[Term::Viscous])),
        ("coulomb_rest", set(&[Term::Coulomb])),
        ("quadratic_large", set(&[Term::Quadratic])),
        ("all_three_120", DampingSet::FULL),
        ("nonuniform_gaps", DampingSet::FULL),
    ] {
        let (log, params) = reference_case(name);
        let f = fit(&[log], &opts(d)).unwrap_or_else(|e| panic!("{name}: {e}"));
        let w = params["omega_n"].as_f64().unwrap();
        assert!(
            (f.omega_n.value / w - 1.0).abs() < 1e-7,
            "{name}: omega_n {} vs {w}",
            f.omega_n.value
        );
        for t in d.iter() {
            let truth = params[t.name()].as_f64().unwrap_or(0.0);
            let got = f.term(t).unwrap().value;
            assert!((got - truth).abs() < 1e-6 * truth.max(1e-3), "{name}: {t} {got} vs {truth}");
        }
    }
}

#[test]
fn bootstrap_intervals_are_seeded_and_never_narrower_than_analytic() {
    use swingfit::fit::uncertainty::IntervalMethod;
    let p = physics(4.0, 0.05, 0.0, 0.0);
    let case = Case {
        physics: p,
        release: release(0.0, 0.4),
        times: uniform(15.0, 40.0),
        noise_rad: 5e-4,
        counts_per_rev: None,
        seed: 77,
    };
    let log = case.log("boot.csv");
    let d = set(&[Term::Viscous]);
    let plain = fit(std::slice::from_ref(&log), &opts(d)).expect("plain");
    let boot_opts =
        FitOptions { damping: d, bootstrap: Some(40), seed: 3, ..FitOptions::default() };
    let a = fit(std::slice::from_ref(&log), &boot_opts).expect("bootstrap");
    let b = fit(std::slice::from_ref(&log), &boot_opts).expect("bootstrap again");
    match a.interval_method {
        IntervalMethod::Bootstrap { replicates, .. } => {
            assert!(replicates >= 20, "{replicates} replicates")
        }
        ref m => panic!("expected bootstrap intervals, got {m:?}"),
    }
    assert_eq!(a.omega_n, b.omega_n, "same seed, same numbers");
    assert!(a.term(Term::Viscous).unwrap().std >= plain.term(Term::Viscous).unwrap().std);
    assert_covers(&a, &p);
}

#[test]
fn correlated_residuals_widen_the_intervals_and_say_so() {
    use swingfit::fit::uncertainty::IntervalMethod;
    // Noise smoothed over 9 samples (a low-pass sensor): Ljung–Box rejects whiteness and the
    // intervals come from the HAC sandwich, wider than the plain ones.
    let p = physics(4.0, 0.05, 0.0, 0.0);
    let case = Case {
        physics: p,
        release: release(0.0, 0.4),
        times: uniform(30.0, 100.0),
        noise_rad: 0.0,
        counts_per_rev: None,
        seed: 0,
    };
    let clean = case.clean();
    let mut white = vec![0.0; clean.len()];
    swingfit::data::write::add_noise(&mut white, 1e-3, 8).unwrap();
    let smooth: Vec<f64> = (0..white.len())
        .map(|i| {
            let lo = i.saturating_sub(4);
            let hi = (i + 5).min(white.len());
            white[lo..hi].iter().sum::<f64>() / (hi - lo) as f64
        })
        .collect();
    let angles: Vec<f64> = clean.iter().zip(&smooth).map(|(a, e)| a + e).collect();
    let log = AngleLog::from_samples("lowpass.csv", case.times.clone(), angles).unwrap();
    let f = fit(&[log], &opts(set(&[Term::Viscous]))).expect("fit");
    match f.interval_method {
        IntervalMethod::Hac { bandwidth, dof, .. } => {
            assert!(bandwidth >= 9, "bandwidth {bandwidth} shorter than the smoothing");
            assert!(dof >= 1.0 && dof < f.dof as f64, "dof {dof}");
        }
        ref m => panic!("expected HAC intervals, got {m:?}"),
    }
    assert!(f.t95 > 1.97, "t on few windows: {}", f.t95);
    assert_covers(&f, &p);
}

#[test]
fn a_record_of_too_many_swings_is_refused_in_bounded_time() {
    // 20 500 swings of a 0.05 s period (1025 s at 200 Hz): more than fit::MAX_SWINGS, refused
    // with the reason before any integration.
    let times = uniform(1025.0, 200.0);
    let w = 2.0 * std::f64::consts::PI / 0.05;
    let angles: Vec<f64> = times.iter().map(|t| 0.2 * (-0.001 * t).exp() * (w * t).cos()).collect();
    let log = AngleLog::from_samples("long.csv", times, angles).expect("log");
    let err = fit(&[log], &opts(set(&[Term::Viscous]))).expect_err("refused");
    assert!(err.to_string().contains("swings"), "{err}");
    assert!(err.to_string().contains("--from/--to"), "{err}");
}

// ---------------------------------------------------------------------------------------------
// Pre-sliding friction against the independent SciPy reference (tests/reference/
// make_presliding.py integrates the friction force as a state with its own events; outputs in
// tests/data/presliding/, truth in <case>.json).

fn presliding_log(file: &str) -> AngleLog {
    let path = format!("{}/tests/data/presliding/{file}", env!("CARGO_MANIFEST_DIR"));
    swingfit::data::load(std::path::Path::new(&path), &swingfit::data::LoadOptions::default())
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn presliding_simulation_matches_the_scipy_state_integration() {
    use swingfit::integrate::{Method, simulate};
    use swingfit::model::{Physics, Release};
    let truth = presliding_log("presliding_truth.truth.csv");
    let p = Physics { omega_n: 5.0, damping: [0.01, 0.05, 0.0, 8.0, 0.0, 0.0], breakaway: None };
    let r = Release { equilibrium: 0.002, angle: 0.15, velocity: 0.05 };
    let tr = simulate(&p, &r, truth.times(), Method::DormandPrince { rtol: 1e-12, atol: 1e-14 })
        .expect("simulates");
    let worst =
        tr.angle.iter().zip(truth.angles()).map(|(a, b)| (a - b).abs()).fold(0.0f64, f64::max);
    assert!(worst < 1e-9, "max |swingfit − SciPy| = {worst} rad");
    // The record does reach the spring range: the last turning points are less than 2·b0/σ
    // apart (else σ would not be identifiable from it).
    let rev: Vec<f64> = tr
        .events
        .iter()
        .filter_map(|e| match e {
            swingfit::integrate::Event::Reversal { angle, .. } => Some(*angle),
            _ => None,
        })
        .collect();
    let n = rev.len();
    assert!((rev[n - 1] - rev[n - 2]).abs() < 2.0 * 0.05 / 8.0);
}

#[test]
fn presliding_fit_recovers_the_truth_inside_its_intervals() {
    let log = presliding_log("presliding_truth.csv");
    let d = set(&[Term::Viscous, Term::Coulomb, Term::Presliding]);
    let f = fit(&[log], &opts(d)).unwrap_or_else(|e| panic!("{e}"));
    // Truth: tests/data/presliding/presliding_truth.json.
    let inside = |e: &swingfit::fit::Estimate, v: f64, name: &str| {
        assert!(e.ci95.0 <= v && v <= e.ci95.1, "{name}: truth {v} outside {:?}", e.ci95);
        assert!(e.ci95.1 - e.ci95.0 < 0.05 * v, "{name}: interval {:?} too wide", e.ci95);
    };
    inside(&f.omega_n, 5.0, "omega_n");
    inside(f.term(Term::Viscous).expect("b1"), 0.01, "b1");
    inside(f.term(Term::Coulomb).expect("b0"), 0.05, "b0");
    inside(f.term(Term::Presliding).expect("sigma"), 8.0, "sigma");
    // Without the pre-sliding term the same log is fitted much worse.
    let plain = fit(&[presliding_log("presliding_truth.csv")], &opts(d.without(Term::Presliding)))
        .map(|p| p.rss)
        .unwrap_or(f64::INFINITY);
    assert!(plain > 4.0 * f.rss, "plain Coulomb RSS {plain} vs pre-sliding {}", f.rss);
}

// ---------------------------------------------------------------------------------------------
// Stribeck friction against the independent SciPy reference (tests/reference/make_stribeck.py
// integrates the curve with sgn ω and its own stick rule; outputs in tests/data/stribeck/,
// truth in stribeck_truth.json: ωn 5, b1 0.01, b0 0.03, bs 0.04, vs 0.1).

fn stribeck_log(file: &str) -> AngleLog {
    let path = format!("{}/tests/data/stribeck/{file}", env!("CARGO_MANIFEST_DIR"));
    swingfit::data::load(std::path::Path::new(&path), &swingfit::data::LoadOptions::default())
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn stribeck_simulation_matches_the_scipy_integration() {
    use swingfit::integrate::{Method, simulate};
    use swingfit::model::{Physics, Release};
    let truth = stribeck_log("stribeck_truth.truth.csv");
    let p = Physics { omega_n: 5.0, damping: [0.01, 0.03, 0.0, 0.0, 0.04, 0.1], breakaway: None };
    let r = Release { equilibrium: 0.002, angle: 0.15, velocity: 0.05 };
    let tr = simulate(&p, &r, truth.times(), Method::DormandPrince { rtol: 1e-12, atol: 1e-14 })
        .expect("simulates");
    let worst =
        tr.angle.iter().zip(truth.angles()).map(|(a, b)| (a - b).abs()).fold(0.0f64, f64::max);
    assert!(worst < 1e-9, "max |swingfit − SciPy| = {worst} rad");
}

#[test]
fn stribeck_fit_recovers_the_truth_inside_its_intervals() {
    let d = DampingSet::parse("viscous,coulomb,stribeck").unwrap();
    let f = fit(&[stribeck_log("stribeck_truth.csv")], &opts(d)).unwrap_or_else(|e| panic!("{e}"));
    let inside = |e: &swingfit::fit::Estimate, v: f64, name: &str| {
        assert!(e.ci95.0 <= v && v <= e.ci95.1, "{name}: truth {v} outside {:?}", e.ci95);
    };
    inside(&f.omega_n, 5.0, "omega_n");
    inside(f.term(Term::Viscous).expect("b1"), 0.01, "b1");
    inside(f.term(Term::Coulomb).expect("b0"), 0.03, "b0");
    inside(f.term(Term::Stribeck).expect("bs"), 0.04, "bs");
    inside(f.term(Term::StribeckVelocity).expect("vs"), 0.1, "vs");
    // Without the Stribeck term viscous+coulomb pins b1 at zero (the excess mimics a decay that
    // grows as the swings shrink); Coulomb alone is fitted, and much worse.
    let plain = fit(&[stribeck_log("stribeck_truth.csv")], &opts(set(&[Term::Coulomb])))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(plain.rss > 4.0 * f.rss, "plain Coulomb RSS {} vs Stribeck {}", plain.rss, f.rss);
}
