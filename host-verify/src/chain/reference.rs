//! The full-`f64` Canny reference of the edge chain and the edge agreement
//! measure (see the family docs).

use crate::edge_chain::GRAD_SCALE;
use crate::hysteresis::reference::link;
use serde::Serialize;

/// Separable `f64` Gaussian smoothing with clamped border.
pub fn gaussian_f64(img: &[f64], w: usize, h: usize, sigma: f64) -> Vec<f64> {
    let r = (3.0 * sigma).ceil() as i64;
    let k: Vec<f64> = (-r..=r)
        .map(|i| (-(i * i) as f64 / (2.0 * sigma * sigma)).exp())
        .collect();
    let s: f64 = k.iter().sum();
    let k: Vec<f64> = k.iter().map(|v| v / s).collect();
    let cl = |v: i64, n: usize| v.clamp(0, n as i64 - 1) as usize;
    let mut tmp = vec![0f64; w * h];
    for y in 0..h {
        for x in 0..w {
            tmp[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * img[y * w + cl(x as i64 + i, w)])
                .sum();
        }
    }
    let mut out = vec![0f64; w * h];
    for y in 0..h {
        for x in 0..w {
            out[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * tmp[cl(y as i64 + i, h) * w + x])
                .sum();
        }
    }
    out
}

/// Sobel derivatives in `f64` with clamped border.
pub fn sobel_f64(img: &[f64], w: usize, h: usize) -> (Vec<f64>, Vec<f64>) {
    let p = |x: i64, y: i64| {
        img[y.clamp(0, h as i64 - 1) as usize * w + x.clamp(0, w as i64 - 1) as usize]
    };
    let mut gx = vec![0f64; w * h];
    let mut gy = vec![0f64; w * h];
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let i = y as usize * w + x as usize;
            gx[i] = (p(x + 1, y - 1) + 2.0 * p(x + 1, y) + p(x + 1, y + 1))
                - (p(x - 1, y - 1) + 2.0 * p(x - 1, y) + p(x - 1, y + 1));
            gy[i] = (p(x - 1, y + 1) + 2.0 * p(x, y + 1) + p(x + 1, y + 1))
                - (p(x - 1, y - 1) + 2.0 * p(x, y - 1) + p(x + 1, y - 1));
        }
    }
    (gx, gy)
}

/// Non-maximum suppression along the exact gradient angle with linear
/// interpolation and the tie rule of
/// [`crate::nms::reference::suppress_interpolated`] (see the family docs).
pub fn nms_f64(gx: &[f64], gy: &[f64], mag: &[f64], w: usize, h: usize) -> Vec<f64> {
    crate::nms::reference::suppress_interpolated(gx, gy, mag, w, h)
}

/// The full-`f64` Canny on an 8-bit image with the given thresholds on
/// the real magnitude line: returns 0/255. To compare with the fixed-point
/// chain, whose thresholds apply to its rounded magnitude, use
/// [`reference_of_chain`].
pub fn reference_f64(gray: &[u8], w: usize, h: usize, low: f64, high: f64) -> Vec<u8> {
    edges_f64(&suppressed_f64(gray, w, h), w, h, low, high)
}

/// An integer threshold of the fixed-point chain on the real magnitude
/// line: `t - 1/2`.
///
/// The chain classifies its magnitude `M = l2_round(gx, gy)`, the integer
/// nearest to `m = sqrt(gx^2 + gy^2)` (`fixsight::gradient::l2_round`;
/// never a tie, as `(k + 1/2)^2` is not an integer), as `M >= t`. Since
/// `round(m) >= t` holds exactly when `m >= t - 1/2`, that is the test the
/// chain applies to the real magnitude. Comparing the `f64` magnitude with
/// `t` itself would make the reference half a unit stricter than the chain
/// on every pixel, strong and weak alike.
///
/// ```
/// use fixsight_verify::chain::reference::chain_threshold_f64;
/// // l2_round(199, 17) = 200 (sqrt 39890 = 199.72): strong for t = 200.
/// assert!(199f64.hypot(17.0) >= chain_threshold_f64(200));
/// assert!(199f64.hypot(17.0) < 200.0);
/// ```
pub fn chain_threshold_f64(t: u16) -> f64 {
    t as f64 - 0.5
}

