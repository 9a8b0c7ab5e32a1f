//! Library tests: data. The loader on in-memory text (every refusal, with its line), and the
//! survey on analytic swings whose period, equilibrium and sample count are known exactly.
//!
//! Reference signals: the linear damped oscillator θ = θeq + A e^{−σt} cos(ωd t) crosses θeq
//! exactly every π/ωd (Thomson & Dahleh §2.6 [memory], docs/checks.md §3); the Coulomb oscillator swings
//! harmonically about ±Δ each half cycle with the undamped ωn and loses 2Δ per half cycle
//! (Thomson & Dahleh §2.8 [memory], docs/checks.md §4).

use std::f64::consts::PI;

use proptest::prelude::*;
use rand::{Rng, SeedableRng, rngs::StdRng};
use rand_distr::{Distribution, Normal};
use swingfit::data::survey::survey;
use swingfit::data::{AngleLog, DuplicateTimes, LoadErrorKind, LoadOptions, MIN_SAMPLES, parse};
use swingfit::units::SignalScale;

/// docs/checks.md §3 worked example: ωd [rad/s], σ [1/s], T_d [s].
const WD: f64 = 3.83517519156557;
const SIGMA: f64 = 0.0375;
const TD: f64 = 1.63830463885920;

fn damped(t: f64, eq: f64, amp: f64) -> f64 {
    eq + amp * (-SIGMA * t).exp() * (WD * t).cos()
}

fn opts() -> LoadOptions {
    LoadOptions::default()
}

fn load(text: &str, o: &LoadOptions) -> AngleLog {
    parse("mem.csv", text.as_bytes(), o).unwrap_or_else(|e| panic!("load failed: {e}"))
}

#[track_caller]
fn refused(text: &str, o: &LoadOptions, line: Option<u64>, needle: &str) {
    match parse("mem.csv", text.as_bytes(), o) {
        Ok(_) => panic!("accepted, expected refusal with {needle:?}"),
        Err(e) => {
            assert_eq!(e.line, line, "line of {e}");
            assert_eq!(e.path, "mem.csv");
            let msg = e.to_string();
            assert!(msg.contains(needle), "expected {needle:?} in {msg:?}");
            assert!(!msg.contains('\n'), "one line: {msg:?}");
        }
    }
}

/// A good comma log in seconds and radians (header line 1, sample i on line i + 2).
fn good_text(n: usize) -> String {
    let mut s = String::from("time_s,theta_rad\n");
    for i in 0..n {
        let t = 0.02 * i as f64;
        s.push_str(&format!("{t:.4},{:.6}\n", damped(t, 0.1, 0.3)));
    }
    s
}

#[test]
fn encoder_counts_in_ms_with_offset() {
    // 2500-line quadrature encoder: 10000 edges/rev, q = 0.000628318530718 rad (docs/checks.md §9).
    let cpr = 10000.0;
    let q = 2.0 * PI / cpr;
    let mut s = String::from("# invented rig: encoder on the pivot shaft\nt_ms;counts\n");
    for i in 0..6000 {
        let t = 0.01 * i as f64;
        s.push_str(&format!("{};{}\n", (t * 1e3).round(), (damped(t, 0.4712, 0.7) / q).round()));
    }
    let o = LoadOptions { counts_per_rev: Some(cpr), ..opts() };
    let log = load(&s, &o);
    assert_eq!(log.len(), 6000);
    assert_eq!(log.angle_step(), Some(q));
    assert!((log.times()[1] - 0.01).abs() < 1e-15);
    let sv = survey(&log);
    assert_eq!(sv.samples, 6000);
    let p = sv.period_s.unwrap_or(f64::NAN);
    assert!((p / TD - 1.0).abs() < 2e-4, "period {p} vs {TD}");
    assert!((sv.equilibrium_rad - 0.4712).abs() < q, "equilibrium {}", sv.equilibrium_rad);
    assert!((sv.rate_hz - 100.0).abs() < 1e-6);
    assert!(sv.jitter < 1e-6);
    assert!(sv.gaps.is_empty());
    // Widrow & Kollár (docs/checks.md §9 [memory]): rounding noise std is q/√12; the floor never goes below.
    assert!(sv.noise_rad >= q / 12f64.sqrt() && sv.noise_rad < 2.0 * q, "noise {}", sv.noise_rad);
    // Peaks alternate in sign and decay as e^{−σ t} (docs/checks.md §3).
    assert!(sv.peaks.len() > 60);
    for w in sv.peaks.windows(2) {
        assert!(w[0].deflection * w[1].deflection < 0.0);
    }
    let p0 = sv.peaks[0];
    let expect = 0.7 * (-SIGMA * p0.t).exp() * (WD * p0.t).cos();
    assert!((p0.deflection - expect).abs() < 3.0 * q, "peak {p0:?} vs {expect}");
    assert_eq!(sv.rest_from_s, None);
}

