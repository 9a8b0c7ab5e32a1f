//! Library tests: integrate.
//!
//! The integrators against outside sources (elliptic-integral periods, closed-form pendulum
//! motion, textbook damping laws; values from docs/checks.md), against each other, and
//! the forward sensitivities against central differences of `simulate`.
//!
//! docs/checks.md §3–§5 use a *linear* spring k·θ; the model has sin θ. Those checks run either at tiny
//! amplitude, where sin θ = θ(1 − θ²/6 + …) and each tolerance below states the size of the
//! neglected nonlinearity, or through relations that are exact for sin θ (§4 energy balance).

// Reference values are quoted with the digits their source prints, even past f64 precision.
#![allow(clippy::excessive_precision)]

use swingfit::integrate::{
    Event, IntegrateError, Method, dopri, simulate, simulate_with_sensitivities,
};
use swingfit::model::{DampingSet, Physics, Release, Term};

const TIGHT: Method = Method::DormandPrince { rtol: 1e-12, atol: 1e-14 };

fn physics(omega_n: f64, viscous: f64, coulomb: f64, quadratic: f64) -> Physics {
    Physics { omega_n, damping: [viscous, coulomb, quadratic, 0.0, 0.0, 0.0], breakaway: None }
}

fn release(angle: f64, velocity: f64) -> Release {
    Release { equilibrium: 0.0, angle, velocity }
}

fn grid(t_end: f64, dt: f64) -> Vec<f64> {
    let n = (t_end / dt).round() as usize;
    (0..=n).map(|i| i as f64 * dt).collect()
}

fn reversals(events: &[Event]) -> Vec<(f64, f64)> {
    events
        .iter()
        .filter_map(|e| match e {
            Event::Reversal { t, angle } => Some((*t, *angle)),
            Event::Stick { .. } => None,
        })
        .collect()
}

fn stick(events: &[Event]) -> Option<(f64, f64)> {
    events.iter().find_map(|e| match e {
        Event::Stick { t, angle } => Some((*t, *angle)),
        Event::Reversal { .. } => None,
    })
}

