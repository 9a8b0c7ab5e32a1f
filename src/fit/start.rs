//! Start values with no help from the user.
//!
//! - ωn from the survey's swing period, corrected for amplitude with the complete elliptic
//!   integral: T = (2/π)·K(sin²(A/2))·T0 (Abramowitz & Stegun 17.3.1 [memory]), K by the
//!   arithmetic–geometric mean (A&S 17.6 [memory]).
//! - θeq from the survey (midline of the peaks); θ0 the first sample; ω0 from a local quadratic
//!   fit to the first samples.
//! - Damping from the half-cycle peak envelope: to first order in the damping, for linear stiffness
//!   (energy balance per cycle; docs/checks.md §3–§5, Thomson & Dahleh §2.6–2.8 and §3.8 [memory]),
//!   −dA/dt = (b1/2)·A + (2/π)·b0/ωn + (4/(3π))·b2·ωn·A². The decrements of successive peaks are
//!   fitted by non-negative least squares over the chosen terms.

use crate::data::AngleLog;
use crate::data::survey::{Peak, Survey};
use crate::model::{DampingSet, N_TERMS, Physics, Release, Term};

pub use crate::model::{ellip_k, period_ratio};

/// Why no start could be found.
#[derive(Debug, Clone, PartialEq)]
pub struct NoStart(pub String);

/// Start value of the natural frequency from several surveyed runs (median over runs).
pub fn omega_n(surveys: &[(&AngleLog, &Survey)]) -> Result<f64, NoStart> {
    let mut w: Vec<f64> = Vec::new();
    for (_, s) in surveys {
        // Prefer the amplitude-corrected small-swing period; else correct the mean period for
        // the median amplitude.
        let t0 = s.period_small_amplitude_s.or_else(|| {
            let mut amps: Vec<f64> = s.peaks.iter().map(|p| p.deflection.abs()).collect();
            amps.sort_by(f64::total_cmp);
            let a = if amps.is_empty() { 0.0 } else { amps[amps.len() / 2] };
            s.period_s.map(|p| p / period_ratio(a))
        });
        if let Some(t0) = t0.filter(|t| t.is_finite() && *t > 0.0) {
            w.push(2.0 * std::f64::consts::PI / t0);
        }
    }
    if w.is_empty() {
        return Err(NoStart(
            "no swing period could be measured in any log (too few zero crossings)".into(),
        ));
    }
    w.sort_by(f64::total_cmp);
    Ok(w[w.len() / 2])
}

/// Release state at the first sample.
pub fn release(log: &AngleLog, survey: &Survey) -> Release {
    let t = log.times();
    let y = log.angles();
    // Local quadratic fit over the first ~1/20 of a period (at least 5, at most 40 samples).
    let span = survey.period_s.map(|p| 0.05 * p).unwrap_or(0.05);
    let mut n = t.iter().take_while(|&&ti| ti - t[0] <= span).count();
    n = n.clamp(5, 40).min(t.len());
    let (angle, velocity) = quad_fit_at_start(&t[..n], &y[..n]).unwrap_or((y[0], 0.0));
    Release { equilibrium: survey.equilibrium_rad, angle, velocity }
}

/// Least-squares quadratic through (t, y); value and slope at t[0].
fn quad_fit_at_start(t: &[f64], y: &[f64]) -> Option<(f64, f64)> {
    let t0 = t[0];
    let mut m = nalgebra::Matrix3::<f64>::zeros();
    let mut v = nalgebra::Vector3::<f64>::zeros();
    for (ti, yi) in t.iter().zip(y) {
        let u = ti - t0;
        let row = nalgebra::Vector3::new(1.0, u, u * u);
        m += row * row.transpose();
        v += row * *yi;
    }
    let c = m.cholesky()?.solve(&v);
    Some((c[0], c[1])).filter(|(a, b)| a.is_finite() && b.is_finite())
}