#[test]
fn degrees_in_seconds_whitespace_with_noise() {
    let mut rng = StdRng::seed_from_u64(7);
    let noise = Normal::new(0.0, 0.02).unwrap_or_else(|e| panic!("{e}"));
    let mut s = String::from("# whitespace table\ntime_s   angle_deg\n");
    for i in 0..3000 {
        let t = 0.02 * i as f64;
        let deg = damped(t, -3.0, 25.0) + noise.sample(&mut rng);
        s.push_str(&format!("{t:.3}   {deg:.4}\n"));
    }
    let log = load(&s, &opts());
    assert_eq!(log.len(), 3000);
    assert_eq!(log.angle_step(), None);
    let sv = survey(&log);
    let p = sv.period_s.unwrap_or(f64::NAN);
    assert!((p / TD - 1.0).abs() < 2e-4, "period {p}");
    let eq_deg = sv.equilibrium_rad.to_degrees();
    assert!((eq_deg + 3.0).abs() < 0.02, "equilibrium {eq_deg} deg");
    // The added noise is 0.02°; the local-quadratic residual should find it within 30 %.
    let n_deg = sv.noise_rad.to_degrees();
    assert!((n_deg / 0.02 - 1.0).abs() < 0.3, "noise {n_deg} deg");
}

#[test]
fn irregular_timestamps_with_dropped_segments() {
    let mut rng = StdRng::seed_from_u64(11);
    let dropped = [(5.0, 5.9), (12.3, 14.6), (30.0, 30.45), (41.2, 44.0)];
    let mut s = String::from("time_ms\tangle_rad\n");
    let mut t = 0.0;
    let mut n = 0;
    while t < 60.0 {
        if !dropped.iter().any(|&(a, b)| t >= a && t < b) {
            s.push_str(&format!("{:.3}\t{:.7}\n", t * 1e3, damped(t, 0.05, 0.4)));
            n += 1;
        }
        t += 0.01 * rng.random_range(0.6..1.4);
    }
    let log = load(&s, &opts());
    assert_eq!(log.len(), n);
    let sv = survey(&log);
    assert_eq!(sv.gaps.len(), dropped.len(), "gaps {:?}", sv.gaps);
    for (g, &(a, b)) in sv.gaps.iter().zip(&dropped) {
        assert!(g.start_s < a && g.start_s + g.length_s >= b, "gap {g:?} vs {a}..{b}");
    }
    // No crossing is placed inside a gap.
    for &c in &sv.crossings {
        assert!(!dropped.iter().any(|&(a, b)| c > a && c < b), "crossing {c} in a gap");
    }
    let p = sv.period_s.unwrap_or(f64::NAN);
    assert!((p / TD - 1.0).abs() < 1e-3, "period {p}");
    assert!((sv.equilibrium_rad - 0.05).abs() < 1e-3);
    assert!(sv.jitter > 0.1, "jitter {}", sv.jitter);
}

#[test]
fn coulomb_equilibrium_is_not_the_rest_angle() {
    // docs/checks.md §4 worked example: k = 2, J = 0.05, τc = 0.01 → Δ = 0.005 rad, ωn = 6.32455532033676,
    // θ0 = 0.2037; 20 half cycles, rest at +0.0037 rad at t_stop = 9.93458826579610 s.
    let (wn, delta, a0, offset) = (6.32455532033676, 0.005, 0.2037, -0.2);
    let half = PI / wn;
    let angle = |t: f64| -> f64 {
        let k = (t / half).floor();
        if k >= 20.0 {
            return 0.0037;
        }
        let ak = (a0 - 2.0 * k * delta) * if k as i64 % 2 == 0 { 1.0 } else { -1.0 };
        let ck = if k as i64 % 2 == 0 { delta } else { -delta };
        ck + (ak - ck) * (wn * (t - k * half)).cos()
    };
    let mut s = String::from("t [s],angle [rad]\n");
    for i in 0..1500 {
        let t = 0.01 * i as f64;
        s.push_str(&format!("{t:.2},{:.8}\n", offset + angle(t)));
    }
    let sv = survey(&load(&s, &opts()));
    assert!(
        (sv.equilibrium_rad - offset).abs() < 3e-4,
        "equilibrium {} vs {offset}",
        sv.equilibrium_rad
    );
    let p = sv.period_s.unwrap_or(f64::NAN);
    assert!((p / (2.0 * half) - 1.0).abs() < 1e-3, "period {p}");
    let rest = sv.rest_from_s.unwrap_or(f64::NAN);
    assert!((rest - 9.93458826579610).abs() < 0.25, "rest from {rest}");
    // Turning points lose 2Δ per half cycle (docs/checks.md §4).
    let mags: Vec<f64> = sv.peaks.iter().map(|p| p.deflection.abs()).collect();
    assert!(mags.len() >= 15, "peaks {mags:?}");
    for w in mags.windows(2) {
        assert!((w[0] - w[1] - 2.0 * delta).abs() < 5e-4, "decrement {w:?}");
    }
}

