//! The article file: one TOML file describing a test article, its rig and its runs.
//!
//! A coefficient sheet needs more than the logs: who the article is, its mass properties with
//! their uncertainties, the gravity at the rig, how to read each log and which damping to fit.
//! This module reads that file (format in `docs/article-format.md`) into an [`ArticleSpec`] of
//! library types. Every table rejects unknown keys, so a typo fails instead of being ignored, and
//! every error names the file, the 1-based line and the key at fault.

use std::ops::Range;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::data::LoadOptions;
use crate::model::DampingSet;
use crate::physical::{self, Gravity, Measured};

/// Why an article file was refused: file, line, key and what was expected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}{}: {}{what}", line.map(|l| format!(":{l}")).unwrap_or_default(), key.as_ref().map(|k| format!("{k}: ")).unwrap_or_default())]
pub struct ArticleError {
    /// The article file as given.
    pub file: String,
    /// 1-based line, when one line is at fault.
    pub line: Option<usize>,
    /// Dotted key at fault, e.g. `mass.value`.
    pub key: Option<String>,
    /// What went wrong and what was expected.
    pub what: String,
}

/// Which damping to fit (defined with the workflow that uses it).
pub use crate::fit::workflow::DampingChoice;

/// One run of the article: a log and how to read it.
#[derive(Clone, Debug, PartialEq)]
pub struct RunSpec {
    /// Free-text label of the run (e.g. "release 60 deg").
    pub label: Option<String>,
    /// The log path as written in the article file.
    pub log_as_written: String,
    /// The log path resolved against the article file's directory.
    pub log: PathBuf,
    /// Loader settings for this log.
    pub load: LoadOptions,
}

