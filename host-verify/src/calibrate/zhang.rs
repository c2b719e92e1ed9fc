//! The closed-form start of a calibration, after Zhang (2000), "A flexible
//! new technique for camera calibration", IEEE Trans. PAMI 22(11),
//! 1330-1334 (section and equation numbers below are that paper's).
//!
//! 1. **Homography** of each view, board millimetres to pixels, by the
//!    direct linear transform on normalised coordinates (each point set
//!    shifted to its centroid and scaled to a mean distance of `sqrt 2`,
//!    Hartley 1997, "In defense of the eight-point algorithm", IEEE PAMI
//!    19(6)): the right singular vector of the smallest singular value.
//!    Zhang refines each homography by least squares before going on; here
//!    the final Levenberg-Marquardt refinement ([`super::refine`]) does that
//!    job for all parameters at once.
//! 2. **The image of the absolute conic** `B = A^-T A^-1` (eq. 5), stored
//!    as `b = [B11, B12, B22, B13, B23, B33]` (eq. 6), from
//!    `v12^T b = 0` and `(v11 - v22)^T b = 0` per view (eq. 8), with
//!    `v_ij = [hi1 hj1, hi1 hj2 + hi2 hj1, hi2 hj2, hi3 hj1 + hi1 hj3,
//!    hi3 hj2 + hi2 hj3, hi3 hj3]^T` and `h_i` the `i`-th column of `H`
//!    (eq. 7). The lens file has no skew, so the row `[0, 1, 0, 0, 0, 0]`
//!    (skew `gamma = 0`, section 3.1) is always added; `b` is the right
//!    singular vector of the smallest singular value of the stacked rows.
//!    The homographies are first expressed in pixel coordinates shifted to
//!    the image centre and divided by half the sum of the image sides, so
//!    that the entries of `B` are of comparable size.
//! 3. **Intrinsics from `B`** (appendix B):
//!    `v0 = (B12 B13 - B11 B23) / (B11 B22 - B12^2)`,
//!    `lambda = B33 - [B13^2 + v0 (B12 B13 - B11 B23)] / B11`,
//!    `alpha = sqrt(lambda / B11)`,
//!    `beta = sqrt(lambda B11 / (B11 B22 - B12^2))`,
//!    `gamma = -B12 alpha^2 beta / lambda`,
//!    `u0 = gamma v0 / beta - B13 alpha^2 / lambda`.
//! 4. **Poses** (section 3.1): `r1 = l A^-1 h1`, `r2 = l A^-1 h2`,
//!    `r3 = r1 x r2`, `t = l A^-1 h3`, `l = 1 / |A^-1 h1|` with its sign
//!    chosen so that the board lies in front of the camera; `R` is replaced
//!    by the nearest rotation `U V^T` of its singular value decomposition
//!    (appendix C).
//! 5. **First radial terms** (section 3.3, eq. 13): with the ideal
//!    projection `(u, v)` and normalised `(x, y)` of every corner and the
//!    observed `(u', v')`, the least-squares `k1, k2` of
//!    `(u - u0) (r^2, r^4) . (k1, k2) = u' - u` (and likewise for `v`).
//!    Tangential terms and `k3` start at 0.
//!
//! For the fisheye model the pinhole homographies of a very wide lens are
//! too poor for steps 2-3. Instead the start takes the principal point at
//! the image centre, `fx = fy = f`, and the focal length `f` for which the
//! corners, mapped through the inverse of the ideal equidistant lens
//! (`r_d = f theta`, `r = f tan theta`), lie most nearly on a plane seen
//! by a pinhole camera: the homographies fitted to them leave the smallest
//! residual. Step 4 then uses those homographies; the fisheye
//! coefficients start at 0. (Common practice, no source.)
//!
//! # Degenerate poses
//!
//! The third row of `H` is the third row of `[r1 r2 t]` up to scale, so the
//! depth of every board point relative to the others is known without the
//! intrinsics: `Z ~ h31 X + h32 Y + h33`. When in every view the depth
//! changes by less than [`MIN_DEPTH_SPAN`] of its mean across the board
//! (the board is held parallel to the sensor), the views cannot fix the
//! focal length (Zhang, section 3.2 on views related by pure translation;
//! the threshold is common practice, no source) and the calibration stops.
//! It also stops when the rows of step 2 leave more than one direction of
//! `b` nearly free (second-smallest singular value below `1e-6` of the
//! largest), or when `B` is not positive definite (step 3 has no real
//! solution).

use super::{Board, CalibError, ModelKind, Pose};
use crate::lens::{Camera, Intrinsics};
use nalgebra::{DMatrix, Matrix3, Rotation3, Vector3};

/// Smallest relative depth change across the board, in at least one view.
pub const MIN_DEPTH_SPAN: f64 = 0.05;

