//! `sweep.png`: the error against the parameter's value, one colour per
//! input, with a title, axis labels and a legend (text in the DejaVu Sans
//! font the report's plots use, [`crate::html`]).
//!
//! x: the swept values (one tick each). y: `|fixed - f64|` in the error
//! unit, log10 scale from half the smallest nonzero figure to twice the
//! largest (at least one decade); a zero error is drawn at the bottom of
//! the axis. Per input: the
//! largest error as a solid line with dots, the mean as a dashed line in
//! the same colour. When the kernel has a bound: the largest bound over
//! the inputs at each value as a grey dashed line.

use super::{Row, SweepParam};
use crate::html::{font, FONT};
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

/// Draws the plot described in the module docs into `path`.
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
    font();
    let mut inputs: Vec<&str> = Vec::new();
    for r in rows {
        if !inputs.contains(&r.input.as_str()) {
            inputs.push(&r.input);
        }
    }
    let (vmin, vmax) = rows
        .iter()
        .fold((u32::MAX, 0), |(a, b), r| (a.min(r.value), b.max(r.value)));
    let (vmin, vmax) = if rows.is_empty() {
        (0, 1)
    } else {
        (vmin, vmax)
    };
    let bound_at = |v: u32| -> Option<f64> {
        rows.iter()
            .filter(|r| r.value == v)
            .filter_map(|r| r.bound)
            .reduce(f64::max)
    };
    let figures = rows
        .iter()
        .flat_map(|r| [Some(r.max_abs), Some(r.mean_abs), r.bound])
        .flatten();
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
    let root = BitMapBackend::new(path, (900, 560)).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            format!("{}: error against {}", p.kernel, p.param),
            (FONT, 20),
        )
        .margin(14)
        .x_label_area_size(48)
        .y_label_area_size(80)
        .build_cartesian_2d((vmin as f64 - 0.5)..(vmax as f64 + 0.5), lo..hi)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .x_desc(format!("{} (swept value)", p.param))
        .y_desc(format!("|fixed - f64|, {} (log scale)", p.unit))
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
    for (i, input) in inputs.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        let of: Vec<&Row> = rows.iter().filter(|r| r.input == *input).collect();
        let max: Vec<(f64, f64)> = of.iter().map(|r| (r.value as f64, y(r.max_abs))).collect();
        let mean: Vec<(f64, f64)> = of.iter().map(|r| (r.value as f64, y(r.mean_abs))).collect();
        let solid = ShapeStyle::from(colour).stroke_width(2);
        chart
            .draw_series(LineSeries::new(max.clone(), solid))
            .map_err(plot_err)?
            .label(format!("{input}: largest"))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], solid));
        chart
            .draw_series(max.iter().map(|&pt| Circle::new(pt, 3, colour.filled())))
            .map_err(plot_err)?;
        let thin = ShapeStyle::from(colour).stroke_width(1);
        chart
            .draw_series(DashedLineSeries::new(mean, 6, 4, thin))
            .map_err(plot_err)?
            .label(format!("{input}: mean"))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 8, y)], thin));
    }
    let bound: Vec<(f64, f64)> = (vmin..=vmax)
        .filter_map(|v| bound_at(v).map(|b| (v as f64, y(b))))
        .collect();
    if !bound.is_empty() {
        let grey = ShapeStyle::from(RGBColor(120, 120, 120)).stroke_width(2);
        chart
            .draw_series(DashedLineSeries::new(bound, 10, 5, grey))
            .map_err(plot_err)?
            .label("bound (largest over the inputs)")
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], grey));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font((FONT, 12))
        .draw()
        .map_err(plot_err)?;
    root.present().map_err(plot_err)?;
    Ok(())
}
