//! Verdicts in words: the adequacy of a fit, how its damping set was chosen, and what the
//! comparison found. The library computes the figures (`fit::adequacy`, `fit::compare`); this
//! module only puts them into sentences, with every number rounded to what it can carry.

use std::fmt::Write as _;

use crate::fit::FitOutcome;
use crate::fit::adequacy::{self, Adequacy, AdequacyReport};
use crate::fit::compare::{BIC_TIE, CandidateEvidence, Comparison, EnvelopeFits};
use crate::fit::workflow::Chosen;
use crate::model::{DampingSet, Term};
use crate::report::typeset::{num, sig_for};

/// A p-value as people read it: two significant digits, "< 1e-4" below that.
pub fn p_text(p: f64) -> String {
    if !p.is_finite() {
        "n/a".into()
    } else if p < 1e-4 {
        "< 1e-4".into()
    } else {
        format!("= {}", num(p, 2))
    }
}

/// A relative error in per cent, two significant digits.
fn pct(v: f64) -> String {
    if v.is_finite() { format!("{} %", num(100.0 * v, 2)) } else { "n/a".into() }
}

/// "value ± half-width unit" rounded to the half-width.
pub fn estimate_text(value: f64, half: f64, unit: &str) -> String {
    format!("{} ± {} {unit}", num(value, sig_for(value, half)), num(half, 2))
}

/// The one-line adequacy verdict shown first by `fit` and `sheet`.
pub fn adequacy_line(a: &AdequacyReport) -> String {
    let mut line = adequacy_sentence(a);
    if a.time_base_slips > 0 && a.verdict != Adequacy::Explained {
        let _ = write!(
            line,
            " The logger's time base slips: {} samples stamped one interval off were fitted as logged, and a slipping clock leaves residual that follows the swing by itself; re-time them (drop --keep-slips) before blaming the damping model.",
            a.time_base_slips
        );
    }
    line
}

fn adequacy_sentence(a: &AdequacyReport) -> String {
    let ratio = a.worst(|r| r.noise_ratio);
    let kappa = a.worst(|r| r.swing_locked);
    let amp = a.worst(|r| r.amplitude_error);
    let dur = a.worst(|r| r.duration_error);
    let lb = a.whiteness_p();
    let lag1 = a.worst(|r| r.lag1);
    let repro = format!(
        "swing reproduced to {} in half-cycle amplitude and {} in cycle duration",
        pct(amp),
        pct(dur)
    );
    match a.verdict {
        Adequacy::Explained if !a.sensor_like => format!(
            "Adequacy: explained. Residuals at the noise floor ({}x), white (Ljung-Box p {}), nothing left that follows the swing (swing-locked power {}x the off-swing power); {repro}.",
            num(ratio, 2),
            p_text(lb),
            num(kappa, 2)
        ),
        Adequacy::Explained => format!(
            "Adequacy: explained. The residuals are correlated (lag-1 autocorrelation {}) and {}x the white-noise floor, but they do not follow the swing (swing-locked power {}x the off-swing power): that is coloured sensor noise or a slow sensor drift, not a missing damping term; {repro}.",
            num(lag1, 2),
            num(ratio, 2),
            num(kappa, 2)
        ),
        Adequacy::Approximate => format!(
            "Adequacy: approximate. The model reproduces the decay in engineering terms ({repro}, within {} and {}), but leaves residual that follows the swing (swing-locked power {}x the off-swing power, RMS {}x the noise floor): a damping mechanism is missing or misdescribed. The intervals are for this damping set's best approximation; they do not include the error of what it misses.",
            pct(adequacy::AMPLITUDE_TOL),
            pct(adequacy::DURATION_TOL),
            num(kappa, 2),
            num(ratio, 2)
        ),
        Adequacy::NotExplained => format!(
            "Adequacy: not explained. The model does not reproduce the decay ({repro}; tolerances {} and {}), and its residual follows the swing (swing-locked power {}x the off-swing power, RMS {}x the noise floor).",
            pct(adequacy::AMPLITUDE_TOL),
            pct(adequacy::DURATION_TOL),
            num(kappa, 2),
            num(ratio, 2)
        ),
    }
}

/// The banner printed above the numbers of a fit that does not explain its log.
pub const NOT_A_CALIBRATION: &str = "*** NOT A CALIBRATION: the model does not explain this log; the numbers below describe a failed description of the motion and must not be used as coefficients ***";

/// One line saying which damping set was fitted and why.
pub fn choice_line(chosen: &Chosen) -> String {
    let set = chosen.outcome.damping;
    match chosen.comparison() {
        None => format!("Damping: {set}, as given (--damping)."),
        Some(c) => {
            let n = c.candidates.len();
            let ok = c.candidates.iter().filter(|e| e.fit.is_ok()).count();
            if c.best == Some(set) {
                let mut s = format!(
                    "Damping: {set}, chosen by comparing {n} sets ({ok} fitted): it explains the decay and has the lowest BIC of those whose terms are all significant"
                );
                if !c.ties.is_empty() {
                    let names: Vec<String> = c.ties.iter().map(|t| t.to_string()).collect();
                    let _ = write!(
                        s,
                        "; {} explain it as well (BIC within {BIC_TIE})",
                        names.join(" and ")
                    );
                }
                s.push('.');
                s
            } else {
                format!(
                    "Damping: {set}, the least bad of {n} sets compared ({ok} fitted): none explains the decay, and this one has the lowest BIC{}.",
                    if c.candidates
                        .iter()
                        .find(|e| e.damping == set)
                        .is_some_and(|e| e.all_significant)
                    {
                        " of those whose terms are all significant"
                    } else {
                        " (some of its terms are not significant)"
                    }
                )
            }
        }
    }
}

