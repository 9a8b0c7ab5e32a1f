//! The parameters `simulate --params` and `plan --params` read: the plain params JSON, or the
//! document `fit --json` writes.
//!
//! Plain format (per unit inertia, SI, radians): [`PlainParams`], `{"omega_n", "viscous",
//! "coulomb", "quadratic", "presliding", "stribeck", "stribeck_velocity", "breakaway", "equilibrium", "initial_angle",
//! "initial_velocity"}`; `omega_n` and `initial_angle` are required, absent damping terms are
//! zero, absent `breakaway` equals `coulomb`, absent `equilibrium`/`initial_velocity` are zero.
//! Unknown keys are refused (`deny_unknown_fields`) so that a typo cannot silently zero a term.
//!
//! Fit format ([`FitParams`], `"schema"` one of [`FIT_SCHEMAS`]): the coefficients come from
//! `normalized` and the release from one entry of `runs`; each value is `{"value": x, ...}` (a
//! bare number is also taken). Keys this reader does not use are ignored there, since the fit
//! document carries much more than a simulation needs; the keys it uses have the same names in
//! every fit schema version.

use std::path::Path;

use serde::{Deserialize, Deserializer};

use crate::model::{Physics, Release, Term};

/// The fit document versions this reader takes.
pub const FIT_SCHEMAS: [&str; 2] = [super::fit::FIT_SCHEMA_V1, super::fit::FIT_SCHEMA];

/// A params file that could not be used: the file and what was wrong.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{path}: {kind}")]
pub struct ParamsError {
    /// File as given.
    pub path: String,
    /// What went wrong.
    pub kind: ParamsErrorKind,
}

/// What was wrong with a params file.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ParamsErrorKind {
    /// The file could not be read.
    #[error("cannot read: {0}")]
    Read(String),
    /// Not JSON at all.
    #[error("line {line}, column {column}: not valid json: {message}")]
    Syntax {
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// serde_json's message without its position.
        message: String,
    },
    /// JSON, but not an object.
    #[error("expected a json object, found {0}")]
    NotObject(&'static str),
    /// A fit document of a schema this reader does not know.
    #[error("field \"schema\": expected one of {expected}, found {found}")]
    Schema {
        /// The schemas taken, quoted.
        expected: String,
        /// What the file says, quoted (or its JSON type).
        found: String,
    },
    /// A field is missing, unknown or of the wrong type.
    #[error("{0}")]
    Field(String),
    /// `--run` given with a plain params file.
    #[error("--run applies only to a fit result (\"schema\": \"{0}\")")]
    RunOnPlain(&'static str),
    /// `--run` past the runs of the fit document.
    #[error("run {index} requested but the fit result has {runs} run(s) (--run counts from 0)")]
    NoSuchRun {
        /// Requested (0-based).
        index: usize,
        /// Runs in the document.
        runs: usize,
    },
    /// The coefficients are not a valid physics (negative damping, …).
    #[error("{0}")]
    Physics(String),
}

/// What a params file says: the physics and the release of the run to simulate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SimParams {
    /// Coefficients per unit inertia.
    pub physics: Physics,
    /// Equilibrium and state at the first sample time.
    pub release: Release,
}

/// A number of the plain format (a string or another type is refused as "expected a number").
fn number<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    struct V;
    impl serde::de::Visitor<'_> for V {
        type Value = Option<f64>;
        fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str("a number")
        }
        fn visit_f64<E>(self, v: f64) -> Result<Self::Value, E> {
            Ok(Some(v))
        }
        fn visit_i64<E>(self, v: i64) -> Result<Self::Value, E> {
            Ok(Some(v as f64))
        }
        fn visit_u64<E>(self, v: u64) -> Result<Self::Value, E> {
            Ok(Some(v as f64))
        }
    }
    d.deserialize_any(V)
}