#[test]
fn columns_by_index_and_name_and_units_from_options() {
    let mut s = String::from("stamp,volts,pos\n");
    for i in 0..200 {
        let t = 20.0 * i as f64;
        s.push_str(&format!("{t},1.5,{:.5}\n", damped(t * 1e-3, 0.0, 30.0)));
    }
    let o = LoadOptions {
        time_col: Some("1".into()),
        angle_col: Some("POS".into()),
        time_unit: Some("ms".into()),
        angle_unit: Some("deg".into()),
        ..opts()
    };
    let log = load(&s, &o);
    assert!((log.times()[199] - 3.98).abs() < 1e-12);
    assert!((log.angles()[0] - 30f64.to_radians()).abs() < 1e-12);
    refused(
        &s,
        &LoadOptions { time_col: Some("4".into()), ..o.clone() },
        Some(1),
        "time column 4 does not exist",
    );
    refused(
        &s,
        &LoadOptions { angle_col: Some("phase".into()), ..o.clone() },
        Some(1),
        "no angle column named 'phase'",
    );
    refused(
        &s,
        &LoadOptions { angle_col: Some("1".into()), ..o },
        Some(1),
        "time and angle are both column 1",
    );
}

#[test]
fn counts_per_rev_implies_counts_and_header_units_are_read() {
    let mut s = String::from("Time [us],Angle\n");
    for i in 0..300 {
        let t = 0.02 * i as f64;
        s.push_str(&format!(
            "{},{}\n",
            (t * 1e6).round(),
            (damped(t, 0.0, 0.5) / (2.0 * PI) * 4096.0).round()
        ));
    }
    let log = load(&s, &LoadOptions { counts_per_rev: Some(4096.0), ..opts() });
    assert_eq!(log.angle_step(), Some(2.0 * PI / 4096.0));
    assert!((log.times()[50] - 1.0).abs() < 1e-12);
}

#[test]
fn semicolon_with_decimal_commas() {
    let text = good_text(300).replace(',', ";").replace('.', ",");
    let log = load(&text, &opts());
    assert_eq!(log.len(), 300);
    assert!((log.times()[1] - 0.02).abs() < 1e-12);
}

#[test]
fn refusals_name_the_line() {
    refused("", &opts(), Some(1), "empty file");
    refused("# only a note\n\n# another\n", &opts(), Some(3), "only comments");
    refused("time_s,theta_rad\n", &opts(), Some(1), "no data rows after the header (line 1)");
    let g = good_text(300);
    let mut lines: Vec<&str> = g.lines().collect();
    lines[10] = "0.1800,inf";
    refused(
        &lines.join("\n"),
        &opts(),
        Some(11),
        "expected a finite angle in rad (column 2 'theta_rad'), found \"inf\"",
    );
    lines[10] = "0.1800,0.2x";
    refused(
        &lines.join("\n"),
        &opts(),
        Some(11),
        "expected angle in rad as a number (column 2 'theta_rad'), found \"0.2x\"",
    );
    let mut lines: Vec<&str> = g.lines().collect();
    lines[20] = lines[19];
    refused(&lines.join("\n"), &opts(), Some(21), "expected strictly increasing time");
    refused(&good_text(MIN_SAMPLES - 1), &opts(), Some(MIN_SAMPLES as u64), "only 49 samples");
    refused(&good_text(300).replace("theta", "omega"), &opts(), Some(1), "no angle column");
    refused(
        &good_text(300).replace("time_s", "t_s,angle_deg"),
        &opts(),
        Some(1),
        "ambiguous angle column",
    );
}

#[test]
fn dropped_rows_are_recorded() {
    let g = good_text(300);
    let mut lines: Vec<&str> = g.lines().collect();
    lines[5] = "0.0800,NaN";
    lines[99] = "garbage";
    lines[200] = "3.9800,";
    let log = load(&lines.join("\n"), &LoadOptions { drop_bad_rows: true, ..opts() });
    assert_eq!(log.len(), 297);
    assert_eq!(log.dropped_lines(), &[6, 100, 201]);
    // All rows bad: refused, with the count.
    refused(
        "time_s,theta_rad\nx,y\nz,w\n",
        &LoadOptions { drop_bad_rows: true, ..opts() },
        Some(3),
        "after dropping 2 bad rows",
    );
}

