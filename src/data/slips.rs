//! Time-base slips: samples the logger stamped one sample interval off.
//!
//! Some loggers read the sensor on one clock and stamp it on another. When the two beat, a
//! reading is now and then taken one interval late or early: in fast motion the angle step into
//! it is doubled and the next is zero (or zero then doubled), or, when the loss is never made
//! up, every later sample is one interval off (a phase jump). A model fitted to such a log
//! shows structured residuals that a damping comparison then blames on friction.
//!
//! # Method
//! Steps are compared with the motion: with dᵢ = θᵢ₊₁ − θᵢ and Δtᵢ the logged interval, the
//! rate rᵢ = dᵢ/Δtᵢ is predicted from the median of the rates two and three steps before and
//! after, and the ratio qᵢ = rᵢ / r̂ᵢ classified as 0, 1 or 2 where the predicted step is at least
//! [`MIN_STEP_SIGMAS`] step noises (so only fast motion is judged, where a slip is unmistakable)
//! and the rate is steady there (the neighbours agree within 20 %):
//! - q ≈ 2 then q ≈ 0: the reading at i+1 was taken one interval late (a *doubled* step);
//! - q ≈ 0 then q ≈ 2: the reading at i+1 repeats the one before it (a *repeated* sample);
//! - q ≈ 2 alone: the logger skipped a reading for good (a *phase jump*, later samples late).
//! - q ≈ 0 alone: a repeated reading never made up (later samples early).
//!
//! Re-timing ([`retime`]) gives each sample its true time on the logger's grid: a doubled or
//! repeated sample gets its neighbour's time and the duplicate is dropped (the two readings are
//! of the same instant); after a phase jump every later sample is moved by one interval. The
//! period of the slips is the median spacing of bursts (slips closer than 5 intervals apart
//! count as one burst).

use super::{AngleLog, LoadError};

/// A step is judged only when the predicted step is this many times the noise of a step.
pub const MIN_STEP_SIGMAS: f64 = 12.0;

/// The kind of a slip.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SlipKind {
    /// The step into the sample is doubled and the next is zero: read one interval late.
    Doubled,
    /// The step into the sample is zero and the next is doubled: read one interval early.
    Repeated,
    /// A doubled step never made up: this and every later sample one interval late.
    PhaseLate,
    /// A zero step never made up: this and every later sample one interval early.
    PhaseEarly,
}

impl SlipKind {
    /// Name in reports.
    pub fn name(self) -> &'static str {
        match self {
            SlipKind::Doubled => "doubled step",
            SlipKind::Repeated => "repeated sample",
            SlipKind::PhaseLate => "phase jump (late)",
            SlipKind::PhaseEarly => "phase jump (early)",
        }
    }
}

/// One slip.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Slip {
    /// Index of the mis-stamped sample.
    pub index: usize,
    /// Its logged time [s].
    pub t: f64,
    /// What happened.
    pub kind: SlipKind,
}

/// The slips found in a log.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Slips {
    /// Every slip, in time order.
    pub slips: Vec<Slip>,
    /// Steps that could be judged (fast, steady motion).
    pub judged_steps: usize,
    /// Bursts of slips (slips within 5 intervals count as one burst).
    pub bursts: usize,
    /// Median time between bursts [s], with at least three bursts.
    pub period_s: Option<f64>,
}

impl Slips {
    /// Number of slips.
    pub fn count(&self) -> usize {
        self.slips.len()
    }
    /// How many of one kind.
    pub fn count_of(&self, kind: SlipKind) -> usize {
        self.slips.iter().filter(|s| s.kind == kind).count()
    }
}

