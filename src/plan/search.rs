//! Design search: the least test effort whose predicted uncertainties meet every target.
//!
//! Effort is counted in seconds of rig time: each release costs its record length plus a fixed
//! set-up time (`release_cost_s`: raising, holding and releasing the article). For a number of
//! releases n = 1…`max_releases` and a record length T, the best release angles are found by
//! Nelder–Mead (argmin's `NelderMead` run by its `Executor`) on the worst target ratio
//! max_j (u_j/|x_j|) / target_j, over a smooth bounded map of the angles into
//! [`min_angle`, `max_angle`]. More samples never lose information, so the best ratio falls with
//! T and the shortest feasible T is found by bisection; the design of least effort over n wins.
//! Rate, noise and encoder stay as given. When no design within the bounds meets the targets,
//! the result names the term that blocks it (the worst ratio at the largest design tried).
//!
//! Why argmin: the search is derivative-free and bounded, over few variables, and every cost is
//! a full prediction ([`super::predict`]); argmin's Nelder–Mead on `Vec<f64>` (argmin-math's
//! `vec` feature) does exactly this without a second linear-algebra crate.

use argmin::core::{CostFunction, Error as ArgminError, Executor, State};
use argmin::solver::neldermead::NelderMead;

use super::{Design, Plan, PlanError, Prediction, Record, predict};

/// A target: the relative standard uncertainty a coefficient must reach.
#[derive(Clone, Debug, PartialEq)]
pub struct Target {
    /// Key: `omega_n`, a term name, or (with mass data) a physical key such as `inertia_pivot`.
    pub key: String,
    /// Largest acceptable u/|value| (e.g. 0.01 for 1 %).
    pub relative: f64,
}

/// Parse `viscous=1%,quadratic=0.05` into targets.
pub fn parse_targets(s: &str) -> Result<Vec<Target>, String> {
    let mut out = Vec::new();
    for part in s.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        let (k, v) = part
            .split_once('=')
            .ok_or_else(|| format!("target \"{part}\": expected KEY=VALUE, e.g. viscous=1%"))?;
        let v = v.trim();
        let (num, scale) = match v.strip_suffix('%') {
            Some(n) => (n.trim(), 0.01),
            None => (v, 1.0),
        };
        let x: f64 = num.parse().map_err(|_| {
            format!("target \"{part}\": expected a relative uncertainty such as 1% or 0.01")
        })?;
        let rel = x * scale;
        if !(rel.is_finite() && rel > 0.0) {
            return Err(format!("target \"{part}\": expected a positive relative uncertainty"));
        }
        out.push(Target { key: k.trim().to_string(), relative: rel });
    }
    if out.is_empty() {
        return Err("no target: expected KEY=VALUE[,KEY=VALUE…], e.g. viscous=1%".into());
    }
    Ok(out)
}

/// The bounds of the search.
#[derive(Clone, Debug, PartialEq)]
pub struct Bounds {
    /// Most releases.
    pub max_releases: usize,
    /// Smallest release angle [rad].
    pub min_angle: f64,
    /// Largest release angle [rad].
    pub max_angle: f64,
    /// Longest record per release [s].
    pub max_record_s: f64,
    /// Set-up time counted for each release [s].
    pub release_cost_s: f64,
}

/// The design found.
#[derive(Clone, Debug, PartialEq)]
pub struct Found {
    /// The design (angles, record; rate, noise and encoder as given).
    pub design: Design,
    /// Its prediction.
    pub prediction: Prediction,
    /// Effort n·(T + set-up) [s].
    pub effort_s: f64,
    /// Worst target ratio (≤ 1).
    pub worst_ratio: f64,
}

/// What blocks the targets when no design within the bounds meets them.
#[derive(Clone, Debug, PartialEq)]
pub struct Blocked {
    /// The term with the worst ratio at the largest design tried.
    pub key: String,
    /// Its ratio u/|x| / target there.
    pub ratio: f64,
    /// Its predicted relative uncertainty there.
    pub relative: f64,
    /// The largest design tried (most releases, longest record, best angles).
    pub design: Design,
}

/// Result of a search.
#[derive(Clone, Debug, PartialEq)]
pub enum SearchOutcome {
    /// The least-effort design that meets every target.
    Found(Box<Found>),
    /// No design within the bounds meets the targets.
    Blocked(Box<Blocked>),
}