/// Least-squares slope of y against x.
fn slope(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len() as f64;
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

// ---------------------------------------------------------------------------------------------
// Undamped: large-amplitude period and closed-form motion (docs/checks.md §2).

#[test]
fn period_matches_elliptic_integral_table() {
    // T/T0 = (2/π)K(sin²(θ0/2)): Abramowitz & Stegun 17.3.1 / DLMF 19.2.8 [memory]; 16-digit
    // values from docs/checks.md §2 (mpmath, three independent ways).
    let table = [
        (5.0, 1.000476172485987),
        (10.0, 1.001907188143217),
        (20.0, 1.007669025791545),
        (30.0, 1.017408797595956),
        (45.0, 1.039973343196804),
        (60.0, 1.073182007149364),
        (90.0, 1.180340599016096),
        (120.0, 1.372880500618350),
        (150.0, 1.762203729503756),
        (170.0, 2.439362719673884),
        (179.0, 3.901065160389086),
    ];
    let t0 = 2.0 * std::f64::consts::PI; // ωn = 1
    for (deg, ratio) in table {
        let theta0 = f64::to_radians(deg);
        let times = grid(1.1 * ratio * t0, 0.01);
        for method in [TIGHT, Method::Rk4 { max_step: 1e-3 }] {
            let tr = simulate(&physics(1.0, 0.0, 0.0, 0.0), &release(theta0, 0.0), &times, method)
                .unwrap();
            let rev = reversals(&tr.events);
            assert!(rev.len() >= 2, "{deg}°: {} reversals", rev.len());
            // Turning points at T/2 (at −θ0) and T (at +θ0).
            let measured = rev[1].0 / t0;
            let tol = if deg > 170.0 { 1e-8 } else { 1e-10 };
            assert!(
                (measured / ratio - 1.0).abs() < tol,
                "{deg}° {method:?}: T/T0 = {measured}, table {ratio}"
            );
            assert!((rev[0].1 + theta0).abs() < 1e-9, "{deg}°: first turning point {}", rev[0].1);
            assert!((rev[1].1 - theta0).abs() < 1e-9, "{deg}°: second turning point {}", rev[1].1);
        }
    }
}

#[test]
fn closed_form_motion_at_90_degrees() {
    // sin(θ/2) = k·cd(ω0 t | m), values for θ0 = 90°, ω0 = 1 from docs/checks.md §2 (DLMF §22.19(i)
    // [memory]; agree with a 30-digit Taylor integration).
    let times = [0.0, 0.5, 1.0, 2.0, 3.0];
    let expected = [
        std::f64::consts::FRAC_PI_2,
        1.44586138014692,
        1.07491168437224,
        -0.205639486773337,
        -1.32058238498907,
    ];
    for method in [TIGHT, Method::Rk4 { max_step: 1e-3 }] {
        let p = physics(1.0, 0.0, 0.0, 0.0);
        let tr = simulate(&p, &release(std::f64::consts::FRAC_PI_2, 0.0), &times, method).unwrap();
        for (i, e) in expected.iter().enumerate() {
            assert!((tr.angle[i] - e).abs() < 1e-11, "{method:?} t={}: {}", times[i], tr.angle[i]);
        }
    }
}

#[test]
fn energy_is_conserved_over_1000_periods() {
    // Undamped: E = ω²/2 + ωn²(1 − cos θ) is invariant (common practice).
    let wn = 2.0 * std::f64::consts::PI;
    let p = physics(wn, 0.0, 0.0, 0.0);
    let r = release(1.0, 0.0);
    // T/T0 at θ0 = 1 rad is about 1.0663, so 1070 s holds > 1000 periods.
    let times = grid(1070.0, 0.01);
    let energy = |th: f64, om: f64| 0.5 * om * om + wn * wn * (1.0 - th.cos());
    let e0 = energy(1.0, 0.0);
    let drift = |m: Method| {
        let tr = simulate(&p, &r, &times, m).unwrap();
        assert!(reversals(&tr.events).len() > 2000);
        tr.angle
            .iter()
            .zip(&tr.velocity)
            .map(|(a, v)| (energy(*a, *v) / e0 - 1.0).abs())
            .fold(0.0, f64::max)
    };
    // RK4 is not symplectic. On the linearised oscillator its stability function gives
    // |R(iωh)|² = 1 − (ωh)⁶/72 + O(h⁸) per step (expansion of the RK4 polynomial, common
    // practice), so the relative energy loss after time t is ≈ t·ω⁶h⁵/72: linear in time and
    // fifth order in h. That bound (with the small-amplitude ω, an overestimate at 1 rad) and the
    // ratio 2⁵ on halving h are both checked.
    let rk4 = drift(Method::Rk4 { max_step: 0.01 });
    let rk4_half = drift(Method::Rk4 { max_step: 0.005 });
    let dp = drift(TIGHT);
    let linear_bound = 1070.0 * wn.powi(6) * 0.01f64.powi(5) / 72.0;
    assert!(rk4 < linear_bound && rk4 > 0.2 * linear_bound, "rk4 drift {rk4} vs {linear_bound}");
    let ratio = rk4 / rk4_half;
    assert!(ratio > 28.0 && ratio < 36.0, "rk4 drift ratio for h/2: {ratio} (expect 2⁵)");
    // Measured: RK4 5.4e-5 (h = 0.01) and 1.7e-6 (h = 0.005); DOPRI at rtol 1e-12 1.6e-9.
    assert!(dp < 5e-9, "dopri energy drift {dp}");
}

// ---------------------------------------------------------------------------------------------
// Viscous (docs/checks.md §3).

#[test]
fn viscous_log_decrement_and_damped_period() {
    // Thomson & Dahleh 5th ed. §2.6–2.7 [memory]: δ = 2πζ/√(1−ζ²), T_d = 2π/ω_d; worked example
    // of docs/checks.md §3 (J = 2/3, k = 9.80665, c = 0.05 → b1 = 0.075 1/s).
    // Amplitude 1e-4 rad: sin θ ≈ θ to 1.7e-9 relative, so T_d and δ differ from the linear
    // values by ~1e-9 relative; tolerances 1e-8 (T_d) and 1e-6 (δ, a small difference of logs).
    let wn = 14.709975f64.sqrt();
    let p = physics(wn, 0.075, 0.0, 0.0);
    let a0 = 1e-4;
    let times = grid(10.0, 0.005);
    for method in [TIGHT, Method::Rk4 { max_step: 0.005 }] {
        let tr = simulate(&p, &release(a0, 0.0), &times, method).unwrap();
        let rev = reversals(&tr.events);
        assert!(rev.len() >= 10);
        assert!(stick(&tr.events).is_none(), "nothing sticks without Coulomb friction");
        let td = rev[1].0;
        assert!((td / 1.63830463885920 - 1.0).abs() < 1e-8, "{method:?} T_d = {td}");
        let delta = (a0 / rev[1].1).ln();
        assert!((delta / 0.0614364239572199 - 1.0).abs() < 1e-6, "{method:?} δ = {delta}");
        // Over N = 4 cycles: δ = (1/N) ln(A0/A_N).
        let delta4 = (a0 / rev[7].1).ln() / 4.0;
        assert!((delta4 / 0.0614364239572199 - 1.0).abs() < 1e-6, "{method:?} δ4 = {delta4}");
    }
}

// ---------------------------------------------------------------------------------------------
// Coulomb (docs/checks.md §4).

#[test]
fn coulomb_linear_worked_example_at_tiny_amplitude() {
    // Thomson & Dahleh 5th ed. §2.8, Rao §2.9 [memory]; worked example of docs/checks.md §4: J = 0.05,
    // k = 2, τc = 0.01, θ0 = 0.2037 → Δ = 0.005, turning points |θ_n| = θ0 − 2nΔ, N = 20,
    // θ_rest = +0.0037, t_stop = 9.93458826579610 s. The linear problem is invariant under
    // (θ, τc) → (sθ, sτc); with s = 1e-3 the sin θ error is ~θ²/6 ≈ 7e-9 relative (period
    // shift ~θ²/16), so turning points are checked to 1e-6 relative and t_stop to 1e-6 s.
    let s = 1e-3;
    let p = physics(40f64.sqrt(), 0.0, 0.01 / 0.05 * s, 0.0);
    let times = grid(12.0, 0.002);
    for method in [TIGHT, Method::Rk4 { max_step: 0.002 }] {
        let tr = simulate(&p, &release(0.2037 * s, 0.0), &times, method).unwrap();
        let rev = reversals(&tr.events);
        assert_eq!(rev.len(), 19, "{method:?}: 19 reversals, then the 20th turning point sticks");
        for (n, (t, a)) in rev.iter().enumerate() {
            let k = (n + 1) as f64;
            let expect = (-1f64).powi(n as i32 + 1) * (0.2037 - 0.01 * k) * s;
            assert!((a / expect - 1.0).abs() < 1e-6, "{method:?} turning point {k}: {a}");
            // Half period π/ωn exactly for the linear model.
            assert!((t - k * 0.496729413289805).abs() < 1e-6, "{method:?} t{k} = {t}");
        }
        let (t_stop, rest) = stick(&tr.events).expect("it sticks");
        assert!((rest / (0.0037 * s) - 1.0).abs() < 1e-5, "{method:?} θ_rest = {rest}");
        assert!((t_stop - 9.93458826579610).abs() < 1e-6, "{method:?} t_stop = {t_stop}");
        // After the stick the log's tail is reproduced exactly: constant angle, zero velocity.
        for (i, t) in tr.times.iter().enumerate() {
            if *t > t_stop {
                assert_eq!(tr.angle[i].to_bits(), rest.to_bits());
                assert_eq!(tr.velocity[i].to_bits(), 0f64.to_bits());
            }
        }
        assert_eq!(tr.events.len(), 20, "no chattering: nothing after the stick");
    }
}

#[test]
fn coulomb_pendulum_exact_energy_balance() {
    // Exact for the sin model (docs/checks.md §4, derived there and checked with mpmath):
    // ωn²(cos a_{n+1} − cos a_n) = b0 (a_n + a_{n+1}); example mgd = 9.80665, J = 2/3,
    // τc = 0.05, a0 = 1 → a1 = 0.987907772656455988 at t = 0.872762050456633 s.
    let wn2: f64 = 14.709975;
    let b0 = 0.05 / (2.0 / 3.0);
    let p = physics(wn2.sqrt(), 0.0, b0, 0.0);
    let times = grid(100.0, 0.005);
    for method in [TIGHT, Method::Rk4 { max_step: 0.0025 }] {
        let tr = simulate(&p, &release(1.0, 0.0), &times, method).unwrap();
        let rev = reversals(&tr.events);
        assert!((rev[0].1 + 0.987907772656455988).abs() < 1e-10, "{method:?} a1 = {}", rev[0].1);
        assert!((rev[0].0 - 0.872762050456633).abs() < 1e-10, "{method:?} t1 = {}", rev[0].0);
        // Signed turning points; between two of them friction does work b0·|θ_{n+1} − θ_n|
        // (the §4 relation written for either side, so it also covers the last, one-sided swing).
        let mut pts = vec![1.0];
        pts.extend(rev.iter().map(|(_, a)| *a));
        let (_, rest) = stick(&tr.events).expect("sticks within 100 s");
        pts.push(rest);
        assert!(pts.len() > 30, "many reversals: {}", pts.len());
        for w in pts.windows(2) {
            let residual = wn2 * (w[1].cos() - w[0].cos()) - b0 * (w[0] - w[1]).abs();
            assert!(residual.abs() < 1e-9, "{method:?} energy balance {w:?}: {residual}");
        }
        // Stick rule: the rest angle is inside the dead band, the turning point before is not.
        assert!(wn2 * rest.sin().abs() <= b0);
        assert!(wn2 * pts[pts.len() - 2].sin().abs() > b0);
    }
}

#[test]
fn release_inside_dead_band_stays_put() {
    let p = physics(2.0, 0.1, 0.5, 0.0);
    let theta0 = 0.1; // 4 sin 0.1 = 0.399 ≤ 0.5
    let times = grid(5.0, 0.1);
    for method in [TIGHT, Method::Rk4 { max_step: 0.01 }] {
        let tr = simulate(&p, &release(theta0, 0.0), &times, method).unwrap();
        assert_eq!(tr.events, vec![Event::Stick { t: 0.0, angle: theta0 }]);
        assert!(tr.angle.iter().all(|a| a.to_bits() == theta0.to_bits()));
        assert!(tr.velocity.iter().all(|v| *v == 0.0));
    }
    // A breakaway level above the kinetic one widens the dead band (0.399 > 0.3 but ≤ 0.45).
    let p2 = Physics { breakaway: Some(0.45), ..physics(2.0, 0.0, 0.3, 0.0) };
    let tr = simulate(&p2, &release(theta0, 0.0), &times, TIGHT).unwrap();
    assert_eq!(tr.events.len(), 1);
    // Kinetic level alone (0.399 > 0.3): it moves, and sticks at its first turning point a1 on
    // the same side, given exactly by ωn²(cos a1 − cos θ0) = b0 (θ0 − a1) (docs/checks.md §4 energy
    // balance, one-sided form); 4 sin a1 ≈ 0.2 is inside the band.
    for method in [TIGHT, Method::Rk4 { max_step: 0.01 }] {
        let tr =
            simulate(&physics(2.0, 0.0, 0.3, 0.0), &release(theta0, 0.0), &times, method).unwrap();
        assert_eq!(tr.events.len(), 1);
        let (t, a1) = stick(&tr.events).unwrap();
        assert!(t > 0.5 && a1 > 0.0 && a1 < theta0, "{method:?} stick at {t} s, {a1} rad");
        let residual = 4.0 * (a1.cos() - theta0.cos()) - 0.3 * (theta0 - a1);
        assert!(residual.abs() < 1e-10, "{method:?} energy balance {residual}");
    }
}

#[test]
fn equilibrium_at_rest_without_friction_sticks_and_moving_never_does() {
    let p = physics(3.0, 0.2, 0.0, 0.1);
    let times = grid(4.0, 0.01);
    let r = Release { equilibrium: 0.3, angle: 0.3, velocity: 0.0 };
    let tr = simulate(&p, &r, &times, TIGHT).unwrap();
    assert_eq!(tr.events, vec![Event::Stick { t: 0.0, angle: 0.3 }]);
    let r = Release { equilibrium: 0.3, angle: 0.8, velocity: 0.0 };
    for method in [TIGHT, Method::Rk4 { max_step: 0.01 }] {
        let tr = simulate(&p, &r, &times, method).unwrap();
        assert!(stick(&tr.events).is_none());
        let rev = reversals(&tr.events);
        assert!(rev.len() >= 3);
        // Turning points alternate about the equilibrium and shrink.
        for w in rev.windows(2) {
            assert!((w[0].1 - 0.3) * (w[1].1 - 0.3) < 0.0);
            assert!((w[1].1 - 0.3).abs() < (w[0].1 - 0.3).abs());
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Quadratic (docs/checks.md §5).

#[test]
fn quadratic_exact_half_swing_map_and_amplitude_law() {
    // Exact half-swing map [derived here, docs/checks.md §5 item 4] and the amplitude law
    // 1/A_n = 1/A0 + (8/3)(c_q/J) n (harmonic balance, Thomson & Dahleh §3.8 [memory]) for
    // J = 0.05, k = 2, c_q = 0.001, A0 = 0.5. Linear problem invariant under (θ, b2) → (sθ, b2/s);
    // s = 1e-3 leaves a sin θ error ~A²/16 ≈ 2e-8 relative, checked to 1e-7.
    let s = 1e-3;
    let b2 = 0.001 / 0.05 / s;
    let p = physics(40f64.sqrt(), 0.0, 0.0, b2);
    let a0 = 0.5 * s;
    let times = grid(10.5 * 2.0 * std::f64::consts::PI / 40f64.sqrt(), 0.002);
    let map = [0.4934209387288, 0.4870127679683, 0.4807689146782, 0.4746831386522];
    for method in [TIGHT, Method::Rk4 { max_step: 0.002 }] {
        let tr = simulate(&p, &release(a0, 0.0), &times, method).unwrap();
        let rev = reversals(&tr.events);
        assert!(rev.len() >= 20);
        for (i, m) in map.iter().enumerate() {
            assert!((rev[i].1.abs() / (m * s) - 1.0).abs() < 1e-7, "{method:?} A{}", i + 1);
        }
        let a10 = rev[19].1;
        assert!((a10 / (0.3947356757498 * s) - 1.0).abs() < 1e-7, "{method:?} A10 = {a10}");
        // Measured slope (1/A10 − 1/A0)/10 = 0.05333408187658 (scaled by 1/s), within
        // (2/45)(2 c_q A/J)² ≈ 1.8e-5 of the first-order law (8/3) c_q/J.
        let slope = (1.0 / a10 - 1.0 / a0) / 10.0;
        assert!((slope / (0.05333408187658 / s) - 1.0).abs() < 1e-6, "{method:?} slope {slope}");
        assert!((slope / (8.0 / 3.0 * b2) - 1.0).abs() < 2e-5);
    }
}

// ---------------------------------------------------------------------------------------------
// Full model reference trajectory (docs/checks.md §11).

#[test]
fn full_model_reference_trajectory() {
    // docs/checks.md §11 [derived here: mpmath odefun at 30 digits, scipy DOP853 agrees to 13 digits]:
    // J = 2/3, mgd = 9.80665, c = 0.01, τc = 0.005, c_q = 0.002, θ0 = 1 rad, θ'0 = 0.
    let j: f64 = 2.0 / 3.0;
    let p = physics((9.80665 / j).sqrt(), 0.01 / j, 0.005 / j, 0.002 / j);
    let turning = [
        (0.8727513191349, -0.9876818955348),
        (1.744115098167, 0.9755847907562),
        (2.614136757189, -0.9637020828088),
        (3.482859733794, 0.9520274605098),
        (4.350325596079, -0.9405548870534),
        (5.216574147593, 0.9292785840054),
    ];
    let samples = [
        (0.5, -0.2253937776912, -3.547022289579),
        (1.0, -0.8895139408142, 1.524401274422),
        (2.0, 0.5971860334484, -2.792073660479),
        (4.0, -0.2820216621757, -3.316899907721),
    ];
    let times: Vec<f64> =
        std::iter::once(0.0).chain(samples.iter().map(|s| s.0)).chain([5.5]).collect();
    for method in [TIGHT, Method::Rk4 { max_step: 1e-3 }] {
        let tr = simulate(&p, &release(1.0, 0.0), &times, method).unwrap();
        let rev = reversals(&tr.events);
        assert_eq!(rev.len(), 6, "{method:?}");
        for (k, ((t, a), (te, ae))) in rev.iter().zip(turning).enumerate() {
            // Published to 13 significant digits: 1e-9 is far above their rounding.
            assert!((t - te).abs() < 1e-9, "{method:?} turning point {} t = {t}", k + 1);
            assert!((a - ae).abs() < 1e-9, "{method:?} turning point {} θ = {a}", k + 1);
        }
        for (i, (t, th, om)) in samples.iter().enumerate() {
            assert!((tr.angle[i + 1] - th).abs() < 1e-9, "{method:?} θ({t}) = {}", tr.angle[i + 1]);
            assert!((tr.velocity[i + 1] - om).abs() < 1e-9, "{method:?} ω({t})");
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Convergence order.

#[test]
fn rk4_converges_with_order_four_through_events() {
    // Full model with six reversals in [0, 5]: error against a DOPRI solution at rtol 1e-13.
    let j: f64 = 2.0 / 3.0;
    let p = physics((9.80665 / j).sqrt(), 0.01 / j, 0.005 / j, 0.002 / j);
    let r = release(1.0, 0.0);
    let times = grid(5.0, 0.25);
    let reference =
        simulate(&p, &r, &times, Method::DormandPrince { rtol: 1e-13, atol: 1e-15 }).unwrap();
    let steps = [0.05, 0.025, 0.0125, 0.00625];
    let mut lh = Vec::new();
    let mut le = Vec::new();
    for h in steps {
        let tr = simulate(&p, &r, &times, Method::Rk4 { max_step: h }).unwrap();
        let err =
            tr.angle.iter().zip(&reference.angle).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        lh.push(h.ln());
        le.push(err.ln());
    }
    let order = slope(&lh, &le);
    assert!((order - 4.0).abs() < 0.25, "measured RK4 order {order}");
}

#[test]
fn dormand_prince_step_has_order_five_and_error_follows_tolerance() {
    // Smooth arc (no velocity zero before t = 1.2): order of the fixed-step 5th-order solution.
    let p = physics(1.0, 0.1, 0.0, 0.05);
    let r = release(0.0, 1.0);
    let reference = dopri::fixed_steps(&p, &r, 1.2, 4096).unwrap();
    let mut lh = Vec::new();
    let mut le = Vec::new();
    for n in [4usize, 8, 16, 32] {
        let y = dopri::fixed_steps(&p, &r, 1.2, n).unwrap();
        let err = (y[0] - reference[0]).abs().max((y[1] - reference[1]).abs());
        lh.push((1.2 / n as f64).ln());
        le.push(err.ln());
    }
    let order = slope(&lh, &le);
    assert!((order - 5.0).abs() < 0.35, "measured DOPRI step order {order}");

    // Adaptive: the global error shrinks with the tolerance and stays within 100·rtol.
    let j: f64 = 2.0 / 3.0;
    let p = physics((9.80665 / j).sqrt(), 0.01 / j, 0.005 / j, 0.002 / j);
    let times = grid(5.0, 0.1);
    let r = release(1.0, 0.0);
    let exact = simulate(&p, &r, &times, Method::Rk4 { max_step: 2.5e-4 }).unwrap();
    let mut prev = f64::INFINITY;
    for rtol in [1e-5, 1e-7, 1e-9] {
        let tr =
            simulate(&p, &r, &times, Method::DormandPrince { rtol, atol: rtol * 1e-2 }).unwrap();
        let err = tr.angle.iter().zip(&exact.angle).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        assert!(err < 100.0 * rtol, "rtol {rtol}: error {err}");
        assert!(err < prev, "rtol {rtol}: error {err} not below {prev}");
        prev = err;
    }
}

// ---------------------------------------------------------------------------------------------
// Schemes agree; non-uniform times; bad input.

fn uneven_times(n: usize, seed: u64) -> Vec<f64> {
    let mut state = seed;
    let mut t = 0.0;
    let mut out = Vec::with_capacity(n);
    for _ in 0..n {
        out.push(t);
        state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        t += 0.001 + 0.02 * ((state >> 11) as f64 / (1u64 << 53) as f64);
    }
    out
}

#[test]
fn schemes_agree_on_non_uniform_times() {
    let p =
        Physics { omega_n: 5.0, damping: [0.05, 0.3, 0.02, 0.0, 0.0, 0.0], breakaway: Some(0.4) };
    let r = Release { equilibrium: 0.02, angle: 2.0, velocity: -0.5 };
    let times = uneven_times(2000, 7);
    let a = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.002 }).unwrap();
    let b = simulate(&p, &r, &times, TIGHT).unwrap();
    assert_eq!(a.times, times);
    assert_eq!(a.angle.len(), times.len());
    assert_eq!(b.angle.len(), times.len());
    let worst = a.angle.iter().zip(&b.angle).map(|(x, y)| (x - y).abs()).fold(0.0, f64::max);
    assert!(worst < 1e-8, "rk4 vs dopri: {worst}");
    assert_eq!(a.events.len(), b.events.len());
    assert!(matches!(a.events.last(), Some(Event::Stick { .. })), "this case comes to rest");
    // A subset of the times gives the same values (dense output vs step ends).
    let sub: Vec<f64> = times.iter().copied().step_by(7).collect();
    let c = simulate(&p, &r, &sub, TIGHT).unwrap();
    for (k, v) in c.angle.iter().enumerate() {
        assert!((v - b.angle[7 * k]).abs() < 1e-9);
    }
}

#[test]
fn bad_input_is_an_error_not_a_panic() {
    let p = physics(2.0, 0.1, 0.0, 0.0);
    let r = release(0.5, 0.0);
    let rk = Method::Rk4 { max_step: 0.01 };
    assert_eq!(simulate(&p, &r, &[0.0, 1.0, 1.0], rk), Err(IntegrateError::BadTimes(2)));
    assert_eq!(simulate(&p, &r, &[0.0, f64::NAN], TIGHT), Err(IntegrateError::BadTimes(1)));
    assert!(matches!(
        simulate(&physics(-1.0, 0.0, 0.0, 0.0), &r, &[0.0, 1.0], rk),
        Err(IntegrateError::InvalidParams(m)) if m.contains("omega_n")
    ));
    assert!(matches!(
        simulate(&physics(1.0, f64::INFINITY, 0.0, 0.0), &r, &[0.0, 1.0], TIGHT),
        Err(IntegrateError::InvalidParams(m)) if m.contains("viscous")
    ));
    assert!(matches!(
        simulate(&p, &release(f64::NAN, 0.0), &[0.0, 1.0], rk),
        Err(IntegrateError::InvalidParams(m)) if m.contains("initial_angle")
    ));
    assert!(matches!(
        simulate(&p, &r, &[0.0, 1.0], Method::Rk4 { max_step: 0.0 }),
        Err(IntegrateError::InvalidParams(m)) if m.contains("max_step")
    ));
    assert!(matches!(
        simulate(&p, &r, &[0.0, 1.0], Method::DormandPrince { rtol: -1.0, atol: 1e-9 }),
        Err(IntegrateError::InvalidParams(m)) if m.contains("rtol")
    ));
    assert!(matches!(
        simulate_with_sensitivities(&p, &r, &[0.0, 1.0], DampingSet::FULL, f64::NAN),
        Err(IntegrateError::InvalidParams(_))
    ));
    // A tolerance below what f64 resolves is refused up front.
    assert!(matches!(
        simulate(&p, &r, &[0.0, 1.0], Method::DormandPrince { rtol: 1e-30, atol: 1e-30 }),
        Err(IntegrateError::InvalidParams(m)) if m.contains("rtol")
    ));
    // A period of 1e-150 s cannot be resolved by adaptive steps: a typed error, not a hang.
    assert!(matches!(
        simulate(&physics(1e150, 0.0, 0.0, 0.0), &r, &[0.0, 1.0], TIGHT),
        Err(IntegrateError::StepTooSmall { .. })
    ));
    // An absurd stiffness overflows: reported, not a panic.
    let wild = physics(1e200, 0.0, 0.0, 1e300);
    assert!(simulate(&wild, &release(0.5, 1e10), &[0.0, 1.0], rk).is_err());
    let empty = simulate(&p, &r, &[], rk).unwrap();
    assert!(empty.angle.is_empty() && empty.events.is_empty());
}

// ---------------------------------------------------------------------------------------------
// Forward sensitivities against central differences.

/// Apply a perturbation `d` to parameter `k` in the documented order.
fn perturbed(p: &Physics, r: &Release, terms: DampingSet, k: usize, d: f64) -> (Physics, Release) {
    let list: Vec<Term> = terms.iter().collect();
    let (mut p, mut r) = (*p, *r);
    let nt = list.len();
    if k == 0 {
        p.omega_n += d;
    } else if k <= nt {
        let t = list[k - 1];
        p.damping[t.index()] += d;
    } else if k == nt + 1 {
        r.equilibrium += d;
    } else if k == nt + 2 {
        r.angle += d;
    } else {
        r.velocity += d;
    }
    (p, r)
}

fn check_sensitivities(p: &Physics, r: &Release, terms: DampingSet, t_end: f64, label: &str) {
    let times = grid(t_end, 0.01);
    let h = 0.002;
    let (tr, sens) = simulate_with_sensitivities(p, r, &times, terms, h).unwrap();
    let np = 1 + terms.len() + 3;
    assert_eq!(sens.n_params, np);
    assert_eq!(sens.d_angle.len(), times.len() * np);
    // The state is bit-identical to plain RK4 with the same steps.
    let plain = simulate(p, r, &times, Method::Rk4 { max_step: h }).unwrap();
    assert_eq!(plain, tr, "{label}");
    for k in 0..np {
        let eps = 1e-6;
        let (pp, rp) = perturbed(p, r, terms, k, eps);
        let (pm, rm) = perturbed(p, r, terms, k, -eps);
        let up = simulate(&pp, &rp, &times, Method::Rk4 { max_step: h }).unwrap();
        let dn = simulate(&pm, &rm, &times, Method::Rk4 { max_step: h }).unwrap();
        assert_eq!(up.events.len(), tr.events.len(), "{label} p{k}: event count changed");
        let mut scale = 0.0f64;
        let mut worst = 0.0f64;
        for i in 0..times.len() {
            let fd = (up.angle[i] - dn.angle[i]) / (2.0 * eps);
            let an = sens.d_angle[i * np + k];
            scale = scale.max(fd.abs());
            worst = worst.max((fd - an).abs());
        }
        assert!(scale > 1e-3, "{label} p{k}: sensitivity is trivially small ({scale})");
        assert!(
            worst < 1e-5 * scale.max(1.0),
            "{label} p{k}: |fd − analytic| = {worst}, scale {scale}"
        );
    }
}

#[test]
fn sensitivities_match_central_differences() {
    let r = Release { equilibrium: 0.01, angle: 0.8, velocity: 0.3 };
    check_sensitivities(
        &physics(3.0, 0.08, 0.0, 0.0),
        &r,
        DampingSet::from_terms(&[Term::Viscous]),
        8.0,
        "viscous",
    );
    check_sensitivities(
        &physics(3.0, 0.05, 0.0, 0.04),
        &r,
        DampingSet::from_terms(&[Term::Viscous, Term::Quadratic]),
        8.0,
        "viscous+quadratic",
    );
    // Undamped model with no fitted terms (4 parameters).
    check_sensitivities(&physics(2.5, 0.0, 0.0, 0.0), &r, DampingSet::EMPTY, 6.0, "undamped");
    // Terms outside the fitted set still act on the motion.
    check_sensitivities(
        &physics(3.0, 0.05, 0.02, 0.04),
        &r,
        DampingSet::from_terms(&[Term::Quadratic]),
        6.0,
        "quadratic of full",
    );
}

#[test]
fn sensitivities_through_many_coulomb_reversals() {
    // All three terms, ~25 reversals in 12 s; stick-slip never triggers (|a_g| ≫ b0).
    let p = physics(7.0, 0.02, 0.05, 0.01);
    let r = Release { equilibrium: -0.02, angle: 0.9, velocity: -0.4 };
    let times = grid(12.0, 0.01);
    let tr = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.002 }).unwrap();
    assert!(reversals(&tr.events).len() >= 20);
    assert!(stick(&tr.events).is_none());
    check_sensitivities(&p, &r, DampingSet::FULL, 12.0, "full, many reversals");
}

#[test]
fn sensitivities_through_a_stick() {
    // Strong Coulomb friction: comes to rest after a few swings; the stick angle is well inside
    // the dead band (checked), so small perturbations do not change the event sequence.
    let p = physics(4.0, 0.03, 0.9, 0.0);
    let r = Release { equilibrium: 0.05, angle: 0.6, velocity: 0.2 };
    let times = grid(10.0, 0.01);
    let tr = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.002 }).unwrap();
    let (t_stop, rest) = stick(&tr.events).expect("sticks");
    assert!(t_stop < 8.0);
    let margin = 16.0 * (rest - 0.05).sin().abs() / 0.9;
    assert!(margin < 0.8, "stick angle too near the dead-band edge: {margin}");
    check_sensitivities(
        &p,
        &r,
        DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]),
        10.0,
        "stick",
    );
}

