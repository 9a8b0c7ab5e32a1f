//! Motion segmentation and time-base slips on synthetic logs whose truth is known: rest then a
//! push, a hold then a release, a hand on the first swing, two releases, injected slips. Each
//! free part is the model integrated with tight Dormand–Prince; forced parts are prescribed
//! motions that no free swing can make. The fits must hold the truth inside their intervals.

use swingfit::data::segment::{self, EndCause, StartCause, Window};
use swingfit::data::slips::{self, SlipKind};
use swingfit::data::survey::survey;
use swingfit::data::write::{LogFormat, OutputUnit, render};
use swingfit::data::{AngleLog, LoadOptions, parse};
use swingfit::fit::{FitOptions, fit};
use swingfit::integrate::{Method, simulate};
use swingfit::model::{Physics, Release, Term};

const OMEGA: f64 = 5.5;
const B1: f64 = 0.03;
const B0: f64 = 0.02;
const RATE: f64 = 200.0;
const EQ: f64 = 0.01;
const NOISE: f64 = 2e-4;

fn truth() -> Physics {
    Physics::undamped(OMEGA).with_coef(Term::Viscous, B1).with_coef(Term::Coulomb, B0)
}

/// A log under construction: times on a uniform grid, clean angles appended piece by piece.
struct Builder {
    t: Vec<f64>,
    y: Vec<f64>,
}

impl Builder {
    fn new() -> Builder {
        Builder { t: Vec::new(), y: Vec::new() }
    }
    fn now(&self) -> f64 {
        self.t.len() as f64 / RATE
    }
    fn last(&self) -> f64 {
        *self.y.last().unwrap_or(&EQ)
    }
    /// Still at `angle` for `secs`.
    fn still(&mut self, angle: f64, secs: f64) {
        let n = (secs * RATE).round() as usize;
        for _ in 0..n {
            self.t.push(self.now());
            self.y.push(angle);
        }
    }
    /// Prescribed motion (a hand): cubic Hermite from the current state to (angle, velocity)
    /// over `secs`, starting with velocity `v0`.
    fn hand(&mut self, v0: f64, angle: f64, velocity: f64, secs: f64) {
        let (p0, p1) = (self.last(), angle);
        let n = (secs * RATE).round() as usize;
        for k in 1..=n {
            let s = k as f64 / n as f64;
            let (h00, h10, h01, h11) = (
                2.0 * s * s * s - 3.0 * s * s + 1.0,
                s * s * s - 2.0 * s * s + s,
                -2.0 * s * s * s + 3.0 * s * s,
                s * s * s - s * s,
            );
            self.t.push(self.now());
            self.y.push(h00 * p0 + h10 * secs * v0 + h01 * p1 + h11 * secs * velocity);
        }
    }
    /// Free motion under `physics` from (angle, velocity) for `secs`, the first sample at the
    /// release; returns the final (angle, velocity).
    fn free(&mut self, physics: &Physics, angle: f64, velocity: f64, secs: f64) -> (f64, f64) {
        let n = (secs * RATE).round() as usize;
        let t0 = self.now();
        let times: Vec<f64> = (0..n).map(|k| t0 + k as f64 / RATE).collect();
        let tr = simulate(
            physics,
            &Release { equilibrium: EQ, angle, velocity },
            &times,
            Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
        )
        .expect("valid physics");
        self.t.extend(&times);
        self.y.extend(&tr.angle);
        (*tr.angle.last().unwrap_or(&angle), *tr.velocity.last().unwrap_or(&velocity))
    }
    fn log(&self, name: &str, seed: u64) -> AngleLog {
        let format = LogFormat {
            unit: OutputUnit::Rad,
            counts_per_rev: None,
            noise_sd_rad: NOISE,
            seed,
            comments: vec![],
        };
        let bytes = render(&self.t, &self.y, &format).expect("render");
        parse(name, &bytes, &LoadOptions::default()).expect("synthetic log loads")
    }
}

/// Fit the free runs and check the truth lies inside every 95 % interval.
fn fits_truth(runs: &[AngleLog]) {
    let out = fit(runs, &FitOptions::default()).expect("free segment fits");
    let inside = |name: &str, lo: f64, hi: f64, truth: f64| {
        assert!(lo <= truth && truth <= hi, "{name}: truth {truth} outside [{lo}, {hi}]");
    };
    inside("omega_n", out.omega_n.ci95.0, out.omega_n.ci95.1, OMEGA);
    for (t, e) in &out.terms {
        let truth = if *t == Term::Viscous { B1 } else { B0 };
        inside(t.name(), e.ci95.0, e.ci95.1, truth);
    }
}

