//! Moving-block bootstrap intervals for a finished fit (`--bootstrap N`).
//!
//! Each replicate is the fitted model at the fitted samples plus the fit's own residuals
//! resampled in blocks ([`uncertainty::BlockBootstrap`], per run, with that run's block length),
//! refitted from the fit's optimum (a warm start: no survey, no search). Only the samples the fit
//! used are resampled, so an encoder log whose unresolved tail was cut is bootstrapped over the
//! part that was fitted. Every replicate has its own seed, derived from the user's, so the result
//! does not depend on the thread count. The standard uncertainty reported is the larger of the
//! bootstrap's and the fit's own: resampling can only widen. A replicate that fails keeps its
//! reason; when too few succeed, the error says how many and why the first failed.

use nalgebra::DVector;
use rayon::prelude::*;

use crate::data::AngleLog;
use crate::data::survey::Survey;
use crate::fit::{FitError, FitOptions, FitOutcome, fit_surveyed, set_intervals, uncertainty};
use crate::model::Release;

/// Replace the intervals of `out` by moving-block bootstrap intervals from `b` refits.
pub fn apply(
    logs: &[AngleLog],
    surveys: &[Survey],
    mut out: FitOutcome,
    b: usize,
    seed: u64,
) -> Result<FitOutcome, FitError> {
    let p = out.x.len();
    let std = DVector::from_fn(p, |i, _| out.covariance[(i, i)].max(0.0).sqrt());
    let cov = uncertainty::Covariance {
        n: out.n_independent,
        dof: out.dof,
        s2: out.rss / out.dof.max(1) as f64,
        cov: out.covariance.clone(),
        std,
        corr: out.correlation.clone(),
        condition: out.condition,
    };
    let damping = out.damping;
    let releases: Vec<Release> = out
        .runs
        .iter()
        .map(|r| Release {
            equilibrium: r.equilibrium.value,
            angle: r.initial_angle.value,
            velocity: r.initial_velocity.value,
        })
        .collect();
    let physics = out.physics;
    let blocks: Vec<usize> =
        out.runs.iter().map(|r| uncertainty::block_length_rule(&r.residuals)).collect();
    let options = FitOptions { damping, bootstrap: None, seed, ..FitOptions::default() };
    let replicates: Vec<Result<DVector<f64>, String>> = (0..b)
        .into_par_iter()
        .map(|i| {
            let s = seed.wrapping_mul(0x9E37_79B9_7F4A_7C15).wrapping_add(i as u64);
            let synthetic: Vec<AngleLog> = logs
                .iter()
                .zip(&out.runs)
                .zip(&blocks)
                .enumerate()
                .map(|(k, ((log, run), &block))| {
                    let n = run.residuals.len();
                    let mut boot = uncertainty::BlockBootstrap::new(
                        &run.residuals,
                        block.clamp(1, n.max(1)),
                        s.wrapping_add(7919 * k as u64),
                    )
                    .map_err(|e| format!("{}: {e}", log.source()))?;
                    let e = boot.sample();
                    let y: Vec<f64> =
                        run.model_angle.iter().zip(e.iter()).map(|(m, r)| m - r).collect();
                    AngleLog::from_samples(log.source(), log.times()[..n].to_vec(), y)
                        .map_err(|e| format!("{}: {e}", log.source()))
                })
                .collect::<Result<_, String>>()?;
            fit_surveyed(&synthetic, surveys, &options, Some((&physics, &releases)))
                .map(|f| f.x)
                .map_err(|e| e.to_string())
        })
        .collect();
    let failures: Vec<(usize, &String)> = replicates
        .iter()
        .enumerate()
        .filter_map(|(i, r)| r.as_ref().err().map(|e| (i, e)))
        .collect();
    let ok: Vec<DVector<f64>> =
        replicates.iter().filter_map(|r| r.as_ref().ok().cloned()).collect();
    if ok.len() < b.div_ceil(2).max(2) {
        let why = failures
            .first()
            .map(|(i, e)| format!("; refit {} failed: {e}", i + 1))
            .unwrap_or_default();
        return Err(FitError::NotConverged {
            damping,
            reason: format!("only {} of {} bootstrap refits converged{why}", ok.len(), b),
        });
    }
    let block = blocks.iter().copied().max().unwrap_or(1);
    let mut set = uncertainty::bootstrap_intervals(&out.x, &ok, cov.dof as f64, block, seed)
        .map_err(|e| FitError::NotConverged { damping, reason: e.to_string() })?;
    let t = set.coverage_factor;
    // Never narrower than the fit's own (plain or HAC) standard uncertainty.
    for (iv, a) in set.params.iter_mut().zip(cov.std.iter()) {
        if iv.std < *a {
            iv.std = *a;
            iv.lo = iv.value - t * a;
            iv.hi = iv.value + t * a;
        }
    }
    if !failures.is_empty() {
        out.notes.push(format!(
            "{} of {b} bootstrap refits failed and were left out (refit {}: {})",
            failures.len(),
            failures[0].0 + 1,
            failures[0].1
        ));
    }
    set_intervals(&mut out, &cov, &set);
    Ok(out)
}
