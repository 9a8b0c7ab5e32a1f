//! The coefficient sheet: one directory holding a printable page, its numbers and its plots.
//!
//! A test engineer hands the sheet on: `sheet.html` (self-contained, inline SVG, no scripts, A4
//! print layout), `sheet.md` (the same as text), `sheet.json` (every number, schema
//! [`SHEET_SCHEMA`], embedding the fit document of [`crate::report::json`]) and every plot as SVG
//! and PNG. The directory is built beside its destination and renamed into place only when
//! complete ([`write_sheet`]), so a failed run leaves nothing behind and an existing sheet is
//! replaced only on request.
//!
//! ## Wire format `swingfit.sheet.v1`
//! ```text
//! { "schema": "swingfit.sheet.v1",
//!   "article": { "id", "name", "description", "rig", "operator", "notes",
//!                "mass": {value, std, unit}, "pivot_to_cg": {value, std, unit}, "gravity": "…" },
//!   "runs": [ { "label", "file", "samples", "duration_s" } ],
//!   "damping": { "choice": "auto"|"given", "fitted": ["viscous", …] },
//!   "coefficients": [ { "view": "per_unit_inertia"|"physical", "key", "symbol", "quantity",
//!                       "value", "std", "expanded_k2", "unit" } ],
//!   "comparison": { "verdict", "explained", "best", "envelope_law", "candidates": [ … ] } | null,
//!   "quality": { "rms_residual", "rss", "dof", "samples", "condition_number", "iterations_total",
//!                "interval_method", "runs": [ { "file", "rms_residual", "noise_floor",
//!                "ratio_to_noise", "ljung_box_p" } ], "flags": [ … ] },
//!   "plots": [ { "stem", "title", "svg", "png" } ],
//!   "assumptions": [ "…" ], "caution": "…",
//!   "provenance": { "tool", "version", "command_line", "generated_utc",
//!                   "inputs": [ { "role", "path", "sha256", "bytes" } ] },
//!   "fit": { …swingfit.fit.v1… } }
//! ```
//! Expanded uncertainties use k = 2 (JCGM 100:2008 §6.2.1 eq. 18 [memory]); units as in the fit
//! document. Re-running on the same inputs gives the same file except `generated_utc`.

use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::fit::FitOutcome;
use crate::fit::compare::Comparison;
use crate::physical::PhysicalCoefficients;
use crate::report::json;
use crate::report::plot::{self, Chart, RunView};
use crate::report::typeset;

/// Schema tag of the sheet JSON.
pub const SHEET_SCHEMA: &str = "swingfit.sheet.v1";

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

/// A hashed input file.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct InputDigest {
    /// "article" or "log".
    pub role: String,
    /// Path as given.
    pub path: String,
    /// SHA-256 of the file's bytes, lowercase hex.
    pub sha256: String,
    /// Size in bytes.
    pub bytes: u64,
}

impl InputDigest {
    /// Hash the file at `path`.
    pub fn of_file(role: &str, path: &Path) -> std::io::Result<InputDigest> {
        let bytes = fs::read(path)?;
        Ok(InputDigest {
            role: role.to_string(),
            path: path.display().to_string(),
            sha256: sha256_hex(&bytes),
            bytes: bytes.len() as u64,
        })
    }
}

/// Where the sheet came from.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Provenance {
    /// Program name.
    pub tool: String,
    /// Program version.
    pub version: String,
    /// The full command line, arguments separated by spaces (quoted when they hold spaces).
    pub command_line: String,
    /// When the sheet was made, ISO 8601 UTC.
    pub generated_utc: String,
    /// Every input file with its digest.
    pub inputs: Vec<InputDigest>,
}

impl Provenance {
    /// Provenance stamped now, for `args` (program name first) and `inputs`.
    pub fn now(args: &[String], inputs: Vec<InputDigest>) -> Provenance {
        Provenance {
            tool: "swingfit".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            command_line: args
                .iter()
                .map(|a| {
                    if a.contains(char::is_whitespace) || a.is_empty() {
                        format!("'{a}'")
                    } else {
                        a.clone()
                    }
                })
                .collect::<Vec<_>>()
                .join(" "),
            generated_utc: iso8601_utc(SystemTime::now()),
            inputs,
        }
    }
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

/// SHA-256 of `bytes` as lowercase hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    let mut s = String::with_capacity(64);
    for b in digest.iter() {
        let _ = write!(s, "{b:02x}");
    }
    s
}

/// `t` as ISO 8601 UTC with whole seconds, e.g. `2026-12-02T01:22:42Z`. Times before 1970 are
/// clamped to the epoch.
pub fn iso8601_utc(t: SystemTime) -> String {
    let secs = t.duration_since(UNIX_EPOCH).map(|d| d.as_secs()).unwrap_or(0) as i64;
    let (days, rem) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", rem / 3600, rem % 3600 / 60, rem % 60)
}

/// Proleptic Gregorian date of a day count since 1970-01-01 (H. Hinnant, "chrono-compatible
/// low-level date algorithms", days_from_civil inverse [common practice]).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// One line of the coefficient table.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CoefficientRow {
    /// `per_unit_inertia` or `physical`.
    pub view: &'static str,
    /// Machine key, e.g. `viscous`.
    pub key: &'static str,
    /// Symbol, e.g. `b1` or `c`.
    pub symbol: &'static str,
    /// What it is, in words.
    pub quantity: &'static str,
    /// Best estimate.
    pub value: f64,
    /// Combined standard uncertainty.
    pub std: f64,
    /// Expanded uncertainty U = 2 u.
    pub expanded_k2: f64,
    /// Unit.
    pub unit: &'static str,
}

