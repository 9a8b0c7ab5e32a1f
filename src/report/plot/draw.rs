//! Drawing a [`Chart`] with plotters, to SVG text or a PNG file.
//!
//! The series' [`Role`] decides the look and the order: muted rejected candidates and the light,
//! wide model line first, the chosen model strong, then the measured data thin and dark on top,
//! then reference curves (noise Gaussian, bands). A chart with panels below draws its main plot
//! in the upper part and the panels side by side underneath. The PNG backend draws text with the
//! embedded Noto Sans font (registered once, so no system fonts are needed).

use std::path::Path;
use std::sync::Once;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::{Chart, HEIGHT, Mark, PlotError, Role, Series, WIDTH};

/// Colour of the measured series: near black, drawn on top.
const MEASURED: RGBColor = RGBColor(25, 25, 25);
/// Fill of histogram bars of measured values.
const BAR: RGBColor = RGBColor(175, 175, 175);
/// Colour of interval bars on measured points.
const ERROR_BAR: RGBColor = RGBColor(120, 120, 120);
/// Colour of a single model line: a light red, wide, under the data.
const MODEL: RGBColor = RGBColor(244, 150, 150);
/// Colour of the chosen candidate's model.
const CHOSEN: RGBColor = RGBColor(214, 39, 40);
/// Colour of rejected candidates: pale, so the chosen model stands out.
const OTHER: RGBColor = RGBColor(185, 195, 215);
/// Colour of reference curves and bands.
const REFERENCE: RGBColor = RGBColor(31, 119, 180);

/// Drawing order of a role (lower first).
fn order(role: Role) -> u8 {
    match role {
        Role::Other => 0,
        Role::Model => 1,
        Role::Chosen => 2,
        Role::Measured => 3,
        Role::Reference => 4,
    }
}

/// Colour and line width of a role.
fn style(role: Role) -> (RGBColor, u32) {
    match role {
        Role::Measured => (MEASURED, 1),
        Role::Model => (MODEL, 4),
        Role::Chosen => (CHOSEN, 3),
        Role::Other => (OTHER, 1),
        Role::Reference => (REFERENCE, 2),
    }
}

/// Padded (low, high) of the x or y values of `series`, with zero included for bars and stems
/// and interval bars counted.
fn bounds(series: &[Series], x: bool) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for s in series {
        for (i, p) in s.points.iter().enumerate() {
            let e = if x { 0.0 } else { s.y_err.get(i).copied().unwrap_or(0.0) };
            let v = if x { p.0 } else { p.1 };
            if v.is_finite() && e.is_finite() {
                lo = lo.min(v - e);
                hi = hi.max(v + e);
            }
        }
        if !x && matches!(s.mark, Mark::Bars | Mark::Stems) && !s.points.is_empty() {
            lo = lo.min(0.0);
            hi = hi.max(0.0);
        }
        if x && s.mark == Mark::Bars && s.points.len() >= 2 {
            let w = 0.5 * (s.points[1].0 - s.points[0].0).abs();
            lo -= w;
            hi += w;
        }
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    let span = hi - lo;
    let pad = if span > 0.0 { 0.04 * span } else { lo.abs().max(1.0) * 0.05 };
    (lo - pad, hi + pad)
}

/// Text sizes of one plot area [px].
#[derive(Clone, Copy)]
struct Sizes {
    caption: u32,
    label: u32,
    axis: u32,
    legend: u32,
    x_area: u32,
    y_area: u32,
}

const FULL: Sizes = Sizes { caption: 30, label: 22, axis: 24, legend: 22, x_area: 70, y_area: 110 };
const SMALL: Sizes = Sizes { caption: 22, label: 18, axis: 19, legend: 17, x_area: 52, y_area: 92 };

