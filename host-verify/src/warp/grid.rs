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

use super::reference::quantise;
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

/// Largest control-point table the builder makes: 16 MiB (two million
/// points), so that the Rust source, header and blob of a grid stay within
/// what a firmware build takes; a larger one is refused with a message that
/// names a larger step.
pub const MAX_TABLE_BYTES: usize = 16 << 20;

/// Output pixels at which the builder measures the geometric error and
/// checks that the map does not fold: every pixel up to this many (2^22,
/// a 2048x2048 view), above it a regular sample of rows and columns (the
/// last row and column always included) of about this many pixels.
pub const MAX_MEASURED_PX: usize = 1 << 22;

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
    /// The unquantised control points (exact map or extrapolation), row-major.
    pub real: Vec<(f64, f64)>,
    /// Largest Euclidean geometric error, px.
    pub max_px: f64,
    /// RMS geometric error, px.
    pub rms_px: f64,
    /// Largest per-axis error (x, y), px.
    pub max_axis_px: (f64, f64),
    /// Control-point bytes (`cols * rows * 8`).
    pub table_bytes: usize,
    /// Spacing of the measured rows and columns: 1 when every output pixel
    /// was measured, else the sampling step.
    pub measured_every: usize,
}

/// Why a lens map cannot become a grid: it folds back on itself.
fn fold_message(axis: &str, a: (usize, usize), b: (usize, usize), sa: f64, sb: f64) -> String {
    format!(
        "the lens map folds back on itself: output pixels ({}, {}) and ({}, {}) map to source \
         {axis} = {sa:.3} and {sb:.3}, which do not increase along the {}; the corrected image \
         would be mirrored there. Check the distortion coefficients, or give a manual view \
         (`view = manual`) that stays inside the region where the model is one-to-one",
        a.0,
        a.1,
        b.0,
        b.1,
        if axis == "x" { "row" } else { "column" }
    )
}