#[test]
fn rk4_steps_over_dense_samples_with_hermite_output() {
    // A 1 kHz log integrated with 5 ms RK4 steps: the samples on step ends are the same numbers
    // as a 200 Hz integration, and the samples in between (cubic Hermite, O(h⁴) like RK4) stay
    // within 1e-8 rad of a tight Dormand–Prince solution; sensitivities are interpolated alike.
    use swingfit::integrate::{Method, simulate, simulate_with_sensitivities};
    use swingfit::model::{DampingSet, Physics, Release};
    let physics =
        Physics { omega_n: 4.0, damping: [0.02, 0.01, 0.01, 0.0, 0.0, 0.0], breakaway: None };
    let release = Release { equilibrium: 0.01, angle: 0.8, velocity: 0.0 };
    let dense: Vec<f64> = (0..20_001).map(|i| i as f64 * 1e-3).collect();
    let coarse: Vec<f64> = dense.iter().step_by(5).copied().collect();
    let d = simulate(&physics, &release, &dense, Method::Rk4 { max_step: 5e-3 }).unwrap();
    let c = simulate(&physics, &release, &coarse, Method::Rk4 { max_step: 5e-3 }).unwrap();
    for (k, a) in c.angle.iter().enumerate() {
        assert!((d.angle[5 * k] - a).abs() <= 1e-12, "step end {k}");
    }
    let r =
        simulate(&physics, &release, &dense, Method::DormandPrince { rtol: 1e-12, atol: 1e-14 })
            .unwrap();
    // RK4's own error at the step ends, and the interpolated samples' error beyond it.
    let err: Vec<f64> = d.angle.iter().zip(&r.angle).map(|(a, b)| (a - b).abs()).collect();
    let at_ends = err.iter().step_by(5).fold(0.0f64, |a, b| a.max(*b));
    let between =
        err.iter().enumerate().filter(|(i, _)| i % 5 != 0).fold(0.0f64, |a, (_, b)| a.max(*b));
    assert!(at_ends < 1e-7, "RK4 at step ends {at_ends}");
    // Hermite truncation h⁴ωn⁴A/384 ≈ 5e-10 rad here.
    assert!(between < at_ends + 2e-9, "between {between} vs ends {at_ends}");
    // Sensitivity output through the same interpolation, against finite differences of θ in ωn.
    let (_, s) =
        simulate_with_sensitivities(&physics, &release, &dense, DampingSet::FULL, 5e-3).unwrap();
    let h = 1e-6;
    let plus = Physics { omega_n: 4.0 + h, ..physics };
    let minus = Physics { omega_n: 4.0 - h, ..physics };
    let p = simulate(&plus, &release, &dense, Method::Rk4 { max_step: 5e-3 }).unwrap();
    let m = simulate(&minus, &release, &dense, Method::Rk4 { max_step: 5e-3 }).unwrap();
    for i in (0..dense.len()).step_by(997) {
        let fd = (p.angle[i] - m.angle[i]) / (2.0 * h);
        let an = s.d_angle[i * s.n_params];
        assert!((fd - an).abs() <= 1e-5 * (1.0 + fd.abs()), "sample {i}: {fd} vs {an}");
    }
}