/// Find the slips of a log whose noise floor is `noise` [rad] (see the module docs).
pub fn detect(log: &AngleLog, noise: f64) -> Slips {
    let t = log.times();
    let y = log.angles();
    let n = t.len();
    if n < 10 {
        return Slips::default();
    }
    let step_noise = (2.0f64.sqrt() * noise).max(log.angle_step().unwrap_or(0.0)).max(1e-15);
    let dt: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    let rate: Vec<f64> = y.windows(2).zip(&dt).map(|(w, d)| (w[1] - w[0]) / d).collect();
    let m = rate.len();
    // Ratio of each step's rate to the one its neighbours predict, where judgeable.
    let mut q: Vec<Option<f64>> = vec![None; m];
    let mut judged = 0;
    for i in 3..m.saturating_sub(3) {
        let nb = [rate[i - 3], rate[i - 2], rate[i + 2], rate[i + 3]];
        let mut s = nb;
        s.sort_by(f64::total_cmp);
        let pred = 0.5 * (s[1] + s[2]);
        if pred == 0.0 || !pred.is_finite() {
            continue;
        }
        let steady = nb.iter().all(|r| (r / pred - 1.0).abs() < 0.2);
        if !steady || (pred * dt[i]).abs() < MIN_STEP_SIGMAS * step_noise {
            continue;
        }
        judged += 1;
        q[i] = Some(rate[i] / pred);
    }
    let near = |v: Option<f64>, target: f64| v.is_some_and(|x| (x - target).abs() < 0.3);
    let mut slips = Vec::new();
    let mut i = 3;
    while i < m {
        if near(q[i], 2.0) {
            if near(q.get(i + 1).copied().flatten(), 0.0) {
                slips.push(Slip { index: i + 1, t: t[i + 1], kind: SlipKind::Doubled });
                i += 2;
                continue;
            }
            if q.get(i + 1).copied().flatten().is_some() {
                slips.push(Slip { index: i + 1, t: t[i + 1], kind: SlipKind::PhaseLate });
            }
        } else if near(q[i], 0.0) {
            if near(q.get(i + 1).copied().flatten(), 2.0) {
                slips.push(Slip { index: i + 1, t: t[i + 1], kind: SlipKind::Repeated });
                i += 2;
                continue;
            }
            if q.get(i + 1).copied().flatten().is_some() {
                slips.push(Slip { index: i + 1, t: t[i + 1], kind: SlipKind::PhaseEarly });
            }
        }
        i += 1;
    }
    let med_dt = median(dt.clone());
    let mut burst_starts: Vec<f64> = Vec::new();
    let mut last: Option<f64> = None;
    for s in &slips {
        if last.is_none_or(|l| s.t - l > 5.0 * med_dt) {
            burst_starts.push(s.t);
        }
        last = Some(s.t);
    }
    let period_s = (burst_starts.len() >= 3)
        .then(|| median(burst_starts.windows(2).map(|w| w[1] - w[0]).collect()))
        .filter(|p| p.is_finite() && *p > 0.0);
    Slips { slips, judged_steps: judged, bursts: burst_starts.len(), period_s }
}

/// The log with every slip re-timed (see the module docs): doubled and repeated samples are
/// dropped (their reading is of the neighbour's instant), and after a phase jump every later
/// sample's time moves by one median interval. Returns the log unchanged when there are no slips.
pub fn retime(log: &AngleLog, slips: &Slips) -> Result<AngleLog, LoadError> {
    if slips.slips.is_empty() {
        return Ok(log.clone());
    }
    let t = log.times();
    let y = log.angles();
    let med_dt = median(t.windows(2).map(|w| w[1] - w[0]).collect());
    let mut drop = vec![false; t.len()];
    let mut shift = vec![0.0f64; t.len()];
    for s in &slips.slips {
        match s.kind {
            SlipKind::Doubled | SlipKind::Repeated => drop[s.index] = true,
            SlipKind::PhaseLate => shift[s.index] += med_dt,
            SlipKind::PhaseEarly => shift[s.index] -= med_dt,
        }
    }
    let mut times = Vec::with_capacity(t.len());
    let mut angles = Vec::with_capacity(t.len());
    let mut acc = 0.0;
    for i in 0..t.len() {
        acc += shift[i];
        if drop[i] {
            continue;
        }
        let ti = t[i] + acc;
        if times.last().is_some_and(|&p: &f64| ti <= p) {
            continue;
        }
        times.push(ti);
        angles.push(y[i]);
    }
    let mut out = AngleLog::from_samples(log.source(), times, angles)?;
    out.angle_step = log.angle_step();
    out.dropped_lines = log.dropped_lines().to_vec();
    Ok(out)
}

fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    let mid = v.len() / 2;
    let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    *m
}

/// The slips in words: counts by kind, bursts and their period, first times.
pub fn describe(s: &Slips) -> String {
    let kinds: Vec<String> =
        [SlipKind::Doubled, SlipKind::Repeated, SlipKind::PhaseLate, SlipKind::PhaseEarly]
            .iter()
            .filter(|&&k| s.count_of(k) > 0)
            .map(|&k| format!("{} {}", s.count_of(k), k.name()))
            .collect();
    let mut out = format!(
        "{} in {} burst{}",
        kinds.join(", "),
        s.bursts,
        if s.bursts == 1 { "" } else { "s" }
    );
    if let Some(p) = s.period_s {
        out.push_str(&format!(" every {p:.2} s"));
    }
    let first: Vec<String> = s.slips.iter().take(3).map(|x| format!("{:.3} s", x.t)).collect();
    if !first.is_empty() {
        out.push_str(&format!(", first at {}", first.join(", ")));
    }
    out
}
