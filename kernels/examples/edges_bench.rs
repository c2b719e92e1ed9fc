//! Benchmark (not a test): non-maximum suppression + hysteresis + thinning
//! on a 640x480 frame against `imageproc::edges::canny` on the same image.
//!
//! `cargo run --release -p fixsight --example edges_bench` for time per
//! pixel; add `--features count-ops` for operations per pixel (the counters
//! slow the kernels down, so times from that build are not comparable).

use fixsight::filter::{binomial5, sobel_x, sobel_y, Border};
use fixsight::hysteresis::{self, Thresholds, DEMO_HIGH_PERMILLE, DEMO_LOW_FRACTION};
use fixsight::{gradient, nms, ops, thinning, ImageView, ImageViewMut};
use std::time::Instant;

mod common;

const W: usize = 640;
const H: usize = 480;

fn v(b: &[u8]) -> ImageView<'_, u8> {
    ImageView::new(b, W, H, W).unwrap()
}

fn best_of<F: FnMut()>(runs: usize, mut f: F) -> f64 {
    (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

fn main() {
    let img = common::frame(W, H);
    let px = (W * H) as f64;
    // Gradients (outside the timed edge steps).
    let mut smooth = vec![0u8; W * H];
    let mut gx = vec![0i16; W * H];
    let mut gy = vec![0i16; W * H];
    let mut scratch = vec![0i32; W];
    binomial5(Border::Clamp)
        .apply(
            &v(&img),
            &mut ImageViewMut::new(&mut smooth, W, H, W).unwrap(),
            &mut scratch,
        )
        .unwrap();
    sobel_x(Border::Clamp)
        .apply(
            &v(&smooth),
            &mut ImageViewMut::new(&mut gx, W, H, W).unwrap(),
            &mut scratch,
        )
        .unwrap();
    sobel_y(Border::Clamp)
        .apply(
            &v(&smooth),
            &mut ImageViewMut::new(&mut gy, W, H, W).unwrap(),
            &mut scratch,
        )
        .unwrap();
    let mut mag = vec![0u16; W * H];
    let mut dir = vec![0u8; W * H];
    let vx = ImageView::new(&gx, W, H, W).unwrap();
    let vy = ImageView::new(&gy, W, H, W).unwrap();
    gradient::magnitude_l2_approx(&vx, &vy, &mut ImageViewMut::new(&mut mag, W, H, W).unwrap())
        .unwrap();
    gradient::direction(&vx, &vy, &mut ImageViewMut::new(&mut dir, W, H, W).unwrap()).unwrap();

    let mut sup = vec![0u16; W * H];
    let mut codes = vec![0u8; W * H];
    let mut hist = vec![0u32; 256];
    let mut stack = vec![0u32; 1024];
    let mut thin_scratch = vec![0u8; 3 * W];
    let mut t = Thresholds::new(1, 1).unwrap();
    let mut edges = 0usize;
    let mut run = || {
        nms::suppress(
            &ImageView::new(&mag, W, H, W).unwrap(),
            &ImageView::new(&dir, W, H, W).unwrap(),
            &mut ImageViewMut::new(&mut sup, W, H, W).unwrap(),
        )
        .unwrap();
        let sv = ImageView::new(&sup, W, H, W).unwrap();
        t = Thresholds::from_histogram(&sv, &mut hist, 2, DEMO_HIGH_PERMILLE, DEMO_LOW_FRACTION)
            .unwrap();
        hysteresis::classify(
            &sv,
            &t,
            &mut ImageViewMut::new(&mut codes, W, H, W).unwrap(),
        )
        .unwrap();
        let mut map = ImageViewMut::new(&mut codes, W, H, W).unwrap();
        hysteresis::link(&mut map, &mut stack).unwrap();
        thinning::thin(&mut map, &mut thin_scratch).unwrap();
        edges = codes.iter().filter(|&&c| c != 0).count();
    };
    let _ = ops::take();
    run();
    let counts = ops::take();
    let ours = best_of(10, &mut run);

    let gimg = image::GrayImage::from_raw(W as u32, H as u32, img.clone()).unwrap();
    let (lo, hi) = (t.low() as f32, t.high() as f32);
    let mut theirs_px = 0usize;
    let theirs = best_of(5, || {
        let e = imageproc::edges::canny(&gimg, lo, hi);
        theirs_px = e.pixels().filter(|p| p.0[0] != 0).count();
    });

    println!(
        "frame {W}x{H}, thresholds low {} high {}",
        t.low(),
        t.high()
    );
    println!(
        "fixsight nms + thresholds + hysteresis + thinning: {:.2} ns/px ({} edge px)",
        ours / px * 1e9,
        edges
    );
    println!(
        "imageproc canny (blur sigma 1.4 + Sobel + NMS + hysteresis): {:.2} ns/px ({} edge px)",
        theirs / px * 1e9,
        theirs_px
    );
    println!("time ratio fixsight / imageproc: {:.3}", ours / theirs);
    if ops::ENABLED {
        println!(
            "ops/px (count-ops build): total {:.2}",
            counts.total() as f64 / px
        );
        for op in ops::Op::ALL {
            println!("  {:8} {:.3}", op.name(), counts.get(op) as f64 / px);
        }
    }
}