/// The coefficient table: per unit inertia (ωn and each fitted term), then physical.
pub fn coefficient_rows(
    fit: &FitOutcome,
    physical: Option<&PhysicalCoefficients>,
) -> Vec<CoefficientRow> {
    use crate::model::Term;
    let row = |view, key, symbol, quantity, value: f64, std: f64, unit| CoefficientRow {
        view,
        key,
        symbol,
        quantity,
        value,
        std,
        expanded_k2: 2.0 * std,
        unit,
    };
    let mut rows = vec![row(
        "per_unit_inertia",
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
        };
        rows.push(row(
            "per_unit_inertia",
            t.name(),
            t.symbol(),
            quantity,
            e.value,
            e.std,
            t.normalized_unit(),
        ));
    }
    if let Some(p) = physical {
        let q = |key, symbol, quantity, v: &crate::physical::Quantity| CoefficientRow {
            view: "physical",
            key,
            symbol,
            quantity,
            value: v.value,
            std: v.u_c,
            expanded_k2: v.expanded,
            unit: v.unit,
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
fn physical_symbol(t: crate::model::Term) -> &'static str {
    use crate::model::Term;
    match t {
        Term::Viscous => "c",
        Term::Coulomb => "τc",
        Term::Quadratic => "cq",
        Term::Presliding => "kσ",
    }
}

/// What a damping term's physical coefficient is, in words.
fn physical_quantity(t: crate::model::Term) -> &'static str {
    use crate::model::Term;
    match t {
        Term::Viscous => "viscous damping coefficient",
        Term::Coulomb => "Coulomb friction torque",
        Term::Quadratic => "quadratic damping coefficient",
        Term::Presliding => "pre-sliding friction stiffness",
    }
}

/// Format a value and its uncertainty alike: the uncertainty to two significant digits and the
/// value to the same decimal place (JCGM 100:2008 §7.2.6 [memory; common practice]). Returns
/// (value, uncertainty) strings; falls back to scientific notation for very large or small numbers.
pub fn format_pair(value: f64, u: f64) -> (String, String) {
    if !value.is_finite() {
        return (format!("{value}"), format!("{u}"));
    }
    if !(u.is_finite() && u > 0.0) {
        return (format!("{value:.6e}"), if u == 0.0 { "0".into() } else { format!("{u}") });
    }
    let e = u.log10().floor() as i32;
    let decimals = 1 - e;
    if (0..=9).contains(&decimals) && value.abs() < 1e7 {
        let d = decimals as usize;
        (format!("{value:.d$}"), format!("{u:.d$}"))
    } else {
        let digits = (value.abs().log10().floor() as i32 - e + 1).clamp(1, 12) as usize;
        (format!("{value:.digits$e}"), format!("{u:.1e}"))
    }
}

/// Wire types of the sheet JSON.
pub mod wire {
    use serde::Serialize;

    /// Measured input with its standard uncertainty.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Measured {
        /// Value.
        pub value: f64,
        /// Standard uncertainty.
        pub std: f64,
        /// Unit.
        pub unit: &'static str,
    }

    /// The article block.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Article {
        /// Identifier.
        pub id: String,
        /// Name.
        pub name: String,
        /// Description.
        pub description: String,
        /// Rig.
        pub rig: Option<String>,
        /// Operator.
        pub operator: Option<String>,
        /// Notes.
        pub notes: Option<String>,
        /// Mass.
        pub mass: Option<Measured>,
        /// Pivot-to-CG distance.
        pub pivot_to_cg: Option<Measured>,
        /// Gravity in words.
        pub gravity: Option<String>,
    }

    /// One run.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Run {
        /// Label.
        pub label: String,
        /// Log file.
        pub file: String,
        /// Samples.
        pub samples: usize,
        /// Duration [s].
        pub duration_s: f64,
    }

    /// Damping choice.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Damping {
        /// `auto` or `given`.
        pub choice: &'static str,
        /// Fitted terms.
        pub fitted: Vec<&'static str>,
    }

    /// One candidate of the comparison.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Candidate {
        /// Damping set, e.g. `viscous+coulomb`.
        pub damping: String,
        /// Whether the fit converged and was accepted.
        pub converged: bool,
        /// Why it failed, when it did.
        pub error: Option<String>,
        /// RSS [rad²].
        pub rss: f64,
        /// AIC.
        pub aic: f64,
        /// BIC.
        pub bic: f64,
        /// Smallest Ljung–Box p over runs.
        pub ljung_box_p: f64,
        /// RMS residual [rad].
        pub rms_residual: f64,
        /// Every term significant.
        pub all_significant: bool,
        /// Explains the decay.
        pub explains_decay: bool,
    }

    /// The comparison block.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Comparison {
        /// Verdict in words.
        pub verdict: String,
        /// Whether any candidate explains the decay.
        pub explained: bool,
        /// Chosen set.
        pub best: Option<String>,
        /// Envelope law of the measured peaks.
        pub envelope_law: &'static str,
        /// Candidates, ranked.
        pub candidates: Vec<Candidate>,
    }

    /// Quality of one run's fit.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct RunQuality {
        /// Log file.
        pub file: String,
        /// RMS residual [rad].
        pub rms_residual: f64,
        /// Noise floor [rad].
        pub noise_floor: f64,
        /// RMS residual over noise floor.
        pub ratio_to_noise: f64,
        /// Ljung–Box p-value.
        pub ljung_box_p: f64,
    }

    /// Fit quality.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Quality {
        /// Overall RMS residual [rad].
        pub rms_residual: f64,
        /// RSS [rad²].
        pub rss: f64,
        /// Degrees of freedom.
        pub dof: usize,
        /// Samples.
        pub samples: usize,
        /// Condition number.
        pub condition_number: f64,
        /// Iterations over all stages.
        pub iterations_total: usize,
        /// Interval method.
        pub interval_method: String,
        /// Per run.
        pub runs: Vec<RunQuality>,
        /// Warnings.
        pub flags: Vec<String>,
    }

    /// One plot's files.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct Plot {
        /// File stem.
        pub stem: String,
        /// Title.
        pub title: String,
        /// SVG file name.
        pub svg: String,
        /// PNG file name.
        pub png: String,
    }

    /// The sheet document.
    #[derive(Serialize, Debug, Clone, PartialEq)]
    pub struct SheetDoc {
        /// `swingfit.sheet.v1`.
        pub schema: &'static str,
        /// Article.
        pub article: Article,
        /// Runs.
        pub runs: Vec<Run>,
        /// Damping.
        pub damping: Damping,
        /// Coefficient table.
        pub coefficients: Vec<super::CoefficientRow>,
        /// Comparison.
        pub comparison: Option<Comparison>,
        /// Quality.
        pub quality: Quality,
        /// Plots.
        pub plots: Vec<Plot>,
        /// Assumptions and limits.
        pub assumptions: Vec<String>,
        /// Safety and usage caution.
        pub caution: &'static str,
        /// Provenance.
        pub provenance: super::Provenance,
        /// The fit document.
        pub fit: crate::report::json::FitDoc,
    }
}

