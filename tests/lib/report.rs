//! Library tests: report (plots, the coefficient sheet, its safe writing, the browser check) and
//! the article file.
//!
//! The renderers are tested on a synthetic fit built from an analytic damped oscillation, so the
//! expected peaks, periods and velocities are known in closed form.

use std::f64::consts::PI;
use std::path::{Path, PathBuf};
use std::time::{Duration, UNIX_EPOCH};

use approx::assert_relative_eq;
use nalgebra::{DMatrix, DVector};
use swingfit::article::{self, DampingChoice};
use swingfit::data::AngleLog;
use swingfit::fit::adequacy::{Adequacy, AdequacyReport};
use swingfit::fit::compare::{
    CandidateEvidence, Comparison, EnvelopeFits, EnvelopeLaw, PeriodPoint,
};
use swingfit::fit::lm::Convergence;
use swingfit::fit::uncertainty::IntervalMethod;
use swingfit::fit::{Estimate, FitError, FitOutcome, RunFit};
use swingfit::model::{DampingSet, Physics, Term};
use swingfit::physical::{Gravity, GravitySource, PhysicalCoefficients, Quantity};
use swingfit::report::plot::{self, RunView, Window};
use swingfit::report::sheet::{self, Identity, InputDigest, Provenance, SheetInput};

/// ωn, viscous b1 and equilibrium of the synthetic run.
const OMEGA_N: f64 = 6.5;
const B1: f64 = 0.08;
const EQ: f64 = 0.01;

/// A run of θ(t) = θeq + A e^{−σt} cos(ωd t), σ = b1/2, ωd = √(ωn² − σ²), sampled at 1 kHz for
/// `secs`; "measured" adds a deterministic ±20 µrad ripple.
struct Synthetic {
    times: Vec<f64>,
    log: AngleLog,
    fit: RunFit,
}

fn omega_d() -> f64 {
    (OMEGA_N * OMEGA_N - 0.25 * B1 * B1).sqrt()
}

fn synthetic(secs: f64, amp: f64) -> Synthetic {
    let n = (secs * 1000.0) as usize;
    let (s, wd) = (0.5 * B1, omega_d());
    let times: Vec<f64> = (0..n).map(|i| i as f64 * 1e-3).collect();
    let model: Vec<f64> =
        times.iter().map(|&t| EQ + amp * (-s * t).exp() * (wd * t).cos()).collect();
    let velocity: Vec<f64> = times
        .iter()
        .map(|&t| amp * (-s * t).exp() * (-s * (wd * t).cos() - wd * (wd * t).sin()))
        .collect();
    let measured: Vec<f64> =
        model.iter().enumerate().map(|(i, m)| m + 2e-5 * ((i as f64) * 0.7).sin()).collect();
    let residuals: Vec<f64> = model.iter().zip(&measured).map(|(m, y)| m - y).collect();
    let rms = (residuals.iter().map(|r| r * r).sum::<f64>() / n as f64).sqrt();
    let est = |value: f64, std: f64, unit| Estimate {
        value,
        std,
        ci95: (value - 2.0 * std, value + 2.0 * std),
        unit,
    };
    let fit = RunFit {
        source: "synthetic.csv".into(),
        samples: n,
        equilibrium: est(EQ, 1e-6, "rad"),
        initial_angle: est(EQ + amp, 1e-6, "rad"),
        initial_velocity: est(0.0, 1e-5, "rad/s"),
        rms_residual: rms,
        noise_floor: 1.5e-5,
        ljung_box_p: 0.42,
        residuals,
        model_angle: model,
        model_velocity: velocity,
    };
    let log = AngleLog::from_samples("synthetic.csv", times.clone(), measured.clone())
        .expect("synthetic log");
    Synthetic { times, log, fit }
}

fn outcome(runs: Vec<RunFit>) -> FitOutcome {
    let damping = DampingSet::from_terms(&[Term::Viscous]);
    let est = |value: f64, std: f64, unit| Estimate {
        value,
        std,
        ci95: (value - 1.96 * std, value + 1.96 * std),
        unit,
    };
    let p = 2 + 3 * runs.len();
    let n_obs: usize = runs.iter().map(|r| r.samples).sum();
    let rss: f64 = runs.iter().flat_map(|r| r.residuals.iter()).map(|r| r * r).sum();
    FitOutcome {
        damping,
        physics: Physics::undamped(OMEGA_N).with_coef(Term::Viscous, B1),
        omega_n: est(OMEGA_N, 1.2e-4, "rad/s"),
        terms: vec![(Term::Viscous, est(B1, 3.4e-5, "1/s"))],
        runs,
        names: (0..p).map(|i| format!("p{i}")).collect(),
        x: DVector::from_element(p, 0.5),
        start: DVector::from_element(p, 0.4),
        covariance: DMatrix::identity(p, p) * 1e-8,
        correlation: DMatrix::identity(p, p),
        condition: 12.5,
        iterations: 4,
        iterations_total: 17,
        rss,
        n_obs,
        n_independent: n_obs,
        dof: n_obs - p,
        convergence: Convergence::Cost,
        interval_method: IntervalMethod::Plain,
        t95: 1.96,
        interval_dof: (n_obs - p) as f64,
        flags: vec!["synthetic flag <check escaping>".into()],
        notes: vec![],
        adequacy: AdequacyReport {
            verdict: Adequacy::Explained,
            sensor_like: false,
            time_base_slips: 0,
            runs: vec![],
        },
    }
}