/// The plain params file.
#[derive(Deserialize, Debug, Clone, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct PlainParams {
    /// ωn [rad/s] (required).
    #[serde(default, deserialize_with = "number")]
    pub omega_n: Option<f64>,
    /// b1 [1/s].
    #[serde(default, deserialize_with = "number")]
    pub viscous: Option<f64>,
    /// b0 [rad/s²].
    #[serde(default, deserialize_with = "number")]
    pub coulomb: Option<f64>,
    /// b2 [1/rad].
    #[serde(default, deserialize_with = "number")]
    pub quadratic: Option<f64>,
    /// σ [1/s²].
    #[serde(default, deserialize_with = "number")]
    pub presliding: Option<f64>,
    /// Stribeck excess bs [rad/s²].
    #[serde(default, deserialize_with = "number")]
    pub stribeck: Option<f64>,
    /// Stribeck velocity vs [rad/s].
    #[serde(default, deserialize_with = "number")]
    pub stribeck_velocity: Option<f64>,
    /// Breakaway level per unit inertia [rad/s²] (default: `coulomb`).
    #[serde(default, deserialize_with = "number")]
    pub breakaway: Option<f64>,
    /// θeq [rad].
    #[serde(default, deserialize_with = "number")]
    pub equilibrium: Option<f64>,
    /// θ at the first sample [rad] (required).
    #[serde(default, deserialize_with = "number")]
    pub initial_angle: Option<f64>,
    /// ω at the first sample [rad/s].
    #[serde(default, deserialize_with = "number")]
    pub initial_velocity: Option<f64>,
}

/// A value of a fit document as this reader takes it: `{"value": x, ...}` or a bare number.
#[derive(Deserialize, Debug, Clone, Copy, PartialEq)]
#[serde(untagged, expecting = "{\"value\": number, ...} or a number")]
pub enum FitValue {
    /// `{"value": x, …}`.
    Object {
        /// The value.
        value: f64,
    },
    /// A bare number.
    Number(f64),
}

impl FitValue {
    fn get(self) -> f64 {
        match self {
            FitValue::Object { value } | FitValue::Number(value) => value,
        }
    }
}

/// The `normalized` block as this reader takes it.
#[derive(Deserialize, Debug, Clone, PartialEq)]
pub struct FitNormalized {
    /// ωn (required).
    pub omega_n: FitValue,
    /// b1.
    #[serde(default)]
    pub viscous: Option<FitValue>,
    /// b0.
    #[serde(default)]
    pub coulomb: Option<FitValue>,
    /// b2.
    #[serde(default)]
    pub quadratic: Option<FitValue>,
    /// σ.
    #[serde(default)]
    pub presliding: Option<FitValue>,
    /// Stribeck excess bs.
    #[serde(default)]
    pub stribeck: Option<FitValue>,
    /// Stribeck velocity vs.
    #[serde(default)]
    pub stribeck_velocity: Option<FitValue>,
    /// Breakaway level.
    #[serde(default)]
    pub breakaway: Option<FitValue>,
}

/// One run of a fit document as this reader takes it.
#[derive(Deserialize, Debug, Clone, PartialEq)]
pub struct FitRun {
    /// θeq.
    #[serde(default)]
    pub equilibrium: Option<FitValue>,
    /// θ at the first sample (required).
    pub initial_angle: FitValue,
    /// ω at the first sample.
    #[serde(default)]
    pub initial_velocity: Option<FitValue>,
}

/// The part of a fit document a simulation needs.
#[derive(Deserialize, Debug, Clone, PartialEq)]
pub struct FitParams {
    /// One of [`FIT_SCHEMAS`].
    pub schema: String,
    /// Coefficients per unit inertia.
    pub normalized: FitNormalized,
    /// The runs, each with its release.
    pub runs: Vec<FitRun>,
}

/// Read the params file at `path`; `run` picks the run of a fit result (default 0).
pub fn read(path: &Path, run: Option<usize>) -> Result<SimParams, ParamsError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| ParamsError {
        path: name.clone(),
        kind: ParamsErrorKind::Read(e.to_string()),
    })?;
    parse(&name, &bytes, run)
}

