//! Nonlinear refinement: Levenberg-Marquardt (the `levenberg-marquardt`
//! crate, MINPACK's trust-region variant with column scaling) over every
//! parameter at once, minimising the sum of squared reprojection errors in
//! pixels (Zhang 2000, section 3.2 and 3.3, eq. 14).
//!
//! # Parameters
//!
//! `[fx, fy, cx, cy, k1, k2, k3, p1, p2]` (Brown) or `[fx, fy, cx, cy, k1,
//! k2]` (fisheye), then per view the rotation vector and translation
//! `[w1, w2, w3, t1, t2, t3]`. Every corner gives two residuals,
//! `projected - observed` in `u` and `v`. A point that the current
//! parameters put at or behind the camera (depth below `1e-6` mm, which
//! only a wild trial step can produce) is projected at depth `1e-6` mm
//! instead, so the residual stays finite and the step is rejected.
//!
//! # Jacobian
//!
//! Central differences, `h = 1e-6 max(|p|, 0.1)` per parameter; a pose
//! parameter only touches its own view's rows, so perturbing it re-projects
//! one view. Each derivative is exact to about `h^2` times the third
//! derivative plus rounding `1e-16 |residual| / h`, far below what the
//! standard deviations need. The test `jacobian_matches_the_crate_check`
//! compares it with the crate's own numerical differentiation.
//!
//! # Standard deviations
//!
//! With `J` the Jacobian at the solution, `m` residuals and `n` parameters,
//! `s^2 = |r|^2 / (m - n)` and `Cov = s^2 (J^T J)^-1` (the usual
//! first-order estimate, e.g. Hartley & Zisserman 2004, "Multiple View
//! Geometry", 2nd ed., section 5.2, from memory); a parameter's standard
//! deviation is the square root of its diagonal entry (poses included in
//! the inverse, so it is the marginal one). It describes the spread caused
//! by corner noise only, not model error.

use super::{Board, CalibError, ModelKind, Pose};
use crate::lens::{Camera, Intrinsics};
use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::{storage::Owned, DMatrix, DVector, Dyn, Rotation3, Vector3};

/// Largest relative standard deviation of `fx` or `fy` accepted.
pub const MAX_FOCAL_REL_STD: f64 = 0.02;
/// Largest overall reprojection RMS accepted, px.
pub const MAX_RMS_PX: f64 = 3.0;

/// The least-squares problem handed to the solver.
#[derive(Clone)]
struct Problem<'a> {
    board: Vec<(f64, f64)>,
    views: &'a [Vec<(f64, f64)>],
    model: ModelKind,
    p: DVector<f64>,
}

impl Problem<'_> {
    fn intrinsic_count(&self) -> usize {
        4 + self.model.coefficients()
    }

    fn camera_of(&self, p: &DVector<f64>) -> Camera {
        let d: Vec<f64> = (4..self.intrinsic_count()).map(|k| p[k]).collect();
        Camera {
            intrinsics: Intrinsics {
                fx: p[0],
                fy: p[1],
                cx: p[2],
                cy: p[3],
            },
            lens: self.model.lens(&d),
        }
    }

    fn pose_of(&self, p: &DVector<f64>, v: usize) -> Pose {
        let o = self.intrinsic_count() + 6 * v;
        Pose {
            rot: [p[o], p[o + 1], p[o + 2]],
            t: [p[o + 3], p[o + 4], p[o + 5]],
        }
    }

    /// Residuals of view `v` into `out` (2 per corner).
    fn view_residuals(&self, cam: &Camera, pose: &Pose, v: usize, out: &mut [f64]) {
        let r = Rotation3::from_scaled_axis(Vector3::from(pose.rot));
        let t = Vector3::from(pose.t);
        for (k, (&(bx, by), &(uo, vo))) in self.board.iter().zip(&self.views[v]).enumerate() {
            let pc = r * Vector3::new(bx, by, 0.0) + t;
            let z = pc.z.max(1e-6);
            let (xd, yd) = cam.lens.distort(pc.x / z, pc.y / z);
            let (u, vv) = cam.intrinsics.to_pixel(xd, yd);
            out[2 * k] = u - uo;
            out[2 * k + 1] = vv - vo;
        }
    }

    fn all_residuals(&self, p: &DVector<f64>) -> DVector<f64> {
        let n = self.board.len();
        let mut r = DVector::zeros(2 * n * self.views.len());
        let cam = self.camera_of(p);
        for v in 0..self.views.len() {
            let pose = self.pose_of(p, v);
            self.view_residuals(
                &cam,
                &pose,
                v,
                &mut r.as_mut_slice()[2 * n * v..2 * n * (v + 1)],
            );
        }
        r
    }

    fn numeric_jacobian(&self) -> DMatrix<f64> {
        let n = self.board.len();
        let m = 2 * n * self.views.len();
        let np = self.p.len();
        let mut j = DMatrix::zeros(m, np);
        let ni = self.intrinsic_count();
        let step = |v: f64| 1e-6 * v.abs().max(0.1);
        for c in 0..ni {
            let h = step(self.p[c]);
            let mut a = self.p.clone();
            a[c] += h;
            let mut b = self.p.clone();
            b[c] -= h;
            let d = (self.all_residuals(&a) - self.all_residuals(&b)) / (2.0 * h);
            j.column_mut(c).copy_from(&d);
        }
        let cam = self.camera_of(&self.p);
        let mut plus = vec![0.0; 2 * n];
        let mut minus = vec![0.0; 2 * n];
        for v in 0..self.views.len() {
            for q in 0..6 {
                let c = ni + 6 * v + q;
                let h = step(self.p[c]);
                let mut a = self.p.clone();
                a[c] += h;
                let mut b = self.p.clone();
                b[c] -= h;
                self.view_residuals(&cam, &self.pose_of(&a, v), v, &mut plus);
                self.view_residuals(&cam, &self.pose_of(&b, v), v, &mut minus);
                for r in 0..2 * n {
                    j[(2 * n * v + r, c)] = (plus[r] - minus[r]) / (2.0 * h);
                }
            }
        }
        j
    }
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        self.p.copy_from(x);
    }

    fn params(&self) -> DVector<f64> {
        self.p.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        let r = self.all_residuals(&self.p);
        r.iter().all(|v| v.is_finite()).then_some(r)
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        let j = self.numeric_jacobian();
        j.iter().all(|v| v.is_finite()).then_some(j)
    }
}