/// Homography mapping `src` to `dst` (homogeneous, `H[2][2]` scaled to 1
/// when non-zero); `None` with fewer than 4 points or a degenerate set.
///
/// ```
/// use fixsight_verify::calibrate::zhang::homography;
/// let src = [(0.0, 0.0), (1.0, 0.0), (0.0, 1.0), (1.0, 1.0), (0.5, 0.2)];
/// let dst: Vec<(f64, f64)> = src.iter().map(|&(x, y)| (2.0 * x + 3.0, 4.0 * y - 1.0)).collect();
/// let h = homography(&src, &dst).unwrap();
/// assert!((h[(0, 0)] - 2.0).abs() < 1e-9 && (h[(1, 2)] + 1.0).abs() < 1e-9);
/// ```
pub fn homography(src: &[(f64, f64)], dst: &[(f64, f64)]) -> Option<Matrix3<f64>> {
    let n = src.len();
    if n < 4 || dst.len() != n {
        return None;
    }
    let (ts, td) = (normaliser(src)?, normaliser(dst)?);
    let rows = (2 * n).max(9);
    let mut a = DMatrix::<f64>::zeros(rows, 9);
    for (k, (&s, &d)) in src.iter().zip(dst).enumerate() {
        let p = ts * Vector3::new(s.0, s.1, 1.0);
        let q = td * Vector3::new(d.0, d.1, 1.0);
        let (x, y) = (p.x / p.z, p.y / p.z);
        let (u, v) = (q.x / q.z, q.y / q.z);
        let r0 = [x, y, 1.0, 0.0, 0.0, 0.0, -u * x, -u * y, -u];
        let r1 = [0.0, 0.0, 0.0, x, y, 1.0, -v * x, -v * y, -v];
        for c in 0..9 {
            a[(2 * k, c)] = r0[c];
            a[(2 * k + 1, c)] = r1[c];
        }
    }
    let h = null_vector(a)?;
    let hn = Matrix3::from_row_slice(h.as_slice());
    let h = td.try_inverse()? * hn * ts;
    let s = h[(2, 2)];
    if !h.iter().all(|v| v.is_finite()) {
        return None;
    }
    Some(if s.abs() > 1e-300 { h / s } else { h })
}

/// Hartley's normalising transform of a point set.
fn normaliser(p: &[(f64, f64)]) -> Option<Matrix3<f64>> {
    let n = p.len() as f64;
    let (mx, my) = p
        .iter()
        .fold((0.0, 0.0), |(a, b), &(x, y)| (a + x / n, b + y / n));
    let md = p.iter().map(|&(x, y)| (x - mx).hypot(y - my)).sum::<f64>() / n;
    if !(md > 0.0 && md.is_finite()) {
        return None;
    }
    let s = std::f64::consts::SQRT_2 / md;
    Some(Matrix3::new(
        s,
        0.0,
        -s * mx,
        0.0,
        s,
        -s * my,
        0.0,
        0.0,
        1.0,
    ))
}

/// Right singular vector of the smallest singular value, and the ratio of
/// the second-smallest singular value to the largest.
fn null_vector_with_gap(a: DMatrix<f64>) -> Option<(nalgebra::DVector<f64>, f64)> {
    let n = a.ncols();
    let svd = a.svd(false, true);
    let vt = svd.v_t?;
    let sv = svd.singular_values;
    if vt.nrows() < n {
        return None;
    }
    let mut order: Vec<usize> = (0..sv.len()).collect();
    order.sort_by(|&x, &y| sv[x].total_cmp(&sv[y]));
    let best = order[0];
    let gap = if sv.len() > 1 && sv[order[sv.len() - 1]] > 0.0 {
        sv[order[1]] / sv[order[sv.len() - 1]]
    } else {
        0.0
    };
    Some((vt.row(best).transpose(), gap))
}

fn null_vector(a: DMatrix<f64>) -> Option<nalgebra::DVector<f64>> {
    null_vector_with_gap(a).map(|(v, _)| v)
}

/// Zhang's `v_ij` (eq. 7) for columns `i`, `j` of `h` (0-based: `v_ij(h, 0,
/// 1)` is the paper's `v12`), so that `v_ij^T b = h_i^T B h_j`.
///
/// ```
/// use fixsight_verify::calibrate::zhang::v_ij;
/// use nalgebra::Matrix3;
/// let h = Matrix3::new(1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 10.0);
/// // h1 = (1, 4, 7), h2 = (2, 5, 8)
/// assert_eq!(v_ij(&h, 0, 1), [2.0, 13.0, 20.0, 22.0, 67.0, 56.0]);
/// ```
pub fn v_ij(h: &Matrix3<f64>, i: usize, j: usize) -> [f64; 6] {
    let hi = |r: usize| h[(r, i)];
    let hj = |r: usize| h[(r, j)];
    [
        hi(0) * hj(0),
        hi(0) * hj(1) + hi(1) * hj(0),
        hi(1) * hj(1),
        hi(2) * hj(0) + hi(0) * hj(2),
        hi(2) * hj(1) + hi(1) * hj(2),
        hi(2) * hj(2),
    ]
}

