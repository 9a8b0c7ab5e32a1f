//! Writing a sheet: every plot (SVG and PNG), `sheet.json`, `sheet.md`, `sheet.html` and, on
//! request, `sheet.pdf`, rendered into a staging directory that [`super::install`] puts in place
//! whole or not at all.

use std::fs;
use std::path::{Path, PathBuf};

use crate::report::{plot, wire};

use super::html::sheet_html;
use super::install::{check_destination, install, staging_dir};
use super::markdown::sheet_markdown;
use super::model::{SheetInput, sheet_doc};

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

pub(super) fn io_err(path: &Path, what: &str, e: std::io::Error) -> SheetError {
    SheetError::Io { path: path.display().to_string(), what: format!("{what}: {e}") }
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
    put("sheet.json", &wire::to_pretty(&doc), &mut files)?;
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
    let staging = staging_dir(dir)?;
    let tmp = staging.path();
    let mut files = render_into(tmp, input)?;
    if let Some(b) = browser {
        crate::report::pdf::print_to_pdf(b, &tmp.join("sheet.html"), &tmp.join("sheet.pdf"))?;
        files.push("sheet.pdf".into());
    }
    // On any error above, dropping `staging` removes the partial directory.
    install(staging, dir, force)?;
    Ok(Written { dir: dir.to_path_buf(), files })
}

/// Write the sheet for `input` to `dir`: built whole in a temporary directory beside `dir`, then
/// renamed into place. An existing `dir` is refused unless `force`, and then replaced whole. On
/// any failure the temporary directory is removed and `dir` is left as it was.
pub fn write_sheet(dir: &Path, force: bool, input: &SheetInput<'_>) -> Result<Written, SheetError> {
    write_sheet_with_pdf(dir, force, input, None)
}