/// Builds a grid (rule in the module docs), measures it against the exact
/// map ([`MAX_MEASURED_PX`]) and refuses a map that folds: along every row
/// of control points and of measured pixels the source x must increase,
/// along every column the source y. For radial distortion with a positive
/// radial factor this holds exactly when the map is one-to-one (the
/// derivative along x is `radial + 2 x^2 radial'`, at least the radial
/// derivative `radial + 2 r^2 radial'` when `radial' < 0`). Memory: the
/// control points and two rows of the exact map, whatever the output size.
pub fn build_grid(
    cam: &Camera,
    view: &Intrinsics,
    geom: WarpGeometry,
    k: u32,
) -> Result<GridBuild, String> {
    let (cols, rows) = ControlGrid::grid_size(&geom, k).map_err(|e| e.to_string())?;
    let table_bytes = ControlGrid::table_bytes(&geom, k).map_err(|e| e.to_string())?;
    if table_bytes > MAX_TABLE_BYTES {
        return Err(format!(
            "a grid with points every {} px over a {}x{} output holds {table_bytes} bytes, more \
             than the {MAX_TABLE_BYTES} bytes this tool builds; choose a larger step \
             (--grid-log2 {} or more)",
            1usize << k,
            geom.out_width(),
            geom.out_height(),
            (k + 1..=6)
                .find(|&kk| ControlGrid::table_bytes(&geom, kk).is_ok_and(|b| b <= MAX_TABLE_BYTES))
                .unwrap_or(6)
        ));
    }
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
    let s = 1usize << k;
    for j in 0..rows {
        for i in 0..cols {
            let p = real[j * cols + i];
            if i > 0 && real[j * cols + i - 1].0 >= p.0 {
                let q = real[j * cols + i - 1];
                return Err(fold_message(
                    "x",
                    ((i - 1) * s, j * s),
                    (i * s, j * s),
                    q.0,
                    p.0,
                ));
            }
            if j > 0 && real[(j - 1) * cols + i].1 >= p.1 {
                let q = real[(j - 1) * cols + i];
                return Err(fold_message(
                    "y",
                    (i * s, (j - 1) * s),
                    (i * s, j * s),
                    q.1,
                    p.1,
                ));
            }
        }
    }
    let table = ControlGrid::new(&points, geom, k).map_err(|e| e.to_string())?;
    let (w, h) = (geom.out_width(), geom.out_height());
    let every = if w * h <= MAX_MEASURED_PX {
        1
    } else {
        ((w * h) as f64 / MAX_MEASURED_PX as f64).sqrt().ceil() as usize
    };
    let sample = |n: usize| {
        let mut v: Vec<usize> = (0..n).step_by(every).collect();
        if v.last() != Some(&(n - 1)) {
            v.push(n - 1);
        }
        v
    };
    let (xs, ys) = (sample(w), sample(h));
    let scale = 1.0 / (1u64 << f) as f64;
    let (mut max, mut sum2, mut mx, mut my) = (0f64, 0f64, 0f64, 0f64);
    let mut above: Vec<(f64, f64)> = Vec::new();
    let mut prev_y = 0usize;
    for &y in &ys {
        let row: Vec<(f64, f64)> = xs
            .iter()
            .map(|&x| cam.source_of(view, x as f64, y as f64))
            .collect();
        for (n, &x) in xs.iter().enumerate() {
            let (ex, ey) = row[n];
            if !ex.is_finite() || !ey.is_finite() {
                return Err(format!(
                    "output pixel ({x}, {y}) maps to a non-finite source coordinate"
                ));
            }
            if n > 0 && row[n - 1].0 >= ex {
                return Err(fold_message("x", (xs[n - 1], y), (x, y), row[n - 1].0, ex));
            }
            if let Some(a) = above.get(n) {
                if a.1 >= ey {
                    return Err(fold_message("y", (x, prev_y), (x, y), a.1, ey));
                }
            }
            let (cx, cy) = table.coord(x, y).ok_or("coordinate outside the output")?;
            let (dx, dy) = (cx as f64 * scale - ex, cy as f64 * scale - ey);
            let d = dx.hypot(dy);
            max = max.max(d);
            mx = mx.max(dx.abs());
            my = my.max(dy.abs());
            sum2 += d * d;
        }
        above = row;
        prev_y = y;
    }
    Ok(GridBuild {
        geom,
        k,
        grid: (cols, rows),
        points,
        real,
        max_px: max,
        rms_px: (sum2 / (xs.len() * ys.len()) as f64).sqrt(),
        max_axis_px: (mx, my),
        table_bytes,
        measured_every: every,
    })
}

/// `(integer-model coordinates, ideal coordinates)` of every output pixel.
pub type GridMaps = (Vec<i32>, Vec<(f64, f64)>);

/// Per-pixel maps of a built grid, for the contract checks on small views:
/// the integer-model coordinate of every output pixel (interleaved raw
/// pairs) and the ideal one (`f64` bilinear interpolation of the
/// unquantised control points).
pub fn grid_maps(mb: &GridBuild) -> Result<GridMaps, String> {
    let table = ControlGrid::new(&mb.points, mb.geom, mb.k).map_err(|e| e.to_string())?;
    let (cols, rows) = mb.grid;
    let k = mb.k;
    let step = (1usize << k) as f64;
    let ideal_at = |x: usize, y: usize| -> (f64, f64) {
        let i = (x >> k).min(cols - 2);
        let j = (y >> k).min(rows - 2);
        let u = (x - (i << k)) as f64 / step;
        let v = (y - (j << k)) as f64 / step;
        let p = |ii: usize, jj: usize| mb.real[jj * cols + ii];
        let (a, b, c, d) = (p(i, j), p(i + 1, j), p(i, j + 1), p(i + 1, j + 1));
        let mix = |a: f64, b: f64, c: f64, d: f64| {
            (1.0 - v) * ((1.0 - u) * a + u * b) + v * ((1.0 - u) * c + u * d)
        };
        (mix(a.0, b.0, c.0, d.0), mix(a.1, b.1, c.1, d.1))
    };
    let (w, h) = (mb.geom.out_width(), mb.geom.out_height());
    let mut coords = Vec::with_capacity(2 * w * h);
    let mut ideal = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            ideal.push(ideal_at(x, y));
            let (cx, cy) = table.coord(x, y).ok_or("coordinate outside the output")?;
            coords.push(cx);
            coords.push(cy);
        }
    }
    Ok((coords, ideal))
}
