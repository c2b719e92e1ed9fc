//! Lens calibration from photographs of a flat checkerboard: from a folder
//! of images to a `fixsight-lens 1` file that the `grid` command accepts.
//!
//! | module | role |
//! |---|---|
//! | [`corners`] | finds the board's inner corners in one image and refines them to sub-pixel positions |
//! | [`zhang`] | closed-form start: homographies, intrinsics, poses, first radial terms (Zhang 2000) |
//! | [`refine`] | Levenberg-Marquardt over intrinsics, distortion and every pose; standard deviations |
//! | [`synth`] | checkerboard views rendered through a known lens (tests and the accuracy study) |
//! | [`report`] | the calibration report: text, JSON and one picture per image |
//!
//! The `calibrate` command itself (folder in, lens file and report out) is
//! [`crate::cmd::calibrate`].
//!
//! # Conventions
//!
//! * Pixel centres sit at integer coordinates, `x` to the right, `y` down
//!   (as in [`crate::lens`]).
//! * The board has `cols x rows` inner corners (corners where four squares
//!   meet) `square` millimetres apart. Corner `(i, j)` lies at board
//!   coordinates `(i * square, j * square, 0)`; corner lists are row-major
//!   (`j * cols + i`). The labelling of a view is chosen so that the board's
//!   `x` axis crossed with its `y` axis points away from the camera (the
//!   board is seen from its printed side); the remaining 180-degree turn
//!   (and, on a square grid, 90-degree turns) is a rigid motion of the board
//!   and only changes that view's pose.
//! * A pose maps board coordinates to camera coordinates: `P_c = R P_b + t`
//!   with `R` stored as a rotation vector (axis times angle, radians) and
//!   `t` in millimetres; camera `z` points forward.
//! * Projection: `(x, y) = (X / Z, Y / Z)`, then the lens model of
//!   [`crate::lens::LensModel::distort`], then the intrinsics.

pub mod corners;
pub mod refine;
pub mod report;
pub mod synth;
pub mod zhang;

use crate::lens::{Camera, LensModel};
use thiserror::Error;

/// A grey image with `f64` samples, row-major, no padding.
///
/// ```
/// use fixsight_verify::calibrate::Grey;
/// let g = Grey::from_u8(2, 1, &[10, 30]);
/// assert_eq!(g.at(1, 0), 30.0);
/// assert_eq!(g.sample(0.5, 0.0), 20.0);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Grey {
    /// Width in pixels.
    pub width: usize,
    /// Height in pixels.
    pub height: usize,
    /// Samples, `y * width + x`.
    pub px: Vec<f64>,
}

impl Grey {
    /// Wraps 8-bit samples (`width * height` of them).
    pub fn from_u8(width: usize, height: usize, data: &[u8]) -> Self {
        Self {
            width,
            height,
            px: data.iter().map(|&v| v as f64).collect(),
        }
    }

    /// Sample at integer coordinates, clamped into the image.
    pub fn at(&self, x: isize, y: isize) -> f64 {
        let xc = x.clamp(0, self.width as isize - 1) as usize;
        let yc = y.clamp(0, self.height as isize - 1) as usize;
        self.px[yc * self.width + xc]
    }

    /// Bilinear sample at a real position, border clamped.
    pub fn sample(&self, x: f64, y: f64) -> f64 {
        let (x0, y0) = (x.floor(), y.floor());
        let (fx, fy) = (x - x0, y - y0);
        let (xi, yi) = (x0 as isize, y0 as isize);
        let top = self.at(xi, yi) * (1.0 - fx) + self.at(xi + 1, yi) * fx;
        let bottom = self.at(xi, yi + 1) * (1.0 - fx) + self.at(xi + 1, yi + 1) * fx;
        top * (1.0 - fy) + bottom * fy
    }

    /// Rounds and clamps to 8-bit samples.
    pub fn to_u8(&self) -> Vec<u8> {
        self.px
            .iter()
            .map(|v| v.round().clamp(0.0, 255.0) as u8)
            .collect()
    }
}

/// A planar checkerboard: inner corners and square size.
///
/// ```
/// use fixsight_verify::calibrate::Board;
/// let b = Board::new(9, 6, 25.0).unwrap();
/// assert_eq!(b.points().len(), 54);
/// assert_eq!(b.points()[10], (25.0, 25.0));
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Board {
    /// Inner corners along the board's `x` axis.
    pub cols: usize,
    /// Inner corners along the board's `y` axis.
    pub rows: usize,
    /// Distance between neighbouring corners, mm.
    pub square: f64,
}