// ---------------------------------------------------------------------------------------------
// Pre-sliding (elastoplastic spring–slider) friction; docs/friction.md.

fn presliding(omega_n: f64, viscous: f64, coulomb: f64, sigma: f64) -> Physics {
    Physics { omega_n, damping: [viscous, coulomb, 0.0, sigma, 0.0, 0.0], breakaway: None }
}

#[test]
fn presliding_sensitivities_match_central_differences() {
    // b0/σ = 0.015 rad: sliding swings first, then the last swings stay inside the spring range
    // (an elastic oscillation at √(ωn² + σ) decaying by the viscous term).
    let p = presliding(4.0, 0.05, 0.3, 20.0);
    let r = Release { equilibrium: 0.01, angle: 0.3, velocity: 0.2 };
    let terms = DampingSet::from_terms(&[Term::Viscous, Term::Coulomb, Term::Presliding]);
    let times = grid(10.0, 0.01);
    let tr = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.002 }).unwrap();
    assert!(reversals(&tr.events).len() >= 15, "keeps reversing in the spring range");
    assert!(stick(&tr.events).is_none(), "no dead band with a spring–slider");
    check_sensitivities(&p, &r, terms, 10.0, "viscous+coulomb+presliding");
    check_sensitivities(&p, &r, terms.without(Term::Viscous), 10.0, "presliding, b1 not fitted");
}