#[test]
fn rest_then_push_starts_at_the_end_of_the_push() {
    let mut b = Builder::new();
    b.still(EQ, 3.4);
    // A push: the hand carries the article to 0.5 rad at 1.2 rad/s in 0.4 s.
    b.hand(0.0, EQ + 0.5, 1.2, 0.4);
    let push_end = b.now() - 1.0 / RATE;
    b.free(&truth(), EQ + 0.5, 1.2, 30.0);
    let log = b.log("push.csv", 3);
    let s = survey(&log);
    let seg = segment::segment(&log, &s);
    assert_eq!(seg.segments.len(), 1, "{seg:?}");
    let g = &seg.segments[0];
    assert!(matches!(g.start_cause, StartCause::AfterForcing { .. }), "{:?}", g.start_cause);
    // Free from the first turning point after the push: within a half period of its end.
    assert!(
        g.start_s > push_end && g.start_s < push_end + 0.6,
        "start {} push end {push_end}",
        g.start_s
    );
    assert!(!seg.forced.is_empty());
    let runs = segment::free_runs(&log, Window::default()).expect("free runs");
    assert_eq!(runs.runs.len(), 1);
    assert!(runs.notes.iter().any(|n| n.contains("forced")), "{:?}", runs.notes);
    fits_truth(&runs.runs);
}

#[test]
fn hold_then_release_starts_at_the_release() {
    let mut b = Builder::new();
    let held = 14.6f64.to_radians();
    b.still(EQ + held, 8.0);
    let release = b.now();
    b.free(&truth(), EQ + held, 0.0, 30.0);
    let log = b.log("hold.csv", 5);
    let s = survey(&log);
    let seg = segment::segment(&log, &s);
    assert_eq!(seg.segments.len(), 1, "{seg:?}");
    let g = &seg.segments[0];
    match g.start_cause {
        StartCause::AfterHold { still_s, deflection_rad } => {
            assert!((still_s - 8.0).abs() < 0.2, "held {still_s} s");
            assert!((deflection_rad - held).abs() < 0.01, "held at {deflection_rad}");
        }
        ref c => panic!("expected a hold, found {c:?}"),
    }
    assert!((g.start_s - release).abs() < 0.1, "start {} release {release}", g.start_s);
    let runs = segment::free_runs(&log, Window::default()).expect("free runs");
    fits_truth(&runs.runs);
}

#[test]
fn hand_on_the_first_swing_is_cut_at_the_first_free_turning_point() {
    let mut b = Builder::new();
    // The hand resists: the first half cycle swings with 45 % of the restoring torque.
    let weak = Physics::undamped(OMEGA * 0.45f64.sqrt());
    let half = std::f64::consts::PI / (OMEGA * 0.45f64.sqrt());
    let (a, v) = b.free(&weak, EQ + 0.7, 0.0, half);
    let turn = b.now();
    b.free(&truth(), a, v, 30.0);
    let log = b.log("hand.csv", 7);
    let s = survey(&log);
    let seg = segment::segment(&log, &s);
    assert_eq!(seg.segments.len(), 1, "{seg:?}");
    let g = &seg.segments[0];
    match g.start_cause {
        StartCause::AfterForcing { half_cycles, accel_ratio, .. } => {
            assert_eq!(half_cycles, 1);
            assert!((accel_ratio - 0.45).abs() < 0.1, "measured/free {accel_ratio}");
        }
        ref c => panic!("expected forcing, found {c:?}"),
    }
    assert!((g.start_s - turn).abs() < 0.1, "start {} turn {turn}", g.start_s);
    let runs = segment::free_runs(&log, Window::default()).expect("free runs");
    fits_truth(&runs.runs);
}

