//! The comparison document `swingfit.compare.v2` (`compare --json`): every candidate damping set
//! with its evidence, the verdict, and the measured and model peaks the plots are drawn from.
//!
//! ## Wire format `swingfit.compare.v2`
//! ```text
//! { "schema": "swingfit.compare.v2", "best": [..] | null, "explained", "indistinguishable": [[..]],
//!   "candidates": [ { "damping": [..], "status": "ok" | "failed",
//!                     "error": { "kind": "rejected", "message" } | null, "rss", "aic", "bic",
//!                     "ljung_box_p", "rms_residual", "noise_ratio", "all_significant",
//!                     "explains_decay", "adequacy"?, "normalized"?, "added_terms": [..],
//!                     "model_peaks": [[[t, deflection]]] } ],
//!   "verdict", "selected", "envelope_laws": [[law, rms]], "measured_peaks", "period_points",
//!   "period_curve" }
//! ```
//! Units: rss rad², rms_residual rad, peaks [s, rad], period points [rad, s]. v1 called the
//! failure `"reason": "…"` (absent when ok).

use serde::{Deserialize, Serialize};

use super::fit::{AdequacyDoc, Normalized, adequacy_doc, fit_doc};
use super::{Failure, FailureKind, Status};

/// Schema tag of the comparison JSON.
pub const COMPARE_SCHEMA: &str = "swingfit.compare.v2";

/// One candidate on the wire.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct CandidateDoc {
    /// Damping set.
    pub damping: Vec<String>,
    /// `ok` or `failed`.
    pub status: Status,
    /// Why the fit failed (null when it did not).
    pub error: Option<Failure>,
    /// RSS [rad²].
    #[serde(deserialize_with = "super::real")]
    pub rss: f64,
    /// Gaussian AIC.
    #[serde(deserialize_with = "super::real")]
    pub aic: f64,
    /// Gaussian BIC.
    #[serde(deserialize_with = "super::real")]
    pub bic: f64,
    /// Smallest Ljung–Box p over runs.
    #[serde(deserialize_with = "super::real")]
    pub ljung_box_p: f64,
    /// RMS residual [rad].
    #[serde(deserialize_with = "super::real")]
    pub rms_residual: f64,
    /// Largest RMS residual / noise floor over runs.
    #[serde(deserialize_with = "super::real")]
    pub noise_ratio: f64,
    /// Every term's 95 % interval excludes zero.
    pub all_significant: bool,
    /// Explains the decay (adequacy `explained`).
    pub explains_decay: bool,
    /// The candidate fit's adequacy verdict (absent when it failed).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub adequacy: Option<AdequacyDoc>,
    /// Per-unit-inertia estimates.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub normalized: Option<Normalized>,
    /// Wald tests of the term added to each nested candidate with one term fewer.
    pub added_terms: Vec<AddedTermDoc>,
    /// Model half-cycle peaks per run: [t s, deflection rad].
    pub model_peaks: Vec<Vec<[f64; 2]>>,
}

/// One nested F-test.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct AddedTermDoc {
    /// The smaller set.
    pub from: Vec<String>,
    /// The term added.
    pub term: String,
    /// F statistic.
    #[serde(deserialize_with = "super::real")]
    pub f: f64,
    /// Upper-tail p-value.
    #[serde(deserialize_with = "super::real")]
    pub p_value: f64,
}

/// The comparison document.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct CompareDoc {
    /// `swingfit.compare.v2`.
    pub schema: String,
    /// The chosen set; null when no candidate explains the decay.
    pub best: Option<Vec<String>>,
    /// Whether a candidate explains the decay.
    pub explained: bool,
    /// Sets indistinguishable from the best.
    pub indistinguishable: Vec<Vec<String>>,
    /// Ranked candidates.
    pub candidates: Vec<CandidateDoc>,
    /// Verdict in words.
    pub verdict: String,
    /// The set `fit` and `sheet` take by default: the best, or the least bad when none explains.
    pub selected: Option<Vec<String>>,
    /// Envelope laws on the measured peaks with RMS misfit [rad], best first.
    pub envelope_laws: Vec<(String, f64)>,
    /// Measured half-cycle peaks per run: [t s, deflection rad].
    pub measured_peaks: Vec<Vec<[f64; 2]>>,
    /// Measured period per cycle per run: [amplitude rad, period s].
    pub period_points: Vec<Vec<[f64; 2]>>,
    /// Model period against amplitude: [amplitude rad, period s].
    pub period_curve: Vec<[f64; 2]>,
}

/// Build the comparison document.
pub fn compare_doc(c: &crate::fit::compare::Comparison) -> CompareDoc {
    let peaks = |v: &Vec<Vec<crate::data::survey::Peak>>| -> Vec<Vec<[f64; 2]>> {
        v.iter().map(|r| r.iter().map(|p| [p.t, p.deflection]).collect()).collect()
    };
    CompareDoc {
        schema: COMPARE_SCHEMA.into(),
        best: c.best.map(super::names),
        explained: c.explained,
        indistinguishable: c.ties.iter().copied().map(super::names).collect(),
        candidates: c
            .candidates
            .iter()
            .map(|e| CandidateDoc {
                damping: super::names(e.damping),
                status: if e.fit.is_ok() { Status::Ok } else { Status::Failed },
                error: e
                    .fit
                    .as_ref()
                    .err()
                    .map(|x| Failure { kind: FailureKind::Rejected, message: x.to_string() }),
                rss: e.rss,
                aic: e.aic,
                bic: e.bic,
                ljung_box_p: e.ljung_box_p,
                rms_residual: e.rms_residual,
                noise_ratio: e.noise_ratio,
                all_significant: e.all_significant,
                explains_decay: e.explains_decay,
                adequacy: e.outcome().map(|f| adequacy_doc(&f.adequacy)),
                normalized: e.outcome().map(|f| fit_doc(f, None).normalized),
                added_terms: e
                    .added_terms
                    .iter()
                    .map(|a| AddedTermDoc {
                        from: super::names(a.from),
                        term: a.term.name().into(),
                        f: a.f,
                        p_value: a.p_value,
                    })
                    .collect(),
                model_peaks: peaks(&e.model_peaks),
            })
            .collect(),
        verdict: crate::report::verdict::comparison(c),
        selected: c.selected().map(|f| super::names(f.damping)),
        envelope_laws: c.envelope.laws.iter().map(|(l, r)| (l.name().to_string(), *r)).collect(),
        measured_peaks: peaks(&c.measured_peaks),
        period_points: c
            .period_points
            .iter()
            .map(|r| r.iter().map(|p| [p.amplitude, p.period]).collect())
            .collect(),
        period_curve: c.period_curve.iter().map(|(a, t)| [*a, *t]).collect(),
    }
}