#[test]
fn presliding_rk4_agrees_with_dormand_prince() {
    let p = presliding(4.0, 0.05, 0.3, 20.0);
    let r = Release { equilibrium: 0.01, angle: 0.3, velocity: 0.2 };
    let times = grid(10.0, 0.01);
    let a = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.001 }).unwrap();
    let b = simulate(&p, &r, &times, TIGHT).unwrap();
    let worst = a.angle.iter().zip(&b.angle).map(|(x, y)| (x - y).abs()).fold(0.0, f64::max);
    assert!(worst < 1e-7, "RK4 vs DOPRI {worst}");
    // In the spring range the oscillation frequency is √(ωn² + σ) (small-angle, lightly
    // damped): measure it from the last reversals.
    let rev = reversals(&b.events);
    let last: Vec<f64> = rev.iter().rev().take(5).map(|e| e.0).collect();
    let half = (last[0] - last[4]) / 4.0;
    // ... and the swing there stays inside the spring's range 2·b0/σ peak to peak.
    let (a1, a2) = (rev[rev.len() - 1].1, rev[rev.len() - 2].1);
    assert!((a1 - a2).abs() < 2.0 * 0.3 / 20.0, "last swing {a1} .. {a2}");
    let expect = std::f64::consts::PI / (16.0f64 + 20.0 - 0.05 * 0.05 / 4.0).sqrt();
    assert!((half - expect).abs() < 1e-5 * expect, "half period {half} vs {expect}");
}

