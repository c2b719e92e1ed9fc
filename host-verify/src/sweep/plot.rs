//! `sweep.png`: errors against a swept value, drawn as one or more
//! labelled panels side by side (title, axis labels, a legend; text in the
//! DejaVu Sans font the report's plots use, [`crate::html`]).
//!
//! Every panel ([`Panel`]): x = the swept values (one tick each); y = a
//! positive figure on a log10 scale from half the smallest nonzero figure
//! to twice the largest (at least one decade); a zero is drawn at the
//! bottom of the axis. Series are solid lines with dots or thin dashed
//! lines; a reference line (a bound, a target) is a grey dashed line.
//!
//! [`draw`] (`sweep --kernel`): one panel; per input the largest
//! `|fixed - f64|` solid with dots and the mean dashed, in one colour; when
//! the kernel has a bound, the largest bound over the inputs at each value.
//! [`draw_warp`] (`sweep` without `--kernel`): two panels over the
//! fractional bits, one colour per map (pixel map, control grids of step
//! 4 to 64): RMS intensity error in LSB against the exact-coordinate
//! reference, with the 0.5 LSB line; largest geometric error in px, with
//! the 1/32 px line.

use super::{Row, SweepParam};
use crate::html::{font, FONT};
use crate::warp::sweep::SweepRow;
use plotters::prelude::*;
use std::path::Path;

const COLOURS: [RGBColor; 6] = [
    RGBColor(30, 90, 220),
    RGBColor(210, 30, 30),
    RGBColor(20, 150, 60),
    RGBColor(240, 140, 0),
    RGBColor(150, 60, 200),
    RGBColor(0, 0, 0),
];

fn plot_err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow::anyhow!("drawing sweep.png: {e:?}")
}

/// A tick label: three significant digits, exponent form outside
/// `0.001..10000`.
fn readable(v: f64) -> String {
    if !(1e-3..1e4).contains(&v) {
        format!("{v:.2e}")
    } else {
        let digits = (2 - v.log10().floor() as i32).max(0) as usize;
        format!("{v:.digits$}")
    }
}

/// A line of a [`Panel`]: `(x, y)` points, y the figure itself (not its
/// logarithm).
pub struct Series {
    /// Legend text.
    pub label: String,
    /// Index into the palette.
    pub colour: usize,
    /// Solid line with dots (`false`: thin dashed line).
    pub solid: bool,
    /// The points, in x order.
    pub points: Vec<(f64, f64)>,
}

/// One chart of `sweep.png`.
pub struct Panel {
    /// Title above the chart.
    pub title: String,
    /// x axis label.
    pub x_desc: String,
    /// y axis label.
    pub y_desc: String,
    /// Smallest and largest swept value.
    pub x_range: (u32, u32),
    /// The lines.
    pub series: Vec<Series>,
    /// A grey dashed reference line with its legend text.
    pub reference: Option<(String, Vec<(f64, f64)>)>,
}

/// Draws `panels` side by side into a `size` picture at `path`.
pub fn draw_panels(panels: &[Panel], size: (u32, u32), path: &Path) -> anyhow::Result<()> {
    font();
    let root = BitMapBackend::new(path, size).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let areas = root.split_evenly((1, panels.len().max(1)));
    for (panel, area) in panels.iter().zip(&areas) {
        draw_panel(panel, area)?;
    }
    root.present().map_err(plot_err)?;
    Ok(())
}