#[test]
fn from_samples_applies_the_same_checks() {
    let t: Vec<f64> = (0..300).map(|i| 0.02 * f64::from(i)).collect();
    let a: Vec<f64> = t.iter().map(|&t| damped(t, 0.0, 0.2)).collect();
    let log = AngleLog::from_samples("sim", t.clone(), a.clone()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(log.len(), 300);
    let mut bad = a.clone();
    bad[7] = f64::NAN;
    let e = AngleLog::from_samples("sim", t.clone(), bad).err();
    assert_eq!(
        e.map(|e| (e.line, e.kind.to_string().contains("finite angle"))),
        Some((Some(8), true))
    );
    let mut back = t.clone();
    back[100] = back[99];
    let e = AngleLog::from_samples("sim", back, a.clone()).err();
    assert_eq!(e.and_then(|e| e.line), Some(101));
    let e = AngleLog::from_samples("sim", t[..40].to_vec(), a[..40].to_vec()).err();
    assert!(e.as_ref().is_some_and(|e| e.kind.to_string().contains("only 40 samples")));
    assert_eq!(e.map(|e| e.kind), Some(LoadErrorKind::TooFewSamples { found: 40 }));
    // Long enough but one slow lean: under two swings.
    let lean: Vec<f64> = t.iter().map(|&t| (t / 6.0).cos()).collect();
    let e = AngleLog::from_samples("sim", t, lean).err();
    assert!(e.is_some_and(|e| e.kind.to_string().contains("at least two swings")));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn parse_never_panics_on_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..600)) {
        let _ = parse("fuzz", &bytes, &LoadOptions::default());
        let _ = parse("fuzz", &bytes, &LoadOptions { drop_bad_rows: true, counts_per_rev: Some(100.0), ..LoadOptions::default() });
    }

    #[test]
    fn parse_never_panics_on_csv_like_text(text in "(#[ -~]{0,10}\n|[-0-9eE.,;\t nainfNA\"_msdegt]{0,30}\n){0,80}") {
        let _ = parse("fuzz", text.as_bytes(), &LoadOptions::default());
        let o = LoadOptions { time_col: Some("1".into()), angle_col: Some("2".into()), drop_bad_rows: true, ..LoadOptions::default() };
        let _ = parse("fuzz", text.as_bytes(), &o);
    }

    #[test]
    fn survey_never_panics_and_stays_sane(
        dts in proptest::collection::vec(1e-4f64..1.0, 60..300),
        ys in proptest::collection::vec(-1e3f64..1e3, 300),
        gaps in proptest::collection::vec(0usize..300, 0..5),
    ) {
        let mut t = 0.0;
        let mut times = Vec::new();
        for (i, d) in dts.iter().enumerate() {
            t += if gaps.contains(&i) { d * 100.0 } else { *d };
            times.push(t);
        }
        let angles = ys[..times.len()].to_vec();
        if let Ok(log) = AngleLog::from_samples("prop", times, angles) {
            let sv = survey(&log);
            prop_assert_eq!(sv.samples, log.len());
            prop_assert!(sv.noise_rad.is_finite() && sv.noise_rad > 0.0);
            prop_assert!(sv.equilibrium_rad >= sv.angle_range.0 && sv.equilibrium_rad <= sv.angle_range.1);
            prop_assert!(sv.period_s.is_none_or(|p| p.is_finite() && p > 0.0));
            prop_assert!(sv.crossings.windows(2).all(|w| w[0] < w[1]));
        }
    }
}

#[test]
fn survey_of_a_noisy_short_swing() {
    // Uniform noise of ±10 % of the amplitude (std 0.0115 rad): noise floor and period still found.
    let mut rng = StdRng::seed_from_u64(3);
    let t: Vec<f64> = (0..500).map(|i| 0.01 * f64::from(i)).collect();
    let a: Vec<f64> =
        t.iter().map(|&t| damped(t, 0.0, 0.2) + rng.random_range(-0.02..0.02)).collect();
    let sv = survey(&AngleLog::from_samples("noisy", t, a).unwrap_or_else(|e| panic!("{e}")));
    assert!((sv.noise_rad / (0.02 / 3f64.sqrt()) - 1.0).abs() < 0.3, "noise {}", sv.noise_rad);
    assert!(sv.period_s.is_some_and(|p| (p / TD - 1.0).abs() < 0.015), "period {:?}", sv.period_s);
}

#[test]
fn heavily_damped_coarse_encoder_with_gaps() {
    // ζ = 0.08, 50 Hz jittered, 1024 counts/rev, one dropped segment: the amplitude falls 30× over
    // the log, so late crossings sit near the quantisation step. Weighting crossings by
    // amplitude² keeps the period within 0.3 % (on a similar log the unweighted fit was 0.7 % off).
    let (period, zeta) = (3.3, 0.08);
    let wd = 2.0 * PI / period;
    let wn = wd / (1.0_f64 - zeta * zeta).sqrt();
    let sigma = zeta * wn;
    let q = 2.0 * PI / 1024.0;
    let mut rng = StdRng::seed_from_u64(21);
    let mut s = String::from("t_ms,counts\n");
    let mut t = 0.0;
    while t < 24.0 {
        if !(9.0..12.5).contains(&t) {
            let th = -0.2 + 0.6 * (-sigma * t).exp() * (wd * t + 0.7).cos();
            s.push_str(&format!("{:.2},{}\n", t * 1e3, (th / q).round()));
        }
        t += 0.02 * rng.random_range(0.5..1.5);
    }
    let sv = survey(&load(&s, &LoadOptions { counts_per_rev: Some(1024.0), ..opts() }));
    let p = sv.period_s.unwrap_or(f64::NAN);
    assert!((p / period - 1.0).abs() < 3e-3, "period {p} vs {period}");
    assert!((sv.equilibrium_rad + 0.2).abs() < 2.0 * q, "equilibrium {}", sv.equilibrium_rad);
    assert_eq!(sv.gaps.len(), 1);
}

