//! `f64` reference, integer-model transcription, grid builder, lens files,
//! table writers, precision sweep and contract for `fixsight::warp`.
//!
//! # References
//!
//! * [`bilinear_f64`]: bilinear interpolation of the border-extended source
//!   at a real coordinate (pixel centres at integers), in `f64`.
//! * [`model_sample`] and [`model_grid_coord`]: the kernel's documented
//!   integer model (kernels/src/warp.rs) transcribed in `i64`/`i128`
//!   arithmetic with Euclidean division, without the kernel's fast path or
//!   incremental stepping.
//! * [`exact_map`]: the exact `f64` source coordinate of every output pixel
//!   ([`crate::lens::Camera::source_of`]).
//!
//! Coordinates are quantised by [`quantise`]: `floor(v * 2^F + 1/2)`.
//!
//! # Contract
//!
//! * `warp.pixel_map` (grey and 3 interleaved channels in one row):
//!   bit-exact to the integer model on the quantised exact map, whole frame and in strips; against the `f64`
//!   reference at the **exact** (unquantised) coordinates within
//!   `0.5 + (Dx + Dy) 2^-(F+1)` LSB, `Dx`/`Dy` the largest horizontal /
//!   vertical neighbour difference of the source (derivation in the kernel
//!   docs), and within 1 LSB on at least 99.9 % of pixels at `F >= 5`.
//! * `warp.control_grid`: bit-exact to the integer model fed with the
//!   grid-interpolated coordinates; against the `f64` reference at the
//!   ideal grid coordinate (bilinear interpolation of the unquantised control
//!   points) within `0.5 + (Dx + Dy) 2^-F` (control-point quantisation and
//!   coordinate rounding, `2^-(F+1)` each per axis), and within 1 LSB on
//!   99.9 %. The grid's own approximation of the lens is reported apart as
//!   geometric error (`grid_max_px`, `grid_rms_px`) and as
//!   `max_err_vs_exact_lens_map`.
//!
//! # Golden kernel ids
//!
//! | id | kernel API | inputs | params | output |
//! |---|---|---|---|---|
//! | `warp.pixel_map` | `PixelMap::warp_rows` | `src` u8 (any channels), `map` i32 2 channels (raw x, y per output pixel) | `{"frac_bits": 2..=10, "border": "clamp" \| {"fill": u8}}` | `dst` u8, map size, channels of `src` |
//! | `warp.control_grid` | `ControlGrid::from_blob`, `ControlGrid::warp_rows` | `src` u8, `blob` u8 (the grid blob as one row) | `{"border": ..., "strip_rows": rows per call}` | `dst` u8, the blob's output size |
//!
//! # Grid builder
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
//!
//! # Lens file (`fixsight-lens 1`)
//!
//! Text, one `key = value` per line; `#` starts a comment; blank lines are
//! ignored; keys are unique. See `host-verify/data/demo-lens.txt`.
//!
//! | key | required | range |
//! |---|---|---|
//! | `format` | yes | exactly `fixsight-lens 1` |
//! | `model` | yes | `brown` or `fisheye` |
//! | `sensor_width`, `sensor_height` | yes | integer `1..=32767` |
//! | `fx`, `fy` | yes | `0 < f <= 100000` px |
//! | `cx`, `cy` | yes | within one sensor size of the sensor |
//! | `k1`, `k2`, `k3`, `p1`, `p2` | brown: all five | `|k| <= 10`, `|p| <= 1` |
//! | `k1`, `k2` | fisheye: both | `|k| <= 10` |
//! | `out_width`, `out_height` | no (sensor size) | integer `1..=32767` |
//! | `view` | no (`fit`) | `fit` or `manual` |
//! | `view_fx`, `view_fy`, `view_cx`, `view_cy` | when `view = manual` | as `fx`.. relative to the output |
//!
//! Every problem is reported with its line number (or "missing") and key.

use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::families::{input, parse_params, Family};
use crate::filter::BorderParam;
use crate::golden::{Blob, GoldenCase};
use crate::lens::{Camera, Intrinsics, LensModel};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::filter::Border;
use fixsight::warp::{ControlGrid, PixelMap, WarpGeometry};
use fixsight::{ImageView, ImageViewMut};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fmt::Write as _;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "warp",
    kernels: &["warp.pixel_map", "warp.control_grid"],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// `floor(v * 2^f + 1/2)`: the quantisation of a real coordinate.
pub fn quantise(v: f64, f: u32) -> i32 {
    (v * (1u64 << f) as f64 + 0.5)
        .floor()
        .clamp(i32::MIN as f64, i32::MAX as f64) as i32
}

/// Border-extended source sample `P(x, y)` of channel `ch` of an image of
/// `c` interleaved channels (the border rule of every kernel's reference).
#[allow(clippy::too_many_arguments)]
pub fn px(img: &[u8], w: usize, h: usize, c: usize, ch: usize, x: i64, y: i64, b: Border) -> i64 {
    if x >= 0 && y >= 0 && x < w as i64 && y < h as i64 {
        img[(y as usize * w + x as usize) * c + ch] as i64
    } else {
        match b {
            Border::Fill(v) => v as i64,
            Border::Clamp => {
                let xc = x.clamp(0, w as i64 - 1) as usize;
                let yc = y.clamp(0, h as i64 - 1) as usize;
                img[(yc * w + xc) * c + ch] as i64
            }
        }
    }
}

/// The `f64` bilinear reference at a real coordinate `(x, y)`.
#[allow(clippy::too_many_arguments)]
pub fn bilinear_f64(
    img: &[u8],
    w: usize,
    h: usize,
    c: usize,
    ch: usize,
    x: f64,
    y: f64,
    b: Border,
) -> f64 {
    let (x0, y0) = (x.floor(), y.floor());
    let (fx, fy) = (x - x0, y - y0);
    let (xi, yi) = (x0 as i64, y0 as i64);
    let p = |dx: i64, dy: i64| px(img, w, h, c, ch, xi + dx, yi + dy, b) as f64;
    (1.0 - fy) * ((1.0 - fx) * p(0, 0) + fx * p(1, 0)) + fy * ((1.0 - fx) * p(0, 1) + fx * p(1, 1))
}

