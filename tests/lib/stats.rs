//! Library tests: stats.
//!
//! Quantiles, information criteria, the nested F-test and Ljung–Box against the check values of
//! docs/checks.md §8 (computed there with mpmath, scipy.stats agreeing to ≥ 12 digits).

use swingfit::stats::{self, StatsError};

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

#[test]
fn student_t_quantiles_match_checks() {
    // docs/checks.md §8, t_{0.975,ν} (mpmath; scipy agrees).
    let table = [
        (1.0, 12.7062047362),
        (2.0, 4.30265272975),
        (3.0, 3.18244630528),
        (5.0, 2.57058183564),
        (7.0, 2.36462425159),
        (10.0, 2.22813885199),
        (12.0, 2.17881282967),
        (20.0, 2.08596344727),
        (30.0, 2.04227245630),
        (60.0, 2.00029782201),
        (100.0, 1.98397151852),
        (1000.0, 1.96233908083),
    ];
    for (nu, t) in table {
        let got = stats::t_quantile(0.975, nu).unwrap();
        assert!(close(got, t, 1e-10), "t(0.975, {nu}) = {got}, expected {t}");
    }
    // scipy.stats.t.ppf (tests/data/stats/reference.py → reference.txt), non-integer and large ν.
    for (nu, t) in [
        (0.5, 164.557673480488),
        (1.5, 6.01666310442793),
        (4.2, 2.72507272259237),
        (99.0, 1.98421695158642),
        (250.0, 1.96949839342115),
        (1.2e5, 1.95998375366298),
    ] {
        let got = stats::t_quantile(0.975, nu).unwrap();
        assert!(close(got, t, 1e-11), "t(0.975, {nu}) = {got}, expected {t}");
        assert!(close(stats::t_quantile(0.025, nu).unwrap(), -t, 1e-11));
    }
    // Large ν approaches z_0.975 = 1.95996398454 (docs/checks.md §7).
    assert!(close(stats::t_quantile(0.975, 1e9).unwrap(), 1.95996398454, 1e-8));
}

#[test]
fn chi2_quantiles_and_tails_match_checks() {
    // docs/checks.md §8, χ²_{0.95}(k).
    for (k, q) in [
        (1.0, 3.84145882069),
        (3.0, 7.81472790325),
        (5.0, 11.0704976935),
        (10.0, 18.3070380533),
        (20.0, 31.4104328442),
    ] {
        let got = stats::chi2_quantile(0.95, k).unwrap();
        assert!(close(got, q, 1e-9), "chi2(0.95, {k}) = {got}, expected {q}");
        assert!((stats::chi2_sf(q, k).unwrap() - 0.05).abs() < 1e-10);
        assert!((stats::chi2_cdf(q, k).unwrap() - 0.95).abs() < 1e-10);
    }
}

#[test]
fn f_quantiles_match_checks() {
    // docs/checks.md §8, F_{0.95}(d1, d2).
    for (d1, d2, q) in [
        (1.0, 10.0, 4.96460274373),
        (1.0, 100.0, 3.93614298631),
        (2.0, 30.0, 3.31582950101),
        (3.0, 200.0, 2.64975164340),
    ] {
        let got = stats::f_quantile(0.95, d1, d2).unwrap();
        assert!(close(got, q, 1e-9), "F(0.95, {d1}, {d2}) = {got}, expected {q}");
        assert!((stats::f_sf(q, d1, d2).unwrap() - 0.05).abs() < 1e-10);
        assert!((stats::f_cdf(q, d1, d2).unwrap() - 0.95).abs() < 1e-10);
    }
}

#[test]
fn f_tail_with_a_long_record_matches_scipy() {
    // scipy.stats.f.sf (tests/data/stats/reference.txt): denominators as large as a 120 000-sample log.
    for (x, d1, d2, sf) in [
        (3.0, 2.0, 1e4, 0.0498318789677974),
        (3.0, 2.0, 1.2e5, 0.0497908024135489),
        (19.1219512195, 1.0, 1.2e5, 1.22729408616374e-05),
        (2.0, 5.0, 1e6, 0.0752362378553056),
    ] {
        let got = stats::f_sf(x, d1, d2).unwrap();
        assert!(close(got, sf, 1e-8), "F.sf({x}, {d1}, {d2}) = {got:e}, expected {sf:e}");
    }
}

