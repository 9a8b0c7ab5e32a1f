//! The sheet model: what a coefficient sheet shows, gathered from the fit, the physical
//! coefficients and the comparison into one [`wire::SheetDoc`] that every rendering
//! (JSON, Markdown, HTML) reads.
//!
//! Nothing here formats text for a page; the renderings decide how a number reads.

use crate::fit::FitOutcome;
use crate::fit::compare::Comparison;
use crate::physical::PhysicalCoefficients;
use crate::report::plot::{Chart, RunView};
use crate::report::wire::fit as json;
use crate::report::wire::{Failure, FailureKind, Status};

use super::provenance::Provenance;
use super::{SHEET_SCHEMA, wire};

/// The safety and usage caution printed on every sheet: the one text of [`crate::safety`].
pub const CAUTION: &str = crate::safety::SAFETY;

/// The modelling assumptions and limits printed on every sheet.
pub fn assumptions() -> Vec<String> {
    [
        "The article is rigid and swings about a fixed horizontal pivot axis; the model is J θ'' = −m g d sin(θ−θeq) − c θ' − τc sgn θ' − cq θ'|θ'|.",
        "Free decay identifies the coefficients per unit inertia only (ωn, b1 = c/J, b0 = τc/J, b2 = cq/J); physical values use the stated mass, pivot-to-CG distance and gravity.",
        "J is about the pivot axis and includes every part that swings with the article (fixtures, hub, encoder disc); J about the CG follows from the parallel-axis theorem Jcg = J − m d².",
        "Damping terms not in the fitted set are taken as zero; the sheet's uncertainties assume the fitted model is the right one and do not cover a wrong model choice.",
        "Coulomb friction is modelled with one kinetic level and true stick; a breakaway level above the kinetic one is not identified.",
        "Intervals come from the linearised least-squares covariance (widened for correlated residuals, or from the bootstrap when requested); expanded uncertainties use k = 2.",
        "The coefficients hold for the amplitude range, temperature and pivot condition of these runs; extrapolation beyond them is the user's responsibility.",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect()
}

/// Who and what was tested.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Identity {
    /// Article identifier.
    pub id: String,
    /// Article name.
    pub name: String,
    /// Description.
    pub description: String,
    /// Rig.
    pub rig: Option<String>,
    /// Operator.
    pub operator: Option<String>,
    /// Notes.
    pub notes: Option<String>,
    /// Mass [kg] and standard uncertainty, when known.
    pub mass: Option<crate::physical::Measured>,
    /// Pivot-to-CG distance [m] and standard uncertainty, when known.
    pub pivot_to_cg: Option<crate::physical::Measured>,
    /// Gravity in words.
    pub gravity: Option<String>,
}

/// Everything a sheet shows.
#[derive(Clone, Debug)]
pub struct SheetInput<'a> {
    /// The article and test identity.
    pub identity: Identity,
    /// Each run: label and the data with its fit.
    pub runs: Vec<RunView<'a>>,
    /// The accepted fit.
    pub fit: &'a FitOutcome,
    /// Physical coefficients, with mass and pivot-to-CG.
    pub physical: Option<&'a PhysicalCoefficients>,
    /// The comparison, when one was run.
    pub comparison: Option<&'a Comparison>,
    /// Whether the damping set was chosen by the comparison.
    pub damping_auto: bool,
    /// Provenance.
    pub provenance: Provenance,
}

pub use crate::report::wire::sheet::CoefficientRow;

/// The coefficient table: per unit inertia (ωn and each fitted term), then physical.
pub fn coefficient_rows(
    fit: &FitOutcome,
    physical: Option<&PhysicalCoefficients>,
) -> Vec<CoefficientRow> {
    use crate::model::Term;
    let row =
        |view: &str, key: &str, symbol: &str, quantity: &str, value: f64, std: f64, unit: &str| {
            CoefficientRow {
                view: view.into(),
                key: key.into(),
                symbol: symbol.into(),
                quantity: quantity.into(),
                value,
                std,
                expanded: 2.0 * std,
                coverage_factor: 2.0,
                unit: unit.into(),
            }
        };
    let mut rows = vec![row(
        "normalized",
        "omega_n",
        "ωn",
        "natural frequency (small amplitude)",
        fit.omega_n.value,
        fit.omega_n.std,
        "rad/s",
    )];
    for (t, e) in &fit.terms {
        let quantity = match t {
            Term::Viscous => "viscous damping per unit inertia",
            Term::Coulomb => "Coulomb friction per unit inertia",
            Term::Quadratic => "quadratic damping per unit inertia",
            Term::Presliding => "pre-sliding friction stiffness per unit inertia",
            Term::Stribeck => "Stribeck friction excess per unit inertia",
            Term::StribeckVelocity => "Stribeck velocity",
        };
        rows.push(row(
            "normalized",
            t.name(),
            t.symbol(),
            quantity,
            e.value,
            e.std,
            t.normalized_unit(),
        ));
    }
    if let Some(p) = physical {
        let q = |key: &str, symbol: &str, quantity: &str, v: &crate::physical::Quantity| {
            CoefficientRow {
                view: "physical".into(),
                key: key.into(),
                symbol: symbol.into(),
                quantity: quantity.into(),
                value: v.value,
                std: v.u_c,
                expanded: v.expanded,
                coverage_factor: v.k,
                unit: v.unit.into(),
            }
        };
        rows.push(q("inertia_pivot", "J", "moment of inertia about the pivot", &p.inertia_pivot));
        rows.push(q("inertia_cg", "Jcg", "moment of inertia about the CG", &p.inertia_cg));
        rows.push(q(
            "radius_gyration_pivot",
            "kp",
            "radius of gyration about the pivot",
            &p.gyration_pivot,
        ));
        if let Some(v) = &p.gyration_cg {
            rows.push(q("radius_gyration_cg", "kcg", "radius of gyration about the CG", v));
        }
        rows.push(q(
            "equivalent_length",
            "L",
            "equivalent simple-pendulum length",
            &p.equivalent_length,
        ));
        for t in Term::ALL {
            if let Some(v) = &p.damping[t.index()] {
                rows.push(q(t.name(), physical_symbol(t), physical_quantity(t), v));
            }
        }
        if let Some(v) = &p.damping_ratio {
            rows.push(q("damping_ratio", "ζ", "viscous damping ratio b1/(2ωn)", v));
        }
        if let Some(v) = &p.log_decrement {
            rows.push(q("log_decrement", "δ", "logarithmic decrement of the viscous term", v));
        }
        if let Some(v) = &p.quality_factor {
            rows.push(q("quality_factor", "Q", "quality factor 1/(2ζ)", v));
        }
    }
    rows
}