/// The kernel's sampling model, transcribed: one value per channel.
#[allow(clippy::too_many_arguments)]
pub fn model_sample(
    img: &[u8],
    w: usize,
    h: usize,
    c: usize,
    sx: i32,
    sy: i32,
    f: u32,
    b: Border,
) -> Vec<u8> {
    let one = 1i64 << f;
    let (x0, y0) = ((sx as i64).div_euclid(one), (sy as i64).div_euclid(one));
    let (fx, fy) = ((sx as i64).rem_euclid(one), (sy as i64).rem_euclid(one));
    (0..c)
        .map(|ch| {
            let p = |dx: i64, dy: i64| px(img, w, h, c, ch, x0 + dx, y0 + dy, b);
            let acc = (one - fy) * ((one - fx) * p(0, 0) + fx * p(1, 0))
                + fy * ((one - fx) * p(0, 1) + fx * p(1, 1));
            let q = one * one;
            (acc + q / 2).div_euclid(q).clamp(0, 255) as u8
        })
        .collect()
}

/// The grid coordinate model, transcribed in `i128`: rounded exact bilinear
/// interpolation of the cell's control points. `points` is the interleaved
/// grid of `cols x rows` raw pairs.
pub fn model_grid_coord(
    points: &[i32],
    cols: usize,
    rows: usize,
    k: u32,
    x: usize,
    y: usize,
) -> (i32, i32) {
    let s = 1i128 << k;
    let i = (x >> k).min(cols - 2);
    let j = (y >> k).min(rows - 2);
    let u = (x - (i << k)) as i128;
    let v = (y - (j << k)) as i128;
    let axis = |a: usize| {
        let at = |ii: usize, jj: usize| points[2 * (jj * cols + ii) + a] as i128;
        let num = (s - u) * (s - v) * at(i, j)
            + u * (s - v) * at(i + 1, j)
            + (s - u) * v * at(i, j + 1)
            + u * v * at(i + 1, j + 1);
        (2 * num + s * s).div_euclid(2 * s * s) as i32
    };
    (axis(0), axis(1))
}

/// The exact source coordinate of every output pixel of a `w x h` view.
pub fn exact_map(cam: &Camera, view: &Intrinsics, w: usize, h: usize) -> Vec<(f64, f64)> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| cam.source_of(view, x as f64, y as f64)))
        .collect()
}

/// Quantised pixel map (interleaved raw pairs).
pub fn pixel_map_coords(map: &[(f64, f64)], f: u32) -> Vec<i32> {
    map.iter()
        .flat_map(|&(x, y)| [quantise(x, f), quantise(y, f)])
        .collect()
}

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

/// Runs the pixel-map kernel over a whole frame.
pub fn run_pixel_map(
    coords: &[i32],
    geom: WarpGeometry,
    img: &[u8],
    c: usize,
    border: Border,
) -> Result<Vec<u8>, fixsight::Error> {
    let map = PixelMap::new(coords, geom)?;
    let (w, h) = (geom.out_width(), geom.out_height());
    let mut out = vec![0u8; w * h * c];
    let sw = geom.src_width();
    map.warp_rows(
        &ImageView::interleaved(img, sw, geom.src_height(), sw * c, c)?,
        &mut ImageViewMut::interleaved(&mut out, w, h, w * c, c)?,
        0,
        border,
    )?;
    Ok(out)
}

/// Runs a grid over a whole frame, or in strips of `strip` rows.
pub fn run_grid(
    grid: &ControlGrid<'_>,
    img: &[u8],
    c: usize,
    border: Border,
    strip: Option<usize>,
) -> Result<Vec<u8>, fixsight::Error> {
    let g = grid.geometry();
    let (w, h) = (g.out_width(), g.out_height());
    let mut out = vec![0u8; w * h * c];
    let sw = g.src_width();
    let src = ImageView::interleaved(img, sw, g.src_height(), sw * c, c)?;
    let step = strip.unwrap_or(h).max(1);
    for (n, chunk) in out.chunks_mut(step * w * c).enumerate() {
        let rows = chunk.len() / (w * c);
        grid.warp_rows(
            &src,
            &mut ImageViewMut::interleaved(chunk, w, rows, w * c, c)?,
            n * step,
            border,
        )?;
    }
    Ok(out)
}

/// Largest horizontal and vertical neighbour differences of a
/// border-extended image (over all channels); the border value counts as a
/// neighbour for a fill border.
pub fn neighbour_diffs(img: &[u8], w: usize, h: usize, c: usize, b: Border) -> (f64, f64) {
    let (mut dx, mut dy) = (0i64, 0i64);
    for ch in 0..c {
        for y in -1..=h as i64 {
            for x in -1..=w as i64 {
                let p = px(img, w, h, c, ch, x, y, b);
                dx = dx.max((px(img, w, h, c, ch, x + 1, y, b) - p).abs());
                dy = dy.max((px(img, w, h, c, ch, x, y + 1, b) - p).abs());
            }
        }
    }
    (dx as f64, dy as f64)
}

/// Fractional bits used by the report checks.
pub const CHECK_FRAC_BITS: u32 = 5;
/// Grid step used by the report checks on the QVGA demo scenes (step 8 at
/// QVGA covers the view like step 16 at VGA).
pub const CHECK_GRID_LOG2: u32 = 3;

/// The corrected view of a demo scene: fit-to-view at the scene size.
pub fn demo_view(s: &Scene) -> Result<Intrinsics, String> {
    s.camera
        .fit_view(s.width, s.height, s.width, s.height)
        .map_err(|e| e.to_string())
}

/// Results of one warp path on one image.
struct PathResult {
    stats_ref: ErrorStats,
    bound: f64,
    model_mismatch: usize,
}

