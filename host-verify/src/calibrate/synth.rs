//! Checkerboard views rendered through a known lens, procedurally from a
//! seed: the ground truth of the calibration tests and of the accuracy
//! study (`cargo run --release -p fixsight-verify --example calibration_study`).
//!
//! # Picture
//!
//! The board is printed on white paper that extends `0.6` squares beyond
//! the outer squares; around the paper lies a textured table (fractal
//! noise). Each sensor pixel is integrated over a 4x4 grid of sub-samples:
//! the ray through each sub-sample (the lens model inverted by
//! [`crate::lens::LensModel::undistort`], evaluated on the pixel-corner
//! lattice and interpolated bilinearly inside a pixel) meets the board
//! plane, whose shade there is black ink `28` or paper `215` times a linear
//! light gradient across the board. Then, in this order:
//!
//! 1. lens shading: `1 / (1 + v r^2)^2` with `r` the pixel's distance from
//!    the principal point in focal lengths (`((u - cx)/fx, (v - cy)/fy)`)
//!    and `v` the spec's vignetting (a softened `cos^4` law of a pinhole
//!    lens at `v = 1`);
//! 2. blur: a Gaussian of the spec's standard deviation (px), border
//!    clamped;
//! 3. noise: shot noise (variance `0.08` times the signal, DN) plus
//!    Gaussian read noise of the spec's standard deviation;
//! 4. rounding to 8 bits.
//!
//! The true corner positions are the exact projections of the board
//! corners through the same camera ([`super::project`]).
//!
//! # Poses
//!
//! [`poses`] draws views that keep the whole paper inside the image with a
//! margin of 4 px: tilt `20..50` degrees about a random axis in the board
//! plane, in-plane turn `-30..30` degrees, at a distance where the paper
//! would span `0.35..0.8` of the image diagonal through a pinhole lens of
//! the same focal length; its centre is put on the ray through a pixel on
//! the way from the principal point to a random target pixel, as far
//! towards the target as the paper stays inside (bisection) and the board
//! is seen at most 50 degrees off its normal, so that the
//! views reach into the image's edges and corners where a wide lens
//! distorts most.

use super::{project, Board, Grey, Pose};
use crate::lens::{Camera, Intrinsics, LensModel};
use nalgebra::{Rotation3, Unit, Vector3};
use noise::{Fbm, MultiFractal, NoiseFn, Perlin};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

/// Paper margin beyond the outer squares, in squares.
pub const PAPER_MARGIN: f64 = 0.6;

/// How the views are taken.
///
/// ```
/// use fixsight_verify::calibrate::synth::SynthSpec;
/// let s = SynthSpec::wide_angle(320, 240);
/// assert_eq!(s.board.count(), 54);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SynthSpec {
    /// Sensor width, px.
    pub width: usize,
    /// Sensor height, px.
    pub height: usize,
    /// The true camera.
    pub camera: Camera,
    /// The board.
    pub board: Board,
    /// Gaussian blur standard deviation, px.
    pub blur_px: f64,
    /// Read-noise standard deviation, DN.
    pub noise_dn: f64,
    /// Vignetting strength `v` (module docs).
    pub vignette: f64,
}

impl SynthSpec {
    /// A cheap wide-angle module (about 100 degrees across, strong barrel
    /// distortion) with a 9x6 board of 30 mm squares, blur 0.8 px, read
    /// noise 2 DN, vignetting 0.3.
    pub fn wide_angle(width: usize, height: usize) -> Self {
        let f = 0.42 * width as f64;
        Self {
            width,
            height,
            camera: Camera {
                intrinsics: Intrinsics {
                    fx: f * 1.01,
                    fy: f,
                    cx: width as f64 * 0.51,
                    cy: height as f64 * 0.48,
                },
                lens: LensModel::BrownConrady {
                    k1: -0.28,
                    k2: 0.07,
                    k3: 0.0,
                    p1: 0.0006,
                    p2: -0.0004,
                },
            },
            board: Board {
                cols: 9,
                rows: 6,
                square: 30.0,
            },
            blur_px: 0.8,
            noise_dn: 2.0,
            vignette: 0.3,
        }
    }

