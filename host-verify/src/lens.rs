//! Lens models in `f64`: pinhole intrinsics plus a distortion model, mapping
//! between undistorted and distorted normalised image coordinates.
//!
//! Normalised coordinates are `x = (u - cx) / fx`, `y = (v - cy) / fy` for a
//! pixel `(u, v)` (pixel centres at integer coordinates).
//!
//! Brown-Conrady (Brown 1966, "Decentering distortion of lenses",
//! Photogrammetric Engineering 32(3)), with `r^2 = x^2 + y^2`:
//!
//! ```text
//! radial = 1 + k1 r^2 + k2 r^4 + k3 r^6
//! xd = x * radial + 2 p1 x y + p2 (r^2 + 2 x^2)
//! yd = y * radial + p1 (r^2 + 2 y^2) + 2 p2 x y
//! ```
//!
//! The inverse (distorted -> undistorted) has no closed form; [`LensModel::undistort`]
//! solves it with Newton's method on the 2x2 system (analytic Jacobian),
//! starting from `(xd, yd)`, and stops when the forward model reproduces the
//! distorted point to `1e-12` (normalised units) — about `1e-9` px for any
//! focal length below 1000 px. It reports an error if that is not reached in
//! 50 iterations or the Jacobian becomes singular (the model is not
//! invertible there).

use thiserror::Error;

/// Pinhole intrinsics in pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Intrinsics {
    /// Focal length along x, px.
    pub fx: f64,
    /// Focal length along y, px.
    pub fy: f64,
    /// Principal point x, px.
    pub cx: f64,
    /// Principal point y, px.
    pub cy: f64,
}

impl Intrinsics {
    /// Pixel -> normalised coordinates.
    pub fn normalise(&self, u: f64, v: f64) -> (f64, f64) {
        ((u - self.cx) / self.fx, (v - self.cy) / self.fy)
    }

    /// Normalised coordinates -> pixel.
    pub fn to_pixel(&self, x: f64, y: f64) -> (f64, f64) {
        (x * self.fx + self.cx, y * self.fy + self.cy)
    }
}

/// A distortion model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LensModel {
    /// Brown-Conrady radial (k1..k3) and tangential (p1, p2) distortion.
    BrownConrady {
        /// Radial r^2 coefficient.
        k1: f64,
        /// Radial r^4 coefficient.
        k2: f64,
        /// Radial r^6 coefficient.
        k3: f64,
        /// Tangential coefficient p1.
        p1: f64,
        /// Tangential coefficient p2.
        p2: f64,
    },
}

/// Failure of a lens computation.
#[derive(Debug, Error, PartialEq)]
pub enum LensError {
    /// The iterative inversion did not converge.
    #[error("lens inversion did not converge at distorted point ({xd:.6}, {yd:.6}) after {iterations} iterations (residual {residual:e})")]
    NoConvergence {
        /// Distorted x.
        xd: f64,
        /// Distorted y.
        yd: f64,
        /// Iterations run.
        iterations: u32,
        /// Final residual.
        residual: f64,
    },
}

/// Convergence tolerance of the inversion, normalised units.
pub const UNDISTORT_TOL: f64 = 1e-12;
/// Iteration cap of the inversion.
pub const UNDISTORT_MAX_ITER: u32 = 50;

impl LensModel {
    /// Undistorted -> distorted normalised coordinates.
    pub fn distort(&self, x: f64, y: f64) -> (f64, f64) {
        match *self {
            LensModel::BrownConrady { k1, k2, k3, p1, p2 } => {
                let r2 = x * x + y * y;
                let radial = 1.0 + r2 * (k1 + r2 * (k2 + r2 * k3));
                (
                    x * radial + 2.0 * p1 * x * y + p2 * (r2 + 2.0 * x * x),
                    y * radial + p1 * (r2 + 2.0 * y * y) + 2.0 * p2 * x * y,
                )
            }
        }
    }