/// Damping coefficients (indexed by [`Term::index`]) for the terms of `set`, from the peak
/// envelopes of all runs, given the natural frequency. Non-negative; terms the envelope cannot
/// see get a small positive value so that the optimiser starts inside the bounds.
pub fn damping(peaks: &[&[Peak]], omega_n: f64, set: DampingSet) -> [f64; N_TERMS] {
    // Rows: −dA/dt ≈ Σ_j x_j·basis_j(A) at the midpoint of successive half-cycle peaks.
    let mut rows: Vec<([f64; 3], f64)> = Vec::new();
    for run in peaks {
        for w in run.windows(2) {
            let (a0, a1) = (w[0].deflection.abs(), w[1].deflection.abs());
            let dt = w[1].t - w[0].t;
            if dt.is_nan() || dt <= 0.0 || a0 <= 0.0 || a1 <= 0.0 {
                continue;
            }
            let a = 0.5 * (a0 + a1);
            let basis = [
                0.5 * a,
                2.0 / (std::f64::consts::PI * omega_n),
                4.0 * omega_n * a * a / (3.0 * std::f64::consts::PI),
            ];
            rows.push((basis, (a0 - a1) / dt));
        }
    }
    // The pre-sliding stiffness has no first-order envelope basis (its spring stores, not
    // dissipates); it is started below from the Coulomb level and the smallest swing.
    let terms: Vec<Term> = set
        .without(Term::Presliding)
        .without(Term::Stribeck)
        .without(Term::StribeckVelocity)
        .iter()
        .collect();
    let mut best: Option<(f64, [f64; 3])> = None;
    // Non-negative least squares by enumerating the active subsets (at most 7).
    for mask in 1u32..(1 << terms.len()) {
        let active: Vec<Term> = terms
            .iter()
            .enumerate()
            .filter(|(i, _)| mask & (1 << i) != 0)
            .map(|(_, t)| *t)
            .collect();
        let k = active.len();
        let mut m = nalgebra::DMatrix::<f64>::zeros(k, k);
        let mut v = nalgebra::DVector::<f64>::zeros(k);
        for (b, y) in &rows {
            for i in 0..k {
                v[i] += b[active[i].index()] * y;
                for j in 0..k {
                    m[(i, j)] += b[active[i].index()] * b[active[j].index()];
                }
            }
        }
        let Some(ch) = m.cholesky() else { continue };
        let x = ch.solve(&v);
        if x.iter().any(|c| !(c.is_finite() && *c > 0.0)) {
            continue;
        }
        let mut coef = [0.0; 3];
        for (i, t) in active.iter().enumerate() {
            coef[t.index()] = x[i];
        }
        let rss: f64 = rows
            .iter()
            .map(|(b, y)| {
                let f: f64 = (0..3).map(|j| b[j] * coef[j]).sum();
                (f - y) * (f - y)
            })
            .sum();
        if best.as_ref().is_none_or(|(r, _)| rss < *r) {
            best = Some((rss, coef));
        }
    }
    let best = best.map(|(_, c)| c).unwrap_or([0.0; 3]);
    let mut coef = [0.0; N_TERMS];
    coef[..3].copy_from_slice(&best);
    // A term left at zero starts at a small share of a typical decay so the optimiser can move it.
    let typical = typical_decay(&rows);
    for t in set.iter() {
        if coef[t.index()] <= 0.0 {
            coef[t.index()] = match t {
                Term::Viscous => 0.05 * typical.0,
                Term::Coulomb => 0.05 * typical.1 * omega_n,
                Term::Quadratic => 0.05 * typical.0 / (omega_n * typical.2.max(1e-3)),
                Term::Presliding | Term::Stribeck | Term::StribeckVelocity => 0.0,
            }
            .max(1e-9);
        }
    }
    let a_min = peaks
        .iter()
        .flat_map(|r| r.iter().map(|p| p.deflection.abs()))
        .filter(|a| *a > 0.0)
        .fold(f64::INFINITY, f64::min);
    if set.contains(Term::Stribeck) {
        // The envelope's Coulomb level is the swing-averaged friction. Split it: the kinetic
        // level a little below it and the excess at rest half of it, with the Stribeck velocity
        // at half the peak speed of the smallest swing recorded, where the excess acts.
        let b = coef[Term::Coulomb.index()];
        coef[Term::Coulomb.index()] = 0.8 * b;
        coef[Term::Stribeck.index()] = (0.5 * b).max(1e-9);
        let a = if a_min.is_finite() { a_min } else { 1e-2 };
        coef[Term::StribeckVelocity.index()] = (0.5 * omega_n * a).max(1e-6);
    }
    if set.contains(Term::Presliding) {
        // Start with the spring's range b0/σ at a quarter of the smallest swing recorded, where
        // the period is most sensitive to σ (docs/friction.md).
        let a_min = if a_min.is_finite() { a_min } else { 1e-2 };
        coef[Term::Presliding.index()] =
            (coef[Term::Coulomb.index()] / (0.25 * a_min)).max(1e-3 * omega_n * omega_n);
    }
    coef
}

