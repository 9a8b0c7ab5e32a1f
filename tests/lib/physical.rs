//! Library tests: physical.
//!
//! Gravity against docs/checks.md §6 (WGS 84, NIMA TR8350.2 [memory]), the compound
//! pendulum relations of §1 and §3 ([common practice]; Thomson & Dahleh 5th ed. ch. 2 [memory]),
//! and GUM propagation against the worked example of §7 (JCGM 100:2008 eqs. 10 and 13 [memory]).

use nalgebra::DMatrix;
use swingfit::model::{DampingSet, Term};
use swingfit::physical::{
    self, ArticleInputs, Coefficient, FittedDynamics, Gravity, GravitySource, Measured,
    PhysicalError, Point,
};

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

#[test]
fn standard_gravity_is_the_cgpm_value() {
    // 3rd CGPM (1901), g_n = 9.80665 m/s² exactly.
    let g = Gravity::standard();
    assert!((g.value - 9.80665).abs() < 1e-15);
    assert!(g.u.abs() < 1e-300);
    assert_eq!(g.source, GravitySource::Standard);
    assert_eq!(g.describe(), "standard gravity 9.80665 m/s^2");
}

#[test]
fn wgs84_normal_gravity_matches_table() {
    // docs/checks.md §6 table, WGS 84 Somigliana (TR8350.2 [memory]); 90° printed value is truncated: tolerance 1e-10.
    for (lat, gamma) in
        [(0.0, 9.7803253359), (45.0, 9.8061977694), (60.0, 9.8191769531), (90.0, 9.8321849379)]
    {
        let got = physical::normal_gravity(lat, 0.0).unwrap();
        assert!((got - gamma).abs() < 1.5e-10, "gamma({lat}) = {got:.12}, expected {gamma}");
        assert!((physical::somigliana(lat) - got).abs() < 1e-15);
    }
}

#[test]
fn second_order_height_formula_matches_table() {
    // docs/checks.md §6: φ = 45°, h = 100 m → 9.8058892217; h = 1000 m → 9.8031129436.
    assert!((physical::normal_gravity(45.0, 100.0).unwrap() - 9.8058892217).abs() < 1e-10);
    assert!((physical::normal_gravity(45.0, 1000.0).unwrap() - 9.8031129436).abs() < 1e-10);
    // Vertical gradient at h = 0: 3.0877e-6 s⁻² at 0°, 3.0834e-6 at 90° (same table).
    for (lat, grad) in [(0.0, 3.0877e-6), (45.0, 3.0855e-6), (60.0, 3.0845e-6), (90.0, 3.0834e-6)] {
        let num = (physical::normal_gravity(lat, -1.0).unwrap()
            - physical::normal_gravity(lat, 1.0).unwrap())
            / 2.0;
        assert!((num - grad).abs() < 1e-10, "gradient at {lat}: {num:e}");
    }
    let g = Gravity::at_location(45.0, 100.0, 0.0).unwrap();
    assert!(matches!(g.source, GravitySource::NormalGravity { .. }));
}

#[test]
fn gravity_inputs_are_checked() {
    assert!(matches!(
        physical::normal_gravity(91.0, 0.0),
        Err(PhysicalError::Input { field: "latitude", .. })
    ));
    assert!(matches!(
        physical::normal_gravity(10.0, f64::NAN),
        Err(PhysicalError::Input { field: "elevation", .. })
    ));
    assert!(Gravity::given(-9.8, 0.0).is_err());
    assert!(Gravity::given(9.8, -0.1).is_err());
    let msg = physical::normal_gravity(-95.0, 0.0).unwrap_err().to_string();
    assert_eq!(msg, "latitude: expected degrees between -90 and 90, found -95");
}

fn inputs(m: Measured, d: Measured, g: Gravity, r: f64) -> ArticleInputs {
    ArticleInputs { mass: m, pivot_to_cg: d, gravity: g, r_mass_pivot: r }
}

/// docs/checks.md §7 worked example: J = m g d/ωn², m = 2 (u 0.001), d = 0.5 (u 0.0005),
/// g = 9.81 (u 0.001), ωn² = 14.71 (u 0.005) → ωn = √14.71, u(ωn) = u(ωn²)/(2ωn).
fn gum_example(r: f64) -> physical::PhysicalCoefficients {
    let w = 14.71f64.sqrt();
    let fit = FittedDynamics {
        omega_n: w,
        terms: DampingSet::EMPTY,
        damping: [0.0; swingfit::model::N_TERMS],
        cov: DMatrix::from_element(1, 1, (0.005 / (2.0 * w)).powi(2)),
    };
    let inp = inputs(
        Measured { value: 2.0, u: 0.001 },
        Measured { value: 0.5, u: 0.0005 },
        Gravity::given(9.81, 0.001).unwrap(),
        r,
    );
    physical::physical_coefficients(&inp, &fit).unwrap()
}