fn physical() -> PhysicalCoefficients {
    let q = |value: f64, u_c: f64, unit| Quantity { value, u_c, k: 2.0, expanded: 2.0 * u_c, unit };
    PhysicalCoefficients {
        inertia_pivot: q(0.11975, 6.1e-5, "kg*m^2"),
        inertia_cg: q(0.008815, 6.3e-5, "kg*m^2"),
        gyration_pivot: q(0.2234, 6e-5, "m"),
        gyration_cg: Some(q(0.0606, 2e-4, "m")),
        equivalent_length: q(0.2321, 5e-5, "m"),
        damping: [Some(q(0.00958, 4e-6, "N*m*s/rad")), None, None, None, None, None],
        period: q(0.9667, 1e-6, "s"),
        damping_ratio: Some(q(0.004, 2e-6, "1")),
        log_decrement: Some(q(0.02513, 1.3e-5, "1")),
        quality_factor: Some(q(125.0, 0.06, "1")),
        gravity: Gravity::standard(),
        budgets: Vec::new(),
    }
}

fn comparison(run: &RunView<'_>) -> Comparison {
    let (measured, model) = plot::half_cycle_peaks(run);
    let peaks = |v: &[(f64, f64)]| {
        v.iter()
            .map(|&(t, a)| swingfit::data::survey::Peak { t, deflection: a })
            .collect::<Vec<_>>()
    };
    let viscous = DampingSet::from_terms(&[Term::Viscous]);
    let coulomb = DampingSet::from_terms(&[Term::Coulomb]);
    let cand = |damping, fit, rms: f64, ok: bool| CandidateEvidence {
        damping,
        fit,
        rss: rms * rms * 1000.0,
        aic: -1000.0 + rms * 1e3,
        bic: -990.0 + rms * 1e3,
        ljung_box_p: if ok { 0.4 } else { 0.0 },
        rms_residual: rms,
        noise_ratio: rms / 1.5e-5,
        all_significant: ok,
        explains_decay: ok,
        added_terms: vec![],
        model_peaks: vec![peaks(&model)],
    };
    Comparison {
        candidates: vec![
            cand(viscous, Ok(outcome(vec![run.fit.clone()])), 1.4e-5, true),
            cand(coulomb, Err(FitError::Setup("synthetic failure".into())), f64::NAN, false),
        ],
        best: Some(viscous),
        explained: true,
        measured_peaks: vec![peaks(&measured)],
        ties: vec![],
        envelope: EnvelopeFits {
            laws: vec![(EnvelopeLaw::Exponential, 1e-5), (EnvelopeLaw::Linear, 3e-3)],
        },
        period_points: vec![vec![PeriodPoint { amplitude: 0.5, period: 0.967 }]],
        period_curve: vec![(0.1, 0.9668), (0.5, 0.9820)],
    }
}

fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().expect("temp dir")
}

#[test]
fn sha256_matches_the_fips_examples() {
    // FIPS 180-2, Appendix B.1 ("abc") and the digest of the empty message [memory].
    assert_eq!(
        sheet::sha256_hex(b"abc"),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    );
    assert_eq!(
        sheet::sha256_hex(b""),
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
    );
}

#[test]
fn iso8601_dates_are_proleptic_gregorian_utc() {
    let at = |s: u64| sheet::iso8601_utc(UNIX_EPOCH + Duration::from_secs(s));
    assert_eq!(at(0), "1970-01-01T00:00:00Z");
    // 2000-02-29 is a leap day (divisible by 400): 11016 days after the epoch [common practice].
    assert_eq!(at(11_016 * 86_400 + 3_661), "2000-02-29T01:01:01Z");
    // The widely quoted Unix time 1 700 000 000 [common practice].
    assert_eq!(at(1_700_000_000), "2023-11-14T22:13:20Z");
    assert_eq!(at(4_102_444_799), "2099-12-31T23:59:59Z");
}