/// Compares kernel output with the model output and with the exact-coordinate
/// reference.
#[allow(clippy::too_many_arguments)]
fn judge(
    out: &[u8],
    model_coords: &[i32],
    exact: &[(f64, f64)],
    img: &[u8],
    sw: usize,
    sh: usize,
    c: usize,
    f: u32,
    b: Border,
    coord_err: (f64, f64),
) -> PathResult {
    let mut mism = 0usize;
    let mut actual = Vec::with_capacity(out.len());
    let mut reference = Vec::with_capacity(out.len());
    for (p, &(ex, ey)) in exact.iter().enumerate() {
        let m = model_sample(
            img,
            sw,
            sh,
            c,
            model_coords[2 * p],
            model_coords[2 * p + 1],
            f,
            b,
        );
        for ch in 0..c {
            if m[ch] != out[p * c + ch] {
                mism += 1;
            }
            actual.push(out[p * c + ch] as f64);
            reference.push(bilinear_f64(img, sw, sh, c, ch, ex, ey, b));
        }
    }
    let (dx, dy) = neighbour_diffs(img, sw, sh, c, b);
    PathResult {
        stats_ref: ErrorStats::compare(&actual, &reference, 255.0),
        bound: 0.5 + dx * coord_err.0 + dy * coord_err.1,
        model_mismatch: mism,
    }
}

/// Largest `|out - reference|` with the reference at the exact lens map
/// (informational for the grid: includes the grid's geometric error).
fn max_err_vs(
    out: &[u8],
    exact: &[(f64, f64)],
    img: &[u8],
    w: usize,
    h: usize,
    c: usize,
    b: Border,
) -> f64 {
    let mut m = 0f64;
    for (p, &(x, y)) in exact.iter().enumerate() {
        for ch in 0..c {
            m = m.max((out[p * c + ch] as f64 - bilinear_f64(img, w, h, c, ch, x, y, b)).abs());
        }
    }
    m
}

/// Contract checks on the demo scenes.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    vec![
        check_path(scenes, false, &[1, 3]),
        check_path(scenes, true, &[1]),
    ]
}

/// Builds an RGB-like 3-channel image from a grey one (three different
/// tone curves), for the interleaved path.
pub fn to_three_channels(g: &[u8]) -> Vec<u8> {
    g.iter()
        .flat_map(|&v| [v, 255 - v, ((v as u16 * v as u16) / 255) as u8])
        .collect()
}

fn check_path(scenes: &[Scene], grid: bool, channels: &[usize]) -> KernelReport {
    let f = CHECK_FRAC_BITS;
    let k = CHECK_GRID_LOG2;
    let name = if grid {
        "warp.control_grid"
    } else {
        "warp.pixel_map"
    };
    let mut problems = Vec::new();
    let (mut worst_margin, mut bound_max, mut within1, mut samples) =
        (f64::INFINITY, 0f64, 0usize, 0usize);
    let mut metrics = BTreeMap::new();
    let mut ops = OpsPerPx::default();
    let (mut gmax, mut grms2, mut table_bytes, mut mismatch) = (0f64, 0f64, 0usize, 0usize);
    let mut lens_err = 0f64;
    let mut actual_all = Vec::new();
    let mut ref_all = Vec::new();
    for &c in channels {
        for (si, s) in scenes.iter().enumerate() {
            let view = match demo_view(s) {
                Ok(v) => v,
                Err(e) => {
                    problems.push(format!("{}: {e}", s.name));
                    continue;
                }
            };
            let (w, h) = (s.width, s.height);
            let img = if c == 3 {
                to_three_channels(&s.gray)
            } else {
                s.gray.clone()
            };
            let geom = match WarpGeometry::new(w, h, w, h, f) {
                Ok(g) => g,
                Err(e) => {
                    problems.push(e.to_string());
                    continue;
                }
            };
            let exact = exact_map(&s.camera, &view, w, h);
            for border in [Border::Fill(0), Border::Clamp] {
                let ref_coords: Vec<(f64, f64)>;
                let (coords, coord_err, out) = if grid {
                    let mb = match build_grid(&s.camera, &view, geom, k) {
                        Ok(m) => m,
                        Err(e) => {
                            problems.push(format!("{}: {e}", s.name));
                            continue;
                        }
                    };
                    gmax = gmax.max(mb.max_px);
                    grms2 += mb.rms_px * mb.rms_px;
                    table_bytes = mb.table_bytes;
                    let table = match ControlGrid::new(&mb.points, geom, k) {
                        Ok(t) => t,
                        Err(e) => {
                            problems.push(e.to_string());
                            continue;
                        }
                    };
                    let (whole, o) = measure(w * h, || run_grid(&table, &img, c, border, None));
                    if si == 0 && c == channels[0] {
                        ops = o;
                    }
                    let strips = run_grid(&table, &img, c, border, Some(7));
                    let whole = match (whole, strips) {
                        (Ok(a), Ok(b)) => {
                            if a != b {
                                problems.push(format!(
                                    "{}: 7-row strips differ from the frame",
                                    s.name
                                ));
                            }
                            a
                        }
                        (Err(e), _) | (_, Err(e)) => {
                            problems.push(format!("{}: kernel error: {e}", s.name));
                            continue;
                        }
                    };
                    let q = 1.0 / (1u64 << f) as f64;
                    lens_err = lens_err.max(max_err_vs(&whole, &exact, &img, w, h, c, border));
                    ref_coords = mb.ideal;
                    (mb.coords, (q, q), whole)
                } else {
                    let coords = pixel_map_coords(&exact, f);
                    let q = 1.0 / (1u64 << (f + 1)) as f64;
                    let (r, o) = measure(w * h, || run_pixel_map(&coords, geom, &img, c, border));
                    if si == 0 && c == channels[0] {
                        ops = o;
                    }
                    ref_coords = exact.clone();
                    match r {
                        Ok(out) => (coords, (q, q), out),
                        Err(e) => {
                            problems.push(format!("{}: kernel error: {e}", s.name));
                            continue;
                        }
                    }
                };
                let exact = &ref_coords;
                let pr = judge(&out, &coords, exact, &img, w, h, c, f, border, coord_err);
                mismatch += pr.model_mismatch;
                bound_max = bound_max.max(pr.bound);
                worst_margin = worst_margin.min(pr.bound - pr.stats_ref.max_abs);
                if pr.stats_ref.max_abs > pr.bound {
                    problems.push(format!(
                        "{} ({border:?}): max error {:.4} exceeds its bound {:.4}",
                        s.name, pr.stats_ref.max_abs, pr.bound
                    ));
                }
                for (p, &(ex, ey)) in exact.iter().enumerate() {
                    for ch in 0..c {
                        let r = bilinear_f64(&img, w, h, c, ch, ex, ey, border);
                        let a = out[p * c + ch] as f64;
                        if (a - r).abs() <= 1.0 {
                            within1 += 1;
                        }
                        samples += 1;
                        actual_all.push(a);
                        ref_all.push(r);
                    }
                }
            }
        }
    }
    let all = ErrorStats::compare(&actual_all, &ref_all, 255.0);
    let share1 = within1 as f64 / samples.max(1) as f64;
    if share1 < 0.999 {
        problems.push(format!(
            "only {:.4} % of samples within 1 LSB of the exact-coordinate reference (99.9 % required)",
            100.0 * share1
        ));
    }
    if mismatch > 0 {
        problems.push(format!(
            "{mismatch} samples differ from the transcribed integer model"
        ));
    }
    let mut r = KernelReport::from_stats(
        name,
        KernelFamily::Warp,
        Contract::Tolerance,
        bound_max,
        &all,
        ops,
    );
    metrics.insert("frac_bits".into(), f as f64);
    metrics.insert("share_within_1lsb".into(), share1);
    metrics.insert("model_mismatches".into(), mismatch as f64);
    metrics.insert("bound_margin_min".into(), worst_margin);
    metrics.insert(
        "bound_worst_case_any_image".into(),
        0.5 + 255.0 / (1u64 << f) as f64,
    );
    if grid {
        metrics.insert("grid_log2".into(), k as f64);
        metrics.insert("grid_max_px".into(), gmax);
        metrics.insert(
            "grid_rms_px".into(),
            (grms2 / (2 * scenes.len()).max(1) as f64).sqrt(),
        );
        metrics.insert("table_bytes".into(), table_bytes as f64);
        metrics.insert("max_err_vs_exact_lens_map".into(), lens_err);
    }
    r.metrics.extend(metrics);
    r.notes.push(format!(
        "{} path, {:?} channel(s), F = {f}{}: bit-exact to the transcribed integer model ({}), \
         vs f64 bilinear at {}; borders fill(0) and clamp; {} scenes; \
         bound = 0.5 + Dx ex + Dy ey per scene (largest shown); ops/px of 1 channel",
        if grid { "control-grid" } else { "pixel-map" },
        channels,
        if grid {
            format!(", grid step 2^{k}")
        } else {
            String::new()
        },
        if grid {
            "fed with grid coordinates"
        } else {
            "quantised exact map"
        },
        if grid {
            "the unquantised grid (bilinear of exact control points; ex = ey = 2^-F)"
        } else {
            "the exact fit-to-view lens coordinates (ex = ey = 2^-(F+1))"
        },
        scenes.len()
    ));
    for p in problems {
        r.fail(p);
    }
    r
}