fn draw_panel(
    p: &Panel,
    area: &DrawingArea<BitMapBackend<'_>, plotters::coord::Shift>,
) -> anyhow::Result<()> {
    let (vmin, vmax) = p.x_range;
    let figures = p
        .series
        .iter()
        .flat_map(|s| s.points.iter())
        .chain(p.reference.iter().flat_map(|r| r.1.iter()))
        .map(|&(_, y)| y);
    let lo = figures
        .clone()
        .filter(|&v| v > 0.0)
        .fold(f64::INFINITY, f64::min);
    let hi = figures.fold(0f64, f64::max);
    let (lo, hi) = if lo.is_finite() {
        ((lo / 2.0).log10(), (hi * 2.0).max(lo).log10())
    } else {
        (-3.0, 0.0)
    };
    // At least one decade tall.
    let pad = ((1.0 - (hi - lo)) / 2.0).max(0.0);
    let (lo, hi) = (lo - pad, hi + pad);
    let mut chart = ChartBuilder::on(area)
        .caption(&p.title, (FONT, 18))
        .margin(14)
        .x_label_area_size(48)
        .y_label_area_size(80)
        .build_cartesian_2d((vmin as f64 - 0.5)..(vmax as f64 + 0.5), lo..hi)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .x_desc(&p.x_desc)
        .y_desc(&p.y_desc)
        .x_labels((vmax - vmin + 1) as usize * 2 + 1)
        .x_label_formatter(&|v| {
            if (v - v.round()).abs() < 1e-9 {
                format!("{:.0}", v)
            } else {
                String::new()
            }
        })
        .y_label_formatter(&|v| readable(10f64.powf(*v)))
        .light_line_style(WHITE)
        .label_style((FONT, 12))
        .axis_desc_style((FONT, 14))
        .draw()
        .map_err(plot_err)?;
    let y = |v: f64| if v > 0.0 { v.log10().max(lo) } else { lo };
    for s in &p.series {
        let colour = COLOURS[s.colour % COLOURS.len()];
        let pts: Vec<(f64, f64)> = s.points.iter().map(|&(x, v)| (x, y(v))).collect();
        if s.solid {
            let solid = ShapeStyle::from(colour).stroke_width(2);
            chart
                .draw_series(LineSeries::new(pts.clone(), solid))
                .map_err(plot_err)?
                .label(s.label.as_str())
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], solid));
            chart
                .draw_series(pts.iter().map(|&pt| Circle::new(pt, 3, colour.filled())))
                .map_err(plot_err)?;
        } else {
            let thin = ShapeStyle::from(colour).stroke_width(1);
            chart
                .draw_series(DashedLineSeries::new(pts, 6, 4, thin))
                .map_err(plot_err)?
                .label(s.label.as_str())
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 8, y)], thin));
        }
    }
    if let Some((label, pts)) = &p.reference {
        let pts: Vec<(f64, f64)> = pts.iter().map(|&(x, v)| (x, y(v))).collect();
        if !pts.is_empty() {
            let grey = ShapeStyle::from(RGBColor(120, 120, 120)).stroke_width(2);
            chart
                .draw_series(DashedLineSeries::new(pts, 10, 5, grey))
                .map_err(plot_err)?
                .label(label.as_str())
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], grey));
        }
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font((FONT, 12))
        .draw()
        .map_err(plot_err)?;
    Ok(())
}

/// Draws the `sweep --kernel` plot (module docs) into `path`, 900 x 560.
///
/// ```
/// use fixsight_verify::sweep::{find, plot::draw, Row};
/// let p = find("lines.cos_sin", None).unwrap();
/// let rows = [Row::from_errors("x", 8, [0.5], Some(0.6)), Row::from_errors("x", 9, [0.0], None)];
/// let path = std::env::temp_dir().join(format!("fsv-doc-sweep-{}.png", std::process::id()));
/// draw(p, &rows, &path).unwrap();
/// assert!(std::fs::metadata(&path).unwrap().len() > 1000);
/// # std::fs::remove_file(&path).unwrap();
/// ```
pub fn draw(p: &SweepParam, rows: &[Row], path: &Path) -> anyhow::Result<()> {
    let mut inputs: Vec<&str> = Vec::new();
    for r in rows {
        if !inputs.contains(&r.input.as_str()) {
            inputs.push(&r.input);
        }
    }
    let x_range = rows
        .iter()
        .fold((u32::MAX, 0), |(a, b), r| (a.min(r.value), b.max(r.value)));
    let x_range = if rows.is_empty() { (0, 1) } else { x_range };
    let bound_at = |v: u32| -> Option<f64> {
        rows.iter()
            .filter(|r| r.value == v)
            .filter_map(|r| r.bound)
            .reduce(f64::max)
    };
    let mut series = Vec::new();
    for (i, input) in inputs.iter().enumerate() {
        let of: Vec<&Row> = rows.iter().filter(|r| r.input == *input).collect();
        series.push(Series {
            label: format!("{input}: largest"),
            colour: i,
            solid: true,
            points: of.iter().map(|r| (r.value as f64, r.max_abs)).collect(),
        });
        series.push(Series {
            label: format!("{input}: mean"),
            colour: i,
            solid: false,
            points: of.iter().map(|r| (r.value as f64, r.mean_abs)).collect(),
        });
    }
    let bound: Vec<(f64, f64)> = (x_range.0..=x_range.1)
        .filter_map(|v| bound_at(v).map(|b| (v as f64, b)))
        .collect();
    let panel = Panel {
        title: format!("{}: error against {}", p.kernel, p.param),
        x_desc: format!("{} (swept value)", p.param),
        y_desc: format!("|fixed - f64|, {} (log scale)", p.unit),
        x_range,
        series,
        reference: (!bound.is_empty()).then(|| ("bound (largest over the inputs)".into(), bound)),
    };
    draw_panels(&[panel], (900, 560), path)
}

