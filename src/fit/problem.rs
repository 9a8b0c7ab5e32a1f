//! The trajectory least-squares problem: simulated minus measured angle at every sample of every
//! run, with the physics shared between runs and the release state per run.
//!
//! Parameter vector layout ([`Layout`]): `[ωn, b for each fitted term in canonical order,
//! then (θeq, θ0, ω0) for run 1, run 2, …]`. The Jacobian comes from the forward sensitivity
//! equations ([`crate::integrate::simulate_with_sensitivities`]), accumulated straight into the
//! normal equations so that no n × p matrix is stored.

use nalgebra::{DMatrix, DVector};
use rayon::prelude::*;

use crate::fit::lm::{LeastSquares, Linearization};
use crate::integrate::{self, Method, Trajectory};
use crate::model::{DampingSet, Physics, RELEASE_PARAMS, Release, Term};

/// Where each parameter sits in the vector the optimiser sees.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Layout {
    /// The fitted damping terms.
    pub damping: DampingSet,
    /// Number of runs (logs) fitted jointly.
    pub n_runs: usize,
}

impl Layout {
    /// Number of shared physics parameters (ωn and one per term).
    pub fn n_physics(&self) -> usize {
        1 + self.damping.len()
    }

    /// Total number of parameters.
    pub fn n_params(&self) -> usize {
        self.n_physics() + RELEASE_PARAMS * self.n_runs
    }

    /// Index of the first release parameter of run `k`.
    pub fn run_offset(&self, k: usize) -> usize {
        self.n_physics() + RELEASE_PARAMS * k
    }

    /// Index of the coefficient of `t`, when fitted.
    pub fn term_index(&self, t: Term) -> Option<usize> {
        self.damping.iter().position(|u| u == t).map(|i| 1 + i)
    }

    /// The physics encoded in `x` (terms not fitted are zero).
    pub fn physics(&self, x: &DVector<f64>) -> Physics {
        let mut p = Physics::undamped(x[0]);
        for (i, t) in self.damping.iter().enumerate() {
            p.damping[t.index()] = x[1 + i];
        }
        p
    }

    /// The release of run `k` encoded in `x`.
    pub fn release(&self, x: &DVector<f64>, k: usize) -> Release {
        let o = self.run_offset(k);
        Release { equilibrium: x[o], angle: x[o + 1], velocity: x[o + 2] }
    }

    /// Pack physics and releases into a parameter vector.
    pub fn pack(&self, physics: &Physics, releases: &[Release]) -> DVector<f64> {
        let mut x = DVector::zeros(self.n_params());
        x[0] = physics.omega_n;
        for (i, t) in self.damping.iter().enumerate() {
            x[1 + i] = physics.coef(t);
        }
        for (k, r) in releases.iter().enumerate() {
            let o = self.run_offset(k);
            x[o] = r.equilibrium;
            x[o + 1] = r.angle;
            x[o + 2] = r.velocity;
        }
        x
    }

    /// Machine names of the parameters, e.g. `omega_n`, `viscous`, `run1.equilibrium`.
    pub fn names(&self) -> Vec<String> {
        let mut v = vec!["omega_n".to_string()];
        v.extend(self.damping.iter().map(|t| t.name().to_string()));
        for k in 0..self.n_runs {
            for n in ["equilibrium", "initial_angle", "initial_velocity"] {
                v.push(format!("run{}.{}", k + 1, n));
            }
        }
        v
    }

    /// Lower and upper bounds: ωn > 0, damping ≥ 0, release free. The pre-sliding stiffness
    /// stays > 0: σ = 0 would mean the plain Coulomb slider (the σ → ∞ limit), not its σ → 0+
    /// limit (no friction), so the bound keeps the model continuous.
    pub fn bounds(&self) -> (DVector<f64>, DVector<f64>) {
        let n = self.n_params();
        let mut lo = DVector::from_element(n, f64::NEG_INFINITY);
        let hi = DVector::from_element(n, f64::INFINITY);
        lo[0] = 1e-9;
        for i in 1..self.n_physics() {
            lo[i] = 0.0;
        }
        if let Some(k) = self.term_index(Term::Presliding) {
            lo[k] = 1e-9;
        }
        // The Stribeck velocity stays > 0 (vs → 0 is no Stribeck excess at all, which the
        // excess's own bound of zero already expresses).
        if let Some(k) = self.term_index(Term::StribeckVelocity) {
            lo[k] = 1e-6;
        }
        (lo, hi)
    }
}

/// One run's samples (possibly a leading window of the log) and its integration step.
#[derive(Clone, Copy, Debug)]
pub struct RunData<'a> {
    /// Sample times [s].
    pub times: &'a [f64],
    /// Measured angles [rad].
    pub angles: &'a [f64],
    /// Weight of each sample's squared residual (see [`repeat_weights`]).
    pub weights: &'a [f64],
    /// Longest RK4 sub-step [s].
    pub max_step: f64,
}

/// Weights that count a run of identical consecutive readings as one observation.
///
/// An encoder (or a logger writing few digits) that reports the same value for L samples in a
/// row, while the article dwells near a turning point or rests, gives L errors that are one
/// and the same quantisation error, not L independent ones. Weighting each by 1/L keeps a
/// resting tail or a slow turning point from outvoting the swing and from shrinking the
/// intervals. Noisy readings never repeat exactly, so their weights are all 1.
pub fn repeat_weights(angles: &[f64]) -> Vec<f64> {
    let mut w = vec![1.0; angles.len()];
    let mut start = 0;
    for i in 1..=angles.len() {
        if i == angles.len() || angles[i].to_bits() != angles[start].to_bits() {
            let len = (i - start) as f64;
            for v in &mut w[start..i] {
                *v = 1.0 / len;
            }
            start = i;
        }
    }
    w
}