#[test]
fn gum_worked_example_uncorrelated() {
    // docs/checks.md §7 (JCGM 100:2008 eq. 10): J = 0.666893269884, u_c = 0.000782265067, U = 0.00156453013.
    let pc = gum_example(0.0);
    assert!(close(pc.inertia_pivot.value, 0.666893269884, 1e-11));
    assert!(close(pc.inertia_pivot.u_c, 0.000782265067, 1e-9), "u_c = {}", pc.inertia_pivot.u_c);
    assert!(close(pc.inertia_pivot.expanded, 0.00156453013, 1e-8)); // printed to 9 digits
    assert!((pc.inertia_pivot.k - 2.0).abs() < 1e-15);
    assert_eq!(pc.inertia_pivot.unit, "kg*m^2");
    assert!(pc.damping.iter().all(Option::is_none));
    assert!(pc.damping_ratio.is_none() && pc.quality_factor.is_none());
}

#[test]
fn gum_worked_example_with_correlated_mass_and_distance() {
    // docs/checks.md §7 (JCGM 100:2008 eq. 13): r(m, d) = 0.5 → u_c = 0.000913406783.
    let pc = gum_example(0.5);
    assert!(close(pc.inertia_pivot.u_c, 0.000913406783, 1e-9), "u_c = {}", pc.inertia_pivot.u_c);
}

#[test]
fn rod_example_reproduces_section_1_and_3() {
    // docs/checks.md §1: uniform rod, m = 2 kg, d = 0.5 m, g = g_n, ωn² = 14.709975 exactly.
    // docs/checks.md §3: c = 0.05 N·m·s/rad on J = 2/3 → b1 = c/J = 0.075 1/s.
    let w = 14.709975f64.sqrt();
    let fit = FittedDynamics {
        omega_n: w,
        terms: DampingSet::from_terms(&[Term::Viscous, Term::Quadratic]),
        damping: [0.075, 0.0, 0.003, 0.0, 0.0, 0.0],
        cov: DMatrix::zeros(3, 3),
    };
    let inp = inputs(
        Measured { value: 2.0, u: 0.0 },
        Measured { value: 0.5, u: 0.0 },
        Gravity::standard(),
        0.0,
    );
    let pc = physical::physical_coefficients(&inp, &fit).unwrap();
    assert!(close(w, 3.83535852300668, 1e-13));
    assert!(close(pc.inertia_pivot.value, 2.0 / 3.0, 1e-13));
    assert!(close(pc.inertia_cg.value, 1.0 / 6.0, 1e-12));
    assert!(close(pc.equivalent_length.value, 0.666666666666667, 1e-13));
    assert!(close(pc.period.value, 1.63822632734057, 1e-13));
    assert!(close(pc.gyration_cg.as_ref().unwrap().value, 0.288675134594813, 1e-12));
    assert!(close(pc.gyration_pivot.value, 0.577350269189626, 1e-13));
    assert!(close(pc.damping[0].as_ref().unwrap().value, 0.05, 1e-13));
    assert!(close(pc.damping[2].as_ref().unwrap().value, 0.002, 1e-13));
    assert!(pc.damping[1].is_none());
    assert!(close(pc.damping_ratio.as_ref().unwrap().value, 0.00977744317123249, 1e-12));
    assert!(close(pc.log_decrement.as_ref().unwrap().value, 0.0614364239572199, 1e-12));
    assert!(close(pc.quality_factor.as_ref().unwrap().value, 51.1381136401, 1e-10));
    // No input uncertainty → no output uncertainty.
    assert!(pc.inertia_pivot.u_c.abs() < 1e-300);
}