/// Draws the warp precision sweep's plot (module docs) into `path`,
/// 1200 x 520: one colour per map, in the order the rows first name them.
///
/// ```
/// use fixsight_verify::sweep::plot::draw_warp;
/// use fixsight_verify::warp::sweep::SweepRow;
/// let row = |f, k| SweepRow { frac_bits: f, grid_log2: k, table_bytes: 8, geo_max_px: 0.01,
///     geo_rms_px: 0.005, int_max: 1.0, int_rms: 0.3, within_1lsb: 1.0 };
/// let rows = [row(4, None), row(5, None), row(4, Some(3)), row(5, Some(3))];
/// let path = std::env::temp_dir().join(format!("fsv-doc-warp-sweep-{}.png", std::process::id()));
/// draw_warp(&rows, &path).unwrap();
/// assert!(std::fs::metadata(&path).unwrap().len() > 1000);
/// # std::fs::remove_file(&path).unwrap();
/// ```
pub fn draw_warp(rows: &[SweepRow], path: &Path) -> anyhow::Result<()> {
    let mut maps: Vec<Option<u32>> = Vec::new();
    for r in rows {
        if !maps.contains(&r.grid_log2) {
            maps.push(r.grid_log2);
        }
    }
    let x_range = rows.iter().fold((u32::MAX, 0), |(a, b), r| {
        (a.min(r.frac_bits), b.max(r.frac_bits))
    });
    let x_range = if rows.is_empty() { (0, 1) } else { x_range };
    let name = |k: Option<u32>| k.map_or("pixel map".to_string(), |k| format!("grid {}", 1 << k));
    let panel =
        |title: &str, y_desc: &str, figure: fn(&SweepRow) -> f64, mark: (&str, f64)| Panel {
            title: title.into(),
            x_desc: "frac_bits (fractional bits of the coordinates)".into(),
            y_desc: y_desc.into(),
            x_range,
            series: maps
                .iter()
                .enumerate()
                .map(|(i, &k)| Series {
                    label: name(k),
                    colour: i,
                    solid: true,
                    points: rows
                        .iter()
                        .filter(|r| r.grid_log2 == k)
                        .map(|r| (r.frac_bits as f64, figure(r)))
                        .collect(),
                })
                .collect(),
            reference: Some((
                mark.0.into(),
                vec![(x_range.0 as f64, mark.1), (x_range.1 as f64, mark.1)],
            )),
        };
    draw_panels(
        &[
            panel(
                "warp: RMS intensity error",
                "RMS error vs exact-coordinate f64, LSB (log scale)",
                |r| r.int_rms,
                ("0.5 LSB", 0.5),
            ),
            panel(
                "warp: largest geometric error",
                "largest coordinate error, px (log scale)",
                |r| r.geo_max_px,
                ("1/32 px", 1.0 / 32.0),
            ),
        ],
        (1200, 520),
        path,
    )
}