/// Most local parameters of one run: ωn, every damping term, θeq, θ0, ω0.
const MAX_LOCAL: usize = 1 + crate::model::N_TERMS + RELEASE_PARAMS;

/// One run's share of the normal equations: (RSS, JᵀJ, Jᵀr) over its local parameters.
type RunNormal = (f64, DMatrix<f64>, DVector<f64>);

/// The least-squares problem over several runs.
#[derive(Clone, Debug)]
pub struct TrajectoryProblem<'a> {
    /// Parameter layout.
    pub layout: Layout,
    /// The runs, in layout order.
    pub runs: Vec<RunData<'a>>,
}

impl TrajectoryProblem<'_> {
    /// Simulated trajectory of run `k` at parameters `x`.
    pub fn trajectory(&self, x: &DVector<f64>, k: usize) -> Result<Trajectory, String> {
        let run = &self.runs[k];
        integrate::simulate(
            &self.layout.physics(x),
            &self.layout.release(x, k),
            run.times,
            Method::Rk4 { max_step: run.max_step },
        )
        .map_err(|e| e.to_string())
    }
}

impl LeastSquares for TrajectoryProblem<'_> {
    fn n_params(&self) -> usize {
        self.layout.n_params()
    }

    fn n_obs(&self) -> usize {
        self.runs.iter().map(|r| r.times.len()).sum()
    }

    fn cost(&self, x: &DVector<f64>) -> Result<f64, String> {
        let physics = self.layout.physics(x);
        let per_run: Result<Vec<f64>, String> = (0..self.runs.len())
            .into_par_iter()
            .map(|k| {
                let run = &self.runs[k];
                let mut rss = 0.0;
                integrate::for_each_state(
                    &physics,
                    &self.layout.release(x, k),
                    run.times,
                    run.max_step,
                    |i, m, _| {
                        let r = m - run.angles[i];
                        rss += run.weights[i] * r * r;
                    },
                )
                .map_err(|e| e.to_string())?;
                Ok(rss)
            })
            .collect();
        let rss: f64 = per_run?.iter().sum();
        if rss.is_finite() { Ok(rss) } else { Err("residuals are not finite".into()) }
    }

    fn linearize(&self, x: &DVector<f64>) -> Result<Linearization, String> {
        let layout = self.layout;
        let physics = layout.physics(x);
        let np_phys = layout.n_physics();
        let p_loc = np_phys + RELEASE_PARAMS;
        let parts: Result<Vec<RunNormal>, String> = (0..self.runs.len())
            .into_par_iter()
            .map(|k| {
                let run = &self.runs[k];
                let mut jtj = DMatrix::<f64>::zeros(p_loc, p_loc);
                let mut jtr = DVector::<f64>::zeros(p_loc);
                let mut rss = 0.0;
                // Accumulate the upper triangle in a fixed buffer as each sample's sensitivities
                // come out of the integrator: no n × p matrix is stored, and the per-sample loop
                // has no bounds checks or heap access (p_loc ≤ MAX_LOCAL).
                let mut acc = [[0.0f64; MAX_LOCAL]; MAX_LOCAL];
                let mut b_acc = [0.0f64; MAX_LOCAL];
                integrate::for_each_sensitivity(
                    &physics,
                    &layout.release(x, k),
                    run.times,
                    layout.damping,
                    run.max_step,
                    |i, m, _, g| {
                        let (y, w) = (run.angles[i], run.weights[i]);
                        let r = m - y;
                        rss += w * r * r;
                        let mut gl = [0.0f64; MAX_LOCAL];
                        gl[..p_loc].copy_from_slice(g);
                        for a in 0..MAX_LOCAL.min(p_loc) {
                            let ga = w * gl[a];
                            b_acc[a] += ga * r;
                            for b in a..MAX_LOCAL {
                                acc[a][b] += ga * gl[b];
                            }
                        }
                    },
                )
                .map_err(|e| e.to_string())?;
                for a in 0..p_loc {
                    jtr[a] = b_acc[a];
                    for b in a..p_loc {
                        jtj[(a, b)] = acc[a][b];
                        jtj[(b, a)] = acc[a][b];
                    }
                }
                Ok((rss, jtj, jtr))
            })
            .collect();
        let n = layout.n_params();
        let mut jtj = DMatrix::<f64>::zeros(n, n);
        let mut jtr = DVector::zeros(n);
        let mut rss = 0.0;
        for (k, (r, a, b)) in parts?.into_iter().enumerate() {
            rss += r;
            // Local index → global index: physics first, then this run's release block.
            let map = |i: usize| if i < np_phys { i } else { layout.run_offset(k) + (i - np_phys) };
            for i in 0..p_loc {
                jtr[map(i)] += b[i];
                for j in 0..p_loc {
                    jtj[(map(i), map(j))] += a[(i, j)];
                }
            }
        }
        if !rss.is_finite() || jtj.iter().any(|v: &f64| !v.is_finite()) {
            return Err("model or sensitivities are not finite at these parameters".into());
        }
        Ok(Linearization { rss, jtj, jtr })
    }
}
