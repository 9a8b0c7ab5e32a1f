//! Reading the parameters of `simulate`: the plain params JSON, or the JSON written by `fit --json`.
//!
//! Plain format (per unit inertia, SI, radians):
//! `{"omega_n", "viscous", "coulomb", "quadratic", "breakaway", "equilibrium", "initial_angle",
//! "initial_velocity"}`; `omega_n` and `initial_angle` are required, absent damping terms are
//! zero, absent `breakaway` equals `coulomb`, absent `equilibrium`/`initial_velocity` are zero.
//! Unknown keys are refused so that a typo cannot silently zero a term.
//!
//! Fit format (`"schema": "swingfit.fit.v1"`): the coefficients come from `normalized` and the
//! release from one entry of `runs`; each value is `{"value": x, ...}` (a bare number is also
//! taken). Keys this reader does not use are ignored there, since the fit output carries more.

use std::path::Path;

use serde_json::{Map, Value};

use crate::model::{Physics, Release, Term};

/// The schema tag of the JSON written by `fit --json`.
pub const FIT_SCHEMA: &str = "swingfit.fit.v1";

/// Keys of the plain params format.
const PLAIN_KEYS: [&str; 9] = [
    "omega_n",
    "viscous",
    "coulomb",
    "quadratic",
    "presliding",
    "breakaway",
    "equilibrium",
    "initial_angle",
    "initial_velocity",
];

/// A params file that could not be used: the file and what was wrong.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{path}: {kind}")]
pub struct ParamsError {
    /// File as given.
    pub path: String,
    /// What went wrong, naming the field.
    pub kind: String,
}

/// What a params file says: the physics and the release of the run to simulate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SimParams {
    /// Coefficients per unit inertia.
    pub physics: Physics,
    /// Equilibrium and state at the first sample time.
    pub release: Release,
}

/// Read the params file at `path`; `run` picks the run of a fit result (default 0).
pub fn read(path: &Path, run: Option<usize>) -> Result<SimParams, ParamsError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path)
        .map_err(|e| ParamsError { path: name.clone(), kind: format!("cannot read: {e}") })?;
    parse(&name, &bytes, run)
}

/// Parse params JSON bytes; `name` is used in messages. Never panics, on any input.
pub fn parse(name: &str, bytes: &[u8], run: Option<usize>) -> Result<SimParams, ParamsError> {
    let err = |kind: String| ParamsError { path: name.to_string(), kind };
    let value: Value = serde_json::from_slice(bytes).map_err(|e| {
        err(format!("line {}, column {}: not valid json: {}", e.line(), e.column(), strip_pos(&e)))
    })?;
    let Value::Object(map) = value else {
        return Err(err(format!("expected a json object, found {}", kind_of(&value))));
    };
    let p = if map.contains_key("schema") { from_fit(&map, run) } else { from_plain(&map, run) }
        .map_err(err)?;
    p.physics.validate().map_err(err)?;
    Ok(p)
}

/// serde_json's message without its trailing " at line L column C".
fn strip_pos(e: &serde_json::Error) -> String {
    let s = e.to_string();
    match s.rfind(" at line ") {
        Some(i) => s[..i].to_string(),
        None => s,
    }
}

