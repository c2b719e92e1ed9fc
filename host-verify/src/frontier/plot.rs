//! `frontier.png`: worst one-to-one F1 against Cortex-M4 instructions per
//! pixel, one dot per configuration with a cost (grey), the Pareto front
//! as a red line through its configurations (labelled), the recommended
//! one ringed, the part's budget as a vertical dashed line and the F1 goal
//! as a horizontal one. Text in the report's font ([`crate::html`]).

use super::{Frontier, F1_GOAL};
use crate::html::{font, FONT};
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

fn plot_err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow::anyhow!("drawing frontier.png: {e:?}")
}

/// Size of the plot, pixels.
pub const SIZE: (u32, u32) = (1000, 620);

/// Draws the plot described in the module docs into the PNG file `path`.
pub fn draw(f: &Frontier, path: &Path) -> anyhow::Result<()> {
    draw_on(f, BitMapBackend::new(path, SIZE).into_drawing_area())
}

/// The plot as RGB pixels, [`SIZE`] (for the report page).
pub fn rgb(f: &Frontier) -> anyhow::Result<Vec<u8>> {
    let mut buf = vec![0u8; (SIZE.0 * SIZE.1 * 3) as usize];
    draw_on(
        f,
        BitMapBackend::with_buffer(&mut buf, SIZE).into_drawing_area(),
    )?;
    Ok(buf)
}

/// Draws the plot on `root`; configurations without a cost are left out
/// (an empty map draws the axes only).
fn draw_on<DB: DrawingBackend>(f: &Frontier, root: DrawingArea<DB, Shift>) -> anyhow::Result<()>
where
    DB::ErrorType: 'static,
{
    font();
    let floats: Vec<&str> = f
        .points
        .iter()
        .filter(|p| p.float)
        .map(|p| p.name.as_str())
        .collect();
    let is_float = |n: &str| floats.contains(&n);
    let pts: Vec<(&str, f64, f64, bool)> = f
        .points
        .iter()
        .filter_map(|p| {
            p.m4_instr_per_px
                .map(|c| (p.name.as_str(), c, p.f1_worst, p.pareto))
        })
        .collect();
    let xmax = pts
        .iter()
        .map(|p| p.1)
        .fold(f.budget_instr_per_px, f64::max)
        * 1.08;
    let ymin = pts.iter().map(|p| p.2).fold(F1_GOAL, f64::min);
    let ymin = ((ymin - 0.01) * 50.0).floor() / 50.0;
    root.fill(&WHITE).map_err(plot_err)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            "Accuracy/cost map: whole job in point mode, QVGA",
            (FONT, 20),
        )
        .margin(14)
        .x_label_area_size(48)
        .y_label_area_size(70)
        .build_cartesian_2d(0f64..xmax, ymin..1.0)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .x_desc("Cortex-M4 instructions per pixel (QEMU, QVGA bench frame)")
        .y_desc("worst one-to-one F1 vs full-f64 Canny")
        .light_line_style(WHITE)
        .label_style((FONT, 12))
        .axis_desc_style((FONT, 14))
        .draw()
        .map_err(plot_err)?;
    let grey = RGBColor(120, 120, 120);
    chart
        .draw_series(
            pts.iter()
                .filter(|p| !is_float(p.0))
                .map(|&(_, c, q, _)| Circle::new((c, q), 4, grey.filled())),
        )
        .map_err(plot_err)?
        .label("configuration")
        .legend(move |(x, y)| Circle::new((x + 10, y), 4, grey.filled()));
    // The f32 configurations (ports/cortex-m4f-float), which need an FPU.
    let orange = RGBColor(230, 120, 0);
    if pts.iter().any(|p| is_float(p.0)) {
        chart
            .draw_series(
                pts.iter()
                    .filter(|p| is_float(p.0))
                    .map(|&(_, c, q, _)| TriangleMarker::new((c, q), 7, orange.filled())),
            )
            .map_err(plot_err)?
            .label("f32 configuration (needs an FPU)")
            .legend(move |(x, y)| TriangleMarker::new((x + 10, y), 6, orange.filled()));
        chart
            .draw_series(
                pts.iter()
                    .filter(|p| is_float(p.0) && !p.3)
                    .map(|&(n, c, q, _)| {
                        Text::new(
                            n.trim_start_matches("map-").to_string(),
                            (c, q),
                            (FONT, 12).into_font(),
                        )
                    }),
            )
            .map_err(plot_err)?;
    }
    let mut front: Vec<(f64, f64)> = pts
        .iter()
        .filter(|p| p.3)
        .map(|&(_, c, q, _)| (c, q))
        .collect();
    front.sort_by(|a, b| a.0.total_cmp(&b.0));
    let red = ShapeStyle::from(RED).stroke_width(2);
    chart
        .draw_series(LineSeries::new(front.clone(), red))
        .map_err(plot_err)?
        .label("Pareto front")
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], red));
    chart
        .draw_series(front.iter().map(|&pt| Circle::new(pt, 5, RED.filled())))
        .map_err(plot_err)?;
    chart
        .draw_series(pts.iter().filter(|p| p.3).map(|&(n, c, q, _)| {
            Text::new(
                n.trim_start_matches("map-").to_string(),
                (c, q),
                (FONT, 12).into_font(),
            )
        }))
        .map_err(plot_err)?;
    if let Some(r) = pts.iter().find(|p| f.recommended.as_deref() == Some(p.0)) {
        let blue = ShapeStyle::from(BLUE).stroke_width(2);
        chart
            .draw_series([Circle::new((r.1, r.2), 9, blue)])
            .map_err(plot_err)?
            .label("recommended")
            .legend(move |(x, y)| Circle::new((x + 10, y), 6, blue));
    }
    let dashed = ShapeStyle::from(BLACK).stroke_width(1);
    chart
        .draw_series(DashedLineSeries::new(
            [(f.budget_instr_per_px, ymin), (f.budget_instr_per_px, 1.0)],
            6,
            4,
            dashed,
        ))
        .map_err(plot_err)?
        .label(format!(
            "budget {:.1}/px ({} MHz, {} fps)",
            f.budget_instr_per_px, f.clock_mhz, f.fps
        ))
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], dashed));
    let goal = ShapeStyle::from(RGBColor(20, 150, 60)).stroke_width(1);
    chart
        .draw_series(DashedLineSeries::new(
            [(0.0, F1_GOAL), (xmax, F1_GOAL)],
            6,
            4,
            goal,
        ))
        .map_err(plot_err)?
        .label(format!("F1 goal {F1_GOAL}"))
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], goal));
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font((FONT, 12))
        .position(SeriesLabelPosition::LowerRight)
        .draw()
        .map_err(plot_err)?;
    root.present().map_err(plot_err)?;
    Ok(())
}