// ---------------------------------------------------------------- golden

/// Golden parameters of `warp.pixel_map`.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct PixelMapParams {
    /// Fractional bits.
    pub frac_bits: u32,
    /// Border rule.
    pub border: BorderParam,
}

/// Golden parameters of `warp.control_grid` (the grid itself is the `blob` input).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct GridParams {
    /// Border rule.
    pub border: BorderParam,
    /// Rows per strip the output is produced in.
    pub strip_rows: usize,
}

fn small_camera(w: usize, h: usize, lens: LensModel) -> Camera {
    Camera {
        intrinsics: Intrinsics {
            fx: 0.45 * w as f64,
            fy: 0.45 * w as f64,
            cx: (w as f64 - 1.0) / 2.0,
            cy: (h as f64 - 1.0) / 2.0,
        },
        lens,
    }
}

#[allow(clippy::too_many_arguments)]
fn pixel_map_case(
    id: &str,
    comment: &str,
    img: Vec<u8>,
    (sw, sh, c): (usize, usize, usize),
    coords: Vec<i32>,
    (ow, oh): (usize, usize),
    f: u32,
    border: Border,
) -> GoldenCase {
    let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("golden geometry is valid");
    let out = run_pixel_map(&coords, geom, &img, c, border).expect("golden map is valid");
    GoldenCase {
        id: id.into(),
        comment: comment.into(),
        kernel: "warp.pixel_map".into(),
        params: serde_json::to_value(PixelMapParams {
            frac_bits: f,
            border: border.into(),
        })
        .expect("params serialise"),
        inputs: vec![
            Blob::from_u8("src", sw, sh, c, &img),
            Blob::from_i32("map", ow, oh, 2, &coords),
        ],
        expected: vec![Blob::from_u8("dst", ow, oh, c, &out)],
    }
}

fn grid_blob(points: &[i32], geom: WarpGeometry, k: u32) -> Vec<u8> {
    let m = ControlGrid::new(points, geom, k).expect("golden grid is valid");
    let mut blob = vec![0u8; m.blob_len()];
    m.write_blob(&mut blob)
        .expect("blob buffer is large enough");
    blob
}

fn grid_case(
    id: &str,
    comment: &str,
    img: Vec<u8>,
    c: usize,
    blob: Vec<u8>,
    border: Border,
    strip_rows: usize,
) -> GoldenCase {
    let m = ControlGrid::from_blob(&blob).expect("golden blob parses");
    let g = m.geometry();
    let out = run_grid(&m, &img, c, border, Some(strip_rows)).expect("golden grid runs");
    GoldenCase {
        id: id.into(),
        comment: comment.into(),
        kernel: "warp.control_grid".into(),
        params: serde_json::to_value(GridParams {
            border: border.into(),
            strip_rows,
        })
        .expect("params serialise"),
        inputs: vec![
            Blob::from_u8("src", g.src_width(), g.src_height(), c, &img),
            Blob::from_u8("blob", blob.len(), 1, 1, &blob),
        ],
        expected: vec![Blob::from_u8("dst", g.out_width(), g.out_height(), c, &out)],
    }
}

