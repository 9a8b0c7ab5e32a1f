//! `--run LOG[:KEY=VALUE,...]`: one log with its own loader settings, for a joint fit of logs
//! that need different settings (a counts log with a degrees log, different columns or windows).
//!
//! The keys are those of an article file's `[[run]]` table (`docs/article-format.md`): the
//! `key=value` list is written out as that TOML table and read by
//! [`crate::article::parse_run`], so a value means exactly what it means in an article file and
//! there is no second parser of the same keys. A value that reads as a number or as
//! `true`/`false` is given as such, anything else as a string; a key alone (`drop_bad_rows`)
//! means `key=true`. The options start after the last `:` of the argument, unless the whole
//! argument names an existing file.

use std::path::{Path, PathBuf};

use super::Failure;
use crate::article::{self, RunSpec};
use crate::data::LoadOptions;

/// The log and loader settings of one `--run` argument.
pub fn parse(arg: &str) -> Result<RunSpec, Failure> {
    let refuse = |what: String| Failure::input(format!("--run {arg:?}: {what}"));
    let (log, list) = match arg.rsplit_once(':') {
        Some((log, list)) if !Path::new(arg).is_file() => (log, list),
        _ => (arg, ""),
    };
    if log.trim().is_empty() {
        return Err(refuse("expected LOG or LOG:KEY=VALUE,... (the log path is missing)".into()));
    }
    let mut table = format!("log = {}\n", toml_string(log));
    for item in list.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        let (key, value) = match item.split_once('=') {
            Some((k, v)) => (k.trim(), toml_value(v.trim())),
            None => (item, "true".to_string()),
        };
        let bare = !key.is_empty()
            && key.chars().all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
        if !bare || key == "log" {
            return Err(refuse(format!(
                "{item:?}: expected KEY=VALUE with a run key of the article file (time_col, angle_col, time_unit, angle_unit, counts_per_rev, counts_wrap, skip_lines, rate, duplicate_times, signal_scale, signal_zero, drop_bad_rows, from, to, keep_slips, label); the log goes before the ':'"
            )));
        }
        table.push_str(&format!("{key} = {value}\n"));
    }
    article::parse_run("--run", &table, Path::new("")).map_err(|e| {
        refuse(format!("{}{}", e.key.map(|k| format!("{k}: ")).unwrap_or_default(), e.what))
    })
}

/// Every `--run`, in order, as (log, loader settings).
pub fn parse_all(args: &[String]) -> Result<Vec<(PathBuf, LoadOptions)>, Failure> {
    args.iter().map(|a| parse(a).map(|r| (r.log, r.load))).collect()
}

/// `v` as a TOML value: numbers and booleans as they are, anything else as a string.
fn toml_value(v: &str) -> String {
    if v == "true" || v == "false" {
        return v.to_string();
    }
    if let Ok(i) = v.parse::<i64>() {
        return i.to_string();
    }
    match v.parse::<f64>() {
        Ok(x) if x.is_nan() => "nan".to_string(),
        Ok(x) if x.is_infinite() => if x > 0.0 { "inf" } else { "-inf" }.to_string(),
        Ok(x) => format!("{x:?}"),
        Err(_) => toml_string(v),
    }
}

/// `s` as a TOML basic string.
fn toml_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}