/// The vector `b` (eq. 6) of `B = A^-T A^-1` for an intrinsic matrix `A`.
///
/// ```
/// use fixsight_verify::calibrate::zhang::b_of;
/// use nalgebra::Matrix3;
/// let a = Matrix3::new(2.0, 0.0, 1.0, 0.0, 4.0, 2.0, 0.0, 0.0, 1.0);
/// // Eq. (5) with alpha = 2, beta = 4, gamma = 0, u0 = 1, v0 = 2.
/// let b = b_of(&a).unwrap();
/// let want = [0.25, 0.0, 0.0625, -0.25, -0.125, 1.0 + 0.25 + 0.25];
/// assert!(b.iter().zip(want).all(|(x, y)| (x - y).abs() < 1e-12));
/// ```
pub fn b_of(a: &Matrix3<f64>) -> Option<[f64; 6]> {
    let ai = a.try_inverse()?;
    let b = ai.transpose() * ai;
    Some([
        b[(0, 0)],
        b[(0, 1)],
        b[(1, 1)],
        b[(0, 2)],
        b[(1, 2)],
        b[(2, 2)],
    ])
}

/// Solves step 2 for `b` (scaled so that `B11 > 0`) from homographies;
/// `zero_skew` adds the row `[0, 1, 0, 0, 0, 0]`.
///
/// ```
/// use fixsight_verify::calibrate::zhang::{b_of, solve_b};
/// use nalgebra::{Matrix3, Rotation3, Vector3};
/// let a = Matrix3::new(800.0, 0.0, 320.0, 0.0, 780.0, 240.0, 0.0, 0.0, 1.0);
/// let hs: Vec<Matrix3<f64>> = [(0.3, 0.1), (-0.2, 0.35), (0.1, -0.4)]
///     .iter()
///     .map(|&(rx, ry)| {
///         let r = Rotation3::from_scaled_axis(Vector3::new(rx, ry, 0.0)).into_inner();
///         let t = Vector3::new(-50.0, -30.0, 600.0);
///         a * Matrix3::from_columns(&[r.column(0).into(), r.column(1).into(), t])
///     })
///     .collect();
/// let b = solve_b(&hs, true).unwrap();
/// let want = b_of(&a).unwrap();
/// let scale = b[0] / want[0];
/// assert!(b.iter().zip(want).all(|(x, y)| (x - scale * y).abs() < 1e-9 * b[0].abs()));
/// ```
pub fn solve_b(hs: &[Matrix3<f64>], zero_skew: bool) -> Result<[f64; 6], CalibError> {
    let rows = 2 * hs.len() + usize::from(zero_skew);
    let mut v = DMatrix::<f64>::zeros(rows.max(6), 6);
    for (k, h) in hs.iter().enumerate() {
        let v12 = v_ij(h, 0, 1);
        let v11 = v_ij(h, 0, 0);
        let v22 = v_ij(h, 1, 1);
        for c in 0..6 {
            v[(2 * k, c)] = v12[c];
            v[(2 * k + 1, c)] = v11[c] - v22[c];
        }
    }
    if zero_skew {
        v[(2 * hs.len(), 1)] = 1.0;
    }
    // Rows to unit length: each equation counts alike.
    for r in 0..v.nrows() {
        let n = v.row(r).norm();
        if n > 0.0 {
            v.row_mut(r).scale_mut(1.0 / n);
        }
    }
    let (b, gap) = null_vector_with_gap(v).ok_or_else(|| {
        CalibError::Degenerate("no solution for the image of the absolute conic".into())
    })?;
    if gap < 1e-6 {
        return Err(CalibError::Degenerate(format!(
            "the views leave the intrinsics undetermined (second-smallest singular value \
             {gap:.1e} of the largest); tilt the board differently between views"
        )));
    }
    let sign = if b[0] < 0.0 { -1.0 } else { 1.0 };
    Ok([
        sign * b[0],
        sign * b[1],
        sign * b[2],
        sign * b[3],
        sign * b[4],
        sign * b[5],
    ])
}

/// Intrinsic parameters from the closed form of appendix B.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClosedForm {
    /// `alpha`, px.
    pub alpha: f64,
    /// `beta`, px.
    pub beta: f64,
    /// Skew `gamma`.
    pub gamma: f64,
    /// `u0`, px.
    pub u0: f64,
    /// `v0`, px.
    pub v0: f64,
    /// The scale `lambda` of `b`.
    pub lambda: f64,
}