impl Board {
    /// A board of `cols x rows` inner corners (each at least 3, at most
    /// 100) and a square size in `(0, 10000]` mm.
    pub fn new(cols: usize, rows: usize, square: f64) -> Result<Self, CalibError> {
        if !(3..=100).contains(&cols) || !(3..=100).contains(&rows) {
            return Err(CalibError::BadBoard(format!(
                "{cols}x{rows} inner corners: each count must be 3..=100"
            )));
        }
        if !(square.is_finite() && square > 0.0 && square <= 1e4) {
            return Err(CalibError::BadBoard(format!(
                "square size {square} mm: must be in (0, 10000]"
            )));
        }
        Ok(Self { cols, rows, square })
    }

    /// Number of inner corners.
    pub fn count(&self) -> usize {
        self.cols * self.rows
    }

    /// Board coordinates (mm) of every inner corner, row-major.
    pub fn points(&self) -> Vec<(f64, f64)> {
        (0..self.rows)
            .flat_map(|j| (0..self.cols).map(move |i| (i as f64, j as f64)))
            .map(|(i, j)| (i * self.square, j * self.square))
            .collect()
    }
}

/// Which distortion model to fit.
///
/// ```
/// use fixsight_verify::calibrate::ModelKind;
/// assert_eq!(ModelKind::parse("fisheye").unwrap(), ModelKind::Fisheye);
/// assert!(ModelKind::parse("zoom").is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ModelKind {
    /// Brown-Conrady: `k1, k2, k3` radial, `p1, p2` tangential.
    Brown,
    /// Equidistant fisheye: `k1, k2`.
    Fisheye,
}

impl ModelKind {
    /// Parses `brown` or `fisheye`.
    pub fn parse(s: &str) -> Result<Self, String> {
        match s {
            "brown" => Ok(Self::Brown),
            "fisheye" => Ok(Self::Fisheye),
            _ => Err(format!("model `{s}` is not `brown` or `fisheye`")),
        }
    }

    /// The word used in lens files.
    pub fn word(self) -> &'static str {
        match self {
            Self::Brown => "brown",
            Self::Fisheye => "fisheye",
        }
    }

    /// Number of distortion coefficients.
    pub fn coefficients(self) -> usize {
        match self {
            Self::Brown => 5,
            Self::Fisheye => 2,
        }
    }

    /// Lens with the given coefficients (`k1 k2 k3 p1 p2` or `k1 k2`).
    pub fn lens(self, d: &[f64]) -> LensModel {
        match self {
            Self::Brown => LensModel::BrownConrady {
                k1: d[0],
                k2: d[1],
                k3: d[2],
                p1: d[3],
                p2: d[4],
            },
            Self::Fisheye => LensModel::Equidistant { k1: d[0], k2: d[1] },
        }
    }

    /// Names of the coefficients, in the order of [`ModelKind::lens`].
    pub fn names(self) -> &'static [&'static str] {
        match self {
            Self::Brown => &["k1", "k2", "k3", "p1", "p2"],
            Self::Fisheye => &["k1", "k2"],
        }
    }
}

/// Coefficients of a lens in the order of [`ModelKind::names`].
///
/// ```
/// use fixsight_verify::calibrate::{coefficients, ModelKind};
/// assert_eq!(coefficients(&ModelKind::Fisheye.lens(&[0.1, -0.2])), vec![0.1, -0.2]);
/// ```
pub fn coefficients(lens: &LensModel) -> Vec<f64> {
    match *lens {
        LensModel::BrownConrady { k1, k2, k3, p1, p2 } => vec![k1, k2, k3, p1, p2],
        LensModel::Equidistant { k1, k2 } => vec![k1, k2],
    }
}

/// A board pose: rotation vector (radians) and translation (mm).
///
/// ```
/// use fixsight_verify::calibrate::Pose;
/// let p = Pose { rot: [0.0, 0.0, std::f64::consts::FRAC_PI_2], t: [0.0, 0.0, 100.0] };
/// let (x, y, z) = p.apply(10.0, 0.0);
/// assert!(x.abs() < 1e-12 && (y - 10.0).abs() < 1e-12 && z == 100.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pose {
    /// Rotation vector: axis times angle, radians.
    pub rot: [f64; 3],
    /// Translation, mm.
    pub t: [f64; 3],
}

impl Pose {
    /// The rotation matrix.
    pub fn matrix(&self) -> nalgebra::Matrix3<f64> {
        nalgebra::Rotation3::from_scaled_axis(nalgebra::Vector3::from(self.rot)).into_inner()
    }

    /// Board point `(x, y, 0)` in camera coordinates.
    pub fn apply(&self, x: f64, y: f64) -> (f64, f64, f64) {
        let p = self.matrix() * nalgebra::Vector3::new(x, y, 0.0) + nalgebra::Vector3::from(self.t);
        (p.x, p.y, p.z)
    }