#[test]
fn analytic_sensitivities_match_central_differences() {
    let z = Point([1.7, 0.42, 9.79, 3.1, 0.06, 0.02, 0.004, 0.0, 0.0, 0.0]);
    let coefs = [
        Coefficient::InertiaPivot,
        Coefficient::InertiaCg,
        Coefficient::GyrationPivot,
        Coefficient::GyrationCg,
        Coefficient::EquivalentLength,
        Coefficient::Damping(Term::Viscous),
        Coefficient::Damping(Term::Coulomb),
        Coefficient::Damping(Term::Quadratic),
        Coefficient::Period,
        Coefficient::DampingRatio,
        Coefficient::LogDecrement,
        Coefficient::QualityFactor,
    ];
    for c in coefs {
        let (_, grad) = physical::value_and_gradient(c, &z).unwrap();
        for i in 0..7 {
            let h = 1e-6 * z.0[i].abs();
            let (mut up, mut dn) = (z, z);
            up.0[i] += h;
            dn.0[i] -= h;
            let fd = (physical::value_and_gradient(c, &up).unwrap().0
                - physical::value_and_gradient(c, &dn).unwrap().0)
                / (2.0 * h);
            let scale = grad.iter().map(|g| g.abs()).fold(0.0, f64::max);
            assert!(
                (fd - grad[i]).abs() <= 1e-7 * scale,
                "{c:?} d/dz{i}: analytic {} vs central {fd}",
                grad[i]
            );
        }
    }
}

#[test]
fn fit_covariance_enters_with_its_correlation() {
    // c = b1·J with J = m g d/ωn²: with only ωn and b1 uncertain, u_c²(c) = ∇ᵀΣ∇ (eq. 13), and a
    // positive ωn–b1 correlation (∂c/∂ωn < 0, ∂c/∂b1 > 0) must shrink u_c.
    let w = 3.0;
    let base = |r: f64| {
        let (uw, ub) = (0.01, 0.002);
        FittedDynamics {
            omega_n: w,
            terms: DampingSet::from_terms(&[Term::Viscous]),
            damping: [0.05, 0.0, 0.0, 0.0, 0.0, 0.0],
            cov: DMatrix::from_row_slice(2, 2, &[uw * uw, r * uw * ub, r * uw * ub, ub * ub]),
        }
    };
    let inp = inputs(
        Measured { value: 1.0, u: 0.0 },
        Measured { value: 0.3, u: 0.0 },
        Gravity::standard(),
        0.0,
    );
    let u = |r: f64| {
        physical::physical_coefficients(&inp, &base(r)).unwrap().damping[0].as_ref().unwrap().u_c
    };
    let j = 1.0 * physical::STANDARD_GRAVITY * 0.3 / (w * w);
    let (cw, cb) = (-2.0 * 0.05 * j / w, j);
    let expect = |r: f64| {
        ((cw * 0.01f64).powi(2) + (cb * 0.002f64).powi(2) + 2.0 * r * cw * cb * 0.01 * 0.002).sqrt()
    };
    assert!(close(u(0.0), expect(0.0), 1e-12));
    assert!(close(u(0.8), expect(0.8), 1e-12));
    assert!(u(0.8) < u(0.0));
}

#[test]
fn bad_physical_inputs_are_errors() {
    let fit = FittedDynamics {
        omega_n: 3.0,
        terms: DampingSet::EMPTY,
        damping: [0.0; swingfit::model::N_TERMS],
        cov: DMatrix::zeros(1, 1),
    };
    let ok_m = Measured { value: 1.0, u: 0.0 };
    let bad = inputs(Measured { value: -1.0, u: 0.0 }, ok_m, Gravity::standard(), 0.0);
    assert!(matches!(
        physical::physical_coefficients(&bad, &fit),
        Err(PhysicalError::Input { field: "mass", .. })
    ));
    let bad_r = inputs(ok_m, ok_m, Gravity::standard(), 1.5);
    assert!(physical::physical_coefficients(&bad_r, &fit).is_err());
    let wrong_cov =
        FittedDynamics { terms: DampingSet::from_terms(&[Term::Coulomb]), ..fit.clone() };
    let good = inputs(ok_m, Measured { value: 0.2, u: 0.0 }, Gravity::standard(), 0.0);
    assert!(matches!(
        physical::physical_coefficients(&good, &wrong_cov),
        Err(PhysicalError::Covariance { expected: 2, .. })
    ));
    // Inconsistent article (d too long for the measured ωn): J_cg < 0 is refused, never reported.
    let long = inputs(ok_m, Measured { value: 5.0, u: 0.0 }, Gravity::standard(), 0.0);
    match physical::physical_coefficients(&long, &fit) {
        Err(PhysicalError::NegativeInertiaCg { j_cg, md2, j, .. }) => {
            assert!(j_cg < 0.0 && (md2 - 25.0).abs() < 1e-12 && (j_cg - (j - md2)).abs() < 1e-9);
        }
        other => panic!("expected a refusal of the negative J_cg, found {other:?}"),
    }
}
