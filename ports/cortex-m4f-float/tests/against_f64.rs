//! The `f32` edge stage against an `f64` model of itself: the gradients
//! and magnitudes of every row the stream forms, against the same taps
//! summed in `f64` (exact here: integer taps and samples, power-of-two
//! divisors) and `f64::hypot`.
//!
//! # The bound
//!
//! Binary32 round to nearest has unit roundoff `u = 2^-24` (IEEE 754-2019,
//! section 3.4 and 4.3.1). A value that passes through `n` roundings of
//! products and sums is within `gamma_n = n u / (1 - n u)` (relative) of
//! its exact value, and the error of a rounded sum is at most `gamma_n`
//! times the sum of the absolute values of its terms (Higham 2002,
//! "Accuracy and Stability of Numerical Algorithms", 2nd ed., section 3.1,
//! lemma 3.1 and equation 3.5; lemma 3.3 for `gamma_j + gamma_k +
//! gamma_j gamma_k <= gamma_(j+k)`).
//!
//! In the stage (`gradient_row`) every term of a column sum passes through
//! at most `r + 1` roundings (its product, then at most `r` additions; the
//! pair sums and differences of `u8` samples are exact), and every term of
//! a row sum through at most `r + 2` (the difference or sum of two column
//! sums, the product, at most `r` additions), `r` the radius of the taps.
//! Expanded over the camera samples `a <= 255` that gives
//!
//! ```text
//! |gx_f32 - gx| <= B = gamma_(2r+3) * 255 * sum|deriv| * sum|cross| / 2^(h_shift + v_shift)
//! ```
//!
//! and the same for `gy` (the same two tap sets, transposed). The
//! magnitude then moves by at most `|(dgx, dgy)| <= sqrt 2 B`, and the
//! square root adds its own relative error `E` (with the `gamma_2` of
//! `gx^2 + gy^2`): `E_newton = 2e-6` (two Newton steps from within 6.07 %:
//! `0.0607^2 / 2.12 = 1.74e-3`, then `1.74e-3^2 / 2 = 1.5e-6`, Newton's
//! quadratic convergence for `y^2 = s`, plus `3u` for the last step's
//! roundings), `E_fast = 0.0607` (measured below over every `f32` of
//! `[1, 4)`; the exponent halving makes the error repeat with period 4).
//! The test asserts, for every pixel of the rows it sees,
//!
//! ```text
//! |gx_f32 - gx|, |gy_f32 - gy| <= B
//! |m_f32 - m| <= E (m + sqrt 2 B) + sqrt 2 B
//! ```
//!
//! for frames of `u8` samples (any), the clamped border, and the taps of
//! `EdgeConfig::demo_with` (radius 1 to 4). The rows it sees: every row
//! formed while rows are pushed and the three the stream keeps at the end
//! (`formed_row`).

use fixsight::pipeline::{EdgeConfig, Magnitude, Operator, Smoothing};
use fixsight_port_cortex_m4f_float::{F32Config, F32EdgeStream, Root};
use micromath::F32Ext;

/// Unit roundoff of binary32 (IEEE 754-2019: 24-bit significand).
const U: f64 = 1.0 / 16_777_216.0;

fn gamma(n: usize) -> f64 {
    n as f64 * U / (1.0 - n as f64 * U)
}

/// A test frame: a ramp, a bright disc, a bright rectangle and noise from
/// an LCG (`s * 1664525 + 1013904223`, Numerical Recipes' constants),
/// and a few pixels at 0 and 255.
fn frame(w: usize, h: usize, seed: u32) -> Vec<u8> {
    let mut s = seed;
    (0..w * h)
        .map(|i| {
            let (x, y) = ((i % w) as i32, (i / w) as i32);
            s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            let mut v = 40 + (x + 2 * y) / 3 + (s >> 27) as i32;
            let (dx, dy) = (x - w as i32 / 3, y - h as i32 / 2);
            if dx * dx + dy * dy < (h as i32 / 3).pow(2) {
                v += 90;
            }
            if x > 2 * w as i32 / 3 && y > h as i32 / 4 {
                v += 120;
            }
            if (s >> 20) & 63 == 0 {
                v = if s & 1 == 0 { 0 } else { 255 };
            }
            v.clamp(0, 255) as u8
        })
        .collect()
}

/// Exact `(gx, gy)` of pixel `(x, y)` in `f64`: the fused taps summed over
/// the clamped neighbourhood.
fn exact(cfg: &EdgeConfig, img: &[u8], w: usize, h: usize, x: usize, y: usize) -> (f64, f64) {
    let t = cfg.gradient_taps();
    let (d, c, r) = (t.deriv(), t.cross(), t.radius());
    let at = |i: usize, j: usize| {
        let xx = (x + i).saturating_sub(r).min(w - 1);
        let yy = (y + j).saturating_sub(r).min(h - 1);
        img[yy * w + xx] as f64
    };
    let (mut gx, mut gy) = (0.0, 0.0);
    for i in 0..d.len() {
        for j in 0..d.len() {
            gx += d[i] as f64 * c[j] as f64 * at(i, j);
            gy += c[i] as f64 * d[j] as f64 * at(i, j);
        }
    }
    let scale = (1u64 << (t.h_shift + t.v_shift)) as f64;
    (gx / scale, gy / scale)
}

fn bound(cfg: &EdgeConfig) -> f64 {
    let t = cfg.gradient_taps();
    let sd: f64 = t.deriv().iter().map(|&v| (v as f64).abs()).sum();
    let sc: f64 = t.cross().iter().map(|&v| (v as f64).abs()).sum();
    gamma(2 * t.radius() + 3) * 255.0 * sd * sc / (1u64 << (t.h_shift + t.v_shift)) as f64
}