/// Golden cases: pixel maps at 2, 5 and 10 fractional bits with both
/// borders, an RGB case, a map reaching the edges of the accepted range,
/// and control grids at steps 4, 16 and 32 (partial last cells, strips, RGB),
/// all on a crop of a demo scene undistorted by a small barrel lens.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let s = &scenes[0];
    let (sw, sh) = (48usize, 36usize);
    let img = crate::golden::crop(s, 136, 150, sw, sh);
    let rgb = to_three_channels(&img);
    let cam = small_camera(
        sw,
        sh,
        LensModel::BrownConrady {
            k1: -0.25,
            k2: 0.06,
            k3: 0.0,
            p1: 0.001,
            p2: -0.0007,
        },
    );
    let (ow, oh) = (41usize, 30usize);
    let view = cam
        .fit_view(ow, oh, sw, sh)
        .expect("the golden lens fits its view");
    let exact = exact_map(&cam, &view, ow, oh);
    let mut v = Vec::new();
    for (f, border, tag) in [
        (2, Border::Clamp, "f2.clamp"),
        (5, Border::Fill(0), "f5.fill0"),
        (10, Border::Clamp, "f10.clamp"),
    ] {
        v.push(pixel_map_case(
            &format!("warp.pixel_map.{tag}"),
            &format!("{ow}x{oh} undistortion of a {sw}x{sh} floor crop, F = {f}"),
            img.clone(),
            (sw, sh, 1),
            pixel_map_coords(&exact, f),
            (ow, oh),
            f,
            border,
        ));
    }
    v.push(pixel_map_case(
        "warp.pixel_map.f6.rgb.fill90",
        "three interleaved channels sharing the weights, F = 6, border 90",
        rgb.clone(),
        (sw, sh, 3),
        pixel_map_coords(&exact, 6),
        (ow, oh),
        6,
        Border::Fill(90),
    ));
    // A map spreading over the whole accepted range (-W..2W-1), including
    // its two extremes, to exercise the border rule far outside.
    let f = 4;
    let g = WarpGeometry::new(16, 12, sw, sh, f).expect("valid");
    let (xl, xh) = g.coord_range_x();
    let (yl, yh) = g.coord_range_y();
    let far: Vec<i32> = (0..16 * 12)
        .flat_map(|p| {
            let t = p as i64;
            [
                (xl as i64 + (t * 7919) % (xh as i64 - xl as i64 + 1)) as i32,
                (yl as i64 + (t * 104_729) % (yh as i64 - yl as i64 + 1)) as i32,
            ]
        })
        .enumerate()
        .map(|(i, v)| match i {
            0 => xl,
            1 => yl,
            2 => xh,
            3 => yh,
            _ => v,
        })
        .collect();
    for (border, tag) in [(Border::Fill(255), "fill255"), (Border::Clamp, "clamp")] {
        v.push(pixel_map_case(
            &format!("warp.pixel_map.far.{tag}"),
            "coordinates scattered over the accepted range, extremes included",
            img.clone(),
            (sw, sh, 1),
            far.clone(),
            (16, 12),
            f,
            border,
        ));
    }
    for (k, f, c, border, strip, tag) in [
        (2, 5, 1, Border::Fill(0), 30, "k2.f5.fill0"),
        (4, 8, 3, Border::Clamp, 7, "k4.f8.rgb.clamp"),
        (5, 10, 1, Border::Clamp, 1, "k5.f10.clamp"),
    ] {
        let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("valid");
        let mb = build_grid(&cam, &view, geom, k).expect("golden grid builds");
        v.push(grid_case(
            &format!("warp.control_grid.{tag}"),
            &format!(
                "grid step {} ({}x{} points) from a blob, F = {f}, {c} channel(s), strips of {strip} rows",
                1 << k,
                mb.grid.0,
                mb.grid.1
            ),
            if c == 3 { rgb.clone() } else { img.clone() },
            c,
            grid_blob(&mb.points, geom, k),
            border,
            strip,
        ));
    }
    v
}

/// Recomputes a `warp.pixel_map` or `warp.control_grid` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    let src = input(inputs, "src")?;
    let img = src.to_u8()?;
    let c = src.channels;
    let e = |e: fixsight::Error| e.to_string();
    match kernel {
        "warp.pixel_map" => {
            let p: PixelMapParams = parse_params(kernel, params)?;
            let map = input(inputs, "map")?;
            if map.channels != 2 {
                return Err(format!("map has {} channels, expected 2", map.channels));
            }
            let geom = WarpGeometry::new(map.width, map.height, src.width, src.height, p.frac_bits)
                .map_err(e)?;
            let out = run_pixel_map(&map.to_i32()?, geom, &img, c, p.border.into()).map_err(e)?;
            Ok(vec![Blob::from_u8("dst", map.width, map.height, c, &out)])
        }
        "warp.control_grid" => {
            let p: GridParams = parse_params(kernel, params)?;
            let blob = input(inputs, "blob")?.to_u8()?;
            let m = ControlGrid::from_blob(&blob).map_err(e)?;
            let g = m.geometry();
            let out = run_grid(&m, &img, c, p.border.into(), Some(p.strip_rows)).map_err(e)?;
            Ok(vec![Blob::from_u8(
                "dst",
                g.out_width(),
                g.out_height(),
                c,
                &out,
            )])
        }
        _ => Err(format!("unknown warp kernel `{kernel}`")),
    }
}

// ---------------------------------------------------------------- grid tool