#[test]
fn decimation_bounds_points_and_keeps_extremes() {
    let pts: Vec<(f64, f64)> = (0..200_000)
        .map(|i| (i as f64, ((i as f64) * 0.013).sin() * (1.0 + i as f64 * 1e-6)))
        .collect();
    let d = plot::decimate(&pts, plot::COLUMNS);
    assert!(d.len() <= 2 * plot::COLUMNS, "{} points", d.len());
    assert!(d.len() > plot::COLUMNS);
    let max = pts.iter().map(|p| p.1).fold(f64::MIN, f64::max);
    let min = pts.iter().map(|p| p.1).fold(f64::MAX, f64::min);
    assert_eq!(d.iter().map(|p| p.1).fold(f64::MIN, f64::max).to_bits(), max.to_bits());
    assert_eq!(d.iter().map(|p| p.1).fold(f64::MAX, f64::min).to_bits(), min.to_bits());
    assert!(d.windows(2).all(|w| w[0].0 < w[1].0), "x order kept");
    let thin = plot::thin(&pts, 4000);
    assert!(thin.len() <= 4001);
    assert_eq!(thin.last(), pts.last());
}

#[test]
fn half_cycle_peaks_follow_the_viscous_envelope() {
    let s = synthetic(20.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let (measured, model) = plot::half_cycle_peaks(&run);
    // About 2 half cycles per period over 20 s at ωd ≈ 6.5 rad/s: 41 boundaries, first dropped.
    assert!((38..=42).contains(&model.len()), "{} peaks", model.len());
    // Successive half-cycle peaks of a viscous decay shrink by e^{−σπ/ωd} (linear oscillator,
    // logarithmic decrement, docs/checks.md §3 [common practice]).
    let ratio = (-0.5 * B1 * PI / omega_d()).exp();
    for w in model.windows(2) {
        assert_relative_eq!(w[1].1 / w[0].1, ratio, max_relative = 2e-4);
        assert_relative_eq!(w[1].0 - w[0].0, PI / omega_d(), epsilon = 2e-3);
    }
    for (m, f) in measured.iter().zip(&model) {
        assert!((m.1 - f.1).abs() < 3e-5);
    }
}

#[test]
fn period_points_recover_the_damped_period() {
    let s = synthetic(20.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let (measured, model) = plot::period_points(&run);
    assert!(model.len() >= 18, "{} cycles", model.len());
    let td = 2.0 * PI / omega_d();
    for (a, p) in model.iter().chain(&measured) {
        assert_relative_eq!(*p, td, max_relative = 1e-4);
        assert!(*a > 0.0 && *a < 0.5);
    }
    // Amplitudes shrink cycle after cycle.
    assert!(model.windows(2).all(|w| w[1].0 < w[0].0));
}

#[test]
fn residual_figure_has_a_density_histogram_and_the_white_noise_band() {
    let s = synthetic(20.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let chart = plot::residuals(&run, OMEGA_N, "res");
    assert_eq!(chart.below.len(), 2);
    let (hist, acf) = (&chart.below[0], &chart.below[1]);
    // The bars are a probability density: their area is the share of residuals inside the
    // histogram range, here all of them (the ±20 µrad ripple lies inside ±4 σ).
    let bars = &hist.series[0];
    assert_eq!(bars.mark, plot::Mark::Bars);
    assert_eq!(bars.points.len(), plot::residual::BINS);
    let w = bars.points[1].0 - bars.points[0].0;
    let area: f64 = bars.points.iter().map(|p| p.1 * w).sum();
    assert_relative_eq!(area, 1.0, max_relative = 1e-9);
    // The Gaussian over it has the noise floor's σ: its peak is 1/(σ√(2π)) [mdeg⁻¹].
    let sigma = s.fit.noise_floor * 180.0e3 / PI;
    let peak = hist.series[1].points.iter().fold(0.0_f64, |m, p| m.max(p.1));
    assert_relative_eq!(peak, 1.0 / (sigma * (2.0 * PI).sqrt()), max_relative = 1e-3);
    // Autocorrelation of the ripple 2e-5·sin(0.7 i): r_k ≈ cos(0.7 k) (a sinusoid's sample
    // autocorrelation, shrunk by (n − k)/n), and the band is ±1.96/√N.
    let r = &acf.series[0].points;
    let n = s.fit.residuals.len() as f64;
    for k in [1usize, 2, 5] {
        let expect = (0.7 * k as f64).cos() * (n - k as f64) / n;
        assert!((r[k - 1].1 - expect).abs() < 2e-3, "r_{k} = {} against {expect}", r[k - 1].1);
    }
    assert_relative_eq!(acf.series[1].points[0].1, 1.96 / n.sqrt(), max_relative = 1e-12);
    // Lags cover one small-amplitude period.
    let last_lag = r.last().map(|p| p.0).unwrap_or(0.0);
    assert_relative_eq!(last_lag, 2.0 * PI / OMEGA_N, epsilon = 1e-3);
    plot::render_svg(&chart).expect("composite figure draws");
}

/// A viscous decay from 0.3 rad down to below a milliradian with Gaussian noise of 0.2 mrad
/// (seeded), fitted exactly: the period plot keeps only the cycles the noise lets it resolve.
#[test]
fn period_plot_drops_unresolved_cycles_and_bars_the_rest() {
    use rand::SeedableRng;
    use rand_distr::{Distribution, Normal};
    let (b1, amp, noise) = (0.2, 0.3, 2e-4);
    let (sig, wd) = (0.5 * b1, (OMEGA_N * OMEGA_N - 0.25 * b1 * b1).sqrt());
    let mut rng = rand::rngs::StdRng::seed_from_u64(15);
    let normal = Normal::new(0.0, noise).expect("normal");
    let times: Vec<f64> = (0..60_000).map(|i| i as f64 * 1e-3).collect();
    let model: Vec<f64> = times.iter().map(|&t| amp * (-sig * t).exp() * (wd * t).cos()).collect();
    let measured: Vec<f64> = model.iter().map(|m| m + normal.sample(&mut rng)).collect();
    let mut fit = synthetic(5.0, 0.5).fit;
    fit.equilibrium.value = 0.0;
    fit.residuals = model.iter().zip(&measured).map(|(m, y)| m - y).collect();
    fit.model_angle = model;
    fit.samples = times.len();
    let log = AngleLog::from_samples("noisy.csv", times, measured).expect("log");
    let run = RunView { name: "noisy", log: &log, fit: &fit };
    let cycles = plot::period_cycles(&run);
    // A_min = band/(2π · 0.5 %) with band = 5 noise σ: about 32 mrad for σ = 0.2 mrad.
    assert_relative_eq!(cycles.limit, 5.0 * noise / (2.0 * PI * 0.005), max_relative = 0.15);
    assert!(cycles.dropped > 5, "{} dropped", cycles.dropped);
    assert!(cycles.kept.len() > 15, "{} kept", cycles.kept.len());
    assert!(cycles.kept.iter().all(|c| c.amplitude >= cycles.limit));
    // The log is a linear damped oscillation, so every cycle lasts 2π/ωd exactly: each kept
    // period lies within 3u of it, and about 95 % (here at least 80 %) within the ±2u bars.
    let td = 2.0 * PI / wd;
    let mut inside = 0;
    for c in &cycles.kept {
        let err = (c.period - td).abs();
        assert!(err < 3.0 * c.u + 1e-4, "T = {} at A = {}: u = {}", c.period, c.amplitude, c.u);
        if err <= 2.0 * c.u {
            inside += 1;
        }
    }
    assert!(inside as f64 >= 0.8 * cycles.kept.len() as f64, "{inside} of {}", cycles.kept.len());
    let chart = plot::period_amplitude(&[run], None, "period");
    assert_eq!(chart.series[0].y_err.len(), chart.series[0].points.len());
    assert!(chart.title.contains("not resolved"), "{}", chart.title);
}

#[test]
fn envelope_legend_names_the_chosen_model_and_one_entry_for_the_others() {
    let s = synthetic(20.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let mut cmp = comparison(&run);
    // A second converged candidate, rejected.
    let mut other = cmp.candidates[0].clone();
    other.damping = DampingSet::from_terms(&[Term::Quadratic]);
    cmp.candidates.push(other.clone());
    other.damping = DampingSet::from_terms(&[Term::Viscous, Term::Quadratic]);
    cmp.candidates.push(other);
    let chart = plot::envelope(&run, 0, Some(&cmp), "env");
    let labels: Vec<&str> =
        chart.series.iter().map(|s| s.label.as_str()).filter(|l| !l.is_empty()).collect();
    assert_eq!(labels, vec!["measured peaks", "model viscous (chosen)", "other candidates"]);
    let roles: Vec<plot::Role> = chart.series.iter().map(|s| s.role).collect();
    assert_eq!(roles.iter().filter(|r| **r == plot::Role::Other).count(), 2);
    assert_eq!(roles.iter().filter(|r| **r == plot::Role::Chosen).count(), 1);
}

#[test]
fn finite_difference_velocity_matches_the_derivative() {
    let s = synthetic(5.0, 0.5);
    let v = plot::finite_difference_velocity(&s.times, &s.fit.model_angle, 2.0 * PI / OMEGA_N);
    let k = (s.times.len() - v.len()) / 2;
    assert!(k >= 1);
    let peak = s.fit.model_velocity.iter().fold(0.0_f64, |m, w| m.max(w.abs()));
    for (i, (t, w)) in v.iter().enumerate() {
        assert_relative_eq!(*t, s.times[i + k]);
        assert!((w - s.fit.model_velocity[i + k]).abs() < 5e-3 * peak, "at {t}: {w}");
    }
}

#[test]
fn overlay_windows_cover_first_and_last_cycles() {
    let s = synthetic(30.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let whole = plot::overlay(&run, OMEGA_N, Window::Whole, "w");
    assert!(whole.series.iter().all(|x| x.points.len() <= 2 * plot::COLUMNS));
    let first = plot::overlay(&run, OMEGA_N, Window::First, "f");
    let t_end = first.series[0].points.last().map(|p| p.0).unwrap_or(0.0);
    assert_relative_eq!(t_end, 3.0 * 2.0 * PI / OMEGA_N, epsilon = 2e-3);
    let last = plot::overlay(&run, OMEGA_N, Window::Last, "l");
    let (t0, t1) =
        (last.series[0].points[0].0, last.series[0].points.last().map(|p| p.0).unwrap_or(0.0));
    assert_relative_eq!(t1 - t0, 3.0 * 2.0 * PI / OMEGA_N, epsilon = 2e-3);
    assert!(t1 > 28.0);
    // Degrees from the fitted equilibrium on the y axis: the first measured sample is A (the
    // synthetic log's θeq + A, less θeq) in degrees.
    assert_relative_eq!(
        first.series[0].points[0].1,
        (EQ + 0.5 + 2e-5 * 0.0 - EQ) * 180.0 / PI,
        max_relative = 1e-9
    );
    assert_eq!(first.y_label, "angle from rest [deg]");
}

#[test]
fn charts_render_as_svg_and_png() {
    let s = synthetic(10.0, 0.5);
    let run = RunView { name: "r", log: &s.log, fit: &s.fit };
    let chart = plot::phase_portrait(&run, OMEGA_N, "phase");
    let svg = plot::render_svg(&chart).expect("svg");
    assert!(svg.contains("angular velocity [deg/s]") && svg.contains("angle from rest [deg]"));
    assert!(svg.contains("measured (finite differences)"));
    let dir = tmp();
    let png = dir.path().join("phase.png");
    plot::render_png(&chart, &png).expect("png");
    let bytes = std::fs::read(&png).expect("read png");
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    // IHDR width and height, big-endian, at offsets 16 and 20 (PNG spec, ISO/IEC 15948 §11.2.2 [memory]).
    assert_eq!(u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]), plot::WIDTH);
    assert_eq!(u32::from_be_bytes([bytes[20], bytes[21], bytes[22], bytes[23]]), plot::HEIGHT);
    let bad = plot::write_chart(&chart, &dir.path().join("phase.jpg")).expect_err("jpg refused");
    assert!(bad.to_string().contains(".svg or .png"), "{bad}");
    plot::write_chart(&chart, &dir.path().join("overlay.svg")).expect("svg file");
    assert!(
        std::fs::read_to_string(dir.path().join("overlay.svg")).expect("read").contains("<svg")
    );
}

#[test]
fn value_and_uncertainty_share_decimals() {
    assert_eq!(sheet::format_pair(9.812_345, 0.012_34), ("9.812".to_string(), "0.012".to_string()));
    assert_eq!(
        sheet::format_pair(0.119_753, 6.1e-5),
        ("0.119753".to_string(), "0.000061".to_string())
    );
    assert_eq!(sheet::format_pair(1234.7, 25.0), ("1235".to_string(), "25".to_string()));
    let (v, u) = sheet::format_pair(2.5e-9, 1.2e-11);
    assert!(v.contains('e') && u.contains('e'), "{v} {u}");
}

fn input<'a>(
    runs: Vec<RunView<'a>>,
    fit: &'a FitOutcome,
    phys: Option<&'a PhysicalCoefficients>,
    cmp: Option<&'a Comparison>,
) -> SheetInput<'a> {
    SheetInput {
        identity: Identity {
            id: "TX-1".into(),
            name: "Test crank <synthetic>".into(),
            description: "synthetic article".into(),
            rig: Some("bench rig R-0".into()),
            operator: None,
            notes: Some("made in a test".into()),
            mass: Some(swingfit::physical::Measured { value: 2.4, u: 0.002 }),
            pivot_to_cg: Some(swingfit::physical::Measured { value: 0.215, u: 0.0005 }),
            gravity: Some("standard gravity".into()),
        },
        runs,
        fit,
        physical: phys,
        comparison: cmp,
        damping_auto: cmp.is_some(),
        provenance: Provenance {
            tool: "swingfit".into(),
            version: "0.1.0".into(),
            command_line: "swingfit sheet x.toml --out y".into(),
            generated_utc: "2026-01-02T03:04:05Z".into(),
            inputs: vec![InputDigest {
                role: "log".into(),
                path: "synthetic.csv".into(),
                sha256: sheet::sha256_hex(b"x"),
                bytes: 1,
            }],
        },
    }
}

fn files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("dir")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn sheet_holds_every_number_and_plot() {
    let s = synthetic(20.0, 0.5);
    let fit = outcome(vec![s.fit.clone()]);
    let run = RunView { name: "release 30 deg", log: &s.log, fit: &fit.runs[0] };
    let cmp = comparison(&run);
    let phys = physical();
    let dir = tmp();
    let out = dir.path().join("sheet");
    let written = sheet::write_sheet(&out, false, &input(vec![run], &fit, Some(&phys), Some(&cmp)))
        .expect("sheet");
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
        assert!(
            names.contains(&format!("{stem}.svg")) && names.contains(&format!("{stem}.png")),
            "{stem} in {names:?}"
        );
    }
    for f in ["sheet.html", "sheet.json", "sheet.md"] {
        assert!(names.contains(&f.to_string()));
    }
    assert_eq!(written.files.len(), names.len());
    assert_eq!(files(dir.path()), vec!["sheet".to_string()], "no temporary directory left");

    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sheet.json")).expect("json"))
            .expect("parse");
    assert_eq!(doc["schema"], "swingfit.sheet.v2");
    assert_eq!(doc["fit"]["schema"], "swingfit.fit.v2");
    let rows = doc["coefficients"].as_array().expect("rows");
    let find = |view: &str, key: &str| {
        rows.iter().find(|r| r["view"] == view && r["key"] == key).expect(key).clone()
    };
    assert_relative_eq!(find("normalized", "omega_n")["value"].as_f64().expect("v"), OMEGA_N);
    assert_relative_eq!(
        find("normalized", "viscous")["expanded"].as_f64().expect("u"),
        2.0 * 3.4e-5
    );
    assert_relative_eq!(find("physical", "inertia_pivot")["value"].as_f64().expect("J"), 0.11975);
    assert_eq!(doc["comparison"]["best"], serde_json::json!(["viscous"]));
    assert_eq!(doc["comparison"]["candidates"][1]["status"], "failed");
    assert_eq!(doc["plots"].as_array().expect("plots").len(), 7);
    assert_eq!(doc["provenance"]["inputs"][0]["sha256"], sheet::sha256_hex(b"x"));

    let html = std::fs::read_to_string(out.join("sheet.html")).expect("html");
    assert_eq!(html.matches("<svg").count(), 7);
    assert!(
        !html.contains("<script")
            && !html.contains("<link")
            && !html.contains("src=")
            && !html.contains("url(")
    );
    assert!(html.contains("@page") && html.contains("@media print"));
    assert!(
        html.contains("Test crank &lt;synthetic&gt;") && html.contains("&lt;check escaping&gt;")
    );
    assert!(html.contains("0.11975") && html.contains("0.00012"), "J and its U");
    assert!(html.contains("qualified engineers"), "safety caution");
    // Typography and honesty: unit symbols, no NaN (the failed candidate says why), no raw
    // Markdown, ζ, δ and Q on the sheet, page one before the first appendix.
    assert!(html.contains("kg·m²") && html.contains("N·m·s/rad"), "unit symbols");
    for bad in ["NaN", "*m^2", "kg*m", "`"] {
        assert!(!html.contains(bad), "{bad} in the page");
    }
    assert!(html.contains("<td colspan=\"6\">failed: "), "failed candidate row says why");
    for sym in ["<td>ζ</td>", "<td>δ</td>", "<td>Q</td>"] {
        assert!(html.contains(sym), "{sym}");
    }
    let page_one = html.split("class=\"appendix first\"").next().expect("page one");
    assert!(
        page_one.contains("<table class=\"coefficients\">") && page_one.contains("id=\"verdict\"")
    );
    assert!(page_one.contains("performed by") && page_one.contains("checked by"));
    assert!(page_one.contains("id=\"plot-run1_first_cycles\""), "the fit plot on page one");
    let md = std::fs::read_to_string(out.join("sheet.md")).expect("md");
    assert!(md.contains("| physical | moment of inertia about the pivot | J | 0.11975 | 0.000061 | 0.00012 | kg·m² |"), "{md}");
    assert!(!md.contains("NaN") && md.contains("failed: "), "{md}");
    assert!(md.contains("viscous explains the decay (RMS residual"), "{md}");
}