const E_NEWTON: f64 = 2e-6;
const E_FAST: f64 = 0.0607;

type Stream = F32EdgeStream<64, { 64 * 48 }, 1024, 4096>;

fn check(cfg: F32Config, w: usize, h: usize, seed: u32) -> usize {
    let img = frame(w, h, seed);
    let b = bound(&cfg.edges);
    let e = match cfg.root {
        Root::Fast => E_FAST,
        Root::Newton => E_NEWTON,
    };
    let r = cfg.edges.gradient_taps().radius();
    let mut s: Box<Stream> = Box::default();
    s.configure(&cfg, w, h).unwrap();
    let mut seen = 0;
    let mut look = |s: &Stream, y: usize| {
        let (gx, gy, m) = s.formed_row(y).expect("row held");
        for x in 0..w {
            let (ex, ey) = exact(&cfg.edges, &img, w, h, x, y);
            let em = ex.hypot(ey);
            let (dx, dy) = ((gx[x] as f64 - ex).abs(), (gy[x] as f64 - ey).abs());
            assert!(
                dx <= b && dy <= b,
                "({x}, {y}): gradient off by {dx}, {dy} > {b}"
            );
            let dm = (m[x] as f64 - em).abs();
            let bm = e * (em + 2f64.sqrt() * b) + 2f64.sqrt() * b;
            assert!(
                dm <= bm,
                "({x}, {y}): magnitude {} vs {em}, off by {dm} > {bm}",
                m[x]
            );
            seen += 1;
        }
    };
    for y in 0..h {
        s.push_row(&img[y * w..(y + 1) * w]).unwrap();
        if y >= r {
            look(&s, y - r);
        }
    }
    s.finish().unwrap();
    for y in h.saturating_sub(3)..h {
        look(&s, y);
    }
    seen
}

#[test]
fn gradients_and_magnitudes_within_the_derived_bound() {
    let kinds = [
        (Smoothing::Gauss7, Operator::Sobel),
        (Smoothing::Binomial3, Operator::Scharr),
        (Smoothing::Binomial5, Operator::Sobel),
        (Smoothing::None, Operator::Sobel),
    ];
    for (k, &(sm, op)) in kinds.iter().enumerate() {
        for root in [Root::Fast, Root::Newton] {
            let cfg = F32Config {
                edges: EdgeConfig::demo_with(sm, op, Magnitude::L2Round),
                root,
            };
            for (w, h) in [(64, 48), (13, 9), (5, 3)] {
                let n = check(cfg, w, h, 7 + k as u32);
                assert!(n >= w * 3, "{sm:?} {op:?} {root:?} {w}x{h}: {n} pixels");
            }
        }
    }
}

/// The bound really is tight enough to catch a wrong tap: halving one
/// cross tap of the model moves the gradients well past it.
#[test]
fn the_bound_is_not_vacuous() {
    let cfg = fixsight::pipeline::DEMO;
    let b = bound(&cfg);
    // One grey step of 1 moves the demo's gx by its derivative taps' sum
    // over 2^h_shift times a cross tap over 2^v_shift: far above B.
    assert!(b < 0.01, "bound {b}");
    let img = frame(64, 48, 3);
    let (gx, _) = exact(&cfg, &img, 64, 48, 20, 20);
    assert!(gx.abs() > 100.0 * b);
}

/// `micromath`'s square root over every `f32` of `[1, 4)`: within 6.07 %
/// (its docs state a ~5 % average deviation; the maximum, at `s = 2`, is
/// `1.5 / sqrt 2 - 1 = 6.066 %`), and non-decreasing.
#[test]
fn micromath_sqrt_error_and_order() {
    let (lo, hi) = (1.0f32.to_bits(), 4.0f32.to_bits());
    let (mut worst, mut last) = (0.0f64, 0.0f32);
    for bits in (lo..hi).step_by(7) {
        let s = f32::from_bits(bits);
        let y = F32Ext::sqrt(s);
        let rel = (y as f64 / (s as f64).sqrt() - 1.0).abs();
        worst = worst.max(rel);
        assert!(y >= last, "not monotone at {s}");
        last = y;
    }
    assert!(worst <= E_FAST, "worst {worst}");
    assert!(worst > 0.06, "worst {worst}");
}

/// The `f32` interpolating rule against the kernel crate's integer rule
/// (`fixsight::nms::interpolated_keeps`) where `f32` is exact: magnitudes
/// and gradient components up to 255, so every product and sum of the
/// rule stays below `2^24` (binary32's 24-bit significand, IEEE 754-2019)
/// and the two must agree on every case.
#[test]
fn interpolated_rule_equals_the_kernels_where_f32_is_exact() {
    use fixsight_port_cortex_m4f_float::edges::interpolated_keeps;
    let mut s = 12345u32;
    let mut next = |n: u32| {
        s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
        (s >> 8) % n
    };
    let mut kept = 0;
    for _ in 0..200_000 {
        let n: [[u16; 3]; 3] = core::array::from_fn(|_| core::array::from_fn(|_| next(256) as u16));
        let g = [next(511) as i16 - 255, next(511) as i16 - 255];
        let want = fixsight::nms::interpolated_keeps(&n, g);
        let got = interpolated_keeps(n[1][1] as f32, g[0] as f32, g[1] as f32, |dx, dy| {
            n[(1 + dy) as usize][(1 + dx) as usize] as f32
        });
        assert_eq!(got, want, "{n:?} {g:?}");
        kept += want as u32;
    }
    assert!(kept > 1000, "{kept}");
}
