//! Benchmark (not a test): line voting on a 320x240 edge map against
//! `imageproc::hough::detect_lines` on the same map, and the accumulator
//! bytes for each theta / rho resolution.
//!
//! `cargo run --release -p fixsight --example lines_bench`. The edge map:
//! a frame with four bright stripes at different angles plus noise,
//! binomial-5 smoothing, Sobel, approximate L2 magnitude, direction,
//! non-maximum suppression and a fixed threshold (the gradients are kept for
//! the orientation gate).

use fixsight::filter::{binomial5, sobel_x, sobel_y, Border};
use fixsight::lines::{Accumulator, Peak, PeakParams, VoteParams};
use fixsight::{gradient, nms, ImageView, ImageViewMut};
use std::time::Instant;

const W: usize = 320;
const H: usize = 240;

fn frame() -> Vec<u8> {
    let mut s = 0x5EED_1234u64;
    let stripes = [
        (170.0f64, -40.0f64),
        (12.0, 60.0),
        (150.0, 20.0),
        (95.0, -70.0),
    ];
    let mut img = vec![0u8; W * H];
    for y in 0..H {
        for x in 0..W {
            let (xr, yr) = (x as f64 - 160.0, y as f64 - 120.0);
            let mut v = 90.0;
            for &(t, r) in &stripes {
                let (sn, c) = t.to_radians().sin_cos();
                if (xr * c + yr * sn - r).abs() < 2.0 {
                    v = 190.0;
                }
            }
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let n = ((s >> 40) as f64 / (1u64 << 24) as f64 - 0.5) * 12.0;
            img[y * W + x] = (v + n).clamp(0.0, 255.0) as u8;
        }
    }
    img
}

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
    let img = frame();
    let mut smooth = vec![0u8; W * H];
    let (mut gx, mut gy) = (vec![0i16; W * H], vec![0i16; W * H]);
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
    let (mut mag, mut dir, mut sup) = (vec![0u16; W * H], vec![0u8; W * H], vec![0u16; W * H]);
    let vx = ImageView::new(&gx, W, H, W).unwrap();
    let vy = ImageView::new(&gy, W, H, W).unwrap();
    gradient::magnitude_l2_approx(&vx, &vy, &mut ImageViewMut::new(&mut mag, W, H, W).unwrap())
        .unwrap();
    gradient::direction(&vx, &vy, &mut ImageViewMut::new(&mut dir, W, H, W).unwrap()).unwrap();
    nms::suppress(
        &ImageView::new(&mag, W, H, W).unwrap(),
        &ImageView::new(&dir, W, H, W).unwrap(),
        &mut ImageViewMut::new(&mut sup, W, H, W).unwrap(),
    )
    .unwrap();
    let edges: Vec<u8> = sup
        .iter()
        .map(|&m| if m >= 120 { 255 } else { 0 })
        .collect();
    let npts = edges.iter().filter(|&&e| e != 0).count();
    println!("frame {W}x{H}, {npts} edge points");

    let full = VoteParams {
        theta_start: 0,
        theta_step_log2: 9,
        theta_bins: 128,
        rho_step_log2: 4,
        rho_bins: 401,
        gate: None,
        ..VoteParams::DEMO_QVGA
    };
    let demo = VoteParams::DEMO_QVGA;
    let ungated = VoteParams { gate: None, ..demo };
    for (name, p) in [
        ("180 deg, 1.4 deg x 1 px, ungated", full),
        ("demo 90 deg window, 2.8 deg x 2 px, ungated", ungated),
        ("demo 90 deg window, 2.8 deg x 2 px, gate +-15 deg", demo),
    ] {
        let mut cells = vec![0u16; p.cells()];
        let mut trig = vec![[0i16; 2]; p.theta_bins];
        let mut cols = 0;
        let mut found = 0;
        let t = best_of(10, || {
            let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
            let g = p.gate.map(|_| (&vx, &vy));
            acc.vote_frame(&v(&edges), g, None).unwrap();
            let mut out = [Peak::default(); 8];
            found = acc.peaks(&PeakParams::DEMO, &mut out).unwrap();
            cols = acc.columns();
        });
        println!(
            "fixsight {name}: {:.3} ms ({:.2} ns per edge point per column voted, {:.1} columns per point, {found} peaks, {} accumulator bytes)",
            t * 1e3,
            t * 1e9 / cols as f64,
            cols as f64 / npts as f64,
            p.bytes()
        );
    }
    let gimg = image::GrayImage::from_raw(W as u32, H as u32, edges.clone()).unwrap();
    let mut n = 0;
    let t = best_of(5, || {
        n = imageproc::hough::detect_lines(
            &gimg,
            imageproc::hough::LineDetectionOptions {
                vote_threshold: 40,
                suppression_radius: 4,
            },
        )
        .len();
    });
    let rmax = ((W * W + H * H) as f64).sqrt() as usize;
    println!(
        "imageproc detect_lines (180 x 1 deg, 1 px, u32 cells): {:.3} ms ({:.2} ns per edge point per column, {n} lines, {} accumulator bytes)",
        t * 1e3,
        t * 1e9 / (npts * 180) as f64,
        (2 * rmax + 1) * 180 * 4
    );

    println!(
        "\naccumulator bytes (u16 cells + 4-byte table per column), rows cover the half diagonal:"
    );
    println!("| frame | window | theta step | rho step | columns x rows | bytes |");
    println!("|---|---|---|---|---|---|");
    for (w, h) in [(320usize, 240usize), (640, 480)] {
        let half = ((w * w + h * h) as f64).sqrt() / 2.0;
        for (window, s) in [
            (90u32, 10u32),
            (90, 9),
            (90, 8),
            (180, 10),
            (180, 9),
            (180, 8),
        ] {
            for r in [4u32, 5, 6] {
                let step_px = (1u32 << r) as f64 / 16.0;
                let rows = 2 * (half / step_px).ceil() as usize + 1;
                let cols = (window as usize * 65536 / 180) >> s;
                let p = VoteParams {
                    width: w,
                    height: h,
                    theta_bins: cols,
                    theta_step_log2: s,
                    rho_step_log2: r,
                    rho_bins: rows,
                    ..VoteParams::DEMO_QVGA
                };
                println!(
                    "| {w}x{h} | {window} deg | {:.3} deg | {step_px} px | {cols} x {rows} | {} |",
                    (1u32 << s) as f64 * 180.0 / 65536.0,
                    p.bytes()
                );
            }
        }
    }
}