#[test]
fn existing_sheet_is_kept_without_force_and_replaced_with_it() {
    let s = synthetic(8.0, 0.3);
    let fit = outcome(vec![s.fit.clone()]);
    let run = RunView { name: "r", log: &s.log, fit: &fit.runs[0] };
    let dir = tmp();
    let out = dir.path().join("sheet");
    std::fs::create_dir(&out).expect("mkdir");
    std::fs::write(out.join("keep.txt"), "old").expect("old file");
    let err =
        sheet::write_sheet(&out, false, &input(vec![run], &fit, None, None)).expect_err("refused");
    assert!(matches!(err, sheet::SheetError::Exists(_)), "{err}");
    assert!(err.to_string().contains("--force"));
    assert_eq!(files(&out), vec!["keep.txt".to_string()]);
    sheet::write_sheet(&out, true, &input(vec![run], &fit, None, None)).expect("forced");
    let names = files(&out);
    assert!(!names.contains(&"keep.txt".to_string()) && names.contains(&"sheet.html".to_string()));
    assert_eq!(
        files(dir.path()),
        vec!["sheet".to_string()],
        "old and temporary directories removed"
    );
    // Without a comparison the envelope still shows measured and model peaks.
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sheet.json")).expect("json"))
            .expect("parse");
    assert!(doc["comparison"].is_null());
    assert_eq!(doc["damping"]["choice"], "given");
}