fn kind_of(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

/// A number field of the plain format.
fn number(map: &Map<String, Value>, key: &str, ctx: &str) -> Result<Option<f64>, String> {
    match map.get(key) {
        None => Ok(None),
        Some(Value::Number(n)) => match n.as_f64() {
            Some(x) if x.is_finite() => Ok(Some(x)),
            _ => Err(format!("field \"{ctx}{key}\": expected a finite number, found {n}")),
        },
        Some(v) => Err(format!("field \"{ctx}{key}\": expected a number, found {}", kind_of(v))),
    }
}

/// A value of the fit format: `{"value": x, ...}` or a bare number.
fn fit_value(map: &Map<String, Value>, key: &str, ctx: &str) -> Result<Option<f64>, String> {
    match map.get(key) {
        None | Some(Value::Null) => Ok(None),
        Some(Value::Object(p)) => match number(p, "value", &format!("{ctx}{key}."))? {
            Some(x) => Ok(Some(x)),
            None => Err(format!("field \"{ctx}{key}\": expected an object with a \"value\"")),
        },
        Some(Value::Number(_)) => number(map, key, ctx),
        Some(v) => Err(format!(
            "field \"{ctx}{key}\": expected {{\"value\": number, ...}}, found {}",
            kind_of(v)
        )),
    }
}

fn required(v: Option<f64>, key: &str) -> Result<f64, String> {
    v.ok_or_else(|| format!("missing field \"{key}\" (required)"))
}

fn from_plain(map: &Map<String, Value>, run: Option<usize>) -> Result<SimParams, String> {
    if let Some(unknown) = map.keys().find(|k| !PLAIN_KEYS.contains(&k.as_str())) {
        return Err(format!(
            "unknown field \"{unknown}\"; expected one of {}",
            PLAIN_KEYS.join(", ")
        ));
    }
    if run.is_some() {
        return Err(format!("--run applies only to a fit result (\"schema\": \"{FIT_SCHEMA}\")"));
    }
    let get = |k: &str| number(map, k, "");
    let mut physics = Physics::undamped(required(get("omega_n")?, "omega_n")?);
    for t in Term::ALL {
        physics.damping[t.index()] = get(t.name())?.unwrap_or(0.0);
    }
    physics.breakaway = get("breakaway")?;
    let release = Release {
        equilibrium: get("equilibrium")?.unwrap_or(0.0),
        angle: required(get("initial_angle")?, "initial_angle")?,
        velocity: get("initial_velocity")?.unwrap_or(0.0),
    };
    Ok(SimParams { physics, release })
}

fn from_fit(map: &Map<String, Value>, run: Option<usize>) -> Result<SimParams, String> {
    match map.get("schema") {
        Some(Value::String(s)) if s == FIT_SCHEMA => {}
        Some(v) => {
            return Err(format!(
                "field \"schema\": expected \"{FIT_SCHEMA}\", found {}",
                match v {
                    Value::String(s) => format!("\"{s}\""),
                    other => kind_of(other).to_string(),
                }
            ));
        }
        None => return Err(format!("missing field \"schema\" (expected \"{FIT_SCHEMA}\")")),
    }
    let normalized = match map.get("normalized") {
        Some(Value::Object(m)) => m,
        Some(v) => {
            return Err(format!("field \"normalized\": expected an object, found {}", kind_of(v)));
        }
        None => return Err("missing field \"normalized\" (required in a fit result)".into()),
    };
    let get = |k: &str| fit_value(normalized, k, "normalized.");
    let mut physics = Physics::undamped(required(get("omega_n")?, "normalized.omega_n")?);
    for t in Term::ALL {
        physics.damping[t.index()] = get(t.name())?.unwrap_or(0.0);
    }
    physics.breakaway = get("breakaway")?;
    let runs = match map.get("runs") {
        Some(Value::Array(a)) => a,
        Some(v) => return Err(format!("field \"runs\": expected an array, found {}", kind_of(v))),
        None => return Err("missing field \"runs\" (required in a fit result)".into()),
    };
    let index = run.unwrap_or(0);
    let entry = match runs.get(index) {
        Some(Value::Object(m)) => m,
        Some(v) => {
            return Err(format!(
                "field \"runs[{index}]\": expected an object, found {}",
                kind_of(v)
            ));
        }
        None => {
            return Err(format!(
                "run {index} requested but the fit result has {} run(s) (--run counts from 0)",
                runs.len()
            ));
        }
    };
    let ctx = format!("runs[{index}].");
    let release = Release {
        equilibrium: fit_value(entry, "equilibrium", &ctx)?.unwrap_or(0.0),
        angle: required(fit_value(entry, "initial_angle", &ctx)?, &format!("{ctx}initial_angle"))?,
        velocity: fit_value(entry, "initial_velocity", &ctx)?.unwrap_or(0.0),
    };
    Ok(SimParams { physics, release })
}