fn draw_area<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    caption: &str,
    x_label: &str,
    y_label: &str,
    series: &[Series],
    z: Sizes,
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    let (x0, x1) = bounds(series, true);
    let (y0, y1) = bounds(series, false);
    let mut cc = ChartBuilder::on(area)
        .caption(caption, ("sans-serif", z.caption))
        .margin(12)
        .margin_right(30)
        .x_label_area_size(z.x_area)
        .y_label_area_size(z.y_area)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(e)?;
    cc.configure_mesh()
        .x_desc(x_label)
        .y_desc(y_label)
        .x_labels(8)
        .y_labels(6)
        .label_style(("sans-serif", z.label))
        .axis_desc_style(("sans-serif", z.axis))
        .light_line_style(RGBColor(238, 238, 238))
        .draw()
        .map_err(e)?;
    let mut idx: Vec<usize> = (0..series.len()).collect();
    idx.sort_by_key(|&i| order(series[i].role));
    let mut any_legend = false;
    for i in idx {
        let s = &series[i];
        let (color, width) = style(s.role);
        let pts: Vec<(f64, f64)> =
            s.points.iter().copied().filter(|(x, y)| x.is_finite() && y.is_finite()).collect();
        let anno = match s.mark {
            Mark::Line => {
                cc.draw_series(LineSeries::new(pts, color.stroke_width(width))).map_err(e)?
            }
            Mark::Dots => {
                if !s.y_err.is_empty() {
                    let bars = s
                        .points
                        .iter()
                        .zip(&s.y_err)
                        .filter(|&(&(x, y), &d)| {
                            x.is_finite() && y.is_finite() && d.is_finite() && d > 0.0
                        })
                        .map(|(&(x, y), &d)| {
                            PathElement::new(
                                vec![(x, y - d), (x, y + d)],
                                ERROR_BAR.stroke_width(1),
                            )
                        });
                    cc.draw_series(bars).map_err(e)?;
                }
                let r = if s.role == Role::Measured { 3 } else { 2 };
                cc.draw_series(pts.into_iter().map(move |p| Circle::new(p, r, color.filled())))
                    .map_err(e)?
            }
            Mark::Bars => {
                let w =
                    if s.points.len() >= 2 { (s.points[1].0 - s.points[0].0).abs() } else { 1.0 };
                let fill = if s.role == Role::Measured { BAR } else { color };
                cc.draw_series(pts.into_iter().map(move |(x, y)| {
                    Rectangle::new([(x - 0.5 * w, 0.0), (x + 0.5 * w, y)], fill.filled())
                }))
                .map_err(e)?
            }
            Mark::Stems => cc
                .draw_series(pts.into_iter().map(move |(x, y)| {
                    PathElement::new(vec![(x, 0.0), (x, y)], color.stroke_width(1))
                }))
                .map_err(e)?,
        };
        if !s.label.is_empty() {
            any_legend = true;
            let legend_color =
                if s.mark == Mark::Bars && s.role == Role::Measured { BAR } else { color };
            anno.label(&s.label).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 24, y)], legend_color.stroke_width(3))
            });
        }
    }
    if any_legend {
        cc.configure_series_labels()
            .label_font(("sans-serif", z.legend))
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(160, 160, 160))
            .position(SeriesLabelPosition::UpperRight)
            .draw()
            .map_err(e)?;
    }
    Ok(())
}

fn draw<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, chart: &Chart) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let e = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    root.fill(&WHITE).map_err(e)?;
    if chart.below.is_empty() {
        draw_area(&root, &chart.title, &chart.x_label, &chart.y_label, &chart.series, FULL)?;
    } else {
        let (top, bottom) = root.split_vertically(HEIGHT * 11 / 20);
        draw_area(&top, &chart.title, &chart.x_label, &chart.y_label, &chart.series, SMALL)?;
        let cells = bottom.split_evenly((1, chart.below.len()));
        for (cell, p) in cells.iter().zip(&chart.below) {
            draw_area(cell, &p.title, &p.x_label, &p.y_label, &p.series, SMALL)?;
        }
    }
    root.present().map_err(e)?;
    Ok(())
}

static FONT: Once = Once::new();

/// Register the embedded Noto Sans as "sans-serif" (once per process): the bitmap backend draws
/// glyphs with it and both backends measure text with it to lay out labels and legends.
fn register_font() {
    FONT.call_once(|| {
        // Noto Sans Regular is a valid TrueType font shipped inside ttf-noto-sans; a failure here
        // would surface as a drawing error below, never as a panic.
        let _ =
            plotters::style::register_font("sans-serif", FontStyle::Normal, ttf_noto_sans::REGULAR);
    });
}

/// Draw `chart` as an SVG document.
pub fn render_svg(chart: &Chart) -> Result<String, PlotError> {
    register_font();
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (WIDTH, HEIGHT)).into_drawing_area();
        draw(root, chart).map_err(|what| PlotError { stem: chart.stem.clone(), what })?;
    }
    Ok(out)
}

/// Draw `chart` as a PNG file at `path` (the file name must end in `.png`).
pub fn render_png(chart: &Chart, path: &Path) -> Result<(), PlotError> {
    register_font();
    let root = BitMapBackend::new(path, (WIDTH, HEIGHT)).into_drawing_area();
    draw(root, chart).map_err(|what| PlotError { stem: chart.stem.clone(), what })
}