#[test]
fn failed_sheet_leaves_nothing() {
    let s = synthetic(8.0, 0.3);
    let fit = outcome(vec![s.fit.clone()]);
    let run = RunView { name: "r", log: &s.log, fit: &fit.runs[0] };
    let dir = tmp();
    std::fs::write(dir.path().join("blocker"), "a file, not a directory").expect("file");
    let out = dir.path().join("blocker").join("sheet");
    let err = sheet::write_sheet(&out, false, &input(vec![run], &fit, None, None))
        .expect_err("cannot create");
    assert!(matches!(err, sheet::SheetError::Io { .. }), "{err}");
    assert_eq!(files(dir.path()), vec!["blocker".to_string()]);
}

fn demo_article() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("data").join("ba7_article.toml")
}

#[test]
fn demo_article_file_parses() {
    let spec = article::load(&demo_article()).expect("demo article");
    assert_eq!(spec.id, "BA-7");
    assert_eq!(spec.name, "BA-7 bracket arm");
    assert_eq!(spec.damping, DampingChoice::Auto);
    assert_relative_eq!(spec.physical.mass.value, 2.40);
    assert_relative_eq!(spec.physical.mass.u, 0.002);
    assert_relative_eq!(spec.physical.pivot_to_cg.value, 0.215);
    assert_relative_eq!(spec.physical.pivot_to_cg.u, 0.0005);
    assert_eq!(spec.runs.len(), 2);
    assert_eq!(spec.runs[0].load.counts_per_rev, Some(10000.0));
    assert_eq!(spec.runs[0].load.angle_unit.as_deref(), Some("counts"));
    assert!(spec.runs[1].log.ends_with("data/ba7_release15_deg.csv"));
    assert!(spec.rig.as_deref().is_some_and(|r| r.contains("SS-2")));
}