/// Why a search could not run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SearchError {
    /// Bad bounds or targets.
    #[error("{0}")]
    Input(String),
    /// The base plan is refused.
    #[error(transparent)]
    Plan(#[from] PlanError),
}

/// Relative uncertainty of `key` in `pred`.
fn relative_of(pred: &Prediction, key: &str) -> Option<f64> {
    if let Some(c) = pred.get(key) {
        return Some(c.relative);
    }
    pred.physical.as_ref()?.budgets.iter().find(|b| b.key == key).map(|b| b.u_c / b.value.abs())
}

/// Worst ratio over the targets and the key that has it.
fn worst(pred: &Prediction, targets: &[Target]) -> (f64, String, f64) {
    let mut out = (0.0, String::new(), 0.0);
    for t in targets {
        let rel = relative_of(pred, &t.key).unwrap_or(f64::INFINITY);
        let r = rel / t.relative;
        if r > out.0 || out.1.is_empty() {
            out = (r, t.key.clone(), rel);
        }
    }
    out
}

/// Cost of a cost evaluation that fails (a singular design): far above any feasible ratio.
const FAILED: f64 = 1e6;

struct AngleCost<'a> {
    base: &'a Plan,
    targets: &'a [Target],
    record: f64,
    lo: f64,
    hi: f64,
}

impl AngleCost<'_> {
    /// The smooth bounded map of the search variables onto angles in [lo, hi].
    fn angles(&self, x: &[f64]) -> Vec<f64> {
        x.iter().map(|v| self.lo + (self.hi - self.lo) * v.sin().powi(2)).collect()
    }

    fn design(&self, x: &[f64]) -> Design {
        Design {
            releases: self.angles(x),
            record: Record::Seconds(self.record),
            ..self.base.design.clone()
        }
    }

    fn evaluate(&self, x: &[f64]) -> Option<(f64, Prediction)> {
        let plan = Plan { design: self.design(x), ..self.base.clone() };
        let pred = predict(&plan).ok()?;
        let (r, _, _) = worst(&pred, self.targets);
        r.is_finite().then_some((r, pred))
    }
}

impl CostFunction for AngleCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;

    fn cost(&self, x: &Vec<f64>) -> Result<f64, ArgminError> {
        Ok(self.evaluate(x).map_or(FAILED, |(r, _)| r.ln()))
    }
}

/// Inverse of the angle map for a start angle.
fn variable_of(angle: f64, lo: f64, hi: f64) -> f64 {
    (((angle - lo) / (hi - lo)).clamp(0.0, 1.0)).sqrt().asin()
}

/// The best angles for `n` releases and record `record`, from `start` (search variables).
fn best_angles(
    base: &Plan,
    targets: &[Target],
    bounds: &Bounds,
    record: f64,
    start: &[f64],
) -> Option<(Vec<f64>, f64, Prediction)> {
    let cost = AngleCost { base, targets, record, lo: bounds.min_angle, hi: bounds.max_angle };
    let n = start.len();
    let mut simplex = vec![start.to_vec()];
    for i in 0..n {
        let mut v = start.to_vec();
        v[i] += if v[i] > 0.8 { -0.35 } else { 0.35 };
        simplex.push(v);
    }
    let solver = NelderMead::new(simplex).with_sd_tolerance(1e-3).ok()?;
    let result = Executor::new(cost, solver).configure(|s| s.max_iters(40)).run().ok()?;
    let x = result.state().get_best_param()?.clone();
    let cost = AngleCost { base, targets, record, lo: bounds.min_angle, hi: bounds.max_angle };
    let (r, pred) = cost.evaluate(&x)?;
    Some((x, r, pred))
}

/// Start variables for `n` releases: angles spread from the largest down.
fn spread(n: usize, bounds: &Bounds) -> Vec<f64> {
    (0..n)
        .map(|i| {
            let f = if n == 1 { 1.0 } else { 1.0 - 0.75 * i as f64 / (n - 1) as f64 };
            let a = bounds.min_angle + f * 0.95 * (bounds.max_angle - bounds.min_angle);
            variable_of(a, bounds.min_angle, bounds.max_angle)
        })
        .collect()
}