/// Parse params JSON bytes; `name` is used in messages. Never panics, on any input.
pub fn parse(name: &str, bytes: &[u8], run: Option<usize>) -> Result<SimParams, ParamsError> {
    let err = |kind| ParamsError { path: name.to_string(), kind };
    let value: serde_json::Value = serde_json::from_slice(bytes).map_err(|e| {
        err(ParamsErrorKind::Syntax { line: e.line(), column: e.column(), message: strip_pos(&e) })
    })?;
    let serde_json::Value::Object(map) = &value else {
        return Err(err(ParamsErrorKind::NotObject(kind_of(&value))));
    };
    let p = match map.get("schema") {
        None => typed(value).and_then(|p| from_plain(p, run)),
        Some(serde_json::Value::String(s)) if FIT_SCHEMAS.contains(&s.as_str()) => {
            typed(value).and_then(|d| from_fit(d, run))
        }
        Some(found) => Err(ParamsErrorKind::Schema {
            expected: FIT_SCHEMAS.iter().map(|s| format!("\"{s}\"")).collect::<Vec<_>>().join(", "),
            found: match found {
                serde_json::Value::String(s) => format!("\"{s}\""),
                other => kind_of(other).to_string(),
            },
        }),
    }
    .map_err(err)?;
    p.physics.validate().map_err(|m| err(ParamsErrorKind::Physics(m)))?;
    Ok(p)
}

/// The typed document, with the path of a bad field in the message.
fn typed<T: for<'de> Deserialize<'de>>(value: serde_json::Value) -> Result<T, ParamsErrorKind> {
    serde_path_to_error::deserialize(value).map_err(|e| {
        let path = e.path().to_string();
        // serde quotes names in backticks; the messages of this program use double quotes.
        let inner = e.inner().to_string().replace('`', "\"");
        let message = if path == "." { inner } else { format!("field \"{path}\": {inner}") };
        ParamsErrorKind::Field(message)
    })
}

/// serde_json's message without its trailing " at line L column C".
fn strip_pos(e: &serde_json::Error) -> String {
    let s = e.to_string();
    match s.rfind(" at line ") {
        Some(i) => s[..i].to_string(),
        None => s,
    }
}

fn kind_of(v: &serde_json::Value) -> &'static str {
    use serde_json::Value;
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

fn required(v: Option<f64>, key: &str) -> Result<f64, ParamsErrorKind> {
    v.ok_or_else(|| ParamsErrorKind::Field(format!("missing field \"{key}\" (required)")))
}

fn from_plain(p: PlainParams, run: Option<usize>) -> Result<SimParams, ParamsErrorKind> {
    if run.is_some() {
        return Err(ParamsErrorKind::RunOnPlain(super::fit::FIT_SCHEMA));
    }
    let mut physics = Physics::undamped(required(p.omega_n, "omega_n")?);
    for t in Term::ALL {
        let c = match t {
            Term::Viscous => p.viscous,
            Term::Coulomb => p.coulomb,
            Term::Quadratic => p.quadratic,
            Term::Presliding => p.presliding,
            Term::Stribeck => p.stribeck,
            Term::StribeckVelocity => p.stribeck_velocity,
        };
        physics.damping[t.index()] = c.unwrap_or(0.0);
    }
    physics.breakaway = p.breakaway;
    let release = Release {
        equilibrium: p.equilibrium.unwrap_or(0.0),
        angle: required(p.initial_angle, "initial_angle")?,
        velocity: p.initial_velocity.unwrap_or(0.0),
    };
    Ok(SimParams { physics, release })
}

fn from_fit(doc: FitParams, run: Option<usize>) -> Result<SimParams, ParamsErrorKind> {
    let n = &doc.normalized;
    let mut physics = Physics::undamped(n.omega_n.get());
    for t in Term::ALL {
        let c = match t {
            Term::Viscous => n.viscous,
            Term::Coulomb => n.coulomb,
            Term::Quadratic => n.quadratic,
            Term::Presliding => n.presliding,
            Term::Stribeck => n.stribeck,
            Term::StribeckVelocity => n.stribeck_velocity,
        };
        physics.damping[t.index()] = c.map_or(0.0, FitValue::get);
    }
    physics.breakaway = n.breakaway.map(FitValue::get);
    let index = run.unwrap_or(0);
    let r =
        doc.runs.get(index).ok_or(ParamsErrorKind::NoSuchRun { index, runs: doc.runs.len() })?;
    let release = Release {
        equilibrium: r.equilibrium.map_or(0.0, FitValue::get),
        angle: r.initial_angle.get(),
        velocity: r.initial_velocity.map_or(0.0, FitValue::get),
    };
    Ok(SimParams { physics, release })
}