const MINIMAL: &str = "id = \"A\"\nname = \"arm\"\n[mass]\nvalue = 1.0\nstd = 0.01\n[pivot_to_cg]\nvalue = 0.2\nstd = 0.001\n[[run]]\nlog = \"a.csv\"\n";

fn parse_err(text: &str) -> article::ArticleError {
    article::parse("art.toml", text, Path::new("")).expect_err("refused")
}

#[test]
fn article_errors_name_file_line_and_key() {
    let ok = article::parse("art.toml", MINIMAL, Path::new("base")).expect("minimal");
    // No damping key: the comparison chooses (issue 10).
    assert_eq!(ok.damping, DampingChoice::Auto);
    assert!(matches!(ok.physical.gravity.source, GravitySource::Standard));
    assert_eq!(ok.runs[0].log, Path::new("base").join("a.csv"));

    let e = parse_err(&MINIMAL.replace("value = 1.0", "value = -2.4"));
    assert_eq!((e.line, e.key.as_deref()), (Some(4), Some("mass.value")), "{e}");
    assert_eq!(e.to_string(), "art.toml:4: mass.value: expected a positive mass in kg, found -2.4");

    let e = parse_err(&MINIMAL.replace("std = 0.001", "stdd = 0.001"));
    assert_eq!(e.line, Some(8), "{e}");
    assert!(
        e.to_string().starts_with("art.toml:8: pivot_to_cg.stdd: ")
            && e.what.contains("unknown field `stdd`"),
        "{e}"
    );

    let e = parse_err(&MINIMAL.replace("value = 0.2", "value = \"0.2\""));
    assert_eq!((e.line, e.key.as_deref()), (Some(7), Some("pivot_to_cg.value")), "{e}");
    assert!(e.what.contains("invalid type"), "{e}");

    let e = parse_err(&format!("{MINIMAL}time_unit = \"min\"\n"));
    assert_eq!((e.line, e.key.as_deref()), (Some(11), Some("run[1].time_unit")), "{e}");

    let e = parse_err(
        &MINIMAL.replace("name = \"arm\"\n", "name = \"arm\"\ndamping = [\"viscous\", \"drag\"]\n"),
    );
    assert_eq!((e.line, e.key.as_deref()), (Some(3), Some("damping")), "{e}");

    let e = parse_err(&format!("{MINIMAL}[gravity]\nstandard = true\nvalue = 9.81\n"));
    assert_eq!(e.key.as_deref(), Some("gravity"), "{e}");

    let e = parse_err(&MINIMAL.replace("[[run]]\nlog = \"a.csv\"\n", ""));
    assert!(e.to_string().contains("[[run]]"), "{e}");

    let g = article::parse(
        "art.toml",
        &format!("{MINIMAL}[gravity]\nlatitude_deg = 45.0\nelevation_m = 100\n"),
        Path::new(""),
    )
    .expect("latitude");
    assert_eq!(
        g.physical.gravity.source,
        GravitySource::NormalGravity { latitude_deg: 45.0, elevation_m: 100.0 }
    );
}

