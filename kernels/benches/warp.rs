//! Time per output pixel of the warp kernels on a 640x480 grey frame —
//! pixel map and grid (step 16, 5 fractional bits) — against the bilinear
//! warp of the general-purpose `imageproc` crate on the same input and the
//! same (precomputed) map.
//!
//! Run with `cargo bench -p fixsight --bench warp` (without `count-ops`,
//! so the tallies compile to nothing). Plain `std::time` timing: each
//! variant runs `REPS` frames after one warm-up frame; the median frame time
//! is reported. Figures go in the README.

use fixsight::filter::Border;
use fixsight::warp::{ControlGrid, PixelMap, WarpGeometry};
use fixsight::{ImageView, ImageViewMut};
use image::{GrayImage, Luma};
use imageproc::geometric_transformations::{warp_with, Interpolation};
use std::hint::black_box;
use std::time::Instant;

const W: usize = 640;
const H: usize = 480;
const F: u32 = 5;
const K: u32 = 4;
const REPS: usize = 15;

/// A barrel-distortion undistortion map (radial `1 - 0.2 r^2 + 0.03 r^4`,
/// focal length `0.55 W`, corrected view scaled by 0.82 so it stays inside
/// the sensor): source coordinate of output `(x, y)`.
fn map(x: f64, y: f64) -> (f64, f64) {
    let f = 0.55 * W as f64;
    let (cx, cy) = ((W as f64 - 1.0) / 2.0, (H as f64 - 1.0) / 2.0);
    let (u, v) = ((x - cx) / (f / 0.82), (y - cy) / (f / 0.82));
    let r2 = u * u + v * v;
    let s = 1.0 - 0.2 * r2 + 0.03 * r2 * r2;
    (u * s * f + cx, v * s * f + cy)
}

fn frame() -> Vec<u8> {
    (0..W * H)
        .map(|i| {
            let (x, y) = (i % W, i / W);
            let edge = if (x / 32 + y / 24) % 2 == 0 { 60 } else { 0 };
            ((x / 3 + y / 5) % 150 + edge + (i * 7919) % 13) as u8
        })
        .collect()
}

fn quant(v: f64) -> i32 {
    (v * (1 << F) as f64 + 0.5).floor() as i32
}

fn median_ns(mut run: impl FnMut()) -> f64 {
    run();
    let mut t: Vec<f64> = (0..REPS)
        .map(|_| {
            let s = Instant::now();
            run();
            s.elapsed().as_nanos() as f64
        })
        .collect();
    t.sort_by(|a, b| a.total_cmp(b));
    t[REPS / 2]
}

fn main() {
    let src = frame();
    let geom = WarpGeometry::new(W, H, W, H, F).expect("valid geometry");
    let dense: Vec<i32> = (0..H)
        .flat_map(|y| (0..W).map(move |x| map(x as f64, y as f64)))
        .flat_map(|(x, y)| [quant(x), quant(y)])
        .collect();
    let (cols, rows) = ControlGrid::grid_size(&geom, K).expect("valid step");
    let points: Vec<i32> = (0..rows)
        .flat_map(|j| (0..cols).map(move |i| map((i << K) as f64, (j << K) as f64)))
        .flat_map(|(x, y)| [quant(x), quant(y)])
        .collect();
    let dmap = PixelMap::new(&dense, geom).expect("map in range");
    let grid = ControlGrid::new(&points, geom, K).expect("grid in range");
    let view = ImageView::new(&src, W, H, W).expect("valid view");
    let mut out = vec![0u8; W * H];
    let px = (W * H) as f64;

    let t_dense = median_ns(|| {
        let mut o = ImageViewMut::new(&mut out, W, H, W).expect("valid view");
        dmap.warp_rows(&view, &mut o, 0, Border::Fill(0))
            .expect("runs");
        black_box(&out);
    });
    let t_grid = median_ns(|| {
        let mut o = ImageViewMut::new(&mut out, W, H, W).expect("valid view");
        grid.warp_rows(&view, &mut o, 0, Border::Fill(0))
            .expect("runs");
        black_box(&out);
    });
    let fmap: Vec<(f32, f32)> = (0..H)
        .flat_map(|y| (0..W).map(move |x| map(x as f64, y as f64)))
        .map(|(x, y)| (x as f32, y as f32))
        .collect();
    let img = GrayImage::from_raw(W as u32, H as u32, src.clone()).expect("sizes match");
    let t_ip = median_ns(|| {
        let r = warp_with(
            &img,
            |x, y| fmap[y as usize * W + x as usize],
            Interpolation::Bilinear,
            Luma([0u8]),
        );
        black_box(r);
    });
    println!("warp 640x480, median of {REPS} frames (ns per output pixel)");
    println!(
        "  fixsight pixel map, F = {F}:           {:7.2}",
        t_dense / px
    );
    println!(
        "  fixsight grid step {}, F = {F} ({} B):  {:7.2}",
        1 << K,
        cols * rows * 8,
        t_grid / px
    );
    println!("  imageproc warp_with bilinear:         {:7.2}", t_ip / px);
    println!(
        "  ratio imageproc / dense = {:.2}, imageproc / grid = {:.2}",
        t_ip / t_dense,
        t_ip / t_grid
    );
}
