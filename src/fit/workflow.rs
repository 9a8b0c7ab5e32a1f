//! Choose the damping, then fit: the one workflow behind `fit`, `sheet` and `batch`.
//!
//! With [`DampingChoice::Auto`] (the default of every command) the comparison
//! ([`compare::compare`]) fits every candidate set, each warm-started from its best fitted
//! subset, and the set it selects is taken as fitted there: no refit from scratch. When a
//! candidate explains the decay it is the comparison's `best`; when none does, the workflow
//! still returns the least bad eligible candidate (lowest BIC among those whose terms are all
//! significant, else the lowest BIC), whose own adequacy verdict then says how far it falls
//! short. With [`DampingChoice::Terms`] exactly that set is fitted. A requested bootstrap is run
//! once, on the chosen fit only, warm-started from its optimum.

use crate::data::AngleLog;
use crate::data::survey::{Survey, survey};
use crate::fit::compare::{self, CompareOptions, Comparison};
use crate::fit::{FitError, FitOptions, FitOutcome, fit_surveyed};
use crate::model::DampingSet;

/// Which damping to fit.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DampingChoice {
    /// Compare every candidate set and fit the one the comparison selects.
    Auto,
    /// Fit exactly these terms.
    Terms(DampingSet),
}

/// How the fitted set was chosen.
#[derive(Clone, Debug)]
pub enum Choice {
    /// Given by the user.
    Given,
    /// Selected by the comparison, which is kept for the report.
    Compared(Box<Comparison>),
}

/// The chosen fit.
#[derive(Clone, Debug)]
pub struct Chosen {
    /// The fit of the chosen set.
    pub outcome: FitOutcome,
    /// How the set was chosen.
    pub choice: Choice,
}

impl Chosen {
    /// The comparison, when one was run.
    pub fn comparison(&self) -> Option<&Comparison> {
        match &self.choice {
            Choice::Compared(c) => Some(c),
            Choice::Given => None,
        }
    }
}

/// Choose the damping (or take the given set), then fit `logs` jointly.
pub fn choose_and_fit(
    logs: &[AngleLog],
    choice: DampingChoice,
    base: &FitOptions,
) -> Result<Chosen, FitError> {
    let surveys: Vec<Survey> = logs.iter().map(survey).collect();
    match choice {
        DampingChoice::Terms(set) => {
            let options = FitOptions { damping: set, ..base.clone() };
            let outcome = fit_surveyed(logs, &surveys, &options, None)?;
            Ok(Chosen { outcome, choice: Choice::Given })
        }
        DampingChoice::Auto => {
            let options = CompareOptions {
                candidates: DampingSet::all_nonempty(),
                fit: FitOptions { bootstrap: None, ..base.clone() },
            };
            let c = compare::compare_surveyed(logs, &surveys, &options);
            let Some(selected) = c.selected() else {
                let reasons: Vec<String> = c
                    .candidates
                    .iter()
                    .filter_map(|e| e.fit.as_ref().err().map(|x| format!("{}: {x}", e.damping)))
                    .collect();
                return Err(FitError::NoCandidate { reasons: reasons.join("; ") });
            };
            let mut outcome = selected.clone();
            if let Some(b) = base.bootstrap.filter(|b| *b >= 2) {
                outcome = crate::fit::bootstrap::apply(logs, &surveys, outcome, b, base.seed)?;
            }
            Ok(Chosen { outcome, choice: Choice::Compared(Box::new(c)) })
        }
    }
}