#[test]
fn missing_log_names_its_line() {
    let dir = tmp();
    let path = dir.path().join("art.toml");
    std::fs::write(dir.path().join("a.csv"), "t,a\n").expect("log");
    std::fs::write(&path, format!("{MINIMAL}[[run]]\nlog = \"missing.csv\"\n")).expect("article");
    let e = article::load(&path).expect_err("missing log");
    assert_eq!((e.line, e.key.as_deref()), (Some(12), Some("run[2].log")), "{e}");
    assert!(e.what.contains("missing.csv") && e.what.contains("not found"), "{e}");
}

#[test]
fn sheet_renders_in_headless_chromium() {
    let s = synthetic(20.0, 0.5);
    let fit = outcome(vec![s.fit.clone()]);
    let run = RunView { name: "release 30 deg", log: &s.log, fit: &fit.runs[0] };
    let cmp = comparison(&run);
    let phys = physical();
    let dir = tmp();
    // SWINGFIT_KEEP_SHEET=DIR keeps the sheet for a look by eye (DIR must not exist).
    let out = std::env::var_os("SWINGFIT_KEEP_SHEET")
        .map_or_else(|| dir.path().join("sheet"), PathBuf::from);
    sheet::write_sheet(&out, false, &input(vec![run], &fit, Some(&phys), Some(&cmp)))
        .expect("sheet");
    let shot = std::env::var_os("SWINGFIT_KEEP_SCREENSHOT")
        .map_or_else(|| dir.path().join("shot.png"), PathBuf::from);
    crate::chromium::check_in_browser(&out, &shot, 7);
}