/// Step 3: intrinsics from `b`; an error when `B` is not positive definite.
///
/// ```
/// use fixsight_verify::calibrate::zhang::{b_of, intrinsics_from_b};
/// use nalgebra::Matrix3;
/// let a = Matrix3::new(1250.0, 1.09083, 255.0, 0.0, 900.0, 255.0, 0.0, 0.0, 1.0);
/// let b = b_of(&a).unwrap().map(|v| 3.0 * v);
/// let c = intrinsics_from_b(&b).unwrap();
/// assert!((c.alpha - 1250.0).abs() < 1e-6 && (c.gamma - 1.09083).abs() < 1e-9);
/// assert!((c.lambda - 3.0).abs() < 1e-9);
/// ```
pub fn intrinsics_from_b(b: &[f64; 6]) -> Result<ClosedForm, CalibError> {
    let [b11, b12, b22, b13, b23, b33] = *b;
    let den = b11 * b22 - b12 * b12;
    let bad = |why: &str| {
        CalibError::Degenerate(format!(
            "the views give no real intrinsics ({why}); tilt the board by 20-45 degrees in \
             several directions"
        ))
    };
    if !(b11 > 0.0 && den > 0.0) {
        return Err(bad("B is not positive definite"));
    }
    let v0 = (b12 * b13 - b11 * b23) / den;
    let lambda = b33 - (b13 * b13 + v0 * (b12 * b13 - b11 * b23)) / b11;
    if (lambda / b11).is_nan() || lambda / b11 <= 0.0 {
        return Err(bad("negative focal length squared"));
    }
    let alpha = (lambda / b11).sqrt();
    let beta = (lambda * b11 / den).sqrt();
    let gamma = -b12 * alpha * alpha * beta / lambda;
    let u0 = gamma * v0 / beta - b13 * alpha * alpha / lambda;
    let c = ClosedForm {
        alpha,
        beta,
        gamma,
        u0,
        v0,
        lambda,
    };
    if [alpha, beta, gamma, u0, v0].iter().all(|v| v.is_finite()) {
        Ok(c)
    } else {
        Err(bad("non-finite result"))
    }
}

/// Step 4: the pose of a view from its homography and the intrinsic
/// matrix `a`.
///
/// ```
/// use fixsight_verify::calibrate::zhang::pose_from_homography;
/// use nalgebra::{Matrix3, Rotation3, Vector3};
/// let a = Matrix3::new(800.0, 0.0, 320.0, 0.0, 780.0, 240.0, 0.0, 0.0, 1.0);
/// let r = Rotation3::from_scaled_axis(Vector3::new(0.3, -0.2, 0.1)).into_inner();
/// let t = Vector3::new(-50.0, -30.0, 600.0);
/// let h = a * Matrix3::from_columns(&[r.column(0).into(), r.column(1).into(), t]) * -2.0;
/// let p = pose_from_homography(&a, &h).unwrap();
/// assert!((p.t[2] - 600.0).abs() < 1e-9 && (p.rot[0] - 0.3).abs() < 1e-9);
/// ```
pub fn pose_from_homography(a: &Matrix3<f64>, h: &Matrix3<f64>) -> Option<Pose> {
    let ai = a.try_inverse()?;
    let c1 = ai * h.column(0);
    let c2 = ai * h.column(1);
    let c3 = ai * h.column(2);
    let n = c1.norm();
    if n <= 0.0 {
        return None;
    }
    let mut l = 1.0 / n;
    if c3.z * l < 0.0 {
        l = -l;
    }
    let r1 = c1 * l;
    let r2 = c2 * l;
    let r3 = r1.cross(&r2);
    let q = Matrix3::from_columns(&[r1, r2, r3]);
    let svd = q.svd(true, true);
    let (u, vt) = (svd.u?, svd.v_t?);
    let mut r = u * vt;
    if r.determinant() < 0.0 {
        return None;
    }
    r = Rotation3::from_matrix_unchecked(r).into_inner();
    let rot = Rotation3::from_matrix(&r).scaled_axis();
    let t = c3 * l;
    Some(Pose {
        rot: rot.into(),
        t: t.into(),
    })
}

/// Step 5 for the Brown model: `(k1, k2)` by linear least squares.
///
/// ```
/// use fixsight_verify::calibrate::{project, zhang::radial_start, Board, Pose};
/// use fixsight_verify::lens::{Camera, Intrinsics, LensModel};
/// let cam = Camera {
///     intrinsics: Intrinsics { fx: 300.0, fy: 300.0, cx: 160.0, cy: 120.0 },
///     lens: LensModel::BrownConrady { k1: -0.2, k2: 0.05, k3: 0.0, p1: 0.0, p2: 0.0 },
/// };
/// let board = Board::new(5, 4, 20.0).unwrap();
/// let pose = Pose { rot: [0.3, 0.2, 0.0], t: [-40.0, -30.0, 150.0] };
/// let seen: Vec<_> = board.points().iter().map(|&(x, y)| project(&cam, &pose, x, y).unwrap()).collect();
/// let (k1, k2) = radial_start(&cam.intrinsics, &board, &[pose], &[seen]).unwrap();
/// assert!((k1 + 0.2).abs() < 1e-9 && (k2 - 0.05).abs() < 1e-9);
/// ```
pub fn radial_start(
    k: &Intrinsics,
    board: &Board,
    poses: &[Pose],
    views: &[Vec<(f64, f64)>],
) -> Option<(f64, f64)> {
    let pts = board.points();
    let (mut a11, mut a12, mut a22, mut r1, mut r2) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (pose, seen) in poses.iter().zip(views) {
        for (&(bx, by), &(uo, vo)) in pts.iter().zip(seen) {
            let (x, y, z) = pose.apply(bx, by);
            if z <= 0.0 {
                continue;
            }
            let (x, y) = (x / z, y / z);
            let rr = x * x + y * y;
            let (u, v) = k.to_pixel(x, y);
            for (d, e) in [((u - k.cx), uo - u), ((v - k.cy), vo - v)] {
                let (c1, c2) = (d * rr, d * rr * rr);
                a11 += c1 * c1;
                a12 += c1 * c2;
                a22 += c2 * c2;
                r1 += c1 * e;
                r2 += c2 * e;
            }
        }
    }
    let det = a11 * a22 - a12 * a12;
    if det.is_nan() || det.abs() <= 1e-300 {
        return None;
    }
    Some(((a22 * r1 - a12 * r2) / det, (a11 * r2 - a12 * r1) / det))
}