/// The `f64` counterpart of the fixed-point chain, the reference
/// `chain.edges` is measured against: the full-`f64` Canny with the
/// chain's integer thresholds `low`, `high`, each placed on the real
/// magnitude line by [`chain_threshold_f64`], then thinned by the chain's
/// own thinning rule (Zhang & Suen 1984, "A fast parallel algorithm for
/// thinning digital patterns", CACM 27(3); the host model
/// [`crate::thinning::reference::reference`]), run until nothing changes.
///
/// Why thinned: the chain's output is thinned, and the one-to-one figure
/// (a maximum matching, Martin, Fowlkes & Malik 2004) assumes both maps
/// are one pixel wide. The `f64` Canny is not: its suppression keeps both
/// pixels of each step of a 4-connected staircase, so a thinned map can
/// match only one of the two and the other counted as missed. Thinning is
/// logic on a binary map, without arithmetic, so applying the same rule
/// to both maps leaves exactly the differences the fixed-point arithmetic
/// makes. (The rule also shortens 4-connected staircases from both ends,
/// down to two pixels for a pure staircase: a property of the thinning,
/// in any arithmetic, that the unthinned [`reference_f64`] shows.)
///
/// ```
/// use fixsight_verify::chain::reference::reference_of_chain;
/// let img: Vec<u8> = (0..64).map(|i| if i % 8 >= 4 { 200 } else { 20 }).collect();
/// let e = reference_of_chain(&img, 8, 8, 100, 200);
/// assert!(e.iter().any(|&v| v == 255));
/// ```
pub fn reference_of_chain(gray: &[u8], w: usize, h: usize, low: u16, high: u16) -> Vec<u8> {
    let canny = canny_of_chain(gray, w, h, low, high);
    crate::thinning::reference::reference(&canny, w, h).0
}

/// The full-`f64` Canny with the fixed-point chain's integer thresholds,
/// each placed on the real magnitude line by [`chain_threshold_f64`],
/// before thinning: [`reference_of_chain`] without its last step, the
/// counterpart of the chain's hysteresis output.
///
/// ```
/// use fixsight_verify::chain::reference::{canny_of_chain, reference_f64};
/// let img: Vec<u8> = (0..64).map(|i| if i % 8 >= 4 { 200 } else { 20 }).collect();
/// assert_eq!(canny_of_chain(&img, 8, 8, 100, 200), reference_f64(&img, 8, 8, 99.5, 199.5));
/// ```
pub fn canny_of_chain(gray: &[u8], w: usize, h: usize, low: u16, high: u16) -> Vec<u8> {
    reference_f64(
        gray,
        w,
        h,
        chain_threshold_f64(low),
        chain_threshold_f64(high),
    )
}

/// Sobel of the `sigma = 1` Gaussian of an 8-bit image, in `f64`, with
/// the kernels' border: the chain runs one fused filter (smoothing
/// convolved with Sobel) on the image with its coordinates clamped, so
/// where Sobel reaches one pixel past the image it reads the smoothing of
/// the clamped image there, not the smoothed border pixel again. Here:
/// the image padded by one pixel of its border values on each side,
/// smoothed ([`gaussian_f64`], clamped), Sobel on the padded result
/// ([`sobel_f64`]), the inner `w x h` kept. (Sobel of the smoothed
/// `w x h` image with its own clamp differs within 4 pixels of the
/// border, by up to 429 on `grass`.)
///
/// ```
/// use fixsight_verify::chain::reference::{gaussian_f64, gradients_f64, sobel_f64};
/// // A ramp rising to the right: away from the border both rules agree,
/// // at the right border the fused rule sees the ramp flatten one pixel
/// // later.
/// let img: Vec<u8> = (0..8 * 6).map(|i| (i % 8 * 20) as u8).collect();
/// let (gx, _) = gradients_f64(&img, 8, 6);
/// let f: Vec<f64> = img.iter().map(|&v| v as f64).collect();
/// let (sx, _) = sobel_f64(&gaussian_f64(&f, 8, 6, 1.0), 8, 6);
/// assert!((gx[2 * 8 + 3] - sx[2 * 8 + 3]).abs() < 1e-9);
/// assert!(gx[2 * 8 + 7] > sx[2 * 8 + 7]);
/// ```
pub fn gradients_f64(gray: &[u8], w: usize, h: usize) -> (Vec<f64>, Vec<f64>) {
    if w == 0 || h == 0 {
        return (Vec::new(), Vec::new());
    }
    let (pw, ph) = (w + 2, h + 2);
    let padded: Vec<f64> = (0..pw * ph)
        .map(|i| {
            let x = (i % pw).saturating_sub(1).min(w - 1);
            let y = (i / pw).saturating_sub(1).min(h - 1);
            gray[y * w + x] as f64
        })
        .collect();
    let (px, py) = sobel_f64(&gaussian_f64(&padded, pw, ph, 1.0), pw, ph);
    let inner = |g: &[f64]| -> Vec<f64> {
        (0..w * h)
            .map(|i| g[(i / w + 1) * pw + i % w + 1])
            .collect()
    };
    (inner(&px), inner(&py))
}