#[test]
fn two_releases_give_two_runs() {
    let mut b = Builder::new();
    b.still(EQ, 1.0);
    let (a, v) = b.free(&truth(), EQ + 0.5, 0.0, 15.0);
    // A hand stops it, it rests, and is lifted to 0.3 rad and let go.
    b.hand(v, EQ, 0.0, 0.3);
    let _ = a;
    b.still(EQ, 3.0);
    b.hand(0.0, EQ + 0.3, 0.0, 0.6);
    let second = b.now();
    b.free(&truth(), EQ + 0.3, 0.0, 15.0);
    let log = b.log("two.csv", 9);
    let runs = segment::free_runs(&log, Window::default()).expect("free runs");
    assert_eq!(runs.runs.len(), 2, "{:?}", runs.segmentation);
    assert!(runs.runs[1].source().contains("release 2 of 2"));
    let g2 = &runs.segmentation.segments[1];
    assert!(g2.start_s > second - 0.7 && g2.start_s < second + 0.1, "second start {}", g2.start_s);
    assert!(runs.segmentation.segments[0].end_s < second - 3.0);
    fits_truth(&runs.runs);
}

#[test]
fn no_free_segment_is_refused_with_what_was_found() {
    let mut b = Builder::new();
    b.still(EQ, 20.0);
    // Two tiny wobbles so the loader's two-swing rule passes on noise alone.
    let log = b.log("rest.csv", 11);
    let e = segment::free_runs(&log, Window::default()).expect_err("at rest");
    assert!(e.kind.to_string().contains("at rest for the whole log"), "{e}");
    assert!(e.kind.to_string().contains("0.000 s to"), "{e}");

    // Driven: a hand moves it back and forth at 1.5 × the natural frequency (a free swing's
    // acceleration at that amplitude is 2.25 times smaller than measured).
    let mut d = Builder::new();
    let w = 1.5 * OMEGA;
    for k in 0..(20.0 * RATE) as usize {
        let t = k as f64 / RATE;
        d.t.push(t);
        d.y.push(EQ + 0.3 * (w * t).sin() + 0.1 * (2.7 * w * t).sin());
    }
    let log = d.log("driven.csv", 13);
    let e = segment::free_runs(&log, Window::default()).expect_err("driven");
    assert!(e.kind.to_string().contains("driven"), "{e}");
}

#[test]
fn from_and_to_override_and_are_checked_against_the_log() {
    let mut b = Builder::new();
    b.still(EQ, 2.0);
    b.free(&truth(), EQ + 0.4, 0.0, 20.0);
    let log = b.log("window.csv", 21);
    let w = Window { from_s: Some(5.0), to_s: Some(15.0) };
    let runs = segment::free_runs(&log, w).expect("window");
    let t = runs.runs[0].times();
    assert!(t[0] >= 5.0 && t[0] < 5.0 + 1.5 / RATE);
    assert!(*t.last().unwrap_or(&0.0) <= 15.0);
    assert_eq!(runs.segmentation.segments.len(), 1);
    assert!(matches!(
        segment::free_runs(&log, Window { from_s: Some(5.0), to_s: None }).map(|r| r
            .segmentation
            .segments
            .first()
            .map(|g| g.end_cause.clone())),
        Ok(Some(_))
    ));
    fits_truth(&runs.runs);
    let e = segment::free_runs(&log, Window { from_s: Some(30.0), to_s: None }).expect_err("out");
    assert!(
        e.kind.to_string().contains("outside the log")
            && e.kind.to_string().contains("0.000 s to 21.995 s"),
        "{e}"
    );
    let e = segment::free_runs(&log, Window { from_s: Some(5.0), to_s: Some(5.3) })
        .expect_err("too short");
    assert!(
        e.kind.to_string().contains("under two swings")
            && e.kind.to_string().contains("0.000 s to"),
        "{e}"
    );
}

#[test]
fn a_whole_free_log_is_left_as_it_is() {
    let mut b = Builder::new();
    b.free(&truth(), EQ + 0.5, 0.0, 20.0);
    let log = b.log("free.csv", 17);
    let runs = segment::free_runs(&log, Window::default()).expect("free");
    assert_eq!(runs.runs.len(), 1);
    assert_eq!(runs.runs[0].source(), "free.csv");
    assert!(runs.segmentation.forced.is_empty(), "{:?}", runs.segmentation.forced);
    let g = &runs.segmentation.segments[0];
    assert_eq!(g.start_cause, StartCause::LogStart);
    assert!(matches!(g.end_cause, EndCause::LogEnd | EndCause::Rest));
}