    /// A fisheye module (equidistant, about 150 degrees across the
    /// diagonal) with the same board and image defects.
    pub fn fisheye(width: usize, height: usize) -> Self {
        let f = 0.30 * width as f64;
        Self {
            camera: Camera {
                intrinsics: Intrinsics {
                    fx: f,
                    fy: f * 0.995,
                    cx: width as f64 * 0.49,
                    cy: height as f64 * 0.51,
                },
                lens: LensModel::Equidistant {
                    k1: -0.04,
                    k2: 0.006,
                },
            },
            ..Self::wide_angle(width, height)
        }
    }
}

/// Draws `n` poses from `seed` (rules in the module docs). Gives up with
/// `None` when a pose cannot be placed in 500 draws (board too large for
/// the view).
///
/// ```
/// use fixsight_verify::calibrate::synth::{poses, SynthSpec};
/// let p = poses(&SynthSpec::wide_angle(320, 240), 3, 7).unwrap();
/// assert_eq!(p.len(), 3);
/// assert!(p.iter().all(|p| p.tilt_deg() > 19.0));
/// ```
pub fn poses(spec: &SynthSpec, n: usize, seed: u64) -> Option<Vec<Pose>> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed ^ 0x9E37_79B9_7F4A_7C15);
    let b = spec.board;
    let s = b.square;
    let centre = Vector3::new(
        (b.cols as f64 - 1.0) * s / 2.0,
        (b.rows as f64 - 1.0) * s / 2.0,
        0.0,
    );
    let half_w = (b.cols as f64 + 1.0 + 2.0 * PAPER_MARGIN) * s / 2.0;
    let half_h = (b.rows as f64 + 1.0 + 2.0 * PAPER_MARGIN) * s / 2.0;
    let diag_mm = 2.0 * half_w.hypot(half_h);
    let (w, h) = (spec.width as f64, spec.height as f64);
    let cam = &spec.camera;
    let mut out = Vec::with_capacity(n);
    for _ in 0..n {
        let mut placed = None;
        for _ in 0..500 {
            let tilt = rng.random_range(20.0f64..50.0).to_radians();
            let axis_angle = rng.random_range(0.0..std::f64::consts::TAU);
            let turn = rng.random_range(-30.0f64..30.0).to_radians();
            let axis = Unit::new_normalize(Vector3::new(axis_angle.cos(), axis_angle.sin(), 0.0));
            let r = Rotation3::from_axis_angle(&axis, tilt)
                * Rotation3::from_axis_angle(&Vector3::z_axis(), turn);
            let target = (
                w * rng.random_range(0.0..1.0),
                h * rng.random_range(0.0..1.0),
            );
            let span = rng.random_range(0.35..0.8);
            // Distance at which the paper's diagonal spans `span` of the
            // image diagonal (pinhole estimate at the focal length).
            let dist = cam.intrinsics.fx * diag_mm / (span * w.hypot(h));
            let mid = (cam.intrinsics.cx, cam.intrinsics.cy);
            let at = |a: f64| -> Option<Pose> {
                let (u, v) = (
                    mid.0 + a * (target.0 - mid.0),
                    mid.1 + a * (target.1 - mid.1),
                );
                let (xd, yd) = cam.intrinsics.normalise(u, v);
                let (x, y) = cam.lens.undistort(xd, yd).ok()?;
                let dir = Vector3::new(x, y, 1.0).normalize();
                let t = dir * dist - r * centre;
                let pose = Pose {
                    rot: r.scaled_axis().into(),
                    t: t.into(),
                };
                // Seen at most 50 degrees off the board's normal.
                let normal = r * Vector3::z();
                let oblique = normal.dot(&dir).abs() >= 50f64.to_radians().cos();
                (oblique && paper_inside(spec, &pose, 4.0)).then_some(pose)
            };
            // Push the board from the principal point towards the target
            // as far as it stays inside (bisection on the way).
            let Some(mut best) = at(0.0) else {
                continue;
            };
            let (mut lo, mut hi) = (0.0, 1.0);
            if let Some(p) = at(1.0) {
                best = p;
            } else {
                for _ in 0..10 {
                    let m = 0.5 * (lo + hi);
                    match at(m) {
                        Some(p) => {
                            best = p;
                            lo = m;
                        }
                        None => hi = m,
                    }
                }
            }
            placed = Some(best);
            break;
        }
        out.push(placed?);
    }
    Some(out)
}