/// The three files `fixsight-verify grid` writes.
#[derive(Debug, Clone)]
pub struct GridFiles {
    /// Rust source defining the control points and geometry.
    pub rust: String,
    /// C header with the same data.
    pub c_header: String,
    /// Binary blob (format in the kernel's `warp` docs).
    pub blob: Vec<u8>,
}

/// Renders a built grid as Rust source, C header and blob. `name` becomes
/// the identifier stem (upper-cased for constants).
pub fn grid_files(mb: &GridBuild, name: &str, origin: &str) -> Result<GridFiles, String> {
    let ident: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_uppercase()
            } else {
                '_'
            }
        })
        .collect();
    if ident.is_empty() || ident.starts_with(|c: char| c.is_ascii_digit()) {
        return Err(format!("`{name}` does not make an identifier"));
    }
    let g = mb.geom;
    let (cols, rows) = mb.grid;
    let n = mb.points.len();
    let header = format!(
        "Control grid {name}: output {}x{}, source {}x{}, step 2^{} px, {} fractional bits, \
         {cols}x{rows} control points ({} bytes); geometric error vs the exact lens map: \
         max {:.5} px, RMS {:.5} px. Generated by fixsight-verify from {origin}.",
        g.out_width(),
        g.out_height(),
        g.src_width(),
        g.src_height(),
        mb.k,
        g.frac_bits(),
        mb.table_bytes,
        mb.max_px,
        mb.rms_px
    );
    let body = |per_line: usize| -> String {
        let mut s = String::new();
        for (i, pair) in mb.points.chunks(2).enumerate() {
            if i % per_line == 0 {
                s.push_str("    ");
            }
            let _ = write!(s, "{}, {},", pair[0], pair[1]);
            if i % per_line == per_line - 1 || i == n / 2 - 1 {
                s.push('\n');
            } else {
                s.push(' ');
            }
        }
        s
    };
    let mut rust = String::new();
    let _ = writeln!(rust, "// {header}");
    let _ = writeln!(rust, "// Load with fixsight::warp::ControlGrid::new(&{ident}_POINTS, WarpGeometry::new({ident}_OUT_WIDTH, {ident}_OUT_HEIGHT, {ident}_SRC_WIDTH, {ident}_SRC_HEIGHT, {ident}_FRAC_BITS)?, {ident}_GRID_LOG2).");
    for (k, v) in [
        ("OUT_WIDTH", g.out_width()),
        ("OUT_HEIGHT", g.out_height()),
        ("SRC_WIDTH", g.src_width()),
        ("SRC_HEIGHT", g.src_height()),
    ] {
        let _ = writeln!(rust, "pub const {ident}_{k}: usize = {v};");
    }
    let _ = writeln!(
        rust,
        "pub const {ident}_FRAC_BITS: u32 = {};",
        g.frac_bits()
    );
    let _ = writeln!(rust, "pub const {ident}_GRID_LOG2: u32 = {};", mb.k);
    let _ = writeln!(
        rust,
        "/// {cols} x {rows} control points, interleaved raw (x, y), row-major."
    );
    let _ = writeln!(rust, "pub static {ident}_POINTS: [i32; {n}] = [");
    rust.push_str(&body(6));
    rust.push_str("];\n");
    let mut c = String::new();
    let guard = format!("FIXSIGHT_{ident}_H");
    let _ = writeln!(c, "/* {header} */");
    let _ = writeln!(
        c,
        "#ifndef {guard}\n#define {guard}\n\n#include <stdint.h>\n"
    );
    for (k, v) in [
        ("OUT_WIDTH", g.out_width()),
        ("OUT_HEIGHT", g.out_height()),
        ("SRC_WIDTH", g.src_width()),
        ("SRC_HEIGHT", g.src_height()),
        ("FRAC_BITS", g.frac_bits() as usize),
        ("GRID_LOG2", mb.k as usize),
        ("COLS", cols),
        ("ROWS", rows),
    ] {
        let _ = writeln!(c, "#define {ident}_{k} {v}u");
    }
    let _ = writeln!(
        c,
        "\n/* {cols} x {rows} control points, interleaved raw (x, y), row-major. */"
    );
    let _ = writeln!(c, "static const int32_t {ident}_POINTS[{n}] = {{");
    c.push_str(&body(6));
    let _ = writeln!(c, "}};\n\n#endif /* {guard} */");
    let table = ControlGrid::new(&mb.points, g, mb.k).map_err(|e| e.to_string())?;
    let mut blob = vec![0u8; table.blob_len()];
    table.write_blob(&mut blob).map_err(|e| e.to_string())?;
    Ok(GridFiles {
        rust,
        c_header: c,
        blob,
    })
}

// ---------------------------------------------------------------- sweep

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

/// `fixsight-verify grid`: reads a lens file, builds the grid, writes
/// `<name>.rs`, `<name>.h` and `<name>.bin` into `out`; returns a summary.
pub fn grid_command(
    lens_file: &std::path::Path,
    grid_log2: u32,
    frac_bits: u32,
    out: &std::path::Path,
    name: &str,
) -> anyhow::Result<String> {
    let text = std::fs::read_to_string(lens_file)
        .map_err(|e| anyhow::anyhow!("cannot read {}: {e}", lens_file.display()))?;
    let spec = crate::lens::LensSpec::parse(&text)?;
    let geom = WarpGeometry::new(
        spec.output.0,
        spec.output.1,
        spec.sensor.0,
        spec.sensor.1,
        frac_bits,
    )?;
    let mb = build_grid(&spec.camera, &spec.view, geom, grid_log2).map_err(anyhow::Error::msg)?;
    let origin = lens_file
        .file_name()
        .map_or("a lens file".into(), |f| f.to_string_lossy().to_string());
    let files = grid_files(&mb, name, &origin).map_err(anyhow::Error::msg)?;
    std::fs::create_dir_all(out)?;
    for (ext, bytes) in [
        ("rs", files.rust.as_bytes()),
        ("h", files.c_header.as_bytes()),
        ("bin", &files.blob[..]),
    ] {
        let p = out.join(format!("{name}.{ext}"));
        std::fs::write(&p, bytes)
            .map_err(|e| anyhow::anyhow!("cannot write {}: {e}", p.display()))?;
    }
    Ok(format!(
        "{}x{} view ({}; f' = {:.3} px) of a {}x{} sensor: grid step {} px, F = {frac_bits}, \
         {}x{} points, {} bytes (blob {} bytes); geometric error max {:.5} px, RMS {:.5} px\n\
         wrote {name}.rs, {name}.h, {name}.bin to {}",
        spec.output.0,
        spec.output.1,
        if spec.fitted {
            "fit-to-view"
        } else {
            "manual view"
        },
        spec.view.fx,
        spec.sensor.0,
        spec.sensor.1,
        1u32 << grid_log2,
        mb.grid.0,
        mb.grid.1,
        mb.table_bytes,
        files.blob.len(),
        mb.max_px,
        mb.rms_px,
        out.display()
    ))
}