    /// Angle between the board normal and the optical axis, degrees.
    pub fn tilt_deg(&self) -> f64 {
        let r = self.matrix();
        r[(2, 2)].abs().clamp(0.0, 1.0).acos().to_degrees()
    }
}

/// Projects board point `(x, y)` seen in pose `pose` through `camera`;
/// `None` behind the camera.
///
/// ```
/// use fixsight_verify::calibrate::{project, Pose};
/// use fixsight_verify::lens::{Camera, Intrinsics, LensModel};
/// let cam = Camera {
///     intrinsics: Intrinsics { fx: 100.0, fy: 100.0, cx: 50.0, cy: 40.0 },
///     lens: LensModel::BrownConrady { k1: 0.0, k2: 0.0, k3: 0.0, p1: 0.0, p2: 0.0 },
/// };
/// let pose = Pose { rot: [0.0; 3], t: [0.0, 0.0, 200.0] };
/// let (u, v) = project(&cam, &pose, 20.0, -10.0).unwrap();
/// assert!((u - 60.0).abs() < 1e-12 && (v - 35.0).abs() < 1e-12);
/// ```
pub fn project(camera: &Camera, pose: &Pose, x: f64, y: f64) -> Option<(f64, f64)> {
    let (xc, yc, zc) = pose.apply(x, y);
    if zc <= 0.0 {
        return None;
    }
    let (xd, yd) = camera.lens.distort(xc / zc, yc / zc);
    Some(camera.intrinsics.to_pixel(xd, yd))
}

/// Everything that stops a calibration. Each message names the file or the
/// views concerned and never comes with a lens.
#[derive(Debug, Error)]
pub enum CalibError {
    /// The board description is unusable.
    #[error("board: {0}")]
    BadBoard(String),
    /// The image folder cannot be listed or has no image in it.
    #[error("{0}")]
    NoImages(String),
    /// An image file cannot be read or decoded.
    #[error("cannot read image {file}: {reason}")]
    Unreadable {
        /// The file.
        file: String,
        /// Why.
        reason: String,
    },
    /// Images of different sizes in one folder.
    #[error("image {file} is {size:?} pixels but {first} is {first_size:?}: one calibration needs one sensor size")]
    MixedSizes {
        /// The file that differs.
        file: String,
        /// Its size.
        size: (usize, usize),
        /// The first image.
        first: String,
        /// Its size.
        first_size: (usize, usize),
    },
    /// Not enough images with the whole board in them.
    #[error("{found} image(s) with the whole board, at least {needed} needed{}", skipped_list(.skipped))]
    TooFewViews {
        /// Views usable.
        found: usize,
        /// Views needed.
        needed: usize,
        /// Files skipped and why.
        skipped: Vec<(String, String)>,
    },
    /// The views do not determine the camera.
    #[error("degenerate poses: {0}")]
    Degenerate(String),
    /// The least-squares refinement failed.
    #[error("refinement failed: {0}")]
    NoConvergence(String),
    /// The result cannot be written as a lens file.
    #[error("the calibrated lens is not usable: {0}")]
    BadLens(String),
    /// An output file exists and replacing was not asked for.
    #[error("{0} exists; pass --overwrite to replace it")]
    Exists(String),
    /// Writing an output failed.
    #[error("cannot write {file}: {reason}")]
    Write {
        /// The file.
        file: String,
        /// Why.
        reason: String,
    },
}

/// Closed-form start ([`zhang::start`]) then refinement ([`refine::refine`])
/// of views of `board` in a `size` image.
///
/// ```
/// use fixsight_verify::calibrate::{calibrate, synth, ModelKind};
/// let spec = synth::SynthSpec::wide_angle(320, 240);
/// let views: Vec<_> = synth::poses(&spec, 4, 5)
///     .unwrap()
///     .iter()
///     .map(|p| synth::true_corners(&spec, p).unwrap())
///     .collect();
/// let fit = calibrate(&spec.board, &views, (320, 240), ModelKind::Brown).unwrap();
/// assert!((fit.camera.intrinsics.fx - spec.camera.intrinsics.fx).abs() < 1e-3);
/// ```
pub fn calibrate(
    board: &Board,
    views: &[Vec<(f64, f64)>],
    size: (usize, usize),
    model: ModelKind,
) -> Result<refine::Fit, CalibError> {
    let s = zhang::start(board, views, size, model)?;
    refine::refine(board, views, model, &s.camera, &s.poses)
}

fn skipped_list(skipped: &[(String, String)]) -> String {
    skipped
        .iter()
        .map(|(f, why)| format!("\n  skipped {f}: {why}"))
        .collect()
}