/// `true` when the whole paper projects inside the image with `margin` px
/// to spare (checked densely along its outline).
fn paper_inside(spec: &SynthSpec, pose: &Pose, margin: f64) -> bool {
    let b = spec.board;
    let s = b.square;
    let (x0, y0) = (-(1.0 + PAPER_MARGIN) * s, -(1.0 + PAPER_MARGIN) * s);
    let (x1, y1) = (
        (b.cols as f64 + PAPER_MARGIN) * s,
        (b.rows as f64 + PAPER_MARGIN) * s,
    );
    let steps = 40;
    let inside = |x: f64, y: f64| match project(&spec.camera, pose, x, y) {
        Some((u, v)) => {
            // The projection must also be on the invertible side of the
            // lens (a wide model folds back far outside its field).
            let (xd, yd) = spec.camera.intrinsics.normalise(u, v);
            u >= margin
                && v >= margin
                && u <= spec.width as f64 - 1.0 - margin
                && v <= spec.height as f64 - 1.0 - margin
                && spec.camera.lens.undistort(xd, yd).is_ok()
        }
        None => false,
    };
    (0..=steps).all(|k| {
        let a = k as f64 / steps as f64;
        let (x, y) = (x0 + a * (x1 - x0), y0 + a * (y1 - y0));
        inside(x, y0) && inside(x, y1) && inside(x0, y) && inside(x1, y)
    })
}

/// True image positions of the board's inner corners in view `pose`
/// (row-major); `None` when one is behind the camera.
///
/// ```
/// use fixsight_verify::calibrate::synth::{poses, true_corners, SynthSpec};
/// let s = SynthSpec::wide_angle(320, 240);
/// let p = poses(&s, 1, 1).unwrap();
/// assert_eq!(true_corners(&s, &p[0]).unwrap().len(), 54);
/// ```
pub fn true_corners(spec: &SynthSpec, pose: &Pose) -> Option<Vec<(f64, f64)>> {
    spec.board
        .points()
        .into_iter()
        .map(|(x, y)| project(&spec.camera, pose, x, y))
        .collect()
}

