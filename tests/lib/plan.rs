//! `plan`: predicted uncertainties against the scatter of real fits of simulated logs, and the
//! refusals of impossible designs.

use rayon::prelude::*;
use swingfit::fit::{FitOptions, fit};
use swingfit::model::{DampingSet, Physics, Term};
use swingfit::plan::{Design, Plan, PlanError, Record, predict};

use crate::synth::{Case, physics, release, uniform};

fn design(releases: &[f64], record: f64, rate: f64, noise: f64) -> Design {
    Design {
        releases: releases.to_vec(),
        record: Record::Seconds(record),
        rate_hz: rate,
        noise_rad: noise,
        counts_per_rev: None,
    }
}

/// Fit `reps` seeded noise realisations of the design and return the sample standard deviation
/// of each physics parameter (ωn, then the terms of `damping`).
fn scatter(p: Physics, damping: DampingSet, d: &Design, reps: usize) -> Vec<f64> {
    let Record::Seconds(record) = d.record else { unreachable!() };
    let times = uniform(record, d.rate_hz);
    let fits: Vec<Vec<f64>> = (0..reps)
        .into_par_iter()
        .map(|r| {
            let logs: Vec<_> = d
                .releases
                .iter()
                .enumerate()
                .map(|(k, &a)| {
                    Case {
                        physics: p,
                        release: release(0.0, a),
                        times: times.clone(),
                        noise_rad: d.noise_rad,
                        counts_per_rev: d.counts_per_rev,
                        seed: 91_000 + 17 * r as u64 + k as u64,
                    }
                    .log(&format!("plan{k}.csv"))
                })
                .collect();
            let f = fit(&logs, &FitOptions { damping, ..FitOptions::default() })
                .expect("every realisation converges");
            std::iter::once(f.omega_n.value)
                .chain(damping.iter().map(|t| f.term(t).map_or(f64::NAN, |e| e.value)))
                .collect()
        })
        .collect();
    let n = reps as f64;
    (0..fits[0].len())
        .map(|k| {
            let mean = fits.iter().map(|v| v[k]).sum::<f64>() / n;
            (fits.iter().map(|v| (v[k] - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
        })
        .collect()
}

fn check_against_monte_carlo(p: Physics, damping: DampingSet, d: Design) {
    let plan = Plan { physics: p, damping, design: d.clone(), article: None };
    let pred = predict(&plan).expect("plan predicts");
    let reps = 240;
    let mc = scatter(p, damping, &d, reps);
    for (c, s) in pred.coefficients.iter().zip(&mc) {
        let ratio = c.std / s;
        assert!(
            (ratio - 1.0).abs() <= 0.15,
            "{}: predicted {:.4e} vs scatter {:.4e} of {reps} fits (ratio {ratio:.3})",
            c.key,
            c.std,
            s
        );
    }
}

#[test]
fn predicted_std_matches_fit_scatter_viscous_coulomb_one_release() {
    let p = physics(4.0, 0.04, 0.02, 0.0);
    let damping = DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]);
    check_against_monte_carlo(p, damping, design(&[0.5], 20.0, 25.0, 1e-3));
}

#[test]
fn predicted_std_matches_fit_scatter_three_terms_two_releases() {
    let p = physics(5.0, 0.02, 0.03, 0.05);
    check_against_monte_carlo(p, DampingSet::FULL, design(&[1.0, 0.3], 20.0, 25.0, 1e-3));
}

#[test]
fn encoder_designs_stop_where_the_fit_stops_and_count_quantisation_as_noise() {
    let p = physics(5.0, 0.0, 0.05, 0.0);
    let d = Design {
        releases: vec![0.3],
        record: Record::UntilRest,
        rate_hz: 50.0,
        noise_rad: 0.0,
        counts_per_rev: Some(4096.0),
    };
    let damping = DampingSet::from_terms(&[Term::Coulomb]);
    let pred = predict(&Plan { physics: p, damping, design: d, article: None }).unwrap();
    let q = std::f64::consts::TAU / 4096.0;
    assert!((pred.sigma_rad - q / 12f64.sqrt()).abs() < 1e-15);
    let run = &pred.runs[0];
    // Coulomb decay (the textbook linear law): the amplitude falls by 4 b0/ωn² = 0.008 rad
    // per cycle, so 10 steps (0.0153 rad) are reached after about
    // (0.3 − 0.0153)/0.008 = 35.6 cycles = 44.7 s. "Until rest" with an encoder ends one
    // period after that unresolved swing, long before the stick (at b0/ωn² = 0.002 rad).
    assert!(!run.sticks);
    assert!((run.fitted_s - 44.7).abs() < 1.5, "fitted {}", run.fitted_s);
    let period = std::f64::consts::TAU / 5.0;
    assert!((run.record_s - run.fitted_s - period).abs() < 0.05, "record {}", run.record_s);
    assert!(run.independent <= run.fitted_samples as f64);
}

#[test]
fn a_term_without_magnitude_and_a_perfect_sensor_are_refused() {
    let p = physics(5.0, 0.03, 0.0, 0.0);
    let d = design(&[0.3], 10.0, 50.0, 1e-3);
    let err =
        predict(&Plan { physics: p, damping: DampingSet::FULL, design: d.clone(), article: None });
    assert_eq!(err.unwrap_err(), PlanError::NoMagnitude { term: Term::Coulomb });
    let silent = Design { noise_rad: 0.0, ..d };
    let damping = DampingSet::from_terms(&[Term::Viscous]);
    let err = predict(&Plan { physics: p, damping, design: silent, article: None });
    assert_eq!(err.unwrap_err(), PlanError::NoNoise);
}

#[test]
fn design_search_finds_a_design_that_meets_the_targets_and_no_shorter_one() {
    use swingfit::plan::search::{Bounds, SearchOutcome, parse_targets, search};
    let p = physics(5.0, 0.03, 0.02, 0.015);
    let base = Plan {
        physics: p,
        damping: DampingSet::FULL,
        design: design(&[1.0], 100.0, 50.0, 0.01f64.to_radians()),
        article: None,
    };
    let targets = parse_targets("viscous=2%, quadratic=5%").unwrap();
    assert!((targets[0].relative - 0.02).abs() < 1e-15);
    let bounds = Bounds {
        max_releases: 3,
        min_angle: 5f64.to_radians(),
        max_angle: 90f64.to_radians(),
        max_record_s: 300.0,
        release_cost_s: 60.0,
    };
    let SearchOutcome::Found(f) = search(&base, &targets, &bounds).unwrap() else {
        panic!("the targets are reachable")
    };
    let Record::Seconds(t) = f.design.record else { panic!("a record length") };
    let n = f.design.releases.len() as f64;
    assert!((f.effort_s - n * (t + 60.0)).abs() < 1e-9);
    // The design meets every target when predicted on its own …
    let again = predict(&Plan { design: f.design.clone(), ..base.clone() }).unwrap();
    assert!(again.get("viscous").unwrap().relative <= 0.02);
    assert!(again.get("quadratic").unwrap().relative <= 0.05);
    // … and the same angles recorded 5 % shorter do not.
    let shorter = Design { record: Record::Seconds(t / 1.05), ..f.design.clone() };
    let short = predict(&Plan { design: shorter, ..base.clone() }).unwrap();
    assert!(
        short.get("viscous").unwrap().relative > 0.02
            || short.get("quadratic").unwrap().relative > 0.05
    );
    // A target out of reach names the term that blocks it.
    let tight = parse_targets("quadratic=0.001%").unwrap();
    let small = Bounds { max_releases: 2, max_record_s: 30.0, ..bounds };
    let SearchOutcome::Blocked(b) = search(&base, &tight, &small).unwrap() else {
        panic!("0.001 % is out of reach in 2 x 30 s")
    };
    assert_eq!(b.key, "quadratic");
    assert!(b.ratio > 1.0);
    assert!(parse_targets("viscous").is_err() && parse_targets("viscous=-1%").is_err());
}
