//! Speed of the filter and gradient kernels on a 640x480 frame, against the
//! same operations in the general-purpose `imageproc` crate and against a
//! plain copy of the same bytes.
//!
//! Run with `cargo bench -p fixsight` (without the `count-ops` feature, so
//! the tallies compile to nothing). Figures go in the README.

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use fixsight::filter::{self, Border};
use fixsight::{ImageView, ImageViewMut};
use image::GrayImage;
use rand::{Rng, SeedableRng};

const W: usize = 640;
const H: usize = 480;

/// A textured test frame: smooth ramps plus noise plus a few hard edges.
fn frame() -> Vec<u8> {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(1);
    (0..W * H)
        .map(|i| {
            let (x, y) = (i % W, i / W);
            let base = (x / 3 + y / 5) as i32 % 200;
            let edge = if (x / 40 + y / 40) % 2 == 0 { 40 } else { 0 };
            (base + edge + rng.random_range(-8..=8)).clamp(0, 255) as u8
        })
        .collect()
}

fn benches(c: &mut Criterion) {
    let src = frame();
    let img = GrayImage::from_raw(W as u32, H as u32, src.clone()).unwrap();
    let mut g = c.benchmark_group("vga");
    g.throughput(Throughput::Elements((W * H) as u64));
    g.sample_size(30);

    let mut dst = vec![0u8; W * H];
    g.bench_function("copy", |b| b.iter(|| dst.copy_from_slice(black_box(&src))));

    let f5 = filter::binomial5(Border::Clamp);
    let mut scratch = vec![0i32; W];
    g.bench_function("fixsight_binomial5", |b| {
        b.iter(|| {
            f5.apply(
                &ImageView::new(black_box(&src), W, H, W).unwrap(),
                &mut ImageViewMut::new(&mut dst, W, H, W).unwrap(),
                &mut scratch,
            )
            .unwrap()
        })
    });
    let taps = [
        1.0f32 / 16.0,
        4.0 / 16.0,
        6.0 / 16.0,
        4.0 / 16.0,
        1.0 / 16.0,
    ];
    g.bench_function("imageproc_binomial5", |b| {
        b.iter(|| imageproc::filter::separable_filter_equal(black_box(&img), &taps))
    });

    let (sx, sy) = (
        filter::sobel_x(Border::Clamp),
        filter::sobel_y(Border::Clamp),
    );
    let mut gx = vec![0i16; W * H];
    let mut gy = vec![0i16; W * H];
    g.bench_function("fixsight_sobel_xy", |b| {
        b.iter(|| {
            let v = ImageView::new(black_box(&src), W, H, W).unwrap();
            sx.apply(
                &v,
                &mut ImageViewMut::new(&mut gx, W, H, W).unwrap(),
                &mut scratch,
            )
            .unwrap();
            sy.apply(
                &v,
                &mut ImageViewMut::new(&mut gy, W, H, W).unwrap(),
                &mut scratch,
            )
            .unwrap();
        })
    });
    g.bench_function("imageproc_sobel_xy", |b| {
        b.iter(|| {
            let a = imageproc::gradients::horizontal_sobel(black_box(&img));
            let b2 = imageproc::gradients::vertical_sobel(black_box(&img));
            (a, b2)
        })
    });
    g.finish();
}

criterion_group!(kernel_benches, benches);
criterion_main!(kernel_benches);