/// The suppressed magnitudes of the full-`f64` Canny (0 where suppressed):
/// the `sigma = 1` Gaussian, Sobel times [`GRAD_SCALE`], the exact `L2`
/// magnitude, interpolated suppression.
pub fn suppressed_f64(gray: &[u8], w: usize, h: usize) -> Vec<f64> {
    let (mut gx, mut gy) = gradients_f64(gray, w, h);
    for v in gx.iter_mut().chain(gy.iter_mut()) {
        *v *= GRAD_SCALE;
    }
    let mag: Vec<f64> = gx.iter().zip(&gy).map(|(a, b)| a.hypot(*b)).collect();
    nms_f64(&gx, &gy, &mag, w, h)
}

/// Classification (`>= high` strong, `>= low` weak) and hysteresis of
/// suppressed magnitudes: 0/255.
pub fn edges_f64(sup: &[f64], w: usize, h: usize, low: f64, high: f64) -> Vec<u8> {
    let codes: Vec<u8> = sup
        .iter()
        .map(|&v| {
            if v >= high {
                2
            } else if v >= low {
                1
            } else {
                0
            }
        })
        .collect();
    link(&codes, w, h)
}

/// The automatic threshold rule of `fixsight::hysteresis` in `f64`, on
/// the image's own suppressed magnitudes, without bins: of the `n`
/// nonzero values in ascending order, `v` is the `ceil(n * permille /
/// 1000)`-th; `high` is the smallest `f64` above `v` (so `v` itself is not
/// strong, as the integer rule's `high = (b* + 1) << shift` leaves its bin
/// below `high`), `low = high * ratio`. With no nonzero value both are
/// infinite (no edge).
///
/// ```
/// use fixsight_verify::chain::reference::thresholds_f64;
/// let sup = [0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0, 90.0];
/// // 9 nonzero values; 80 % -> the 8th -> 80.
/// let (low, high) = thresholds_f64(&sup, 800, 0.5);
/// assert!(high > 80.0 && high < 80.001 && (low - high / 2.0).abs() < 1e-12);
/// ```
pub fn thresholds_f64(sup: &[f64], permille: u16, ratio: f64) -> (f64, f64) {
    let mut v: Vec<f64> = sup.iter().copied().filter(|&m| m > 0.0).collect();
    if v.is_empty() {
        return (f64::INFINITY, f64::INFINITY);
    }
    v.sort_by(f64::total_cmp);
    let target = (v.len() * permille as usize)
        .div_ceil(1000)
        .clamp(1, v.len());
    // The next `f64` above a positive finite value: its bit pattern plus 1.
    let high = f64::from_bits(v[target - 1].to_bits() + 1);
    (high * ratio, high)
}

/// Edge agreement with a 1-pixel tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Agreement {
    /// Share of kernel edge pixels with a reference edge within 1 px.
    pub precision: f64,
    /// Share of reference edge pixels with a kernel edge within 1 px.
    pub recall: f64,
    /// Harmonic mean of the two.
    pub f1: f64,
    /// Kernel edge pixels.
    pub kernel_px: usize,
    /// Reference edge pixels.
    pub reference_px: usize,
}

/// Precision, recall and F1 of `kernel` against `reference` (nonzero =
/// edge) with Chebyshev tolerance 1.
pub fn agreement(kernel: &[u8], reference: &[u8], w: usize, h: usize) -> Agreement {
    let near = |map: &[u8], i: usize| -> bool {
        let (x, y) = ((i % w) as i64, (i / w) as i64);
        (-1..=1).any(|dy| {
            (-1..=1).any(|dx| {
                let (nx, ny) = (x + dx, y + dy);
                nx >= 0
                    && ny >= 0
                    && nx < w as i64
                    && ny < h as i64
                    && map[ny as usize * w + nx as usize] != 0
            })
        })
    };
    let k: Vec<usize> = (0..w * h).filter(|&i| kernel[i] != 0).collect();
    let r: Vec<usize> = (0..w * h).filter(|&i| reference[i] != 0).collect();
    let tp_k = k.iter().filter(|&&i| near(reference, i)).count();
    let tp_r = r.iter().filter(|&&i| near(kernel, i)).count();
    let (precision, recall, f1) = crate::metrics::precision_recall_f1(tp_k, k.len(), tp_r, r.len());
    Agreement {
        precision,
        recall,
        f1,
        kernel_px: k.len(),
        reference_px: r.len(),
    }
}