#[test]
fn held_then_released_puts_the_first_peak_at_the_release() {
    // Held still at θeq + 0.5 rad for 2 s (noise 0.001 rad), then let go at t = 2 s.
    let mut rng = StdRng::seed_from_u64(5);
    let noise = Normal::new(0.0, 1e-3).unwrap_or_else(|e| panic!("{e}"));
    let t: Vec<f64> = (0..3000).map(|i| 0.01 * f64::from(i)).collect();
    let a: Vec<f64> = t
        .iter()
        .map(|&t| if t < 2.0 { 0.1 + 0.5 } else { damped(t - 2.0, 0.1, 0.5) } + noise.sample(&mut rng))
        .collect();
    let sv = survey(&AngleLog::from_samples("held", t, a).unwrap_or_else(|e| panic!("{e}")));
    let first = sv.peaks[0];
    assert!((first.t - 2.0).abs() < 0.1, "first peak at {} s", first.t);
    assert!((first.deflection - 0.5).abs() < 2e-3, "first peak {}", first.deflection);
    assert!(sv.period_s.is_some_and(|p| (p / TD - 1.0).abs() < 1e-3), "period {:?}", sv.period_s);
    assert!((sv.equilibrium_rad - 0.1).abs() < 1e-3);
}

#[test]
fn small_swing_period_corrects_a_large_release() {
    // A 70° release of an undamped-ish pendulum: the mean period is several per cent longer than
    // T0 = 2π/ωn, and the amplitude-corrected one must return T0 (T/T0 = (2/π)K(sin²(A/2)),
    // Abramowitz & Stegun 17.3.1 [memory]; docs/checks.md §2).
    use crate::synth::{Case, physics, release, uniform};
    let w = 5.0;
    let case = Case {
        physics: physics(w, 0.01, 0.0, 0.0),
        release: release(0.1, 70f64.to_radians()),
        times: uniform(30.0, 200.0),
        noise_rad: 1e-4,
        counts_per_rev: None,
        seed: 21,
    };
    let s = swingfit::data::survey::survey(&case.log("big.csv"));
    let t0 = 2.0 * std::f64::consts::PI / w;
    assert!(s.period_s.unwrap() / t0 > 1.05, "mean period {:?}", s.period_s);
    let p0 = s.period_small_amplitude_s.expect("T0 estimate");
    assert!((p0 / t0 - 1.0).abs() < 1e-3, "T0 {p0} vs {t0}");
}

/// The good log with its angle written in `unit` (`per_rad` units to the radian) under `header`.
fn in_unit(header: &str, per_rad: f64) -> String {
    let mut s = format!("{header}\n");
    for i in 0..300 {
        let t = 0.02 * i as f64;
        s.push_str(&format!("{t:.4},{:.9}\n", damped(t, 0.1, 0.3) * per_rad));
    }
    s
}

#[test]
fn milliradians_and_gradians_are_read_at_their_size() {
    // 1 mrad = 1e-3 rad; 1 gon = π/200 rad (400 gon to the turn, ISO 80000-3).
    let want = damped(0.02 * 7.0, 0.1, 0.3);
    for (header, per_rad) in [
        ("time_s,angle_mrad", 1e3),
        ("time_s,angle_grad", 200.0 / PI),
        ("t [s],theta (gon)", 200.0 / PI),
    ] {
        let log = load(&in_unit(header, per_rad), &opts());
        assert!((log.angles()[7] - want).abs() < 1e-9, "{header}: {} vs {want}", log.angles()[7]);
    }
    let o = LoadOptions { angle_unit: Some("mrad".into()), ..opts() };
    let log = load(&in_unit("time_s,theta", 1e3), &o);
    assert!((log.angles()[7] - want).abs() < 1e-9);
}

#[test]
fn units_are_never_guessed() {
    refused(&in_unit("time,theta_rad", 1.0), &opts(), Some(1), "time column 'time' has no unit");
    refused(
        &in_unit("time_s,theta", 1.0),
        &opts(),
        Some(1),
        "angle column 'theta' has no unit in its header: name it theta_rad or theta_deg",
    );
    refused(
        &in_unit("time_s,angle_furlong", 1.0),
        &LoadOptions { angle_col: Some("angle_furlong".into()), ..opts() },
        Some(1),
        "angle column 'angle_furlong' has a unit swingfit does not know ('furlong'): name it angle_rad",
    );
    refused(
        &in_unit("time_s,angle (V)", 1.0),
        &opts(),
        Some(1),
        "has a unit swingfit does not know ('v')",
    );
    // Degrees read as radians, milliradians read as degrees: the mix-up is named.
    refused(
        &in_unit("time_s,theta_rad", 180.0 / PI),
        &opts(),
        None,
        "angles look like degrees read as radians",
    );
    refused(
        &in_unit("time_s,theta_deg", 1e3),
        &opts(),
        None,
        "angles look like milliradians read as deg: give --angle-unit mrad",
    );
    // Seconds read as milliseconds: a period of 1.6 ms.
    refused(
        &in_unit("time_ms,theta_rad", 1.0),
        &opts(),
        None,
        "times look like seconds read as milliseconds: give --time-unit s or name the column time_s",
    );
}