fn duration(r: &RunView<'_>) -> f64 {
    match (r.times.first(), r.times.last()) {
        (Some(a), Some(b)) => b - a,
        _ => 0.0,
    }
}

/// The sheet document for `input` with its `charts`.
pub fn sheet_doc(input: &SheetInput<'_>, charts: &[Chart]) -> wire::SheetDoc {
    let id = &input.identity;
    let fit = input.fit;
    wire::SheetDoc {
        schema: SHEET_SCHEMA,
        article: wire::Article {
            id: id.id.clone(),
            name: id.name.clone(),
            description: id.description.clone(),
            rig: id.rig.clone(),
            operator: id.operator.clone(),
            notes: id.notes.clone(),
            mass: id.mass.map(|m| wire::Measured { value: m.value, std: m.u, unit: "kg" }),
            pivot_to_cg: id.pivot_to_cg.map(|d| wire::Measured {
                value: d.value,
                std: d.u,
                unit: "m",
            }),
            gravity: id.gravity.clone(),
        },
        runs: input
            .runs
            .iter()
            .map(|r| wire::Run {
                label: r.name.to_string(),
                file: r.fit.source.clone(),
                samples: r.fit.samples,
                duration_s: duration(r),
            })
            .collect(),
        damping: wire::Damping {
            choice: if input.damping_auto { "auto" } else { "given" },
            fitted: fit.damping.names(),
        },
        coefficients: coefficient_rows(fit, input.physical),
        comparison: input.comparison.map(|c| wire::Comparison {
            verdict: crate::report::verdict::comparison(c),
            explained: c.explained,
            best: c.best.map(|b| b.to_string()),
            envelope_law: c.envelope_law().describe(),
            candidates: c
                .candidates
                .iter()
                .map(|e| wire::Candidate {
                    damping: e.damping.to_string(),
                    converged: e.fit.is_ok(),
                    error: e.fit.as_ref().err().map(|e| e.to_string()),
                    rss: e.rss,
                    aic: e.aic,
                    bic: e.bic,
                    ljung_box_p: e.ljung_box_p,
                    rms_residual: e.rms_residual,
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
                    ratio_to_noise: r.rms_residual / r.noise_floor,
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
        caution: CAUTION,
        provenance: input.provenance.clone(),
        fit: json::fit_doc(fit, input.physical),
    }
}

fn view_name(v: &str) -> &'static str {
    if v == "physical" { "physical" } else { "per unit inertia" }
}

fn view_title(v: &str) -> &'static str {
    if v == "physical" {
        "Physical, with the stated mass, pivot-to-CG distance and gravity"
    } else {
        "Per unit inertia (identified by the free decay alone)"
    }
}

/// The identity block of the sheet, (label, text) in order, shared by the HTML and Markdown
/// renderings so that both say the same.
fn identity_fields(doc: &wire::SheetDoc) -> Vec<(&'static str, String)> {
    let a = &doc.article;
    let mut v: Vec<(&'static str, String)> = Vec::new();
    if a.name.is_empty() {
        v.push(("Article", "not named (give --article NAME, or use an article file)".into()));
    } else if a.id != a.name && !a.id.is_empty() {
        v.push(("Article id", a.id.clone()));
    }
    if let Some(r) = &a.rig {
        v.push(("Rig", r.clone()));
    }
    if let Some(o) = &a.operator {
        v.push(("Operator", o.clone()));
    }
    // Mass properties on one line: mass, pivot-to-CG distance (each with its standard
    // uncertainty) and gravity.
    let mut basis = Vec::new();
    if let Some(m) = &a.mass {
        basis.push(format!(
            "mass {}",
            crate::report::table::stated(m.value, m.std, "kg", "").trim()
        ));
    }
    if let Some(d) = &a.pivot_to_cg {
        basis.push(format!(
            "pivot to CG {}",
            crate::report::table::stated(d.value, d.std, "m", "").trim()
        ));
    }
    if let Some(g) = &a.gravity {
        basis.push(typeset::unit(g));
    }
    if !basis.is_empty() {
        v.push(("Mass properties", basis.join("; ")));
    }
    for r in &doc.runs {
        v.push((
            "Run",
            format!("{} — {} samples fitted; {:.2} s logged", run_name(r), r.samples, r.duration_s),
        ));
    }
    let how = if doc.damping.choice == "auto" {
        "chosen by the model comparison"
    } else {
        "as requested"
    };
    v.push(("Damping fitted", format!("{} ({how})", doc.damping.fitted.join(" + "))));
    if let Some(n) = &a.notes {
        v.push(("Notes", n.clone()));
    }
    v
}

/// The sheet as Markdown text.
pub fn sheet_markdown(doc: &wire::SheetDoc) -> String {
    let mut s = String::new();
    let a = &doc.article;
    if a.name.is_empty() {
        let _ = writeln!(s, "# Coefficient sheet\n");
    } else {
        let _ = writeln!(s, "# Coefficient sheet: {}\n", a.name);
    }
    if !a.description.is_empty() {
        let _ = writeln!(s, "{}\n", a.description);
    }
    let _ = writeln!(s, "## Article and test\n");
    for (k, v) in identity_fields(doc) {
        let _ = writeln!(s, "- **{k}:** {v}");
    }
    let _ = writeln!(s, "\n## Coefficients\n");
    let _ = writeln!(s, "| view | quantity | symbol | value | u | U (k = 2) | unit |");
    let _ = writeln!(s, "|---|---|---|---:|---:|---:|---|");
    for r in &doc.coefficients {
        let (v, u, big) = coefficient_cells(r);
        let _ = writeln!(
            s,
            "| {} | {} | {} | {v} | {u} | {big} | {} |",
            view_name(r.view),
            r.quantity,
            r.symbol,
            typeset::unit(r.unit)
        );
    }
    let _ = writeln!(s, "\n**Result.** {}", result_sentences(doc));
    if let Some(c) = &doc.comparison {
        let _ = writeln!(s, "\n## Model verdict\n\n{}\n", c.verdict);
        let _ = writeln!(s, "Measured envelope law: {}.\n", c.envelope_law);
        let _ = writeln!(
            s,
            "| damping | converged | RMS [rad] | AIC | BIC | Ljung–Box p | all significant | explains decay |"
        );
        let _ = writeln!(s, "|---|---|---:|---:|---:|---:|---|---|");
        for e in &c.candidates {
            if let (false, why) = (e.converged, &e.error) {
                let why = why.as_deref().unwrap_or("the fit did not converge");
                let _ = writeln!(
                    s,
                    "| {} | failed: {} | | | | | | |",
                    e.damping,
                    why.replace('|', "/")
                );
                continue;
            }
            let _ = writeln!(
                s,
                "| {} | yes | {} | {} | {} | {} | {} | {} |",
                e.damping,
                typeset::num(e.rms_residual, 3),
                typeset::num(e.aic, 6),
                typeset::num(e.bic, 6),
                typeset::p_value(e.ljung_box_p),
                yes(e.all_significant),
                yes(e.explains_decay)
            );
        }
    }
    let q = &doc.quality;
    let _ = writeln!(s, "\n## Fit quality\n");
    let _ = writeln!(
        s,
        "RMS residual {} rad over {} samples ({} degrees of freedom); condition number {}; {} iterations; intervals: {}.\n",
        typeset::num(q.rms_residual, 3),
        q.samples,
        q.dof,
        typeset::num(q.condition_number, 3),
        q.iterations_total,
        q.interval_method
    );
    let _ = writeln!(s, "| run | RMS residual [rad] | noise floor [rad] | ratio | Ljung–Box p |");
    let _ = writeln!(s, "|---|---:|---:|---:|---:|");
    for r in &q.runs {
        let _ = writeln!(
            s,
            "| {} | {} | {} | {} | {} |",
            r.file,
            typeset::num(r.rms_residual, 3),
            typeset::num(r.noise_floor, 3),
            typeset::num(r.ratio_to_noise, 3),
            typeset::p_value(r.ljung_box_p)
        );
    }
    for f in &q.flags {
        let _ = writeln!(s, "\n> warning: {f}");
    }
    let _ = writeln!(s, "\n## Plots\n");
    for p in &doc.plots {
        let _ = writeln!(s, "- {}: [{}]({}) ([PNG]({}))", p.title, p.svg, p.svg, p.png);
    }
    let _ = writeln!(s, "\n## Assumptions and limits\n");
    for x in &doc.assumptions {
        let _ = writeln!(s, "- {x}");
    }
    let p = &doc.provenance;
    let _ = writeln!(s, "\n## Provenance\n");
    let _ = writeln!(s, "- {} {}, generated {}", p.tool, p.version, p.generated_utc);
    let _ = writeln!(s, "- command: `{}`", p.command_line);
    for i in &p.inputs {
        let _ = writeln!(s, "- {} {} ({} bytes) sha256 {}", i.role, i.path, i.bytes, i.sha256);
    }
    let _ = writeln!(s, "\n## Safety and use\n\n{}", doc.caution);
    // A figure that could not be computed reads "not available", never `NaN`.
    s.replace("NaN", "not available")
}

fn yes(b: bool) -> &'static str {
    if b { "yes" } else { "no" }
}

/// Escape text for HTML.
pub fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            c => o.push(c),
        }
    }
    o
}