/// Search the least-effort design for `targets`. `base` gives the dynamics, the terms, the
/// rate, noise and encoder and any mass data; its release angles and record are ignored.
pub fn search(
    base: &Plan,
    targets: &[Target],
    bounds: &Bounds,
) -> Result<SearchOutcome, SearchError> {
    let period = std::f64::consts::TAU / base.physics.omega_n;
    if bounds.max_releases == 0 {
        return Err(SearchError::Input("the most releases must be at least 1".into()));
    }
    let (lo, hi) = (bounds.min_angle, bounds.max_angle);
    if !(lo > 0.0 && hi > lo && hi < std::f64::consts::PI) {
        return Err(SearchError::Input(format!(
            "release angle bounds {} to {} deg: expected 0 < smallest < largest < 180",
            lo.to_degrees(),
            hi.to_degrees()
        )));
    }
    let min_record = 2.0 * period;
    if !(bounds.max_record_s.is_finite() && bounds.max_record_s >= min_record) {
        return Err(SearchError::Input(format!(
            "longest record {} s: expected at least two periods ({:.3} s)",
            bounds.max_record_s, min_record
        )));
    }
    if !(bounds.release_cost_s.is_finite() && bounds.release_cost_s >= 0.0) {
        return Err(SearchError::Input(
            "release set-up time: expected a non-negative time in s".into(),
        ));
    }
    // Refuse a base plan that is impossible whatever the angles and record (noise, rate, terms).
    let probe = Plan {
        design: Design {
            releases: vec![0.5 * (lo + hi)],
            record: Record::Seconds(bounds.max_record_s),
            ..base.design.clone()
        },
        ..base.clone()
    };
    super::validate(&probe)?;
    for t in targets {
        let known = t.key == "omega_n"
            || base.damping.iter().any(|d| d.name() == t.key)
            || (base.article.is_some()
                && crate::physical::budget::coefficients(base.damping)
                    .into_iter()
                    .any(|c| crate::physical::budget::coefficient_key(c) == t.key));
        if !known {
            return Err(SearchError::Input(format!(
                "target \"{}\": not a coefficient of this plan; expected omega_n, {}{}",
                t.key,
                base.damping.names().join(", "),
                if base.article.is_some() {
                    ", or a physical key such as inertia_pivot"
                } else {
                    " (physical keys need --mass and --pivot-to-cg)"
                }
            )));
        }
    }
    let mut best: Option<Found> = None;
    let mut blocked: Option<Blocked> = None;
    for n in 1..=bounds.max_releases {
        // A design with n releases is only better if n (T + set-up) beats the best so far.
        let mut t_hi = bounds.max_record_s;
        if let Some(b) = &best {
            t_hi = t_hi.min(b.effort_s / n as f64 - bounds.release_cost_s);
        }
        if t_hi < min_record {
            continue;
        }
        let start = spread(n, bounds);
        let Some((x_hi, r_hi, pred_hi)) = best_angles(base, targets, bounds, t_hi, &start) else {
            continue;
        };
        if r_hi > 1.0 {
            if best.is_none() && n == bounds.max_releases {
                let (_, key, rel) = worst(&pred_hi, targets);
                let cost = AngleCost { base, targets, record: t_hi, lo, hi };
                blocked =
                    Some(Blocked { key, ratio: r_hi, relative: rel, design: cost.design(&x_hi) });
            }
            continue;
        }
        // Bisection on log T: the shortest record whose best angles meet the targets.
        let (mut a, mut b) = (min_record, t_hi);
        let mut found = (x_hi, r_hi, pred_hi, t_hi);
        for _ in 0..8 {
            let mid = (a * b).sqrt();
            match best_angles(base, targets, bounds, mid, &found.0) {
                Some((x, r, p)) if r <= 1.0 => {
                    found = (x, r, p, mid);
                    b = mid;
                }
                _ => a = mid,
            }
            if b / a < 1.02 {
                break;
            }
        }
        let (x, r, pred, t) = found;
        let effort = n as f64 * (t + bounds.release_cost_s);
        if best.as_ref().is_none_or(|f| effort < f.effort_s) {
            let cost = AngleCost { base, targets, record: t, lo, hi };
            best = Some(Found {
                design: cost.design(&x),
                prediction: pred,
                effort_s: effort,
                worst_ratio: r,
            });
        }
    }
    match (best, blocked) {
        (Some(f), _) => Ok(SearchOutcome::Found(Box::new(f))),
        (None, Some(b)) => Ok(SearchOutcome::Blocked(Box::new(b))),
        (None, None) => Err(SearchError::Input(
            "no design within the bounds could be evaluated: widen the angle or record bounds"
                .into(),
        )),
    }
}