/// A validated article file.
#[derive(Clone, Debug, PartialEq)]
pub struct ArticleSpec {
    /// Short identifier of the article (e.g. a part number).
    pub id: String,
    /// Name in words.
    pub name: String,
    /// Description.
    pub description: String,
    /// The rig the article swung on.
    pub rig: Option<String>,
    /// Who ran the test.
    pub operator: Option<String>,
    /// Free notes.
    pub notes: Option<String>,
    /// Mass, pivot-to-CG distance and gravity.
    pub physical: physical::ArticleInputs,
    /// Gravity as written, in words (for the sheet).
    pub gravity_words: String,
    /// Damping to fit.
    pub damping: DampingChoice,
    /// The runs, in file order.
    pub runs: Vec<RunSpec>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawArticle {
    id: Spanned<String>,
    name: Spanned<String>,
    #[serde(default)]
    description: Option<String>,
    #[serde(default)]
    rig: Option<String>,
    #[serde(default)]
    operator: Option<String>,
    #[serde(default)]
    notes: Option<String>,
    #[serde(default)]
    damping: Option<Spanned<RawDamping>>,
    mass: RawMeasured,
    pivot_to_cg: RawMeasured,
    #[serde(default)]
    gravity: Option<Spanned<RawGravity>>,
    #[serde(default)]
    run: Vec<Spanned<RawRun>>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum RawDamping {
    Word(String),
    List(Vec<String>),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMeasured {
    value: Spanned<f64>,
    std: Spanned<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGravity {
    #[serde(default)]
    standard: Option<Spanned<bool>>,
    #[serde(default)]
    value: Option<Spanned<f64>>,
    #[serde(default)]
    std: Option<Spanned<f64>>,
    #[serde(default)]
    latitude_deg: Option<Spanned<f64>>,
    #[serde(default)]
    elevation_m: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRun {
    log: Spanned<String>,
    #[serde(default)]
    label: Option<String>,
    #[serde(default)]
    time_col: Option<RawColumn>,
    #[serde(default)]
    angle_col: Option<RawColumn>,
    #[serde(default)]
    time_unit: Option<Spanned<String>>,
    #[serde(default)]
    angle_unit: Option<Spanned<String>>,
    #[serde(default)]
    counts_per_rev: Option<Spanned<f64>>,
    #[serde(default)]
    counts_wrap: Option<Spanned<i64>>,
    #[serde(default)]
    skip_lines: Option<Spanned<i64>>,
    #[serde(default)]
    rate: Option<Spanned<f64>>,
    #[serde(default)]
    duplicate_times: Option<Spanned<String>>,
    #[serde(default)]
    signal_scale: Option<Spanned<String>>,
    #[serde(default)]
    signal_zero: Option<Spanned<f64>>,
    #[serde(default)]
    drop_bad_rows: bool,
    #[serde(default)]
    from: Option<Spanned<f64>>,
    #[serde(default)]
    to: Option<Spanned<f64>>,
    #[serde(default)]
    keep_slips: bool,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum RawColumn {
    Name(String),
    Index(i64),
}

impl RawColumn {
    fn into_string(self) -> String {
        match self {
            RawColumn::Name(s) => s,
            RawColumn::Index(i) => i.to_string(),
        }
    }
}

/// 1-based line of byte offset `at` in `text`.
fn line_of(text: &str, at: usize) -> usize {
    text.as_bytes()[..at.min(text.len())].iter().filter(|&&b| b == b'\n').count() + 1
}

/// The dotted key written on the line holding `span`: the nearest `[table]` header above it
/// joined with the key before `=` on that line (when the line has one).
fn key_at(text: &str, span: &Range<usize>) -> Option<String> {
    let start = span.start.min(text.len());
    let line_start = text[..start].rfind('\n').map_or(0, |i| i + 1);
    let line_end = text[start..].find('\n').map_or(text.len(), |i| start + i);
    let line = &text[line_start..line_end];
    let leaf = line.split_once('=').map(|(k, _)| k.trim().to_string()).filter(|k| !k.is_empty());
    let header = text[..line_start]
        .lines()
        .rev()
        .map(str::trim)
        .find(|l| l.starts_with('['))
        .map(|h| h.trim_start_matches('[').split(']').next().unwrap_or("").trim().to_string());
    let header = if line.trim_start().starts_with('[') { None } else { header };
    match (header, leaf) {
        (Some(h), Some(k)) => Some(format!("{h}.{k}")),
        (None, Some(k)) => Some(k),
        (Some(h), None) => Some(h),
        (None, None) => None,
    }
}

struct Ctx<'a> {
    file: &'a str,
    text: &'a str,
}

impl Ctx<'_> {
    fn at(&self, span: Range<usize>, key: &str, what: impl Into<String>) -> ArticleError {
        ArticleError {
            file: self.file.to_string(),
            line: Some(line_of(self.text, span.start)),
            key: Some(key.to_string()),
            what: what.into(),
        }
    }

    fn nonempty(&self, s: &Spanned<String>, key: &str) -> Result<String, ArticleError> {
        let v = s.get_ref().trim();
        if v.is_empty() {
            Err(self.at(s.span(), key, "expected a non-empty string"))
        } else {
            Ok(v.to_string())
        }
    }

    fn positive(&self, v: &Spanned<f64>, key: &str, what: &str) -> Result<f64, ArticleError> {
        let x = *v.get_ref();
        if x.is_finite() && x > 0.0 {
            Ok(x)
        } else {
            Err(self.at(v.span(), key, format!("expected a positive {what}, found {x}")))
        }
    }

    fn non_negative(&self, v: &Spanned<f64>, key: &str, what: &str) -> Result<f64, ArticleError> {
        let x = *v.get_ref();
        if x.is_finite() && x >= 0.0 {
            Ok(x)
        } else {
            Err(self.at(v.span(), key, format!("expected a non-negative {what}, found {x}")))
        }
    }
}

/// Parse the text of an article file. `file` names it in messages; log paths are resolved
/// against `base` (the article file's directory). Does not touch the file system.
pub fn parse(file: &str, text: &str, base: &Path) -> Result<ArticleSpec, ArticleError> {
    let raw: RawArticle = toml::from_str(text).map_err(|e| toml_error(file, text, &e))?;
    let cx = Ctx { file, text };
    let nonempty = |s: &Spanned<String>, key: &str| cx.nonempty(s, key);
    let id = nonempty(&raw.id, "id")?;
    let name = nonempty(&raw.name, "name")?;
    let mass = cx.positive(&raw.mass.value, "mass.value", "mass in kg")?;
    let mass_std = cx.non_negative(&raw.mass.std, "mass.std", "standard uncertainty in kg")?;
    let d = cx.positive(&raw.pivot_to_cg.value, "pivot_to_cg.value", "distance in m")?;
    let d_std =
        cx.non_negative(&raw.pivot_to_cg.std, "pivot_to_cg.std", "standard uncertainty in m")?;
    let (gravity, gravity_words) = gravity(&cx, raw.gravity.as_ref())?;
    let damping = match &raw.damping {
        None => DampingChoice::Auto,
        Some(sp) => match sp.get_ref() {
            RawDamping::Word(w) if w.trim().eq_ignore_ascii_case("auto") => DampingChoice::Auto,
            RawDamping::Word(w) => DampingChoice::Terms(
                DampingSet::parse(w)
                    .map_err(|e| cx.at(sp.span(), "damping", format!("{e}, or \"auto\"")))?,
            ),
            RawDamping::List(v) => DampingChoice::Terms(
                DampingSet::parse(&v.join(",")).map_err(|e| cx.at(sp.span(), "damping", e))?,
            ),
        },
    };
    if raw.run.is_empty() {
        return Err(ArticleError {
            file: file.to_string(),
            line: None,
            key: Some("run".into()),
            what: "expected at least one [[run]] table with a log".into(),
        });
    }
    let mut runs = Vec::new();
    for (i, r) in raw.run.into_iter().enumerate() {
        let prefix = format!("run[{}].", i + 1);
        runs.push(check_run(&cx, r.into_inner(), &prefix, base)?);
    }
    Ok(ArticleSpec {
        id,
        name,
        description: raw.description.unwrap_or_default(),
        rig: raw.rig,
        operator: raw.operator,
        notes: raw.notes,
        physical: physical::ArticleInputs {
            mass: Measured { value: mass, u: mass_std },
            pivot_to_cg: Measured { value: d, u: d_std },
            gravity,
            r_mass_pivot: 0.0,
        },
        gravity_words,
        damping,
        runs,
    })
}

/// Check one run table (the keys of a `[[run]]` table: the log and how to read it). `prefix`
/// goes before each key in messages (`run[2].` in an article file); the log path is resolved
/// against `base`. The one parser of the run keys: the article file and `--run` on the command
/// line (`cli/runs.rs`) both come through here.
fn check_run(cx: &Ctx<'_>, r: RawRun, prefix: &str, base: &Path) -> Result<RunSpec, ArticleError> {
    let key = |k: &str| format!("{prefix}{k}");
    let log_as_written = cx.nonempty(&r.log, &key("log"))?;
    let unit = |u: &Option<Spanned<String>>,
                k: &str,
                ok: &[&str]|
     -> Result<Option<String>, ArticleError> {
        match u {
            None => Ok(None),
            Some(s) if ok.contains(&s.get_ref().as_str()) => Ok(Some(s.get_ref().clone())),
            Some(s) => Err(cx.at(
                s.span(),
                &key(k),
                format!("expected one of {}, found \"{}\"", ok.join(", "), s.get_ref()),
            )),
        }
    };
    let time_key = |v: &Option<Spanned<f64>>, k: &str| -> Result<Option<f64>, ArticleError> {
        match v {
            None => Ok(None),
            Some(x) if x.get_ref().is_finite() => Ok(Some(*x.get_ref())),
            Some(x) => Err(cx.at(
                x.span(),
                &key(k),
                format!("expected a time in s on the log's axis, found {}", x.get_ref()),
            )),
        }
    };
    let time_unit = unit(&r.time_unit, "time_unit", &["s", "ms", "us"])?;
    let angle_unit = unit(&r.angle_unit, "angle_unit", &["rad", "mrad", "deg", "grad", "counts"])?;
    let counts_per_rev = match &r.counts_per_rev {
        None => None,
        Some(c) => {
            Some(cx.positive(c, &key("counts_per_rev"), "number of counts per revolution")?)
        }
    };
    let counts_wrap = match &r.counts_wrap {
        None => None,
        Some(b) if [8, 16, 24, 32].contains(b.get_ref()) => Some(*b.get_ref() as u32),
        Some(b) => {
            return Err(cx.at(
                b.span(),
                &key("counts_wrap"),
                format!("expected a counter width of 8, 16, 24 or 32 bits, found {}", b.get_ref()),
            ));
        }
    };
    let skip_lines = match &r.skip_lines {
        None => None,
        Some(n) => match usize::try_from(*n.get_ref()) {
            Ok(n) => Some(n),
            Err(_) => {
                return Err(cx.at(
                    n.span(),
                    &key("skip_lines"),
                    format!("expected a number of lines, 0 or more, found {}", n.get_ref()),
                ));
            }
        },
    };
    let rate_hz = match &r.rate {
        None => None,
        Some(hz) => Some(cx.positive(hz, &key("rate"), "sample rate in samples per second")?),
    };
    let duplicate_times = match &r.duplicate_times {
        None => crate::data::DuplicateTimes::default(),
        Some(m) => crate::data::DuplicateTimes::parse(m.get_ref()).ok_or_else(|| {
            cx.at(
                m.span(),
                &key("duplicate_times"),
                format!("expected keep-first or mean (or refuse), found \"{}\"", m.get_ref()),
            )
        })?,
    };
    let signal_scale = match &r.signal_scale {
        None => None,
        Some(s) => Some(
            crate::units::SignalScale::parse(s.get_ref())
                .map_err(|e| cx.at(s.span(), &key("signal_scale"), e))?,
        ),
    };
    let signal_zero = match &r.signal_zero {
        None => None,
        Some(z) if z.get_ref().is_finite() => Some(*z.get_ref()),
        Some(z) => {
            return Err(cx.at(
                z.span(),
                &key("signal_zero"),
                format!("expected a finite reading, found {}", z.get_ref()),
            ));
        }
    };
    Ok(RunSpec {
        label: r.label,
        log: base.join(&log_as_written),
        log_as_written,
        load: LoadOptions {
            time_col: r.time_col.map(RawColumn::into_string),
            angle_col: r.angle_col.map(RawColumn::into_string),
            time_unit,
            angle_unit,
            counts_per_rev,
            counts_wrap,
            skip_lines,
            rate_hz,
            duplicate_times,
            signal_scale,
            signal_zero,
            drop_bad_rows: r.drop_bad_rows,
            from_s: time_key(&r.from, "from")?,
            to_s: time_key(&r.to, "to")?,
            keep_slips: r.keep_slips,
        },
    })
}

/// Parse one run table written as TOML text (keys as in a `[[run]]` table, `log` included),
/// naming `file` in messages. Used by `--run` on the command line, which writes its
/// `key=value` list as such a table so that its values are read exactly as the article file's.
pub fn parse_run(file: &str, text: &str, base: &Path) -> Result<RunSpec, ArticleError> {
    let raw: RawRun = toml::from_str(text).map_err(|e| toml_error(file, text, &e))?;
    check_run(&Ctx { file, text }, raw, "", base)
}

/// A TOML syntax or schema error as an [`ArticleError`] at its line and key.
fn toml_error(file: &str, text: &str, e: &toml::de::Error) -> ArticleError {
    let (line, key) = match e.span() {
        Some(s) => (Some(line_of(text, s.start)), key_at(text, &s)),
        None => (None, None),
    };
    ArticleError { file: file.to_string(), line, key, what: e.message().trim().replace('\n', " ") }
}

fn gravity(
    cx: &Ctx<'_>,
    g: Option<&Spanned<RawGravity>>,
) -> Result<(Gravity, String), ArticleError> {
    let Some(sp) = g else {
        return Ok((
            Gravity::standard(),
            "standard gravity 9.80665 m/s^2 (no [gravity] table)".into(),
        ));
    };
    let g = sp.get_ref();
    let standard = g.standard.as_ref().map(|s| *s.get_ref());
    match (standard, &g.value, &g.latitude_deg) {
        (Some(true), None, None) if g.std.is_none() && g.elevation_m.is_none() => {
            Ok((Gravity::standard(), "standard gravity 9.80665 m/s^2".into()))
        }
        (None, Some(v), None) if g.elevation_m.is_none() => {
            let value = cx.positive(v, "gravity.value", "gravity in m/s^2")?;
            let std = match &g.std {
                Some(s) => cx.non_negative(s, "gravity.std", "standard uncertainty in m/s^2")?,
                None => 0.0,
            };
            let g = Gravity::given(value, std).map_err(|e| cx.at(sp.span(), "gravity", e.to_string()))?;
            Ok((g, format!("measured {value} m/s^2 (u {std})")))
        }
        (None, None, Some(lat)) if g.std.is_none() => {
            let latitude_deg = *lat.get_ref();
            if !(latitude_deg.is_finite() && (-90.0..=90.0).contains(&latitude_deg)) {
                return Err(cx.at(
                    lat.span(),
                    "gravity.latitude_deg",
                    format!("expected a latitude from -90 to 90 degrees, found {latitude_deg}"),
                ));
            }
            let elevation_m = match &g.elevation_m {
                None => 0.0,
                Some(e) if e.get_ref().is_finite() && e.get_ref().abs() < 20_000.0 => *e.get_ref(),
                Some(e) => {
                    return Err(cx.at(
                        e.span(),
                        "gravity.elevation_m",
                        format!("expected an elevation within ±20000 m, found {}", e.get_ref()),
                    ));
                }
            };
            let g = Gravity::at_location(latitude_deg, elevation_m, 0.0)
                .map_err(|e| cx.at(sp.span(), "gravity", e.to_string()))?;
            Ok((
                g,
                format!("WGS 84 normal gravity at latitude {latitude_deg} deg, elevation {elevation_m} m"),
            ))
        }
        _ => Err(cx.at(
            sp.span(),
            "gravity",
            "expected exactly one of: standard = true; value (with optional std); latitude_deg (with optional elevation_m)",
        )),
    }
}

/// Read the article file at `path`, resolve its log paths and check that every log exists.
pub fn load(path: &Path) -> Result<ArticleSpec, ArticleError> {
    let file = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| ArticleError {
        file: file.clone(),
        line: None,
        key: None,
        what: format!("cannot read the article file: {e}"),
    })?;
    let base = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let spec = parse(&file, &text, &base)?;
    // Point a missing log at the line of its `log` key.
    let mut search_from = 0;
    for (i, run) in spec.runs.iter().enumerate() {
        let pos = find_log_key(&text, search_from);
        if let Some(p) = pos {
            search_from = p + 1;
        }
        if !run.log.is_file() {
            return Err(ArticleError {
                file,
                line: pos.map(|p| line_of(&text, p)),
                key: Some(format!("run[{}].log", i + 1)),
                what: format!("log file {} not found", run.log.display()),
            });
        }
    }
    Ok(spec)
}

/// Byte offset of the next line at or after `from` that assigns the `log` key.
fn find_log_key(text: &str, from: usize) -> Option<usize> {
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let start = offset;
        offset += line.len();
        if start < from {
            continue;
        }
        if let Some((k, _)) = line.split_once('=')
            && k.trim() == "log"
        {
            return Some(start);
        }
    }
    None
}
