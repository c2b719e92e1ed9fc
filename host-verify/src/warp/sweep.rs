//! The warp precision sweep: fractional bits x (pixel map and control
//! grids of every spacing), errors against the exact-coordinate reference.

use super::grid::build_grid;
use super::reference::{bilinear_f64, exact_map, pixel_map_coords};
use super::run::{run_grid, run_pixel_map};
use crate::lens::{Camera, Intrinsics};
use fixsight::filter::Border;
use fixsight::warp::{ControlGrid, WarpGeometry};
use serde::Serialize;
use std::fmt::Write as _;

/// One row of the precision sweep.
#[derive(Debug, Clone, Serialize)]
pub struct SweepRow {
    /// Fractional bits.
    pub frac_bits: u32,
    /// Grid step log2, or `None` for the pixel map.
    pub grid_log2: Option<u32>,
    /// Table bytes (pixel map: `8 * w * h`).
    pub table_bytes: usize,
    /// Largest geometric error, px.
    pub geo_max_px: f64,
    /// RMS geometric error, px.
    pub geo_rms_px: f64,
    /// Largest intensity error vs the exact-coordinate reference, LSB.
    pub int_max: f64,
    /// RMS intensity error, LSB.
    pub int_rms: f64,
    /// Share of pixels within 1 LSB.
    pub within_1lsb: f64,
}

/// Runs the sweep over `frac_bits` x (pixel map + `steps`) on a grey image
/// taken through `cam` and corrected to `view` (same size as the image).
pub fn sweep(
    img: &[u8],
    w: usize,
    h: usize,
    cam: &Camera,
    view: &Intrinsics,
    frac_bits: &[u32],
    steps: &[u32],
) -> Result<Vec<SweepRow>, String> {
    let exact = exact_map(cam, view, w, h);
    let border = Border::Fill(0);
    let reference: Vec<f64> = exact
        .iter()
        .map(|&(x, y)| bilinear_f64(img, w, h, 1, 0, x, y, border))
        .collect();
    let stats = |out: &[u8]| -> (f64, f64, f64) {
        let (mut max, mut s2, mut n1) = (0f64, 0f64, 0usize);
        for (&a, &r) in out.iter().zip(&reference) {
            let e = (a as f64 - r).abs();
            max = max.max(e);
            s2 += e * e;
            n1 += (e <= 1.0) as usize;
        }
        let n = out.len().max(1) as f64;
        (max, (s2 / n).sqrt(), n1 as f64 / n)
    };
    let e = |e: fixsight::Error| e.to_string();
    let mut rows = Vec::new();
    for &f in frac_bits {
        let geom = WarpGeometry::new(w, h, w, h, f).map_err(e)?;
        let coords = pixel_map_coords(&exact, f);
        let scale = 1.0 / (1u64 << f) as f64;
        let (mut gmax, mut g2) = (0f64, 0f64);
        for (p, &(ex, ey)) in exact.iter().enumerate() {
            let d =
                (coords[2 * p] as f64 * scale - ex).hypot(coords[2 * p + 1] as f64 * scale - ey);
            gmax = gmax.max(d);
            g2 += d * d;
        }
        let out = run_pixel_map(&coords, geom, img, 1, border).map_err(e)?;
        let (m, r, s1) = stats(&out);
        rows.push(SweepRow {
            frac_bits: f,
            grid_log2: None,
            table_bytes: 8 * w * h,
            geo_max_px: gmax,
            geo_rms_px: (g2 / (w * h) as f64).sqrt(),
            int_max: m,
            int_rms: r,
            within_1lsb: s1,
        });
        for &k in steps {
            let mb = build_grid(cam, view, geom, k)?;
            let table = ControlGrid::new(&mb.points, geom, k).map_err(e)?;
            let out = run_grid(&table, img, 1, border, None).map_err(e)?;
            let (m, r, s1) = stats(&out);
            rows.push(SweepRow {
                frac_bits: f,
                grid_log2: Some(k),
                table_bytes: mb.table_bytes,
                geo_max_px: mb.max_px,
                geo_rms_px: mb.rms_px,
                int_max: m,
                int_rms: r,
                within_1lsb: s1,
            });
        }
    }
    Ok(rows)
}

/// The sweep as a Markdown table.
pub fn sweep_table(rows: &[SweepRow]) -> String {
    let mut s = String::from(
        "| F | map | table bytes | geo max px | geo RMS px | max err LSB | RMS err LSB | within 1 LSB |\n\
         |---|---|---|---|---|---|---|---|\n",
    );
    for r in rows {
        let _ = writeln!(
            s,
            "| {} | {} | {} | {:.4} | {:.4} | {:.3} | {:.4} | {:.5} |",
            r.frac_bits,
            r.grid_log2
                .map_or("pixel map".to_string(), |k| format!("grid {}", 1 << k)),
            r.table_bytes,
            r.geo_max_px,
            r.geo_rms_px,
            r.int_max,
            r.int_rms,
            r.within_1lsb
        );
    }
    s
}