// ---------------------------------------------------------------------------------------------
// Stribeck friction (the level rises from b0 to b0 + bs towards rest); docs/friction.md.

fn stribeck(omega_n: f64, viscous: f64, coulomb: f64, bs: f64, vs: f64) -> Physics {
    Physics { omega_n, damping: [viscous, coulomb, 0.0, 0.0, bs, vs], breakaway: None }
}

#[test]
fn stribeck_sensitivities_match_central_differences() {
    // Excess 0.2 rad/s² below ~0.3 rad/s, many reversals, no stick within 10 s.
    let p = stribeck(4.0, 0.05, 0.1, 0.2, 0.3);
    let r = Release { equilibrium: 0.01, angle: 0.4, velocity: 0.2 };
    let terms = DampingSet::parse("viscous,coulomb,stribeck").unwrap();
    let times = grid(10.0, 0.01);
    let tr = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.002 }).unwrap();
    assert!(reversals(&tr.events).len() >= 10);
    assert!(stick(&tr.events).is_none());
    check_sensitivities(&p, &r, terms, 10.0, "viscous+coulomb+stribeck");
}

#[test]
fn stribeck_sticks_at_the_static_level_of_the_curve() {
    // The friction at rest is b0 + bs: the article sticks where |ωn² sin(θ − θeq)| ≤ b0 + bs,
    // which with the Coulomb level alone (b0 only) it would not.
    let p = stribeck(4.0, 0.0, 0.1, 0.3, 0.05);
    assert!((p.static_level() - 0.4).abs() < 1e-15);
    let r = Release { equilibrium: 0.0, angle: 0.2, velocity: 0.0 };
    let times = grid(30.0, 0.01);
    let tr = simulate(&p, &r, &times, TIGHT).unwrap();
    let (_, rest) = stick(&tr.events).expect("sticks");
    let a_g = 16.0 * rest.sin().abs();
    assert!(a_g <= 0.4 + 1e-9, "stuck outside the static band: {a_g}");
    // The last reversal before the stick was outside the band b0 alone gives, or the last
    // swing decayed into it: either way the stick angle is inside b0 + bs.
    let rk = simulate(&p, &r, &times, Method::Rk4 { max_step: 0.001 }).unwrap();
    let worst = rk.angle.iter().zip(&tr.angle).map(|(x, y)| (x - y).abs()).fold(0.0, f64::max);
    assert!(worst < 1e-6, "RK4 vs DOPRI {worst}");
}
