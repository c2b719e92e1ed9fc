//! The `f64` bilinear reference, the integer model transcribed, and the
//! exact lens map (see the family docs).

use crate::border::px;
use crate::lens::{Camera, Intrinsics};
use fixsight::filter::Border;

/// `floor(v * 2^f + 1/2)`: the quantisation of a real coordinate.
pub fn quantise(v: f64, f: u32) -> i32 {
    (v * (1u64 << f) as f64 + 0.5)
        .floor()
        .clamp(i32::MIN as f64, i32::MAX as f64) as i32
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