#[test]
fn units_numbers_and_p_values_are_typeset_for_the_page() {
    use swingfit::report::typeset;
    assert_eq!(typeset::unit("kg*m^2"), "kg·m²");
    assert_eq!(typeset::unit("N*m*s/rad"), "N·m·s/rad");
    assert_eq!(typeset::unit("rad/s^2"), "rad/s²");
    assert_eq!(typeset::unit("N*m*s^2/rad^2"), "N·m·s²/rad²");
    assert_eq!(typeset::unit("s^-1"), "s⁻¹");
    assert_eq!(typeset::unit("standard gravity 9.80665 m/s^2"), "standard gravity 9.80665 m/s²");
    assert_eq!(typeset::minus("-1.5e-7"), "−1.5e−7");
    assert_eq!(typeset::num(f64::NAN, 3), "not available");
    assert_eq!(typeset::num(-0.25, 3), "−0.250");
    // A p-value that underflowed to 0 is a bound, never "0".
    assert_eq!(typeset::p_value(0.0), "< 1e−300");
    assert_eq!(typeset::p_value(0.1934), "0.193");
    assert_eq!(typeset::p_value(f64::NAN), "not available");
    assert_eq!(
        typeset::code_spans_html("see `swingfit compare` <now>"),
        "see <code>swingfit compare</code> &lt;now&gt;"
    );
}