fn term_estimate(f: &FitOutcome, t: Term) -> Option<String> {
    f.term(t).map(|e| {
        format!("{} = {}", t.symbol(), estimate_text(e.value, 0.5 * (e.ci95.1 - e.ci95.0), e.unit))
    })
}

/// The comparison's verdict in words with its numbers.
pub fn comparison(c: &Comparison) -> String {
    let cands = &c.candidates;
    let mut v = String::new();
    let ok: Vec<&CandidateEvidence> = cands.iter().filter(|c| c.fit.is_ok()).collect();
    if ok.is_empty() {
        let reasons: Vec<String> = cands
            .iter()
            .filter_map(|c| c.fit.as_ref().err().map(|e| format!("{}: {e}", c.damping)))
            .collect();
        let _ = write!(v, "No candidate could be fitted: {}.", reasons.join("; "));
        return v;
    }
    match c.best.and_then(|b| cands.iter().find(|x| x.damping == b).map(|x| (b, x))) {
        Some((b, best)) => {
            let _ = write!(
                v,
                "{b} explains the decay (RMS residual {}x the noise floor, Ljung-Box p {}, every term significant).",
                num(best.noise_ratio, 2),
                p_text(best.ljung_box_p)
            );
            for big in
                cands.iter().filter(|x| b.is_subset(x.damping) && x.damping.len() == b.len() + 1)
            {
                let Some(term) = big.damping.iter().find(|t| !b.contains(*t)) else { continue };
                match big.outcome() {
                    None => {
                        let _ = write!(
                            v,
                            " {} could not be fitted ({}).",
                            big.damping,
                            big.fit.as_ref().err().map(|e| e.to_string()).unwrap_or_default()
                        );
                    }
                    Some(f) => {
                        let test = big.added_terms.iter().find(|a| a.from == b);
                        let est = term_estimate(f, term).unwrap_or_default();
                        match test {
                            Some(t) if t.p_value >= 0.05 => {
                                let _ = write!(
                                    v,
                                    " Adding {term} is not supported: {est} is consistent with zero (p {}).",
                                    p_text(t.p_value)
                                );
                            }
                            Some(t) => {
                                let _ = write!(
                                    v,
                                    " Adding {term} gives {est} (p {}), but {} ranks lower ({}).",
                                    p_text(t.p_value),
                                    big.damping,
                                    if big.all_significant {
                                        format!("BIC higher by {}", num(big.bic - best.bic, 2))
                                    } else {
                                        "not all its terms are significant".to_string()
                                    }
                                );
                            }
                            None => {}
                        }
                    }
                }
            }
            for small in
                ok.iter().filter(|x| x.damping.is_subset(b) && x.damping.len() + 1 == b.len())
            {
                let _ = write!(
                    v,
                    " {} alone leaves {}x the noise floor ({})",
                    small.damping,
                    num(small.noise_ratio, 2),
                    small.outcome().map_or("failed", |f| f.adequacy.verdict.name())
                );
                if let Some(t) = best.added_terms.iter().find(|a| a.from == small.damping) {
                    let _ = write!(v, "; adding {} to it: p {}", t.term, p_text(t.p_value));
                }
                v.push('.');
            }
            if !c.ties.is_empty() {
                let names: Vec<String> = c.ties.iter().map(|t| t.to_string()).collect();
                let _ = write!(
                    v,
                    " But {} explain{} the decay as well (BIC within {BIC_TIE}), so these data cannot tell them apart. {}",
                    names.join(" and "),
                    if c.ties.len() == 1 { "s" } else { "" },
                    separating_test(b, &c.ties, c.measured_peaks.len())
                );
            }
        }
        None => {
            let least = ok[0];
            let verdict = least.outcome().map(|f| &f.adequacy);
            let kappa = verdict.map_or(f64::NAN, |a| a.worst(|r| r.swing_locked));
            let _ = write!(
                v,
                "No candidate explains the decay. The least bad, {}, is {} (RMS residual {}x the noise floor; swing-locked residual power {}x the off-swing power): its residual follows the swing, which none of these damping sets describes. Look for a damping mechanism not among the candidates, a loose or flexing article, an applied torque or a pivot that moves.",
                least.damping,
                verdict.map_or("failed", |a| a.verdict.name()),
                num(least.noise_ratio, 2),
                num(kappa, 2)
            );
            if !least.all_significant {
                let _ = write!(v, " It also has terms whose intervals include zero.");
            }
        }
    }
    v.push_str(&envelope_sentence(&c.envelope));
    v
}

fn envelope_sentence(env: &EnvelopeFits) -> String {
    match env.laws.first() {
        Some((law, rms)) => format!(
            " Measured envelope: best described as {} (RMS misfit {} rad).",
            law.describe(),
            num(*rms, 2)
        ),
        None => String::new(),
    }
}

/// What test would separate candidates that explain the logs equally well.
fn separating_test(best: DampingSet, ties: &[DampingSet], runs: usize) -> String {
    let involves = |t: Term| best.contains(t) || ties.iter().any(|s| s.contains(t));
    let mut tips = Vec::new();
    if involves(Term::Quadratic) && runs < 2 {
        tips.push("a second release at a clearly different amplitude (air drag grows with amplitude, viscous loss does not)");
    }
    if involves(Term::Coulomb) {
        tips.push("a longer log that follows the decay into small amplitudes (dry friction makes the tail linear and stops the article)");
    }
    if tips.is_empty() {
        tips.push("a longer log, or a release at a clearly different amplitude");
    }
    format!("What would separate them: {}.", tips.join("; or "))
}