#[test]
fn a_units_row_under_the_header_gives_the_units() {
    let mut s = String::from("time;angle\nms;(deg)\n");
    for i in 0..300 {
        let t = 0.02 * i as f64;
        s.push_str(&format!("{};{:.6}\n", t * 1e3, damped(t, 0.1, 0.3).to_degrees()));
    }
    let log = load(&s, &opts());
    assert_eq!(log.len(), 300);
    assert!((log.times()[1] - 0.02).abs() < 1e-12);
    assert!((log.angles()[7] - damped(0.14, 0.1, 0.3)).abs() < 1e-7);
}

/// The demo encoder log with every count taken modulo 2^bits, as a wrapping counter logs it.
fn wrapped_demo(bits: u32) -> String {
    let path =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/ba7_release60_counts.csv");
    let text = std::fs::read_to_string(path).expect("demo log");
    let m = 1i64 << bits;
    let mut out = String::new();
    let mut header_seen = false;
    for line in text.lines() {
        if line.starts_with('#') || line.trim().is_empty() || !header_seen {
            header_seen |= !(line.starts_with('#') || line.trim().is_empty());
            out.push_str(line);
        } else {
            let (t, c) = line.split_once(',').expect("two fields");
            let c: i64 = c.trim().parse().expect("integer counts");
            out.push_str(&format!("{t},{}", c.rem_euclid(m)));
        }
        out.push('\n');
    }
    out
}

#[test]
fn a_wrapped_16_bit_counter_is_unwrapped_to_the_same_log_and_coefficients() {
    use swingfit::fit::{FitOptions, fit};
    use swingfit::model::{DampingSet, Term};
    let demo =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/ba7_release60_counts.csv");
    let o = LoadOptions { counts_per_rev: Some(10000.0), ..opts() };
    let original = swingfit::data::load(&demo, &o).expect("demo loads");
    let text = wrapped_demo(16);
    assert!(text.contains(",655"), "the copy must actually wrap (negative counts near 65536)");
    // Without the option: refused at the first wrap, suggesting it.
    match parse("wrapped.csv", text.as_bytes(), &o) {
        Ok(_) => panic!("a wrapped counter was accepted"),
        Err(e) => {
            assert!(e.line.is_some(), "{e}");
            assert!(e.kind.to_string().contains("give --counts-wrap 16"), "{e}");
        }
    }
    let w = LoadOptions { counts_wrap: Some(16), ..o.clone() };
    let unwrapped = load(&text, &w);
    assert_eq!(unwrapped.angles(), original.angles(), "unwrapped counts are the logged ones");
    let fo = FitOptions {
        damping: DampingSet::from_terms(&[Term::Viscous, Term::Coulomb, Term::Quadratic]),
        ..FitOptions::default()
    };
    let cut = |log: &AngleLog| {
        swingfit::data::segment::free_runs(log, swingfit::data::segment::Window::default())
            .expect("free runs")
            .runs
    };
    let a = fit(&cut(&original), &fo).expect("original fits");
    let b = fit(&cut(&unwrapped), &fo).expect("unwrapped fits");
    assert_eq!(a.omega_n.value.to_bits(), b.omega_n.value.to_bits());
    for ((ta, ea), (tb, eb)) in a.terms.iter().zip(&b.terms) {
        assert_eq!(ta, tb);
        assert_eq!(ea.value.to_bits(), eb.value.to_bits(), "{ta:?}");
        assert_eq!(ea.ci95, eb.ci95, "{ta:?}");
    }
    // Only counter widths, and only on counts.
    let bad = LoadOptions { counts_wrap: Some(12), ..o };
    refused(&text, &bad, None, "--counts-wrap 12 is not a counter width");
    refused(
        &good_text(300),
        &LoadOptions { counts_wrap: Some(16), ..opts() },
        Some(1),
        "--counts-wrap is for encoder counts",
    );
}

#[test]
fn a_quoted_header_may_hold_the_separator() {
    // `"time, s"` holds the comma that separates the fields: read by the csv crate.
    let text = good_text(300).replace("time_s,theta_rad", "\"time, s\",\"theta, rad\"");
    let log = load(&text, &opts());
    assert_eq!(log.len(), 300);
    assert!((log.times()[2] - 0.04).abs() < 1e-12);
    // Quoted values too, and a quoted field with the delimiter inside a row of another file.
    let text = good_text(300)
        .lines()
        .enumerate()
        .map(|(i, l)| if i == 0 { l.to_string() } else { l.replace(',', "\",\"") })
        .map(|l| if l.contains('"') { format!("\"{l}\"") } else { l })
        .collect::<Vec<_>>()
        .join("\n");
    assert_eq!(load(&text, &opts()).len(), 300);
    // A bad row still names its line after a quoted header.
    let mut lines: Vec<String> = good_text(300).lines().map(str::to_string).collect::<Vec<_>>();
    lines[0] = "\"time, s\",theta_rad".into();
    lines[7] = "\"0.14, 2\",0.1".into();
    refused(&lines.join("\n"), &opts(), Some(8), "found \"0.14, 2\"");
}