/// Relative depth change across the board in a view (module docs).
///
/// ```
/// use fixsight_verify::calibrate::{zhang::depth_span, Board};
/// use nalgebra::Matrix3;
/// let board = Board::new(3, 3, 10.0).unwrap();
/// let flat = Matrix3::new(1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 100.0);
/// assert_eq!(depth_span(&flat, &board), 0.0);
/// ```
pub fn depth_span(h: &Matrix3<f64>, board: &Board) -> f64 {
    let depths: Vec<f64> = board
        .points()
        .iter()
        .map(|&(x, y)| h[(2, 0)] * x + h[(2, 1)] * y + h[(2, 2)])
        .collect();
    let mean = depths.iter().sum::<f64>() / depths.len() as f64;
    let (lo, hi) = depths
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &d| {
            (l.min(d), h.max(d))
        });
    if mean == 0.0 {
        return f64::INFINITY;
    }
    ((hi - lo) / mean).abs()
}

/// Corners of every view seen through the ideal equidistant lens of focal
/// length `f` centred in a `size` image, mapped to the pinhole image of
/// the same focal length; points beyond 85 degrees off axis are `None`.
fn equidistant_to_pinhole(
    views: &[Vec<(f64, f64)>],
    size: (usize, usize),
    f: f64,
) -> Vec<Vec<Option<(f64, f64)>>> {
    let (cx, cy) = ((size.0 as f64 - 1.0) / 2.0, (size.1 as f64 - 1.0) / 2.0);
    views
        .iter()
        .map(|seen| {
            seen.iter()
                .map(|&(u, v)| {
                    let (xd, yd) = ((u - cx) / f, (v - cy) / f);
                    let theta = xd.hypot(yd);
                    if theta >= 85f64.to_radians() {
                        return None;
                    }
                    let s = if theta > 0.0 {
                        theta.tan() / theta
                    } else {
                        1.0
                    };
                    Some((cx + f * xd * s, cy + f * yd * s))
                })
                .collect()
        })
        .collect()
}

/// The fisheye start (module docs): the focal length, from `0.1` to `2`
/// image widths, that makes the boards most nearly flat, i.e. minimises the
/// RMS residual, in the observed image, of each view's homography fitted
/// to its corners mapped through the inverse of the ideal equidistant lens
/// and mapped back through the lens (a 64-point geometric grid, then a
/// golden-section search around the best); with the homographies at that
/// focal length. Views losing more than a fifth of their corners beyond 85
/// degrees make a focal length inadmissible.
fn fisheye_focal(
    pts: &[(f64, f64)],
    views: &[Vec<(f64, f64)>],
    size: (usize, usize),
) -> Option<(f64, Vec<Matrix3<f64>>)> {
    let (cx, cy) = ((size.0 as f64 - 1.0) / 2.0, (size.1 as f64 - 1.0) / 2.0);
    let cost = |f: f64| -> Option<(f64, Vec<Matrix3<f64>>)> {
        let mapped = equidistant_to_pinhole(views, size, f);
        let (mut s2, mut n) = (0.0, 0usize);
        let mut hs = Vec::with_capacity(views.len());
        for (m, view) in mapped.iter().zip(views) {
            let (src, dst): (Vec<_>, Vec<_>) = pts
                .iter()
                .zip(m)
                .filter_map(|(a, b)| b.map(|b| (*a, b)))
                .unzip();
            if 5 * src.len() < 4 * pts.len() {
                return None;
            }
            let h = homography(&src, &dst)?;
            // Residual back in the observed image: the homography's point
            // through the ideal equidistant lens, against the corner seen.
            for (a, seen) in pts.iter().zip(view) {
                let p = h * Vector3::new(a.0, a.1, 1.0);
                if p.z <= 0.0 {
                    return None;
                }
                let (x, y) = ((p.x / p.z - cx) / f, (p.y / p.z - cy) / f);
                let r = x.hypot(y);
                let s = if r > 0.0 { r.atan() / r } else { 1.0 };
                s2 += (cx + f * x * s - seen.0).powi(2) + (cy + f * y * s - seen.1).powi(2);
                n += 1;
            }
            hs.push(h);
        }
        Some(((s2 / n as f64).sqrt(), hs))
    };
    let w = size.0 as f64;
    let (lo, hi) = (0.1 * w, 2.0 * w);
    let grid: Vec<f64> = (0..64)
        .map(|i| lo * (hi / lo).powf(i as f64 / 63.0))
        .collect();
    let best = grid
        .iter()
        .enumerate()
        .filter_map(|(i, &f)| cost(f).map(|c| (i, c.0)))
        .min_by(|a, b| a.1.total_cmp(&b.1))?
        .0;
    let (mut a, mut b) = (grid[best.saturating_sub(1)], grid[(best + 1).min(63)]);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let val = |f: f64| cost(f).map_or(f64::INFINITY, |c| c.0);
    for _ in 0..40 {
        let (c, d) = (b - g * (b - a), a + g * (b - a));
        if val(c) < val(d) {
            b = d;
        } else {
            a = c;
        }
    }
    let f = 0.5 * (a + b);
    cost(f).map(|(_, hs)| (f, hs))
}

