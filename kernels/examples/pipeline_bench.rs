//! Benchmark (not a test): the streamed edge stage of `fixsight::pipeline`
//! with `DEMO` against the same chain as whole-frame kernels one after
//! another, at 320x240 and 640x480, time per pixel (best of 7 runs).
//!
//! `cargo run --release -p fixsight --example pipeline_bench`.

use fixsight::hysteresis::{self, Thresholds};
use fixsight::pipeline::{map_words, EdgeStream, DEMO};
use fixsight::{gradient, nms, thinning, ImageView, ImageViewMut};
use std::time::Instant;

mod common;

fn best_of<F: FnMut()>(runs: usize, mut f: F) -> f64 {
    (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

/// The chain as whole-frame kernels with thresholds `t`.
fn whole(img: &[u8], w: usize, h: usize, t: &Thresholds) -> usize {
    let (fx, fy) = DEMO.gradient_filters().unwrap();
    let n = w * h;
    let (mut gx, mut gy) = (vec![0i16; n], vec![0i16; n]);
    let mut scratch = vec![0i32; w];
    let src = ImageView::new(img, w, h, w).unwrap();
    fx.apply(
        &src,
        &mut ImageViewMut::new(&mut gx, w, h, w).unwrap(),
        &mut scratch,
    )
    .unwrap();
    fy.apply(
        &src,
        &mut ImageViewMut::new(&mut gy, w, h, w).unwrap(),
        &mut scratch,
    )
    .unwrap();
    let (mut mag, mut dir, mut sup, mut codes) =
        (vec![0u16; n], vec![0u8; n], vec![0u16; n], vec![0u8; n]);
    let (vx, vy) = (
        ImageView::new(&gx, w, h, w).unwrap(),
        ImageView::new(&gy, w, h, w).unwrap(),
    );
    gradient::magnitude_l2_round(&vx, &vy, &mut ImageViewMut::new(&mut mag, w, h, w).unwrap())
        .unwrap();
    gradient::direction(&vx, &vy, &mut ImageViewMut::new(&mut dir, w, h, w).unwrap()).unwrap();
    nms::suppress(
        &ImageView::new(&mag, w, h, w).unwrap(),
        &ImageView::new(&dir, w, h, w).unwrap(),
        &mut ImageViewMut::new(&mut sup, w, h, w).unwrap(),
    )
    .unwrap();
    let sv = ImageView::new(&sup, w, h, w).unwrap();
    hysteresis::classify(&sv, t, &mut ImageViewMut::new(&mut codes, w, h, w).unwrap()).unwrap();
    let mut map = ImageViewMut::new(&mut codes, w, h, w).unwrap();
    hysteresis::link(&mut map, &mut vec![0u32; 1024]).unwrap();
    thinning::thin_at_most(&mut map, &mut vec![0u8; 3 * w], 8).unwrap();
    codes.iter().filter(|&&v| v != 0).count()
}

fn run<const W: usize, const M: usize, const CAP: usize>(w: usize, h: usize) {
    let img = common::frame(w, h);
    let px = (w * h) as f64;
    let mut s: Box<EdgeStream<W, M, { DEMO.bins_needed() }, CAP>> = Box::default();
    s.configure(&DEMO, w, h).unwrap();
    let mut points = 0;
    let mut stream = || {
        for r in img.chunks_exact(w) {
            s.push_row(r).unwrap();
        }
        s.finish().unwrap();
        points = s.points().unwrap().count();
    };
    stream();
    let ts = best_of(7, &mut stream);
    let t = s.report().unwrap().thresholds;
    let t = Thresholds::new(t.0, t.1).unwrap();
    let mut n = 0;
    let tw = best_of(7, || n = whole(&img, w, h, &t));
    assert_eq!(n, points, "stream and whole frame disagree");
    println!(
        "{w}x{h}: streamed stage {:.1} ns/px, whole-frame kernels {:.1} ns/px (incl. their frame buffers), {points} points, {} bytes of stream",
        ts * 1e9 / px,
        tw * 1e9 / px,
        std::mem::size_of::<EdgeStream<W, M, { DEMO.bins_needed() }, CAP>>()
    );
}

fn main() {
    run::<320, { map_words(320, 240) }, 4096>(320, 240);
    run::<640, { map_words(640, 480) }, 16384>(640, 480);
}