/// Renders one view (module docs); `seed` drives the table texture, the
/// light gradient and the noise.
///
/// ```
/// use fixsight_verify::calibrate::synth::{poses, render, SynthSpec};
/// let s = SynthSpec::wide_angle(160, 120);
/// let p = poses(&s, 1, 3).unwrap();
/// let g = render(&s, &p[0], 3);
/// assert_eq!((g.width, g.height), (160, 120));
/// assert!(g.px.iter().any(|&v| v < 60.0) && g.px.iter().any(|&v| v > 150.0));
/// ```
pub fn render(spec: &SynthSpec, pose: &Pose, seed: u64) -> Grey {
    let (w, h) = (spec.width, spec.height);
    let cam = &spec.camera;
    let table = Fbm::<Perlin>::new(seed as u32).set_octaves(4);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    // Light gradient across the board: 0.75..1.05 along a random direction.
    let light_dir = rng.random_range(0.0..std::f64::consts::TAU);
    let b = spec.board;
    let s = b.square;
    let size = (b.cols as f64 + 1.0) * s;
    let r = pose.matrix();
    let rt = r.transpose();
    let t = Vector3::from(pose.t);
    let rt_t = rt * t;
    // Ray (undistorted normalised x, y) for every pixel corner
    // (u - 1/2, v - 1/2), u in 0..=w, v in 0..=h.
    let lattice: Vec<Option<(f64, f64)>> = (0..=h)
        .flat_map(|v| (0..=w).map(move |u| (u, v)))
        .map(|(u, v)| {
            let (xd, yd) = cam.intrinsics.normalise(u as f64 - 0.5, v as f64 - 0.5);
            cam.lens.undistort(xd, yd).ok()
        })
        .collect();
    let shade = |x: f64, y: f64| -> f64 {
        // Board coordinates where the ray (x, y, 1) meets the plane.
        let d = rt * Vector3::new(x, y, 1.0);
        if d.z.abs() < 1e-12 {
            return 60.0;
        }
        let lambda = rt_t.z / d.z;
        if lambda <= 0.0 || lambda > 50.0 * size + 20.0 * rt_t.norm() {
            // Behind the camera, or the table near its horizon.
            return 60.0;
        }
        let p = d * lambda - rt_t;
        let (bx, by) = (p.x, p.y);
        let light = 0.9 + 0.15 * ((bx * light_dir.cos() + by * light_dir.sin()) / size);
        let m = PAPER_MARGIN * s;
        let on_paper = bx >= -s - m
            && by >= -s - m
            && bx <= b.cols as f64 * s + m
            && by <= b.rows as f64 * s + m;
        if !on_paper {
            return (95.0 + 35.0 * table.get([bx / 40.0, by / 40.0])) * light;
        }
        let (a, c) = ((bx / s).floor(), (by / s).floor());
        let on_board =
            a >= -1.0 && c >= -1.0 && a <= b.cols as f64 - 1.0 && c <= b.rows as f64 - 1.0;
        let ink = on_board && (a + c).rem_euclid(2.0) == 0.0;
        (if ink { 28.0 } else { 215.0 }) * light
    };
    let mut img = vec![0.0; w * h];
    const SUB: usize = 4;
    for v in 0..h {
        for u in 0..w {
            let corner = |du: usize, dv: usize| lattice[(v + dv) * (w + 1) + u + du];
            let (Some(a), Some(bq), Some(c), Some(d)) =
                (corner(0, 0), corner(1, 0), corner(0, 1), corner(1, 1))
            else {
                img[v * w + u] = 0.0;
                continue;
            };
            let mut acc = 0.0;
            for sy in 0..SUB {
                for sx in 0..SUB {
                    let fx = (sx as f64 + 0.5) / SUB as f64;
                    let fy = (sy as f64 + 0.5) / SUB as f64;
                    let mix = |p: f64, q: f64, r: f64, z: f64| {
                        (1.0 - fy) * ((1.0 - fx) * p + fx * q) + fy * ((1.0 - fx) * r + fx * z)
                    };
                    let x = mix(a.0, bq.0, c.0, d.0);
                    let y = mix(a.1, bq.1, c.1, d.1);
                    acc += shade(x, y);
                }
            }
            let (xd, yd) = cam.intrinsics.normalise(u as f64, v as f64);
            let fall = 1.0 / (1.0 + spec.vignette * (xd * xd + yd * yd)).powi(2);
            img[v * w + u] = fall * acc / (SUB * SUB) as f64;
        }
    }
    let mut g = Grey {
        width: w,
        height: h,
        px: img,
    };
    if spec.blur_px > 0.0 {
        g = gaussian_blur(&g, spec.blur_px);
    }
    let read = Normal::new(0.0, spec.noise_dn.max(0.0)).expect("sigma is finite and >= 0");
    for p in &mut g.px {
        let shot = Normal::new(0.0, (0.08 * p.max(0.0)).sqrt()).expect("sigma is finite");
        *p = (*p + shot.sample(&mut rng) + read.sample(&mut rng))
            .round()
            .clamp(0.0, 255.0);
    }
    g
}