const CSS: &str = "
@page { size: A4; margin: 12mm 12mm; }
* { box-sizing: border-box; }
body { font-family: 'Noto Sans', 'DejaVu Sans', Arial, sans-serif; font-size: 10pt; color: #111;
       max-width: 190mm; margin: 0 auto; padding: 6mm 4mm; line-height: 1.3; }
h1 { font-size: 16pt; margin: 0 0 1mm; }
h2 { font-size: 12pt; margin: 4mm 0 1.5mm; border-bottom: 1px solid #999; padding-bottom: 0.8mm; }
p { margin: 1mm 0 2mm; }
p.desc { margin: 0 0 1.5mm; }
p.note { font-size: 8.5pt; color: #333; }
p.verdict { font-size: 10.5pt; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 1.5mm; font-size: 8.5pt; }
th, td { border: 1px solid #bbb; padding: 0.15mm 1.6mm; text-align: left; vertical-align: top; }
th { background: #eee; }
tr.view th { background: #f6f6f6; font-style: italic; font-weight: normal; }
tr.failed td { color: #555; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.signoff td { height: 8mm; width: 22%; }
table.signoff th { width: 3%; white-space: nowrap; vertical-align: middle; }
dl.ident { display: grid; grid-template-columns: max-content 1fr; gap: 0.3mm 4mm; margin: 0; font-size: 9pt; }
dl.ident dt { font-weight: bold; }
dl.ident dd { margin: 0; }
figure { margin: 2mm 0 3mm; break-inside: avoid; page-break-inside: avoid; }
figure svg { width: 100%; height: auto; display: block; border: 1px solid #ddd; }
figure.main svg { width: auto; max-width: 100%; height: 50mm; margin: 0 auto; }
div.grid { display: grid; grid-template-columns: 1fr 1fr; gap: 0 4mm; }
div.grid figure { margin: 1mm 0 2mm; }
figcaption { font-size: 8pt; color: #333; margin-top: 0.5mm; }
.caution { border: 2px solid #b00; background: #fff4f4; padding: 2mm 3mm; }
.warn { color: #8a4b00; font-size: 8pt; }
code, .mono { font-family: 'DejaVu Sans Mono', monospace; font-size: 8pt; word-break: break-all; }
@media print {
  body { max-width: none; padding: 0; }
  h2 { break-after: avoid; page-break-after: avoid; }
  table, figure, dl, .caution, section#signoff { break-inside: avoid; page-break-inside: avoid; }
  section.appendix.first { break-before: page; page-break-before: always; }
  a { color: inherit; text-decoration: none; }
}
";

/// Make a plotters SVG scale with the page: drop the fixed size, keep a viewBox.
fn responsive_svg(svg: &str) -> String {
    let head = format!("<svg width=\"{}\" height=\"{}\"", plot::WIDTH, plot::HEIGHT);
    let body = svg.trim_start_matches(|c| c != '<');
    let body = body
        .strip_prefix("<?xml")
        .map_or(body, |rest| rest.split_once("?>").map_or(rest, |(_, b)| b.trim_start()));
    if body.starts_with(&head) {
        let rest = &body[head.len()..];
        let view = if rest.contains("viewBox") {
            String::new()
        } else {
            format!(" viewBox=\"0 0 {} {}\"", plot::WIDTH, plot::HEIGHT)
        };
        format!("<svg role=\"img\"{view}{rest}")
    } else {
        body.to_string()
    }
}

/// The first sentence of a verdict (up to the first ". "), for page one; the whole verdict is in
/// the evidence appendix.
pub fn first_sentence(text: &str) -> &str {
    text.find(". ").map_or(text, |i| &text[..=i])
}

/// The run as named on the sheet: its label, and the file only when it differs from the label.
fn run_name(r: &wire::Run) -> String {
    // The file by its name only (the full path is in the provenance appendix).
    let base = Path::new(&r.file)
        .file_name()
        .map_or_else(|| r.file.clone(), |n| n.to_string_lossy().into_owned());
    if r.label == r.file || base == r.label { base } else { format!("{} ({base})", r.label) }
}

/// The result in one or two sentences: the damping fitted and why.
pub fn result_sentences(doc: &wire::SheetDoc) -> String {
    let set = doc.damping.fitted.join(" + ");
    let damping = damping_sentence(doc, &set);
    format!("{} {damping}", doc.fit.adequacy.summary.trim_end())
}

/// How the damping set was chosen, in one sentence.
fn damping_sentence(doc: &wire::SheetDoc, set: &str) -> String {
    match &doc.comparison {
        Some(c) => format!(
            "Damping {set}, chosen by comparing {} candidate sets: {}",
            c.candidates.len(),
            first_sentence(&c.verdict)
        ),
        None => format!(
            "Damping {set}, fitted as requested; no comparison of candidate sets was run (damping \"auto\" or --compare runs one)."
        ),
    }
}

/// The value, u and U cells of a coefficient row, typeset (GUM: U to two significant digits,
/// value and u to the same decimal place).
fn coefficient_cells(r: &CoefficientRow) -> (String, String, String) {
    let (v, big) = format_pair(r.value, r.expanded_k2);
    let (_, u) = format_pair(r.value, r.std);
    (typeset::minus(&v), typeset::minus(&u), typeset::minus(&big))
}

fn figure(h: &mut String, p: &wire::Plot, svg: &str, class: &str) {
    let _ = writeln!(
        h,
        "<figure id=\"plot-{}\" class=\"{class}\">\n{}\n<figcaption>{} (files {}, {})</figcaption>\n</figure>",
        esc(&p.stem),
        responsive_svg(svg),
        esc(&p.title),
        esc(&p.svg),
        esc(&p.png)
    );
}

/// The stem of the plot on page one: the first cycles of the first run, where measured samples
/// and model can both be seen.
pub const PAGE_ONE_PLOT: &str = "run1_first_cycles";

/// The sheet as one self-contained HTML page; `svgs` are the rendered charts, in `doc.plots` order.
/// Page one holds the result (identity, coefficients, verdict, the fit plot, sign-off); the rest
/// follows as appendices, the first starting a new printed page.
pub fn sheet_html(doc: &wire::SheetDoc, svgs: &[String]) -> String {
    let mut h = String::new();
    let a = &doc.article;
    let title = if a.name.is_empty() {
        "Coefficient sheet".to_string()
    } else {
        format!("Coefficient sheet: {}", a.name)
    };
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n<main id=\"page-one\">\n",
        esc(&title)
    );
    let _ = writeln!(h, "<header id=\"identity\">\n<h1>{}</h1>", esc(&title));
    if !a.description.is_empty() {
        let _ = writeln!(h, "<p class=\"desc\">{}</p>", esc(&a.description));
    }
    let _ = writeln!(h, "<dl class=\"ident\">");
    for (k, v) in identity_fields(doc) {
        let _ = writeln!(h, "<dt>{}</dt><dd>{}</dd>", esc(k), esc(&v));
    }
    let _ = writeln!(h, "</dl>\n</header>");

    let _ = writeln!(h, "<section id=\"coefficients\">\n<h2>Coefficients</h2>");
    let _ = writeln!(
        h,
        "<table class=\"coefficients\">\n<thead><tr><th>quantity</th><th>symbol</th><th>value</th><th>u</th><th>U (k = 2)</th><th>unit</th></tr></thead>\n<tbody>"
    );
    let mut view = "";
    for r in &doc.coefficients {
        if r.view != view {
            view = r.view;
            let _ =
                writeln!(h, "<tr class=\"view\"><th colspan=\"6\">{}</th></tr>", view_title(view));
        }
        let (v, u, big) = coefficient_cells(r);
        let _ = writeln!(
            h,
            "<tr data-key=\"{}:{}\"><td>{}</td><td>{}</td><td class=\"num\">{v}</td><td class=\"num\">{u}</td><td class=\"num\">{big}</td><td>{}</td></tr>",
            r.view,
            r.key,
            esc(r.quantity),
            esc(r.symbol),
            esc(&typeset::unit(r.unit))
        );
    }
    let _ = writeln!(
        h,
        "</tbody>\n</table>\n<p class=\"note\">u: combined standard uncertainty; U = 2u: expanded uncertainty, coverage factor k = 2 (about 95 % for a normal distribution); values rounded to the decimal place of U (two significant digits of U). Full precision in sheet.json.</p>\n</section>"
    );

    let _ = writeln!(h, "<section id=\"verdict\">\n<h2>Result</h2>");
    let _ = writeln!(
        h,
        "<p class=\"verdict\">{}</p>",
        typeset::code_spans_html(&result_sentences(doc))
    );
    for f in &doc.quality.flags {
        let _ = writeln!(h, "<p class=\"warn\">Warning: {}</p>", typeset::code_spans_html(f));
    }
    let _ = writeln!(h, "</section>");

    let mut page_one_done = false;
    if let Some((p, svg)) = doc.plots.iter().zip(svgs).find(|(p, _)| p.stem == PAGE_ONE_PLOT) {
        figure(&mut h, p, svg, "main");
        page_one_done = true;
    }
    let _ = writeln!(
        h,
        "<section id=\"signoff\">\n<table class=\"signoff\">\n<tbody>\n<tr><th>performed by</th><td>{}</td><th>date</th><td></td><th>checked by</th><td></td><th>date</th><td></td></tr>\n</tbody>\n</table>\n</section>\n</main>",
        esc(a.operator.as_deref().unwrap_or(""))
    );

    let _ = writeln!(
        h,
        "<section id=\"evidence\" class=\"appendix first\">\n<h2>Appendix A. Evidence per candidate damping set</h2>"
    );
    match &doc.comparison {
        Some(c) => {
            let _ = writeln!(
                h,
                "<p>{}</p>\n<p>Measured envelope law: {}.</p>",
                typeset::code_spans_html(&c.verdict),
                esc(c.envelope_law)
            );
            let _ = writeln!(
                h,
                "<table class=\"candidates\">\n<thead><tr><th>damping</th><th>RMS residual [rad]</th><th>AIC</th><th>BIC</th><th>Ljung–Box p</th><th>all terms significant</th><th>explains decay</th></tr></thead>\n<tbody>"
            );
            for e in &c.candidates {
                let chosen = c.best.as_deref() == Some(e.damping.as_str());
                let name = format!(
                    "{}{}",
                    esc(&e.damping).replace('+', "+<wbr>"),
                    if chosen { " <b>(chosen)</b>" } else { "" }
                );
                match (&e.error, e.converged) {
                    (Some(m), _) => {
                        let _ = writeln!(
                            h,
                            "<tr class=\"failed\"><td>{name}</td><td colspan=\"6\">failed: {}</td></tr>",
                            typeset::code_spans_html(m)
                        );
                    }
                    (None, false) => {
                        let _ = writeln!(
                            h,
                            "<tr class=\"failed\"><td>{name}</td><td colspan=\"6\">failed: the fit did not converge</td></tr>"
                        );
                    }
                    (None, true) => {
                        let _ = writeln!(
                            h,
                            "<tr><td>{name}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td><td>{}</td></tr>",
                            typeset::num(e.rms_residual, 3),
                            typeset::num(e.aic, 6),
                            typeset::num(e.bic, 6),
                            typeset::p_value(e.ljung_box_p),
                            yes(e.all_significant),
                            yes(e.explains_decay)
                        );
                    }
                }
            }
            let _ = writeln!(h, "</tbody>\n</table>");
        }
        None => {
            let _ = writeln!(h, "<p>{}</p>", typeset::code_spans_html(&result_sentences(doc)));
        }
    }
    let _ = writeln!(h, "</section>");

    let q = &doc.quality;
    let _ = writeln!(
        h,
        "<section id=\"quality\" class=\"appendix\">\n<h2>Appendix B. Fit quality</h2>"
    );
    let _ = writeln!(
        h,
        "<p>RMS residual {} rad over {} samples ({} degrees of freedom); condition number of the scaled normal equations {}; {} iterations; intervals: {}.</p>",
        typeset::num(q.rms_residual, 3),
        q.samples,
        q.dof,
        typeset::num(q.condition_number, 3),
        q.iterations_total,
        esc(&q.interval_method)
    );
    let _ = writeln!(
        h,
        "<table>\n<thead><tr><th>run</th><th>RMS residual [rad]</th><th>noise floor [rad]</th><th>ratio</th><th>Ljung–Box p</th></tr></thead>\n<tbody>"
    );
    for r in &q.runs {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
            esc(&r.file),
            typeset::num(r.rms_residual, 3),
            typeset::num(r.noise_floor, 3),
            typeset::num(r.ratio_to_noise, 3),
            typeset::p_value(r.ljung_box_p)
        );
    }
    let _ = writeln!(h, "</tbody>\n</table>\n</section>");

    let _ = writeln!(
        h,
        "<section id=\"plots\" class=\"appendix\">\n<h2>Appendix C. Plots per run</h2>\n<div class=\"grid\">"
    );
    for (p, svg) in doc.plots.iter().zip(svgs) {
        if page_one_done && p.stem == PAGE_ONE_PLOT {
            continue;
        }
        figure(&mut h, p, svg, "half");
    }
    let _ = writeln!(h, "</div>\n</section>");

    let _ = writeln!(
        h,
        "<section id=\"assumptions\" class=\"appendix\">\n<h2>Appendix D. Assumptions and limits</h2>\n<ul>"
    );
    for x in &doc.assumptions {
        let _ = writeln!(h, "<li>{}</li>", esc(x));
    }
    let _ = writeln!(h, "</ul>\n</section>");

    let p = &doc.provenance;
    let _ = writeln!(
        h,
        "<section id=\"provenance\" class=\"appendix\">\n<h2>Appendix E. Provenance</h2>"
    );
    let _ = writeln!(
        h,
        "<p>{} {}, generated {} (UTC).</p>\n<p>Command: <code>{}</code></p>",
        esc(&p.tool),
        esc(&p.version),
        esc(&p.generated_utc),
        esc(&p.command_line)
    );
    let _ = writeln!(
        h,
        "<table>\n<thead><tr><th>input</th><th>file</th><th>bytes</th><th>SHA-256</th></tr></thead>\n<tbody>"
    );
    for i in &p.inputs {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"mono\">{}</td></tr>",
            esc(&i.role),
            esc(&i.path),
            i.bytes,
            esc(&i.sha256)
        );
    }
    let _ = writeln!(h, "</tbody>\n</table>\n</section>");
    let _ = writeln!(
        h,
        "<section id=\"caution\" class=\"appendix\">\n<h2>Appendix F. Safety and use</h2>\n<p class=\"caution\">{}</p>\n</section>\n</body>\n</html>",
        esc(doc.caution)
    );
    h
}

/// Why a sheet could not be written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SheetError {
    /// The output directory exists and `--force` was not given.
    #[error("{0}: already exists; give --force to replace it")]
    Exists(String),
    /// A file system operation failed.
    #[error("{path}: {what}")]
    Io {
        /// The path at fault.
        path: String,
        /// What failed.
        what: String,
    },
    /// A plot could not be drawn.
    #[error(transparent)]
    Plot(#[from] plot::PlotError),
    /// The PDF could not be printed.
    #[error(transparent)]
    Pdf(#[from] crate::report::pdf::PdfError),
}

fn io_err(path: &Path, what: &str, e: std::io::Error) -> SheetError {
    SheetError::Io { path: path.display().to_string(), what: format!("{what}: {e}") }
}

/// Refuse early when `dir` exists and `force` is off (also checked again before the rename).
pub fn check_destination(dir: &Path, force: bool) -> Result<(), SheetError> {
    if dir.exists() && !force {
        return Err(SheetError::Exists(dir.display().to_string()));
    }
    if dir.exists() && !dir.is_dir() {
        return Err(SheetError::Io {
            path: dir.display().to_string(),
            what: "exists and is not a directory".into(),
        });
    }
    Ok(())
}

/// A sibling path of `dir` named `.{name}.{tag}.{pid}`.
fn sibling(dir: &Path, tag: &str) -> PathBuf {
    let name =
        dir.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| "sheet".into());
    let parent = match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    parent.join(format!(".{name}.{tag}.{}", std::process::id()))
}

/// What [`write_sheet`] wrote.
#[derive(Clone, Debug, PartialEq)]
pub struct Written {
    /// The sheet directory.
    pub dir: PathBuf,
    /// File names inside it.
    pub files: Vec<String>,
}

/// Render every part of the sheet into `dir`, which must exist and be empty.
pub fn render_into(dir: &Path, input: &SheetInput<'_>) -> Result<Vec<String>, SheetError> {
    let charts = plot::sheet_charts(&input.runs, input.fit.omega_n.value, input.comparison);
    let doc = sheet_doc(input, &charts);
    let mut files = Vec::new();
    let mut svgs = Vec::new();
    for c in &charts {
        let svg = plot::render_svg(c)?;
        let name = format!("{}.svg", c.stem);
        fs::write(dir.join(&name), &svg)
            .map_err(|e| io_err(&dir.join(&name), "cannot write", e))?;
        files.push(name);
        let png = format!("{}.png", c.stem);
        plot::render_png(c, &dir.join(&png))?;
        files.push(png);
        svgs.push(svg);
    }
    let put = |name: &str, text: &str, files: &mut Vec<String>| {
        let p = dir.join(name);
        fs::write(&p, text).map_err(|e| io_err(&p, "cannot write", e))?;
        files.push(name.to_string());
        Ok::<(), SheetError>(())
    };
    put("sheet.json", &json::to_pretty(&doc), &mut files)?;
    put("sheet.md", &sheet_markdown(&doc), &mut files)?;
    put("sheet.html", &sheet_html(&doc, &svgs), &mut files)?;
    Ok(files)
}

/// Like [`write_sheet`], and with `browser` also `sheet.pdf`, printed from the finished page in
/// the temporary directory, so the PDF is installed with the rest or not at all.
pub fn write_sheet_with_pdf(
    dir: &Path,
    force: bool,
    input: &SheetInput<'_>,
    browser: Option<&Path>,
) -> Result<Written, SheetError> {
    check_destination(dir, force)?;
    let tmp = sibling(dir, "partial");
    if tmp.exists() {
        fs::remove_dir_all(&tmp)
            .map_err(|e| io_err(&tmp, "cannot remove a stale temporary directory", e))?;
    }
    fs::create_dir_all(&tmp)
        .map_err(|e| io_err(&tmp, "cannot create the temporary directory", e))?;
    let result = render_into(&tmp, input).and_then(|mut files| {
        if let Some(b) = browser {
            crate::report::pdf::print_to_pdf(b, &tmp.join("sheet.html"), &tmp.join("sheet.pdf"))?;
            files.push("sheet.pdf".into());
        }
        install(&tmp, dir, force)?;
        Ok(Written { dir: dir.to_path_buf(), files })
    });
    if result.is_err() {
        let _ = fs::remove_dir_all(&tmp);
    }
    result
}

/// Write the sheet for `input` to `dir`: built whole in a temporary directory beside `dir`, then
/// renamed into place. An existing `dir` is refused unless `force`, and then replaced whole. On
/// any failure the temporary directory is removed and `dir` is left as it was.
pub fn write_sheet(dir: &Path, force: bool, input: &SheetInput<'_>) -> Result<Written, SheetError> {
    write_sheet_with_pdf(dir, force, input, None)
}

/// Move the complete `tmp` to `dir`, replacing an existing `dir` only with `force`.
fn install(tmp: &Path, dir: &Path, force: bool) -> Result<(), SheetError> {
    if !dir.exists() {
        return fs::rename(tmp, dir)
            .map_err(|e| io_err(dir, "cannot move the sheet into place", e));
    }
    if !force {
        return Err(SheetError::Exists(dir.display().to_string()));
    }
    let old = sibling(dir, "old");
    if old.exists() {
        fs::remove_dir_all(&old).map_err(|e| io_err(&old, "cannot remove a stale directory", e))?;
    }
    fs::rename(dir, &old).map_err(|e| io_err(dir, "cannot move the old sheet aside", e))?;
    if let Err(e) = fs::rename(tmp, dir) {
        // Put the old sheet back so the destination is never left empty.
        let _ = fs::rename(&old, dir);
        return Err(io_err(dir, "cannot move the sheet into place", e));
    }
    fs::remove_dir_all(&old).map_err(|e| io_err(&old, "cannot remove the replaced sheet", e))
}