/// Symbol of a damping term's physical coefficient (the per-unit-inertia one times J).
pub fn physical_symbol(t: crate::model::Term) -> &'static str {
    use crate::model::Term;
    match t {
        Term::Viscous => "c",
        Term::Coulomb => "τc",
        Term::Quadratic => "cq",
        Term::Presliding => "kσ",
        Term::Stribeck => "τs−τc",
        Term::StribeckVelocity => "vs",
    }
}

/// What a damping term's physical coefficient is, in words.
pub fn physical_quantity(t: crate::model::Term) -> &'static str {
    use crate::model::Term;
    match t {
        Term::Viscous => "viscous damping coefficient",
        Term::Coulomb => "Coulomb friction torque",
        Term::Quadratic => "quadratic damping coefficient",
        Term::Presliding => "pre-sliding friction stiffness",
        Term::Stribeck => "Stribeck friction excess (static minus Coulomb torque)",
        Term::StribeckVelocity => "Stribeck velocity",
    }
}

fn duration(r: &RunView<'_>) -> f64 {
    match (r.times().first(), r.times().last()) {
        (Some(a), Some(b)) => b - a,
        _ => 0.0,
    }
}

/// The sheet document for `input` with its `charts`.
pub fn sheet_doc(input: &SheetInput<'_>, charts: &[Chart]) -> wire::SheetDoc {
    let id = &input.identity;
    let fit = input.fit;
    wire::SheetDoc {
        schema: SHEET_SCHEMA.into(),
        article: wire::Article {
            id: id.id.clone(),
            name: id.name.clone(),
            description: id.description.clone(),
            rig: id.rig.clone(),
            operator: id.operator.clone(),
            notes: id.notes.clone(),
            mass: id.mass.map(|m| wire::Measured { value: m.value, std: m.u, unit: "kg".into() }),
            pivot_to_cg: id.pivot_to_cg.map(|d| wire::Measured {
                value: d.value,
                std: d.u,
                unit: "m".into(),
            }),
            gravity: id.gravity.clone(),
        },
        runs: input
            .runs
            .iter()
            .map(|r| wire::SheetRun {
                label: r.name.to_string(),
                file: r.fit.source.clone(),
                samples: r.fit.samples,
                duration_s: duration(r),
            })
            .collect(),
        damping: wire::Damping {
            choice: if input.damping_auto { "auto" } else { "given" }.into(),
            fitted: crate::report::wire::names(fit.damping),
        },
        coefficients: coefficient_rows(fit, input.physical),
        comparison: input.comparison.map(|c| wire::Comparison {
            verdict: crate::report::verdict::comparison(c),
            explained: c.explained,
            best: c.best.map(crate::report::wire::names),
            envelope_law: c.envelope_law().describe().into(),
            candidates: c
                .candidates
                .iter()
                .map(|e| wire::Candidate {
                    damping: crate::report::wire::names(e.damping),
                    status: if e.fit.is_ok() { Status::Ok } else { Status::Failed },
                    error: e
                        .fit
                        .as_ref()
                        .err()
                        .map(|e| Failure { kind: FailureKind::Rejected, message: e.to_string() }),
                    rss: e.rss,
                    aic: e.aic,
                    bic: e.bic,
                    ljung_box_p: e.ljung_box_p,
                    rms_residual: e.rms_residual,
                    noise_ratio: e.noise_ratio,
                    all_significant: e.all_significant,
                    explains_decay: e.explains_decay,
                })
                .collect(),
        }),
        quality: wire::Quality {
            rms_residual: fit.rms_residual(),
            rss: fit.rss,
            dof: fit.dof,
            samples: fit.n_obs,
            condition_number: fit.condition,
            iterations_total: fit.iterations_total,
            interval_method: crate::report::table::interval_method_text(&fit.interval_method),
            runs: fit
                .runs
                .iter()
                .map(|r| wire::RunQuality {
                    file: r.source.clone(),
                    rms_residual: r.rms_residual,
                    noise_floor: r.noise_floor,
                    noise_ratio: r.rms_residual / r.noise_floor,
                    ljung_box_p: r.ljung_box_p,
                })
                .collect(),
            flags: fit.flags.clone(),
        },
        plots: charts
            .iter()
            .map(|c| wire::Plot {
                stem: c.stem.clone(),
                title: c.title.clone(),
                svg: format!("{}.svg", c.stem),
                png: format!("{}.png", c.stem),
            })
            .collect(),
        assumptions: assumptions(),
        caution: CAUTION.into(),
        provenance: input.provenance.clone(),
        fit: json::fit_doc(fit, input.physical),
    }
}