/// The starting camera and poses of steps 1-5.
#[derive(Debug, Clone)]
pub struct Start {
    /// Camera (intrinsics and starting lens).
    pub camera: Camera,
    /// One pose per view.
    pub poses: Vec<Pose>,
    /// Depth span of every view (module docs).
    pub depth_spans: Vec<f64>,
}

/// Steps 1-5 for views of `board` in a `size` image (module docs).
///
/// ```
/// use fixsight_verify::calibrate::{project, zhang::start, Board, ModelKind, Pose};
/// use fixsight_verify::lens::{Camera, Intrinsics, LensModel};
/// let cam = Camera {
///     intrinsics: Intrinsics { fx: 300.0, fy: 305.0, cx: 162.0, cy: 118.0 },
///     lens: LensModel::BrownConrady { k1: 0.0, k2: 0.0, k3: 0.0, p1: 0.0, p2: 0.0 },
/// };
/// let board = Board::new(6, 5, 20.0).unwrap();
/// let views: Vec<Vec<(f64, f64)>> = [[0.4, 0.1, 0.0], [-0.1, 0.45, 0.2], [0.3, -0.3, -0.1]]
///     .iter()
///     .map(|&rot| {
///         let pose = Pose { rot, t: [-50.0, -40.0, 250.0] };
///         board.points().iter().map(|&(x, y)| project(&cam, &pose, x, y).unwrap()).collect()
///     })
///     .collect();
/// let s = start(&board, &views, (320, 240), ModelKind::Brown).unwrap();
/// assert!((s.camera.intrinsics.fy - 305.0).abs() < 1e-6);
/// ```
pub fn start(
    board: &Board,
    views: &[Vec<(f64, f64)>],
    size: (usize, usize),
    model: ModelKind,
) -> Result<Start, CalibError> {
    let pts = board.points();
    let (w, h) = (size.0 as f64, size.1 as f64);
    let s = (w + h) / 2.0;
    let norm = Matrix3::new(
        1.0 / s,
        0.0,
        -w / 2.0 / s,
        0.0,
        1.0 / s,
        -h / 2.0 / s,
        0.0,
        0.0,
        1.0,
    );
    let denorm = Matrix3::new(s, 0.0, w / 2.0, 0.0, s, h / 2.0, 0.0, 0.0, 1.0);
    let homographies = |views: &[Vec<(f64, f64)>], keep: &dyn Fn(usize, usize) -> bool| {
        views
            .iter()
            .enumerate()
            .map(|(v, seen)| {
                let (src, dst): (Vec<_>, Vec<_>) = pts
                    .iter()
                    .zip(seen)
                    .enumerate()
                    .filter(|(k, _)| keep(v, *k))
                    .map(|(_, (a, b))| (*a, *b))
                    .unzip();
                homography(&src, &dst).ok_or_else(|| {
                    CalibError::Degenerate(format!(
                        "view {}: no homography from its corners",
                        v + 1
                    ))
                })
            })
            .collect::<Result<Vec<_>, _>>()
    };
    let closed = |hs: &[Matrix3<f64>]| -> Result<Intrinsics, CalibError> {
        let hn: Vec<Matrix3<f64>> = hs.iter().map(|h| norm * h).collect();
        let c = intrinsics_from_b(&solve_b(&hn, true)?)?;
        let a = denorm * Matrix3::new(c.alpha, 0.0, c.u0, 0.0, c.beta, c.v0, 0.0, 0.0, 1.0);
        Ok(Intrinsics {
            fx: a[(0, 0)],
            fy: a[(1, 1)],
            cx: a[(0, 2)],
            cy: a[(1, 2)],
        })
    };
    let mut hs = homographies(views, &|_, _| true)?;
    let spans: Vec<f64> = hs.iter().map(|h| depth_span(h, board)).collect();
    let widest = spans.iter().cloned().fold(0.0, f64::max);
    if widest < MIN_DEPTH_SPAN {
        return Err(CalibError::Degenerate(format!(
            "in all {} views the board is nearly parallel to the sensor (largest depth change \
             across the board {:.1} %, at least {:.0} % needed in one view): tilt the board by \
             20-45 degrees in several directions",
            views.len(),
            100.0 * widest,
            100.0 * MIN_DEPTH_SPAN
        )));
    }
    let k = if model == ModelKind::Fisheye {
        let (f, flat) = fisheye_focal(&pts, views, size).ok_or_else(|| {
            CalibError::Degenerate(
                "no focal length makes the boards flat through an equidistant lens".into(),
            )
        })?;
        hs = flat;
        Intrinsics {
            fx: f,
            fy: f,
            cx: (w - 1.0) / 2.0,
            cy: (h - 1.0) / 2.0,
        }
    } else {
        closed(&hs)?
    };
    let a = Matrix3::new(k.fx, 0.0, k.cx, 0.0, k.fy, k.cy, 0.0, 0.0, 1.0);
    let poses = hs
        .iter()
        .enumerate()
        .map(|(v, h)| {
            pose_from_homography(&a, h).ok_or_else(|| {
                CalibError::Degenerate(format!("view {}: no pose from its homography", v + 1))
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    let lens = match model {
        ModelKind::Brown => {
            let (k1, k2) = radial_start(&k, board, &poses, views).unwrap_or((0.0, 0.0));
            ModelKind::Brown.lens(&[k1, k2, 0.0, 0.0, 0.0])
        }
        ModelKind::Fisheye => ModelKind::Fisheye.lens(&[0.0, 0.0]),
    };
    Ok(Start {
        camera: Camera {
            intrinsics: k,
            lens,
        },
        poses,
        depth_spans: spans,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::calibrate::project;
    use crate::lens::LensModel;

    /// A model plane's orientation and position.
    type Plane = (Rotation3<f64>, Vector3<f64>);

    /// Zhang (2000), section 5.1, computer-simulated camera (from memory):
    /// alpha = 1250, beta = 900, gamma = 1.09083 (89.95 degrees between the
    /// image axes), u0 = v0 = 255, a 512x512 image, a 10x14 checker pattern
    /// of 18 cm x 25 cm, and three planes r1 = [20, 0, 0] deg,
    /// t1 = [-9, -12.5, 500] cm; r2 = [0, 20, 0] deg, t2 = [-9, -12.5, 510];
    /// r3 = [-30, -30, -15] deg / sqrt 5, t3 = [-10.5, -12.5, 525].
    fn paper_setup() -> (Matrix3<f64>, Vec<Plane>) {
        let a = Matrix3::new(1250.0, 1.09083, 255.0, 0.0, 900.0, 255.0, 0.0, 0.0, 1.0);
        let d = |x: f64| x.to_radians();
        let s5 = 5f64.sqrt();
        let planes = vec![
            (
                Vector3::new(d(20.0), 0.0, 0.0),
                Vector3::new(-9.0, -12.5, 500.0),
            ),
            (
                Vector3::new(0.0, d(20.0), 0.0),
                Vector3::new(-9.0, -12.5, 510.0),
            ),
            (
                Vector3::new(d(-30.0) / s5, d(-30.0) / s5, d(-15.0) / s5),
                Vector3::new(-10.5, -12.5, 525.0),
            ),
        ];
        (
            a,
            planes
                .into_iter()
                .map(|(r, t)| (Rotation3::from_scaled_axis(r), t))
                .collect(),
        )
    }

    fn h_of(a: &Matrix3<f64>, r: &Rotation3<f64>, t: &Vector3<f64>) -> Matrix3<f64> {
        let m = r.matrix();
        a * Matrix3::from_columns(&[m.column(0).into(), m.column(1).into(), *t])
    }

    #[test]
    fn closed_form_matches_the_paper_derivation_on_its_simulated_camera() {
        let (a, planes) = paper_setup();
        let (al, be, ga, u0, v0): (f64, f64, f64, f64, f64) =
            (1250.0, 900.0, 1.09083, 255.0, 255.0);
        // Eq. (5), written out.
        let want = [
            1.0 / (al * al),
            -ga / (al * al * be),
            ga * ga / (al * al * be * be) + 1.0 / (be * be),
            (v0 * ga - u0 * be) / (al * al * be),
            -ga * (v0 * ga - u0 * be) / (al * al * be * be) - v0 / (be * be),
            (v0 * ga - u0 * be).powi(2) / (al * al * be * be) + v0 * v0 / (be * be) + 1.0,
        ];
        let b = b_of(&a).unwrap();
        for (x, y) in b.iter().zip(want) {
            assert!((x - y).abs() <= 1e-12 * y.abs().max(1e-9), "{x} vs {y}");
        }
        let bm = Matrix3::new(b[0], b[1], b[3], b[1], b[2], b[4], b[3], b[4], b[5]);
        let hs: Vec<Matrix3<f64>> = planes.iter().map(|(r, t)| h_of(&a, r, t)).collect();
        for h in &hs {
            // Eq. (7)-(8): v_ij^T b = h_i^T B h_j for every column pair.
            for i in 0..3 {
                for j in 0..3 {
                    let v = v_ij(h, i, j);
                    let lhs: f64 = v.iter().zip(&b).map(|(p, q)| p * q).sum();
                    let rhs = (h.column(i).transpose() * bm * h.column(j))[(0, 0)];
                    assert!(
                        (lhs - rhs).abs() <= 1e-9 * rhs.abs().max(1e-3),
                        "{lhs} {rhs}"
                    );
                }
            }
            // Eq. (3)-(4): the two constraints of a view hold exactly.
            let q = |i: usize, j: usize| (h.column(i).transpose() * bm * h.column(j))[(0, 0)];
            assert!(q(0, 1).abs() < 1e-9 * q(0, 0).abs());
            assert!((q(0, 0) - q(1, 1)).abs() < 1e-9 * q(0, 0).abs());
        }
        // Three views, skew free: b up to scale, then appendix B.
        let c = intrinsics_from_b(&solve_b(&hs, false).unwrap()).unwrap();
        for (got, want) in [
            (c.alpha, al),
            (c.beta, be),
            (c.gamma, ga),
            (c.u0, u0),
            (c.v0, v0),
        ] {
            assert!((got - want).abs() < 1e-6 * want.abs().max(1.0), "{c:?}");
        }
        // The same through homographies estimated from the projected
        // 10x14 corners of the 18 cm x 25 cm pattern, and the poses back.
        let grid: Vec<(f64, f64)> = (0..14)
            .flat_map(|j| (0..10).map(move |i| (i as f64 * 2.0, j as f64 * 25.0 / 13.0)))
            .collect();
        let mut est = Vec::new();
        for (r, t) in &planes {
            let img: Vec<(f64, f64)> = grid
                .iter()
                .map(|&(x, y)| {
                    let p = a * (r * Vector3::new(x, y, 0.0) + t);
                    (p.x / p.z, p.y / p.z)
                })
                .collect();
            est.push(homography(&grid, &img).unwrap());
        }
        let c = intrinsics_from_b(&solve_b(&est, false).unwrap()).unwrap();
        assert!(
            (c.alpha - al).abs() < 1e-4 && (c.u0 - u0).abs() < 1e-4,
            "{c:?}"
        );
        let a0 = Matrix3::new(c.alpha, c.gamma, c.u0, 0.0, c.beta, c.v0, 0.0, 0.0, 1.0);
        for (h, (r, t)) in est.iter().zip(&planes) {
            let p = pose_from_homography(&a0, h).unwrap();
            let rv = r.scaled_axis();
            assert!((Vector3::from(p.rot) - rv).norm() < 1e-7, "{p:?}");
            assert!((Vector3::from(p.t) - t).norm() < 1e-5, "{p:?}");
        }
    }

    #[test]
    fn boards_parallel_to_the_sensor_are_refused() {
        let cam = Camera {
            intrinsics: Intrinsics {
                fx: 300.0,
                fy: 300.0,
                cx: 160.0,
                cy: 120.0,
            },
            lens: LensModel::BrownConrady {
                k1: -0.1,
                k2: 0.0,
                k3: 0.0,
                p1: 0.0,
                p2: 0.0,
            },
        };
        let board = Board::new(7, 5, 20.0).unwrap();
        let views: Vec<Vec<(f64, f64)>> = [(0.0, -60.0), (0.4, -40.0), (-0.3, -80.0), (1.2, -70.0)]
            .iter()
            .map(|&(turn, x)| {
                let pose = Pose {
                    rot: [0.0, 0.0, turn],
                    t: [x, -40.0, 300.0],
                };
                board
                    .points()
                    .iter()
                    .map(|&(x, y)| project(&cam, &pose, x, y).unwrap())
                    .collect()
            })
            .collect();
        let e = start(&board, &views, (320, 240), ModelKind::Brown).unwrap_err();
        let msg = e.to_string();
        assert!(
            msg.contains("degenerate poses") && msg.contains("nearly parallel"),
            "{msg}"
        );
    }

    #[test]
    fn too_few_or_coincident_points_give_no_homography() {
        let p = [(0.0, 0.0), (1.0, 0.0), (0.0, 1.0)];
        assert!(homography(&p, &p).is_none());
        let same = [(1.0, 1.0); 5];
        assert!(homography(&same, &same).is_none());
    }
}