/// Separable Gaussian blur (radius `ceil(3 sigma)`, weights normalised to
/// sum 1, border clamped).
///
/// ```
/// use fixsight_verify::calibrate::{synth::gaussian_blur, Grey};
/// let g = Grey::from_u8(5, 1, &[0, 0, 100, 0, 0]);
/// let b = gaussian_blur(&g, 1.0);
/// assert!((b.px.iter().sum::<f64>() - 100.0).abs() < 1.0);
/// assert!(b.px[2] < 100.0 && b.px[1] > 0.0);
/// ```
pub fn gaussian_blur(g: &Grey, sigma: f64) -> Grey {
    let r = (3.0 * sigma).ceil().max(1.0) as isize;
    let mut k: Vec<f64> = (-r..=r)
        .map(|i| (-(i * i) as f64 / (2.0 * sigma * sigma)).exp())
        .collect();
    let sum: f64 = k.iter().sum();
    k.iter_mut().for_each(|v| *v /= sum);
    let (w, h) = (g.width, g.height);
    let mut tmp = vec![0.0; w * h];
    for y in 0..h {
        for x in 0..w {
            tmp[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * g.at(x as isize + i, y as isize))
                .sum();
        }
    }
    let t = Grey {
        width: w,
        height: h,
        px: tmp,
    };
    let mut out = vec![0.0; w * h];
    for y in 0..h {
        for x in 0..w {
            out[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * t.at(x as isize, y as isize + i))
                .sum();
        }
    }
    Grey {
        width: w,
        height: h,
        px: out,
    }
}

/// How far a fitted camera strays from the true one over the image: for
/// every pixel on a lattice of `step` px within `radius` px of the true
/// principal point (`f64::INFINITY`: the whole image), the ray the true
/// camera sees there is projected through `fitted`; returns the largest
/// and the RMS distance, px. Pixels whose ray the true lens cannot invert
/// are left out.
///
/// ```
/// use fixsight_verify::calibrate::synth::{map_error, SynthSpec};
/// let s = SynthSpec::wide_angle(320, 240);
/// // Only the lens inversion's own tolerance remains.
/// let (max, _) = map_error(&s.camera, &s.camera, 320, 240, 8, f64::INFINITY);
/// assert!(max < 1e-6);
/// let mut moved = s.camera;
/// moved.intrinsics.cx += 0.5;
/// let (max, rms) = map_error(&s.camera, &moved, 320, 240, 8, f64::INFINITY);
/// assert!((max - 0.5).abs() < 1e-6 && (rms - 0.5).abs() < 1e-6);
/// ```
pub fn map_error(
    truth: &Camera,
    fitted: &Camera,
    w: usize,
    h: usize,
    step: usize,
    radius: f64,
) -> (f64, f64) {
    let (mut max, mut s2, mut n) = (0.0f64, 0.0, 0usize);
    for v in (0..h).step_by(step.max(1)) {
        for u in (0..w).step_by(step.max(1)) {
            let k = truth.intrinsics;
            if (u as f64 - k.cx).hypot(v as f64 - k.cy) > radius {
                continue;
            }
            let (xd, yd) = k.normalise(u as f64, v as f64);
            let Ok((x, y)) = truth.lens.undistort(xd, yd) else {
                continue;
            };
            let (a, b) = fitted.lens.distort(x, y);
            let (pu, pv) = fitted.intrinsics.to_pixel(a, b);
            let d = (pu - u as f64).hypot(pv - v as f64);
            max = max.max(d);
            s2 += d * d;
            n += 1;
        }
    }
    (max, (s2 / n.max(1) as f64).sqrt())
}