/// (decay rate 1/s, decay speed rad/s, typical amplitude rad) of the envelope rows.
fn typical_decay(rows: &[([f64; 3], f64)]) -> (f64, f64, f64) {
    if rows.is_empty() {
        return (1e-3, 1e-4, 0.1);
    }
    let n = rows.len() as f64;
    let speed = rows.iter().map(|(_, y)| y.abs()).sum::<f64>() / n;
    let amp = rows.iter().map(|(b, _)| 2.0 * b[0]).sum::<f64>() / n;
    (speed / amp.max(1e-9), speed, amp)
}

/// Start physics for `set` from the surveyed runs.
pub fn physics(surveys: &[(&AngleLog, &Survey)], set: DampingSet) -> Result<Physics, NoStart> {
    let w = omega_n(surveys)?;
    let peaks: Vec<&[Peak]> = surveys.iter().map(|(_, s)| s.peaks.as_slice()).collect();
    Ok(Physics { omega_n: w, damping: damping(&peaks, w, set), breakaway: None })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn elliptic_k_matches_table() {
        // Abramowitz & Stegun Table 17.1 via docs/checks.md §2: K(0.5) = 1.8540746773013719184.
        assert!((ellip_k(0.5) - 1.854_074_677_301_371_9).abs() < 1e-14);
        // T/T0 at 90° = 1.180340599016096 (docs/checks.md §2).
        assert!((period_ratio(std::f64::consts::FRAC_PI_2) - 1.180_340_599_016_096).abs() < 1e-13);
    }

    #[test]
    fn envelope_recovers_each_law() {
        // Synthetic envelopes following the first-order laws exactly (docs/checks.md §3–§5).
        let w = 5.0;
        let half = std::f64::consts::PI / w;
        for (set, truth) in [
            (DampingSet::from_terms(&[Term::Viscous]), [0.04, 0.0, 0.0]),
            (DampingSet::from_terms(&[Term::Coulomb]), [0.0, 0.03, 0.0]),
            (DampingSet::from_terms(&[Term::Quadratic]), [0.0, 0.0, 0.02]),
        ] {
            let mut a: f64 = 0.6;
            let mut peaks = vec![];
            for i in 0..60 {
                peaks.push(Peak { t: i as f64 * half, deflection: a });
                // Integrate the envelope ODE over one half cycle in small steps.
                for _ in 0..100 {
                    let rate = truth[0] * 0.5 * a
                        + truth[1] * 2.0 / (std::f64::consts::PI * w)
                        + truth[2] * 4.0 * w * a * a / (3.0 * std::f64::consts::PI);
                    a -= rate * half / 100.0;
                }
            }
            let c = damping(&[&peaks], w, set);
            for t in set.iter() {
                let rel = (c[t.index()] - truth[t.index()]).abs() / truth[t.index()];
                assert!(rel < 0.02, "{t}: {} vs {}", c[t.index()], truth[t.index()]);
            }
        }
    }
}