#[test]
fn information_criteria_match_worked_example() {
    // docs/checks.md §8 worked example: n = 200; A: p = 3, RSS 0.0450; B: p = 4, RSS 0.0410.
    // AIC: Akaike 1974; BIC: Schwarz 1978; AICc: Hurvich & Tsai 1989 [memory].
    let n = 200;
    assert!(close(stats::aic(n, 0.0450, 3).unwrap(), -1673.88203115, 1e-11));
    assert!(close(stats::bic(n, 0.0450, 3).unwrap(), -1663.98707905, 1e-11));
    assert!(close(stats::aicc(n, 0.0450, 3).unwrap(), -1673.75958217, 1e-11));
    assert!(close(stats::aic(n, 0.0410, 4).unwrap(), -1690.50011577, 1e-11));
    assert!(close(stats::bic(n, 0.0410, 4).unwrap(), -1677.30684630, 1e-11));
    assert!(close(stats::aicc(n, 0.0410, 4).unwrap(), -1690.29498756, 1e-11));
}

#[test]
fn nested_f_test_matches_worked_example() {
    // docs/checks.md §8: F(1,196) = 19.1219512195, upper-tail p = 1.989207893e-5 (scipy f.sf agrees).
    let t = stats::nested_f_test(200, 0.0450, 3, 0.0410, 4).unwrap();
    assert_eq!((t.df1, t.df2), (1, 196));
    assert!(close(t.f, 19.1219512195, 1e-10), "F = {}", t.f);
    assert!(close(t.p_value, 1.989207893e-5, 1e-8), "p = {}", t.p_value);
}

#[test]
fn ljung_box_matches_worked_example() {
    // docs/checks.md §8 (Ljung & Box 1978 statistic on invented residuals, n = 12, h = 3):
    // r1..r3 = -0.489213879932, 0.260632580992, -0.341893136803; Q = 6.97840191713; p = 0.07258937219.
    let e = [0.5, -0.3, 0.8, -0.1, 0.2, -0.6, 0.4, 0.1, -0.2, -0.4, 0.3, 0.0];
    let r = stats::autocorrelations(&e, 3);
    for (got, want) in r.iter().zip([-0.489213879932, 0.260632580992, -0.341893136803]) {
        assert!(close(*got, want, 1e-11), "r = {got}, expected {want}");
    }
    let lb = stats::ljung_box(&e, 3, 0).unwrap();
    assert!(close(lb.q, 6.97840191713, 1e-11), "Q = {}", lb.q);
    assert!(close(lb.p_value, 0.07258937219, 1e-9), "p = {}", lb.p_value);
    assert_eq!(lb.dof, 3);
    assert!(!lb.rejects_white(0.05));
    assert!(lb.rejects_white(0.10));
    assert!(close(lb.rho1, -0.489213879932, 1e-11));
}

#[test]
fn ljung_box_rejects_a_strongly_correlated_series() {
    // A slow sine is as far from white as it gets: Q must be huge and p tiny.
    let e: Vec<f64> = (0..500).map(|i| (i as f64 * 0.05).sin()).collect();
    let lb = stats::ljung_box(&e, stats::ljung_box_lags(e.len()), 0).unwrap();
    assert_eq!(lb.lags, 20);
    assert!(lb.p_value < 1e-10 && lb.rho1 > 0.99, "p {} rho1 {}", lb.p_value, lb.rho1);
}

#[test]
fn lag_rule_is_min_20_n_over_5() {
    assert_eq!(stats::ljung_box_lags(12), 2);
    assert_eq!(stats::ljung_box_lags(3), 1);
    assert_eq!(stats::ljung_box_lags(100), 20);
    assert_eq!(stats::ljung_box_lags(120_000), 20);
}

#[test]
fn bad_arguments_are_errors_not_panics() {
    assert_eq!(stats::t_quantile(0.975, 0.0), Err(StatsError::DegreesOfFreedom(0.0)));
    assert!(matches!(stats::t_quantile(1.0, 3.0), Err(StatsError::Probability(_))));
    assert!(matches!(stats::chi2_quantile(0.5, f64::NAN), Err(StatsError::DegreesOfFreedom(_))));
    assert!(matches!(stats::f_sf(-1.0, 1.0, 2.0), Err(StatsError::BadValue { .. })));
    assert!(matches!(stats::aic(10, 0.0, 2), Err(StatsError::BadValue { .. })));
    assert!(matches!(stats::aicc(3, 1.0, 2), Err(StatsError::TooFew { .. })));
    assert!(matches!(stats::nested_f_test(10, 1.0, 3, 0.5, 3), Err(StatsError::TooFew { .. })));
    assert!(matches!(stats::ljung_box(&[1.0, 2.0], 1, 0), Err(StatsError::TooFew { .. })));
    assert!(matches!(
        stats::ljung_box(&[1.0, f64::NAN, 2.0, 0.0], 1, 0),
        Err(StatsError::BadValue { .. })
    ));
    // Messages are one lowercase line.
    let msg = stats::t_quantile(0.975, -2.0).unwrap_err().to_string();
    assert_eq!(msg, "degrees of freedom must be positive and finite, found -2");
}