    /// Jacobian of [`distort`](Self::distort) at `(x, y)`:
    /// `[[dxd/dx, dxd/dy], [dyd/dx, dyd/dy]]`.
    pub fn jacobian(&self, x: f64, y: f64) -> [[f64; 2]; 2] {
        match *self {
            LensModel::BrownConrady { k1, k2, k3, p1, p2 } => {
                let r2 = x * x + y * y;
                let radial = 1.0 + r2 * (k1 + r2 * (k2 + r2 * k3));
                // d(radial)/d(r2)
                let dr = k1 + r2 * (2.0 * k2 + 3.0 * k3 * r2);
                let (drx, dry) = (2.0 * x * dr, 2.0 * y * dr);
                [
                    [
                        radial + x * drx + 2.0 * p1 * y + 6.0 * p2 * x,
                        x * dry + 2.0 * p1 * x + 2.0 * p2 * y,
                    ],
                    [
                        y * drx + 2.0 * p1 * x + 2.0 * p2 * y,
                        radial + y * dry + 6.0 * p1 * y + 2.0 * p2 * x,
                    ],
                ]
            }
        }
    }

    /// Distorted -> undistorted normalised coordinates by Newton iteration
    /// (see the module docs for the stopping rule).
    pub fn undistort(&self, xd: f64, yd: f64) -> Result<(f64, f64), LensError> {
        let (mut x, mut y) = (xd, yd);
        let mut residual = f64::INFINITY;
        for _ in 0..UNDISTORT_MAX_ITER {
            let (fx, fy) = self.distort(x, y);
            let (ex, ey) = (fx - xd, fy - yd);
            residual = ex.hypot(ey);
            if residual <= UNDISTORT_TOL {
                return Ok((x, y));
            }
            let j = self.jacobian(x, y);
            let det = j[0][0] * j[1][1] - j[0][1] * j[1][0];
            if det.abs() < 1e-12 || !det.is_finite() {
                break;
            }
            x -= (j[1][1] * ex - j[0][1] * ey) / det;
            y -= (-j[1][0] * ex + j[0][0] * ey) / det;
        }
        Err(LensError::NoConvergence {
            xd,
            yd,
            iterations: UNDISTORT_MAX_ITER,
            residual,
        })
    }
}

/// A camera: intrinsics plus lens.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Camera {
    /// Pinhole intrinsics of the (distorted) sensor image.
    pub intrinsics: Intrinsics,
    /// Distortion model.
    pub lens: LensModel,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lens() -> LensModel {
        LensModel::BrownConrady {
            k1: -0.28,
            k2: 0.09,
            k3: 0.0,
            p1: 0.0005,
            p2: -0.0003,
        }
    }

    #[test]
    fn brown_model_on_a_hand_computed_point() {
        // Brown (1966) formula evaluated by hand for x = 0.5, y = -0.25:
        // r2 = 0.3125; radial = 1 - 0.28*0.3125 + 0.09*0.09765625 = 0.921289...
        // xd = 0.5*radial + 2*0.0005*0.5*(-0.25) + (-0.0003)*(0.3125 + 0.5)
        let r2: f64 = 0.3125;
        let radial = 1.0 - 0.28 * r2 + 0.09 * r2 * r2;
        let xd = 0.5 * radial - 0.000125 - 0.0003 * 0.8125;
        let yd = -0.25 * radial + 0.0005 * (0.3125 + 0.125) + 2.0 * (-0.0003) * 0.5 * (-0.25);
        let (a, b) = lens().distort(0.5, -0.25);
        assert!((a - xd).abs() < 1e-15 && (b - yd).abs() < 1e-15);
    }

    #[test]
    fn undistort_inverts_distort() {
        let l = lens();
        for i in -10..=10 {
            for j in -8..=8 {
                let (x, y) = (i as f64 * 0.09, j as f64 * 0.09);
                let (xd, yd) = l.distort(x, y);
                let (ux, uy) = l.undistort(xd, yd).unwrap();
                assert!((ux - x).abs() < 1e-10 && (uy - y).abs() < 1e-10);
            }
        }
    }

    #[test]
    fn jacobian_matches_finite_differences() {
        let l = lens();
        let (x, y, h) = (0.3, -0.4, 1e-6);
        let j = l.jacobian(x, y);
        let (a0, b0) = l.distort(x - h, y);
        let (a1, b1) = l.distort(x + h, y);
        assert!((j[0][0] - (a1 - a0) / (2.0 * h)).abs() < 1e-8);
        assert!((j[1][0] - (b1 - b0) / (2.0 * h)).abs() < 1e-8);
        let (a0, b0) = l.distort(x, y - h);
        let (a1, b1) = l.distort(x, y + h);
        assert!((j[0][1] - (a1 - a0) / (2.0 * h)).abs() < 1e-8);
        assert!((j[1][1] - (b1 - b0) / (2.0 * h)).abs() < 1e-8);
    }
}