/// A fast swing at 1 kHz with `k` single-sample slips injected (alternately a reading taken
/// one interval late and a repeated reading) in fast motion; returns the log and the indices.
fn slipped(k: usize) -> (AngleLog, Vec<usize>) {
    let rate = 1000.0;
    let n = 20_000;
    let times: Vec<f64> = (0..n).map(|i| i as f64 / rate).collect();
    let phys = truth();
    let tr = simulate(
        &phys,
        &Release { equilibrium: EQ, angle: EQ + 0.8, velocity: 0.0 },
        &times,
        Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
    )
    .expect("valid");
    let mut y = tr.angle.clone();
    let mut at = Vec::new();
    let mut i = 300;
    let mut late = true;
    while at.len() < k && i + 2 < n {
        if tr.velocity[i].abs() > 2.5 {
            // Late: sample i holds the reading of i+1. Repeated: sample i holds that of i−1.
            y[i] = if late { tr.angle[i + 1] } else { tr.angle[i - 1] };
            at.push(i);
            late = !late;
            i += 211;
        } else {
            i += 1;
        }
    }
    let format = LogFormat {
        unit: OutputUnit::Counts,
        counts_per_rev: Some(40_000.0),
        noise_sd_rad: 0.0,
        seed: 1,
        comments: vec![],
    };
    let bytes = render(&times, &y, &format).expect("render");
    let opts = LoadOptions { counts_per_rev: Some(40_000.0), ..LoadOptions::default() };
    (parse("slips.csv", &bytes, &opts).expect("loads"), at)
}

#[test]
fn injected_slips_are_counted_and_retimed() {
    let (log, at) = slipped(40);
    assert_eq!(at.len(), 40);
    let s = survey(&log);
    let found = &s.slips;
    let got: Vec<usize> = found.slips.iter().map(|x| x.index).collect();
    let missed: Vec<&usize> = at.iter().filter(|i| !got.contains(i)).collect();
    assert_eq!(found.count(), 40, "{} missed {missed:?} got {got:?}", slips::describe(found));
    assert_eq!(found.count_of(SlipKind::Doubled), 20);
    assert_eq!(found.count_of(SlipKind::Repeated), 20);
    let idx: Vec<usize> = found.slips.iter().map(|x| x.index).collect();
    assert_eq!(idx, at);
    // The slips recur every 211 samples of fast motion at least: the period is reported.
    assert!(found.period_s.is_some_and(|p| p >= 0.2), "{:?}", found.period_s);
    let fixed = slips::retime(&log, found).expect("retimed");
    assert_eq!(fixed.len(), log.len() - 40);
    assert_eq!(survey(&fixed).slips.count(), 0);
    fits_truth(&[fixed]);
}

#[test]
fn a_clean_fast_log_has_no_slips() {
    let (log, _) = slipped(0);
    assert_eq!(survey(&log).slips.count(), 0);
    assert!(survey(&log).slips.judged_steps > 1000);
}

#[test]
fn article_runs_carry_their_own_window() {
    let text = "id = \"A\"\nname = \"a\"\n[mass]\nvalue = 1.0\nstd = 0.0\n[pivot_to_cg]\nvalue = 0.2\nstd = 0.0\n\n[[run]]\nlog = \"r.csv\"\nfrom = 8.5\nto = 40.0\nkeep_slips = true\n";
    let spec = swingfit::article::parse("a.toml", text, std::path::Path::new("."))
        .expect("article parses");
    let load = &spec.runs[0].load;
    assert_eq!((load.from_s, load.to_s, load.keep_slips), (Some(8.5), Some(40.0), true));
    let bad = text.replace("from = 8.5", "from = \"soon\"");
    let e = swingfit::article::parse("a.toml", &bad, std::path::Path::new(".")).expect_err("bad");
    assert_eq!(e.line, Some(12), "{e}");
}