/// `fixsight-verify sweep`: the precision sweep on the first demo scene,
/// written as `sweep.md`, `sweep.json` and `sweep.png` into `out`; returns
/// the table.
pub fn sweep_command(out: &std::path::Path) -> anyhow::Result<String> {
    let spec = &crate::scene::DEMO_SPECS[0];
    let s = crate::scene::render(spec, crate::scene::DEMO_WIDTH, crate::scene::DEMO_HEIGHT);
    let view = demo_view(&s).map_err(anyhow::Error::msg)?;
    let fb: Vec<u32> = (2..=10).collect();
    let steps: Vec<u32> = (2..=6).collect();
    let rows = sweep(&s.gray, s.width, s.height, &s.camera, &view, &fb, &steps)
        .map_err(anyhow::Error::msg)?;
    std::fs::create_dir_all(out)?;
    let table = format!(
        "Precision sweep on demo scene `{}` ({}x{}, fit-to-view undistortion, border fill 0).\n\
         Errors against the f64 bilinear reference at the exact lens coordinates.\n\n{}",
        s.name,
        s.width,
        s.height,
        sweep_table(&rows)
    );
    std::fs::write(out.join("sweep.md"), &table)?;
    std::fs::write(
        out.join("sweep.json"),
        serde_json::to_string_pretty(&rows)? + "\n",
    )?;
    crate::sweep_plot::draw(&rows, &out.join("sweep.png"))?;
    Ok(table)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lens::LensSpec;

    /// Bilinear interpolation on the unit square, f(x,y) = f00(1-x)(1-y) +
    /// f10 x(1-y) + f01(1-x)y + f11 xy: Press, Teukolsky, Vetterling,
    /// Flannery (2007), "Numerical Recipes", 3rd ed., sec. 3.6 (from memory).
    /// Corners reproduce the corner values; the centre is their mean; at
    /// (0.25, 0.75) with corners 0, 100, 50, 250 the formula gives 81.25.
    #[test]
    fn f64_reference_on_the_handbook_unit_cell() {
        let img = [0u8, 100, 50, 250];
        let r = |x, y| bilinear_f64(&img, 2, 2, 1, 0, x, y, Border::Clamp);
        assert_eq!(r(0.0, 0.0), 0.0);
        assert_eq!(r(1.0, 0.0), 100.0);
        assert_eq!(r(0.0, 1.0), 50.0);
        assert_eq!(r(1.0, 1.0), 250.0);
        assert_eq!(r(0.5, 0.5), 100.0);
        assert_eq!(r(0.25, 0.75), 81.25);
        // The kernel model at the same (exactly representable) points rounds
        // these values half up.
        assert_eq!(
            model_sample(&img, 2, 2, 1, 4, 12, 4, Border::Clamp),
            vec![81]
        );
    }

    /// The f64 reference against imageproc's bilinear warp (general-purpose
    /// image crate) on the same image and map, for pixels whose four taps
    /// are inside the image. imageproc interpolates in f32 and converts each
    /// of its two 1-D passes to u8 by truncation, so its value lies in
    /// `(ref - 2, ref + 0.01]`; and on average it sits about 1 LSB below.
    #[test]
    fn f64_reference_matches_imageproc_bilinear_warp() {
        use image::{GrayImage, Luma};
        use imageproc::geometric_transformations::{warp_with, Interpolation};
        let s = crate::scene::render(&crate::scene::DEMO_SPECS[1], 96, 72);
        let view = demo_view(&s).unwrap();
        let img = GrayImage::from_raw(96, 72, s.gray.clone()).unwrap();
        let cam = s.camera;
        let warped = warp_with(
            &img,
            |x, y| {
                let (u, v) = cam.source_of(&view, x as f64, y as f64);
                (u as f32, v as f32)
            },
            Interpolation::Bilinear,
            Luma([0u8]),
        );
        let (mut compared, mut sum) = (0, 0f64);
        for y in 0..72u32 {
            for x in 0..96u32 {
                let (u, v) = cam.source_of(&view, x as f64, y as f64);
                if u < 1.0 || v < 1.0 || u > 94.0 || v > 70.0 {
                    continue;
                }
                let r = bilinear_f64(&s.gray, 96, 72, 1, 0, u, v, Border::Fill(0));
                let theirs = warped.get_pixel(x, y)[0] as f64;
                assert!(
                    theirs - r > -2.0 && theirs - r <= 0.01,
                    "({x}, {y}): {theirs} vs {r}"
                );
                sum += theirs - r;
                compared += 1;
            }
        }
        assert!(compared > 96 * 72 / 2, "only {compared} pixels compared");
        let mean = sum / compared as f64;
        assert!(mean < -0.5 && mean > -1.5, "mean difference {mean}");
    }

    /// Grid error on realistic coefficients: Zhang (2000), "A flexible new
    /// technique for camera calibration", IEEE Trans. PAMI 22(11), real-data
    /// calibration of a 640x480 camera (from memory; see
    /// host-verify/data/demo-lens.txt). VGA, step 16, F = 5: the table is
    /// 10168 bytes and the geometric error stays within the interpolation
    /// bound S^2/8 (|g_xx| + |g_yy|) + 2^-F per axis (tensor-product linear
    /// interpolation error plus control-point and coordinate rounding), with
    /// second derivatives taken as central differences at 1 px over the view.
    #[test]
    fn grid_error_on_a_published_calibration_stays_within_its_bound() {
        let spec = LensSpec::parse(include_str!("../data/demo-lens.txt")).unwrap();
        let (w, h) = spec.output;
        let geom = WarpGeometry::new(w, h, spec.sensor.0, spec.sensor.1, 5).unwrap();
        let mb = build_grid(&spec.camera, &spec.view, geom, 4).unwrap();
        assert_eq!(mb.table_bytes, 10168);
        let exact = exact_map(&spec.camera, &spec.view, w, h);
        let at = |x: usize, y: usize| exact[y * w + x];
        let (mut gxx, mut gyy) = ((0f64, 0f64), (0f64, 0f64));
        for y in 1..h - 1 {
            for x in 1..w - 1 {
                let c = at(x, y);
                let (l, r, u, d) = (at(x - 1, y), at(x + 1, y), at(x, y - 1), at(x, y + 1));
                gxx.0 = gxx.0.max((l.0 + r.0 - 2.0 * c.0).abs());
                gxx.1 = gxx.1.max((l.1 + r.1 - 2.0 * c.1).abs());
                gyy.0 = gyy.0.max((u.0 + d.0 - 2.0 * c.0).abs());
                gyy.1 = gyy.1.max((u.1 + d.1 - 2.0 * c.1).abs());
            }
        }
        let s2 = 16.0f64 * 16.0 / 8.0;
        let q = 1.0 / 32.0;
        let bx = s2 * (gxx.0 + gyy.0) + q;
        let by = s2 * (gxx.1 + gyy.1) + q;
        assert!(
            mb.max_axis_px.0 <= bx && mb.max_axis_px.1 <= by,
            "per-axis error {:?} vs bound ({bx}, {by})",
            mb.max_axis_px
        );
        assert!(mb.max_px < 0.1, "max {} px", mb.max_px);
    }

    /// "1/16 to 1/32 px sub-pixel resolution suffices for 8-bit output":
    /// common practice, no source. The sweep on the first demo scene puts
    /// it here: at F = 5 (1/32 px) the pixel-map path is within 1 LSB of the
    /// exact-coordinate reference on >= 99.9 % of pixels and its RMS error
    /// is within 0.01 LSB of F = 10; at F = 4 (1/16 px) the RMS is still
    /// within 0.05 LSB of F = 10 but the 99.9 % share is not reached.
    #[test]
    fn sub_pixel_rule_of_thumb_against_the_sweep() {
        let s = crate::scene::render(&crate::scene::DEMO_SPECS[0], 320, 240);
        let view = demo_view(&s).unwrap();
        let rows = sweep(&s.gray, 320, 240, &s.camera, &view, &[4, 5, 10], &[]).unwrap();
        let (f4, f5, f10) = (&rows[0], &rows[1], &rows[2]);
        assert!(f5.within_1lsb >= 0.999, "{f5:?}");
        assert!(f5.int_rms - f10.int_rms < 0.01, "{f5:?} {f10:?}");
        assert!(f4.int_rms - f10.int_rms < 0.05, "{f4:?} {f10:?}");
        assert!(f4.within_1lsb < f5.within_1lsb);
    }

    #[test]
    fn warp_contracts_hold_on_the_demo_scenes() {
        let scenes = crate::scene::demo_scenes();
        for r in check(&scenes) {
            assert!(r.pass, "{}: {:?}", r.name, r.notes);
            assert_eq!(r.metrics["model_mismatches"], 0.0);
        }
    }

    #[test]
    fn grid_files_round_trip_through_the_kernel_loader() {
        let spec = LensSpec::parse(include_str!("../data/demo-lens.txt")).unwrap();
        let geom = WarpGeometry::new(640, 480, 640, 480, 6).unwrap();
        let mb = build_grid(&spec.camera, &spec.view, geom, 5).unwrap();
        let files = grid_files(&mb, "zhang vga", "test").unwrap();
        let t = ControlGrid::from_blob(&files.blob).unwrap();
        assert_eq!(t.grid(), mb.grid);
        assert_eq!(
            t.point(3, 2),
            (
                mb.points[2 * (2 * mb.grid.0 + 3)],
                mb.points[2 * (2 * mb.grid.0 + 3) + 1]
            )
        );
        assert!(files.rust.contains(&format!(
            "pub static ZHANG_VGA_POINTS: [i32; {}]",
            mb.points.len()
        )));
        assert!(files.c_header.contains("#define ZHANG_VGA_COLS 21u"));
        assert!(files.c_header.contains("#define ZHANG_VGA_GRID_LOG2 5u"));
        assert!(files.c_header.contains("#ifndef FIXSIGHT_ZHANG_VGA_H\n"));
        // The default stem gives a guard that names the grid once.
        let default = grid_files(&mb, "lens_grid", "test").unwrap();
        assert!(default.c_header.contains("#ifndef FIXSIGHT_LENS_GRID_H\n"));
        // Every number in the Rust array is the table, in order.
        let body = files.rust.split("= [").nth(1).unwrap();
        let nums: Vec<i32> = body
            .split(|c: char| c == ',' || c.is_whitespace() || c == ']' || c == ';')
            .filter(|t| !t.is_empty())
            .map(|t| t.parse().unwrap())
            .collect();
        assert_eq!(nums, mb.points);
        assert!(grid_files(&mb, "9lives", "test").is_err());
    }

    #[test]
    fn golden_cases_recompute() {
        let scenes = vec![crate::scene::render(&crate::scene::DEMO_SPECS[0], 320, 240)];
        for c in golden_cases(&scenes) {
            let got = run_vector(&c.kernel, &c.params, &c.inputs).unwrap();
            assert_eq!(got, c.expected, "{}", c.id);
        }
        assert!(run_vector("warp.nothing", &serde_json::json!({}), &[]).is_err());
    }
}