#[test]
fn preamble_lines_above_the_header_are_skipped() {
    let body = good_text(300);
    let text = format!("Run 6, rig B\nlogged by bench unit 2\n\n{body}");
    let log = load(&text, &opts());
    assert_eq!(log.len(), 300);
    assert_eq!(log.layout().header_line, Some(4));
    assert_eq!(log.layout().preamble_lines, 2);
    // A title that looks like a header (two names) but has no rows under it.
    let text = format!("title,run\n{body}");
    assert_eq!(load(&text, &opts()).layout().header_line, Some(2));
    // --skip-lines forces the header line; beyond the file it is refused.
    let text = format!("time_s,theta_rad\n0,1\n{body}");
    let log = load(&text, &LoadOptions { skip_lines: Some(2), ..opts() });
    assert_eq!((log.layout().header_line, log.len()), (Some(3), 300));
    refused(
        &body,
        &LoadOptions { skip_lines: Some(400), ..opts() },
        Some(301),
        "--skip-lines 400 skips every row",
    );
}

#[test]
fn angles_at_a_stated_or_given_rate() {
    // One angle a row, the rate stated in a names/values block above (as the rotary logs).
    let mut rows = String::new();
    for i in 0..300 {
        rows.push_str(&format!("{:.6}\n", damped(0.02 * i as f64, 0.1, 0.3).to_degrees()));
    }
    let text = format!("start_deg, sample_rate, secs\n20, 50, 6\n{rows}");
    let deg = LoadOptions { angle_unit: Some("deg".into()), ..opts() };
    let log = load(&text, &deg);
    assert_eq!(log.len(), 300);
    assert!((log.times()[150] - 3.0).abs() < 1e-12);
    assert!((log.angles()[7] - damped(0.14, 0.1, 0.3)).abs() < 1e-7);
    let l = log.layout();
    assert_eq!(l.header_line, None);
    assert!(l.time_words().contains("50 Hz stated in the file at line 2 ('sample_rate')"));
    // `name = value` lines state it too; --rate overrides it.
    let text = format!("# bench log\nSampling rate = 25 Hz\n{rows}");
    assert!((load(&text, &deg).times()[1] - 0.04).abs() < 1e-12);
    let log = load(&text, &LoadOptions { rate_hz: Some(50.0), ..deg.clone() });
    assert!((log.times()[1] - 0.02).abs() < 1e-12);
    // One named column with --rate.
    let text = format!("theta_deg\n{rows}");
    let log = load(&text, &LoadOptions { rate_hz: Some(50.0), ..opts() });
    assert!((log.angles()[7] - damped(0.14, 0.1, 0.3)).abs() < 1e-7);
    // No rate, no unit: refused with what is missing.
    refused(&rows, &deg, Some(1), "expected a sample rate (--rate HZ");
    refused(
        &format!("sample_rate = 50\n{rows}"),
        &opts(),
        Some(2),
        "one column of angles with no header: expected its unit",
    );
    refused(
        &rows,
        &LoadOptions { rate_hz: Some(-3.0), ..deg.clone() },
        None,
        "--rate -3 is not a sample rate",
    );
    // A bad row among the angles names its line; dropped, its slot in time stays.
    let mut lines: Vec<String> = rows.lines().map(str::to_string).collect();
    lines[10] = "x".into();
    let text = format!("rate_hz: 50\n{}", lines.join("\n"));
    refused(&text, &deg, Some(12), "expected angle in deg as a number (column 1), found \"x\"");
    let log = load(&text, &LoadOptions { drop_bad_rows: true, ..deg });
    assert_eq!(log.dropped_lines(), &[12]);
    assert!((log.times()[10] - 0.22).abs() < 1e-12);
}

#[test]
fn iso_timestamps_become_seconds_from_the_first_across_a_date_change() {
    // 50 Hz from 2026-12-31T23:59:59 at UTC-05:00 on; every other stamp written at +01:00, so
    // the date in the text changes from 12-31 to 01-01 while the instants step by 0.02 s
    // (RFC 3339 §5.6: the local time minus the offset is the UTC instant).
    let mut s = String::from("timestamp;theta_rad\n");
    for i in 0..300u32 {
        let ms = 59_000 + 20 * i; // ms past 23:59 at -05:00
        let (sec, milli) = (ms / 1000, ms % 1000);
        let stamp = if i % 2 == 0 {
            let (m, sec) = (59 + sec / 60, sec % 60);
            let (h, m) = (23 + m / 60, m % 60);
            if h == 23 {
                format!("2026-12-31T{h:02}:{m:02}:{sec:02}.{milli:03}-05:00")
            } else {
                format!("2027-01-01T{:02}:{m:02}:{sec:02}.{milli:03}-05:00", h - 24)
            }
        } else {
            // Six hours later on the clock: +01:00.
            let total = 23 * 3600 + 59 * 60 + sec + 6 * 3600 - 24 * 3600;
            let (h, m, sec) = (total / 3600, total / 60 % 60, total % 60);
            format!("2027-01-01 {h:02}:{m:02}:{sec:02},{milli:03}+0100")
        };
        s.push_str(&format!("{stamp};{:.6}\n", damped(0.02 * f64::from(i), 0.1, 0.3)));
    }
    let log = load(&s, &opts());
    assert_eq!(log.len(), 300);
    for (i, t) in log.times().iter().enumerate() {
        assert!((t - 0.02 * i as f64).abs() < 1e-9, "sample {i} at {t}");
    }
    assert!(log.layout().time_words().contains("timestamps in column 'timestamp'"));
    // A stamp that is not one is refused at its line.
    let bad = s.replacen("2026-12-31T23:59:59.040-05:00", "2026-12-31T23:59:61.040-05:00", 1);
    refused(&bad, &opts(), Some(4), "expected an ISO 8601 timestamp");
}