#[test]
fn a_phase_jump_is_found_and_later_samples_move_one_interval() {
    // The logger skips one reading for good at sample 2000: from there every logged angle is
    // the reading of the next instant, stamped one interval early.
    let rate = 1000.0;
    let n = 12_000;
    let times: Vec<f64> = (0..=n).map(|i| i as f64 / rate).collect();
    let tr = simulate(
        &truth(),
        &Release { equilibrium: EQ, angle: EQ + 0.8, velocity: 0.0 },
        &times,
        Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
    )
    .expect("valid");
    let jump = (1500..4000).find(|&i| tr.velocity[i].abs() > 3.0).expect("fast");
    let mut y: Vec<f64> = tr.angle[..n].to_vec();
    for (i, v) in y.iter_mut().enumerate().skip(jump) {
        *v = tr.angle[i + 1];
    }
    let t: Vec<f64> = times[..n].to_vec();
    let format = LogFormat {
        unit: OutputUnit::Counts,
        counts_per_rev: Some(40_000.0),
        noise_sd_rad: 0.0,
        seed: 1,
        comments: vec![],
    };
    let bytes = render(&t, &y, &format).expect("render");
    let opts = LoadOptions { counts_per_rev: Some(40_000.0), ..LoadOptions::default() };
    let log = parse("jump.csv", &bytes, &opts).expect("loads");
    let found = survey(&log).slips;
    assert_eq!(found.count(), 1, "{}", slips::describe(&found));
    assert_eq!(found.slips[0].kind, SlipKind::PhaseLate);
    assert_eq!(found.slips[0].index, jump);
    let fixed = slips::retime(&log, &found).expect("retimed");
    // After re-timing, sample k ≥ jump sits at the instant its reading was taken.
    assert!((fixed.times()[jump] - times[jump + 1]).abs() < 1e-12);
    assert!((fixed.times()[jump - 1] - times[jump - 1]).abs() < 1e-12);
}

#[test]
fn a_natural_decay_to_rest_on_an_encoder_is_not_a_stop() {
    // Strong dry friction: the swing dies in about 11 cycles and sticks; the last half cycles,
    // a few encoder steps wide, must not be taken for a hand stopping it.
    let physics =
        Physics::undamped(OMEGA).with_coef(Term::Viscous, B1).with_coef(Term::Coulomb, 0.2);
    let times: Vec<f64> = (0..(25.0 * RATE) as usize).map(|k| k as f64 / RATE).collect();
    let tr = simulate(
        &physics,
        &Release { equilibrium: EQ, angle: EQ + 0.3, velocity: 0.0 },
        &times,
        Method::DormandPrince { rtol: 1e-12, atol: 1e-14 },
    )
    .expect("valid");
    let format = LogFormat {
        unit: OutputUnit::Counts,
        counts_per_rev: Some(10_000.0),
        noise_sd_rad: 1e-4,
        seed: 19,
        comments: vec![],
    };
    let bytes = render(&times, &tr.angle, &format).expect("render");
    let opts = LoadOptions { counts_per_rev: Some(10_000.0), ..LoadOptions::default() };
    let log = parse("stick.csv", &bytes, &opts).expect("loads");
    let runs = segment::free_runs(&log, Window::default()).expect("free");
    let g = &runs.segmentation.segments[0];
    assert_eq!(g.end_cause, EndCause::Rest, "{:?}", runs.segmentation);
    assert!(runs.segmentation.forced.is_empty(), "{:?}", runs.segmentation.forced);
    assert!(g.end_s > 10.0 && g.end_s < 16.0, "rest from {}", g.end_s);
}

#[test]
fn slips_fitted_as_logged_are_named_by_the_adequacy_verdict() {
    // The same 40 injected slips, fitted as logged (what `--keep-slips` does): the residual then
    // carries the logger's clock, and the verdict must say so instead of blaming the damping.
    let (log, _) = slipped(40);
    let out = fit(&[log], &FitOptions::default()).expect("fits as logged");
    assert_eq!(out.adequacy.time_base_slips, 40);
    assert_ne!(out.adequacy.verdict, swingfit::fit::adequacy::Adequacy::Explained);
    let line = swingfit::report::verdict::adequacy_line(&out.adequacy);
    assert!(line.contains("time base slips: 40 samples"), "{line}");
    // Re-timed, there are none left to name.
    let (log, _) = slipped(40);
    let fixed = slips::retime(&log, &survey(&log).slips).expect("retimed");
    let out = fit(&[fixed], &FitOptions::default()).expect("fits re-timed");
    assert_eq!(out.adequacy.time_base_slips, 0);
    assert!(!swingfit::report::verdict::adequacy_line(&out.adequacy).contains("time base"));
}