/// A refined calibration.
#[derive(Debug, Clone)]
pub struct Fit {
    /// Camera: intrinsics and lens.
    pub camera: Camera,
    /// Pose of every view.
    pub poses: Vec<Pose>,
    /// Reprojection error `projected - observed` of every corner, per view.
    pub errors: Vec<Vec<(f64, f64)>>,
    /// Overall reprojection RMS (Euclidean, px).
    pub rms_px: f64,
    /// Standard deviations of `fx, fy, cx, cy`, px.
    pub std_intrinsics: [f64; 4],
    /// Standard deviations of the distortion coefficients (order of
    /// [`ModelKind::names`]).
    pub std_coefficients: Vec<f64>,
    /// Residual evaluations the solver used.
    pub evaluations: usize,
}

/// Refines `camera` and `poses` (module docs) against the observed corners
/// of `views`; stops with an error when the solver fails, the focal
/// lengths stay undetermined or the fit is poor.
///
/// ```
/// use fixsight_verify::calibrate::{project, refine::refine, Board, ModelKind, Pose};
/// use fixsight_verify::lens::{Camera, Intrinsics, LensModel};
/// let truth = Camera {
///     intrinsics: Intrinsics { fx: 300.0, fy: 302.0, cx: 161.0, cy: 119.0 },
///     lens: LensModel::BrownConrady { k1: -0.2, k2: 0.04, k3: 0.0, p1: 0.001, p2: 0.0 },
/// };
/// let board = Board::new(6, 5, 20.0).unwrap();
/// let poses: Vec<Pose> = [[0.4, 0.1, 0.0], [-0.1, 0.45, 0.2], [0.3, -0.3, -0.1], [-0.4, -0.2, 0.1]]
///     .iter()
///     .map(|&rot| Pose { rot, t: [-50.0, -40.0, 250.0] })
///     .collect();
/// let views: Vec<Vec<(f64, f64)>> = poses
///     .iter()
///     .map(|p| board.points().iter().map(|&(x, y)| project(&truth, p, x, y).unwrap()).collect())
///     .collect();
/// let mut start = truth;
/// start.intrinsics.fx = 280.0;
/// start.lens = ModelKind::Brown.lens(&[0.0; 5]);
/// let fit = refine(&board, &views, ModelKind::Brown, &start, &poses).unwrap();
/// assert!((fit.camera.intrinsics.fx - 300.0).abs() < 1e-4 && fit.rms_px < 1e-6);
/// ```
pub fn refine(
    board: &Board,
    views: &[Vec<(f64, f64)>],
    model: ModelKind,
    camera: &Camera,
    poses: &[Pose],
) -> Result<Fit, CalibError> {
    let k = camera.intrinsics;
    let mut p = vec![k.fx, k.fy, k.cx, k.cy];
    p.extend(super::coefficients(&camera.lens));
    if p.len() != 4 + model.coefficients() {
        return Err(CalibError::NoConvergence(
            "starting lens of another model".into(),
        ));
    }
    for pose in poses {
        p.extend(pose.rot);
        p.extend(pose.t);
    }
    let problem = Problem {
        board: board.points(),
        views,
        model,
        p: DVector::from_vec(p),
    };
    let (done, report) = LevenbergMarquardt::new()
        .with_patience(200)
        .minimize(problem);
    if !report.termination.was_successful() {
        return Err(CalibError::NoConvergence(format!(
            "{:?} after {} evaluations",
            report.termination, report.number_of_evaluations
        )));
    }
    let ni = done.intrinsic_count();
    let cam = done.camera_of(&done.p);
    let poses: Vec<Pose> = (0..views.len()).map(|v| done.pose_of(&done.p, v)).collect();
    let r = done.all_residuals(&done.p);
    let n = board.count();
    let errors: Vec<Vec<(f64, f64)>> = (0..views.len())
        .map(|v| {
            (0..n)
                .map(|k| (r[2 * n * v + 2 * k], r[2 * n * v + 2 * k + 1]))
                .collect()
        })
        .collect();
    let m = r.len();
    let np = done.p.len();
    let rms_px = (r.norm_squared() / (m / 2) as f64).sqrt();
    let j = done.numeric_jacobian();
    let jtj = j.transpose() * &j;
    let s2 = if m > np {
        r.norm_squared() / (m - np) as f64
    } else {
        f64::NAN
    };
    // Columns scaled to unit length before the inversion (the parameters
    // span many orders of magnitude), scaled back after.
    let scale: Vec<f64> = (0..np)
        .map(|c| {
            let n = j.column(c).norm();
            if n > 0.0 {
                1.0 / n
            } else {
                0.0
            }
        })
        .collect();
    let jtj = DMatrix::from_fn(np, np, |a, b| jtj[(a, b)] * scale[a] * scale[b]);
    let cov = jtj.cholesky().map(|c| c.inverse()).ok_or_else(|| {
        CalibError::Degenerate(
            "the parameters are not all determined by these views (singular normal matrix)".into(),
        )
    })?;
    let sd = |c: usize| (s2 * cov[(c, c)]).max(0.0).sqrt() * scale[c];
    let std_intrinsics = [sd(0), sd(1), sd(2), sd(3)];
    let std_coefficients = (4..ni).map(sd).collect();
    let k = cam.intrinsics;
    if !(k.fx > 0.0 && k.fy > 0.0) {
        return Err(CalibError::NoConvergence(format!(
            "focal lengths came out as {:.3}, {:.3} px",
            k.fx, k.fy
        )));
    }
    let rel = (std_intrinsics[0] / k.fx).max(std_intrinsics[1] / k.fy);
    if rel.is_nan() || rel > MAX_FOCAL_REL_STD {
        return Err(CalibError::Degenerate(format!(
            "the views fix the focal length only to +-{:.1} % (at most {:.0} % accepted): tilt \
             the board by 20-45 degrees in several directions and fill more of the image",
            100.0 * rel,
            100.0 * MAX_FOCAL_REL_STD
        )));
    }
    if rms_px.is_nan() || rms_px > MAX_RMS_PX {
        return Err(CalibError::NoConvergence(format!(
            "reprojection RMS {rms_px:.2} px (at most {MAX_RMS_PX} px accepted): the lens model \
             does not fit these corners (try the other --model) or corners were mislabelled"
        )));
    }
    Ok(Fit {
        camera: cam,
        poses,
        errors,
        rms_px,
        std_intrinsics,
        std_coefficients,
        evaluations: report.number_of_evaluations,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::calibrate::project;
    use levenberg_marquardt::differentiate_numerically;

    #[test]
    fn jacobian_matches_the_crate_check() {
        let board = Board::new(4, 3, 20.0).unwrap();
        let truth = Camera {
            intrinsics: Intrinsics {
                fx: 300.0,
                fy: 302.0,
                cx: 161.0,
                cy: 119.0,
            },
            lens: ModelKind::Brown.lens(&[-0.2, 0.04, 0.01, 0.001, -0.002]),
        };
        let pose = Pose {
            rot: [0.3, -0.2, 0.1],
            t: [-30.0, -20.0, 200.0],
        };
        let views = vec![board
            .points()
            .iter()
            .map(|&(x, y)| {
                let (u, v) = project(&truth, &pose, x, y).unwrap();
                (u + 0.3, v - 0.2)
            })
            .collect::<Vec<_>>()];
        for model in [ModelKind::Brown, ModelKind::Fisheye] {
            let mut p = vec![300.0, 302.0, 161.0, 119.0];
            p.extend(match model {
                ModelKind::Brown => vec![-0.2, 0.04, 0.01, 0.001, -0.002],
                ModelKind::Fisheye => vec![-0.05, 0.01],
            });
            p.extend(pose.rot);
            p.extend(pose.t);
            let mut problem = Problem {
                board: board.points(),
                views: &views,
                model,
                p: DVector::from_vec(p),
            };
            let ours = problem.jacobian().unwrap();
            let theirs = differentiate_numerically(&mut problem).unwrap();
            for (a, b) in ours.iter().zip(theirs.iter()) {
                assert!((a - b).abs() <= 1e-4 * (1.0 + b.abs()), "{a} vs {b}");
            }
        }
    }
}
