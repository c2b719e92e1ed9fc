//! The precision-sweep plot (`sweep.png`), drawn with `plotters` on its
//! bitmap backend **without any text** (no font dependency): the legend is
//! in `sweep.md` next to it.
//!
//! Layout: two panels side by side, x axis = fractional bits 2..=10 (one
//! tick per value), log10 y axis with a grid line per decade.
//! * left: RMS intensity error (LSB) against the exact-coordinate reference,
//!   y from 10^-2 to 10^2;
//! * right: largest geometric error (px), y from 10^-4 to 10^1.
//!
//! One line per map: dense black, then control grids of step 4, 8, 16, 32, 64 in
//! blue, green, orange, red, magenta. A dashed-grey horizontal line on the
//! left panel marks 0.5 LSB, on the right 1/32 px.

use crate::warp::sweep::SweepRow;
use plotters::prelude::*;
use std::path::Path;

const COLOURS: [RGBColor; 6] = [
    RGBColor(0, 0, 0),
    RGBColor(30, 90, 220),
    RGBColor(20, 160, 60),
    RGBColor(240, 140, 0),
    RGBColor(210, 30, 30),
    RGBColor(200, 0, 200),
];

/// Draws the plot described in the module docs.
pub fn draw(rows: &[SweepRow], path: &Path) -> anyhow::Result<()> {
    let root = BitMapBackend::new(path, (960, 420)).into_drawing_area();
    root.fill(&WHITE)?;
    let panels = root.split_evenly((1, 2));
    let series =
        |k: Option<u32>| -> Vec<&SweepRow> { rows.iter().filter(|r| r.grid_log2 == k).collect() };
    let keys: Vec<Option<u32>> = std::iter::once(None).chain((2..=6).map(Some)).collect();
    for (pi, panel) in panels.iter().enumerate() {
        let (ylo, yhi) = if pi == 0 { (-2.0, 2.0) } else { (-4.0, 1.0) };
        let mut chart = ChartBuilder::on(panel)
            .margin(18)
            .build_cartesian_2d(1.5f64..10.5f64, ylo..yhi)?;
        // Axes and one tick per fractional-bit value, drawn as plain lines
        // (the grid helper would draw text).
        let axis = RGBColor(60, 60, 60);
        chart.draw_series(LineSeries::new([(1.5, yhi), (1.5, ylo), (10.5, ylo)], axis))?;
        for f in 2..=10 {
            let x = f as f64;
            let t = (yhi - ylo) * 0.02;
            chart.draw_series(LineSeries::new([(x, ylo), (x, ylo + t)], axis))?;
        }
        for d in (ylo as i32)..=(yhi as i32) {
            chart.draw_series(LineSeries::new(
                [(1.5, d as f64), (10.5, d as f64)],
                RGBColor(220, 220, 220),
            ))?;
        }
        let mark = if pi == 0 { 0.5f64 } else { 1.0 / 32.0 };
        chart.draw_series(DashedLineSeries::new(
            [(1.5, mark.log10()), (10.5, mark.log10())],
            6,
            4,
            RGBColor(128, 128, 128).into(),
        ))?;
        for (ci, k) in keys.iter().enumerate() {
            let pts: Vec<(f64, f64)> = series(*k)
                .iter()
                .map(|r| {
                    let v = if pi == 0 { r.int_rms } else { r.geo_max_px };
                    (r.frac_bits as f64, v.max(10f64.powf(ylo)).log10())
                })
                .collect();
            let style = ShapeStyle::from(COLOURS[ci % COLOURS.len()]).stroke_width(2);
            chart.draw_series(LineSeries::new(pts.clone(), style))?;
            chart.draw_series(
                pts.iter()
                    .map(|&p| Circle::new(p, 3, COLOURS[ci % COLOURS.len()].filled())),
            )?;
        }
    }
    root.present()?;
    Ok(())
}
