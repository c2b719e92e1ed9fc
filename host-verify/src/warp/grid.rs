//! The control-grid builder: control points from a lens model, and the
//! grid's geometric error against the exact lens map.
//!
//! Control point `(i, j)` is the quantised exact map at output position
//! `(X, Y) = (i 2^k, j 2^k)`. Points past the output edge (only the last
//! column / row can be) hold a linear extrapolation instead of the lens map
//! (which can run away far outside the view): along x, with `Xp = X - 2^k`
//! and `Xe = W' - 1`, `g(X) = g(Xp) + (g(Xe) - g(Xp)) 2^k / (Xe - Xp)`
//! (`g(Xp)` when `Xe = Xp`), then the same along y on those values. The
//! grid thus passes through the exact map at the output's last column and
//! row up to interpolation. The geometric error of a grid is the Euclidean distance between
//! its integer-model coordinate (divided by `2^F`) and the exact map, over
//! every output pixel.

use super::reference::{exact_map, quantise};
use crate::lens::{Camera, Intrinsics};
use fixsight::warp::{ControlGrid, WarpGeometry};

/// The exact-map value a control point holds (rule in the module docs):
/// the exact map at its output position when inside the output, else the
/// linear extrapolation through the previous point and the output edge.
fn control_value(
    cam: &Camera,
    view: &Intrinsics,
    geom: WarpGeometry,
    k: u32,
    i: usize,
    j: usize,
) -> (f64, f64) {
    let s = 1usize << k;
    let (wl, hl) = (geom.out_width() - 1, geom.out_height() - 1);
    // Extrapolates along one axis: position `p`, last output index `last`.
    let along = |p: usize, last: usize, at: &dyn Fn(usize) -> (f64, f64)| -> (f64, f64) {
        if p <= last {
            return at(p);
        }
        let prev = p - s;
        let (a, b) = (at(prev), at(last));
        if last == prev {
            return a;
        }
        let t = s as f64 / (last - prev) as f64;
        (a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t)
    };
    let col = |y: usize| along(i * s, wl, &|x| cam.source_of(view, x as f64, y as f64));
    along(j * s, hl, &col)
}

/// A built grid with its geometric error.
#[derive(Debug, Clone)]
pub struct GridBuild {
    /// Geometry of the table.
    pub geom: WarpGeometry,
    /// Step log2.
    pub k: u32,
    /// Grid columns and rows.
    pub grid: (usize, usize),
    /// Interleaved raw control points.
    pub points: Vec<i32>,
    /// Largest Euclidean geometric error, px.
    pub max_px: f64,
    /// RMS geometric error, px.
    pub rms_px: f64,
    /// Largest per-axis error (x, y), px.
    pub max_axis_px: (f64, f64),
    /// Control-point bytes (`cols * rows * 8`).
    pub table_bytes: usize,
    /// Grid coordinates of every output pixel (interleaved raw pairs).
    pub coords: Vec<i32>,
    /// The ideal grid coordinates: `f64` bilinear interpolation of the
    /// unquantised control points, every output pixel.
    pub ideal: Vec<(f64, f64)>,
}

/// Builds a grid (rule in the module docs) and measures it against the
/// exact map over every output pixel.
pub fn build_grid(
    cam: &Camera,
    view: &Intrinsics,
    geom: WarpGeometry,
    k: u32,
) -> Result<GridBuild, String> {
    let (cols, rows) = ControlGrid::grid_size(&geom, k).map_err(|e| e.to_string())?;
    let f = geom.frac_bits();
    let mut points = Vec::with_capacity(2 * cols * rows);
    let mut real = Vec::with_capacity(cols * rows);
    for j in 0..rows {
        for i in 0..cols {
            let (sx, sy) = control_value(cam, view, geom, k, i, j);
            if !sx.is_finite() || !sy.is_finite() {
                return Err(format!(
                    "control point ({i}, {j}) maps to a non-finite source coordinate"
                ));
            }
            points.push(quantise(sx, f));
            points.push(quantise(sy, f));
            real.push((sx, sy));
        }
    }
    let step = (1usize << k) as f64;
    let ideal_at = |x: usize, y: usize| -> (f64, f64) {
        let i = (x >> k).min(cols - 2);
        let j = (y >> k).min(rows - 2);
        let u = (x - (i << k)) as f64 / step;
        let v = (y - (j << k)) as f64 / step;
        let p = |ii: usize, jj: usize| real[jj * cols + ii];
        let (a, b, c, d) = (p(i, j), p(i + 1, j), p(i, j + 1), p(i + 1, j + 1));
        let mix = |a: f64, b: f64, c: f64, d: f64| {
            (1.0 - v) * ((1.0 - u) * a + u * b) + v * ((1.0 - u) * c + u * d)
        };
        (mix(a.0, b.0, c.0, d.0), mix(a.1, b.1, c.1, d.1))
    };
    let table = ControlGrid::new(&points, geom, k).map_err(|e| e.to_string())?;
    let (w, h) = (geom.out_width(), geom.out_height());
    let exact = exact_map(cam, view, w, h);
    let scale = 1.0 / (1u64 << f) as f64;
    let (mut max, mut sum2, mut mx, mut my) = (0f64, 0f64, 0f64, 0f64);
    let mut coords = Vec::with_capacity(2 * w * h);
    let mut ideal = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            ideal.push(ideal_at(x, y));
            let (cx, cy) = table.coord(x, y).ok_or("coordinate outside the output")?;
            let (ex, ey) = exact[y * w + x];
            let (dx, dy) = (cx as f64 * scale - ex, cy as f64 * scale - ey);
            let d = dx.hypot(dy);
            max = max.max(d);
            mx = mx.max(dx.abs());
            my = my.max(dy.abs());
            sum2 += d * d;
            coords.push(cx);
            coords.push(cy);
        }
    }
    Ok(GridBuild {
        geom,
        k,
        grid: (cols, rows),
        points,
        max_px: max,
        rms_px: (sum2 / (w * h) as f64).sqrt(),
        max_axis_px: (mx, my),
        table_bytes: cols * rows * 8,
        coords,
        ideal,
    })
}