#[test]
fn repeated_times_rounded_or_repeated_are_told_apart() {
    // A logger printing 4 significant figures at 20 Hz: from 100 s on the printed step is 0.1 s
    // and every other time repeats.
    let mut s = String::from("time_s,theta_rad\n");
    for i in 0..4000 {
        let t = 0.05 * i as f64;
        let printed = format!(
            "{:.*}",
            if t < 10.0 {
                3
            } else if t < 100.0 {
                2
            } else {
                1
            },
            t
        );
        s.push_str(&format!("{printed},{:.6}\n", damped(t, 0.1, 0.3)));
    }
    refused(
        &s,
        &opts(),
        Some(2004),
        "printed to 4 significant figures, a step of 0.1 s from 100 s on",
    );
    refused(&s, &opts(), Some(2004), "give --rate 20 ");
    let o = |m| LoadOptions { duplicate_times: m, ..opts() };
    let first = load(&s, &o(DuplicateTimes::KeepFirst));
    let mean = load(&s, &o(DuplicateTimes::Mean));
    assert_eq!(first.len(), mean.len());
    assert_eq!(first.layout().repeated_times, 4000 - first.len());
    // With --rate the rows are timed by the rate instead, and nothing repeats.
    let log = load(&s, &LoadOptions { rate_hz: Some(20.0), ..opts() });
    assert_eq!(log.len(), 4000);
    assert!((log.times()[3999] - 199.95).abs() < 1e-9);
    // A true repeat: a row written twice, the times finer than the interval.
    let g = good_text(300);
    let mut lines: Vec<&str> = g.lines().collect();
    lines[41] = lines[40];
    let text = lines.join("\n");
    refused(&text, &opts(), Some(42), "(a repeated sample: the times are printed to 0.0001 s");
    let log = load(&text, &o(DuplicateTimes::KeepFirst));
    assert_eq!((log.len(), log.layout().repeated_times), (299, 1));
    // Mean of two rows with different angles at one time.
    let mut lines: Vec<String> = g.lines().map(str::to_string).collect();
    lines[41] = format!("{},0.5", lines[40].split(',').next().unwrap_or(""));
    lines[40] = format!("{},0.3", lines[40].split(',').next().unwrap_or(""));
    let log = load(&lines.join("\n"), &o(DuplicateTimes::Mean));
    assert!((log.angles()[39] - 0.4).abs() < 1e-12);
}

#[test]
fn a_voltage_is_read_through_its_calibration() {
    // 0.05 V per degree, zero at 0.12 V: V = 0.12 + 0.05 × θ[deg].
    let mut s = String::from("Run 4\nTime ( s )\tVoltage ( V )\n");
    for i in 0..300 {
        let t = 0.02 * i as f64;
        s.push_str(&format!("{t:.2}\t{:.7}\n", 0.12 + 0.05 * damped(t, 0.1, 0.3).to_degrees()));
    }
    // Without a calibration the message says how to give one.
    refused(&s, &opts(), Some(2), "--signal-scale VALUE[UNIT]/deg");
    let cal = |scale: &str, zero| LoadOptions {
        signal_scale: Some(SignalScale::parse(scale).unwrap_or_else(|e| panic!("{e}"))),
        signal_zero: zero,
        ..opts()
    };
    let log = load(&s, &cal("0.05V/deg", Some(0.12)));
    assert!((log.angles()[7] - damped(0.14, 0.1, 0.3)).abs() < 1e-6);
    assert_eq!(log.layout().signal.as_deref(), Some("0.05V/deg, zero at 0.12V"));
    // Same without the zero: the angle is offset by 0.12 / 0.05 deg.
    let off = load(&s, &cal("0.05/deg", None));
    assert!((off.angles()[7] - log.angles()[7] - 2.4f64.to_radians()).abs() < 1e-9);
    refused(&s, &cal("50mV/deg", None), Some(2), "is in V, but --signal-scale 50mV/deg is per mV");
    refused(
        &s,
        &LoadOptions { angle_unit: Some("deg".into()), ..cal("0.05V/deg", None) },
        None,
        "both say how to read the angle",
    );
    refused(&s, &LoadOptions { signal_zero: Some(0.1), ..opts() }, None, "expected --signal-scale");
}
