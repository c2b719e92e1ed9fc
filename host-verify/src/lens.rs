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
//!
//! # Lens file (`fixsight-lens 1`)
//!
//! Text, one `key = value` per line; `#` starts a comment; blank lines are
//! ignored; keys are unique. See `host-verify/data/demo-lens.txt`.
//!
//! | key | required | range |
//! |---|---|---|
//! | `format` | yes | exactly `fixsight-lens 1` |
//! | `model` | yes | `brown` or `fisheye` |
//! | `sensor_width`, `sensor_height` | yes | integer `1..=32767` |
//! | `fx`, `fy` | yes | `0 < f <= 100000` px |
//! | `cx`, `cy` | yes | within one sensor size of the sensor |
//! | `k1`, `k2`, `k3`, `p1`, `p2` | brown: all five | `|k| <= 10`, `|p| <= 1` |
//! | `k1`, `k2` | fisheye: both | `|k| <= 10` |
//! | `out_width`, `out_height` | no (sensor size) | integer `1..=32767` |
//! | `view` | no (`fit`) | `fit` or `manual` |
//! | `view_fx`, `view_fy`, `view_cx`, `view_cy` | when `view = manual` | as `fx`.. relative to the output |
//!
//! Every problem is reported with its line number (or "missing") and key.

use crate::files::shown;
use std::collections::BTreeMap;
use thiserror::Error;

/// A number for a message: up to 6 significant digits, scientific notation
/// outside `1e-4..1e6` (never the hundreds of digits of a tiny `f64`).
///
/// ```
/// use fixsight_verify::lens::readable;
/// assert_eq!(readable(0.0), "0");
/// assert_eq!(readable(100000.0), "100000");
/// assert_eq!(readable(832.5), "832.5");
/// assert_eq!(readable(f64::MIN_POSITIVE), "2.22507e-308");
/// ```
pub fn readable(x: f64) -> String {
    if x == 0.0 || (1e-4..1e6).contains(&x.abs()) {
        let t = format!(
            "{:.*}",
            (5 - x.abs().log10().floor().max(-5.0) as i32).max(0) as usize,
            x
        );
        if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        }
    } else {
        let t = format!("{x:.5e}");
        let (m, e) = t.split_once('e').unwrap_or((&t, "0"));
        let m = if m.contains('.') {
            m.trim_end_matches('0').trim_end_matches('.')
        } else {
            m
        };
        format!("{m}e{e}")
    }
}

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
    /// Equidistant fisheye, `theta_d = theta (1 + k1 theta^2 + k2 theta^4)`.
    Equidistant {
        /// theta^3 coefficient.
        k1: f64,
        /// theta^5 coefficient.
        k2: f64,
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
    /// A fisheye inversion reached 90 degrees off axis or a fold of the
    /// model (`d theta_d / d theta <= 0`).
    #[error("fisheye inversion of distorted radius {rd:.6} left the invertible range (theta {theta:.6} rad)")]
    OutOfField {
        /// Distorted radius.
        rd: f64,
        /// Angle reached.
        theta: f64,
    },
    /// No corrected-view focal length satisfies the fit-to-view rule.
    #[error("fit-to-view failed: {reason}")]
    NoFit {
        /// Why.
        reason: String,
    },
}

/// Largest off-axis angle the fisheye inversion accepts, radians (89.9 deg).
pub const MAX_THETA: f64 = 89.9 * std::f64::consts::PI / 180.0;

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
            LensModel::Equidistant { .. } => {
                let r = x.hypot(y);
                if r == 0.0 {
                    return (x, y);
                }
                let s = self.theta_d(r.atan()) / r;
                (x * s, y * s)
            }
        }
    }

    /// Fisheye radial law `theta_d(theta)` (identity for Brown-Conrady).
    pub fn theta_d(&self, theta: f64) -> f64 {
        match *self {
            LensModel::Equidistant { k1, k2 } => {
                let t2 = theta * theta;
                theta * (1.0 + t2 * (k1 + t2 * k2))
            }
            LensModel::BrownConrady { .. } => theta,
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
            LensModel::Equidistant { .. } => {
                // Central differences (step 1e-7); only used by tests and
                // diagnostics, the fisheye inversion is one-dimensional.
                let h = 1e-7;
                let (a0, b0) = self.distort(x - h, y);
                let (a1, b1) = self.distort(x + h, y);
                let (c0, d0) = self.distort(x, y - h);
                let (c1, d1) = self.distort(x, y + h);
                [
                    [(a1 - a0) / (2.0 * h), (c1 - c0) / (2.0 * h)],
                    [(b1 - b0) / (2.0 * h), (d1 - d0) / (2.0 * h)],
                ]
            }
        }
    }

    /// Distorted -> undistorted normalised coordinates by Newton iteration
    /// (see the module docs for the stopping rule).
    pub fn undistort(&self, xd: f64, yd: f64) -> Result<(f64, f64), LensError> {
        if let LensModel::Equidistant { k1, k2 } = *self {
            return undistort_fisheye(k1, k2, xd, yd);
        }
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

/// Fisheye inversion (see the module docs).
fn undistort_fisheye(k1: f64, k2: f64, xd: f64, yd: f64) -> Result<(f64, f64), LensError> {
    let rd = xd.hypot(yd);
    if rd == 0.0 {
        return Ok((xd, yd));
    }
    let lens = LensModel::Equidistant { k1, k2 };
    let mut theta = rd;
    let mut residual = f64::INFINITY;
    for _ in 0..UNDISTORT_MAX_ITER {
        residual = lens.theta_d(theta) - rd;
        if residual.abs() <= UNDISTORT_TOL {
            if !(0.0..MAX_THETA).contains(&theta) {
                return Err(LensError::OutOfField { rd, theta });
            }
            let r = theta.tan();
            return Ok((xd * r / rd, yd * r / rd));
        }
        let t2 = theta * theta;
        let slope = 1.0 + t2 * (3.0 * k1 + 5.0 * k2 * t2);
        if slope <= 0.0 || !slope.is_finite() {
            return Err(LensError::OutOfField { rd, theta });
        }
        theta -= residual / slope;
    }
    Err(LensError::NoConvergence {
        xd,
        yd,
        iterations: UNDISTORT_MAX_ITER,
        residual: residual.abs(),
    })
}

/// A camera: intrinsics plus lens.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Camera {
    /// Pinhole intrinsics of the (distorted) sensor image.
    pub intrinsics: Intrinsics,
    /// Distortion model.
    pub lens: LensModel,
}

impl Camera {
    /// Source (sensor) pixel sampled by corrected-view pixel `(u, v)` of a
    /// view with intrinsics `view` (see the module docs).
    pub fn source_of(&self, view: &Intrinsics, u: f64, v: f64) -> (f64, f64) {
        let (x, y) = view.normalise(u, v);
        let (xd, yd) = self.lens.distort(x, y);
        self.intrinsics.to_pixel(xd, yd)
    }

    /// `true` when every output pixel on the border of a `w x h` view
    /// samples inside a `sw x sh` sensor.
    fn border_inside(&self, view: &Intrinsics, w: usize, h: usize, sw: usize, sh: usize) -> bool {
        let inside = |u: f64, v: f64| {
            let (x, y) = self.source_of(view, u, v);
            x >= 0.0 && y >= 0.0 && x <= sw as f64 - 1.0 && y <= sh as f64 - 1.0
        };
        let (wl, hl) = (w as f64 - 1.0, h as f64 - 1.0);
        (0..w).all(|u| inside(u as f64, 0.0) && inside(u as f64, hl))
            && (0..h).all(|v| inside(0.0, v as f64) && inside(wl, v as f64))
    }

    /// The fit-to-view intrinsics of a `w x h` corrected view for a
    /// `sw x sh` sensor (rule in the module docs).
    pub fn fit_view(
        &self,
        w: usize,
        h: usize,
        sw: usize,
        sh: usize,
    ) -> Result<Intrinsics, LensError> {
        let view = |f: f64| Intrinsics {
            fx: f,
            fy: f,
            cx: (w as f64 - 1.0) / 2.0,
            cy: (h as f64 - 1.0) / 2.0,
        };
        let f0 = self.intrinsics.fx;
        let (mut lo, mut hi) = (1e-3 * f0, 1e3 * f0);
        if !self.border_inside(&view(hi), w, h, sw, sh) {
            return Err(LensError::NoFit {
                reason: format!(
                    "even focal length {hi:.3} px leaves the view border outside the {sw}x{sh} sensor"
                ),
            });
        }
        if self.border_inside(&view(lo), w, h, sw, sh) {
            return Err(LensError::NoFit {
                reason: format!(
                    "focal length {lo:.6} px still fits: the model does not bound the view"
                ),
            });
        }
        while (hi - lo) > 1e-10 * hi {
            let mid = 0.5 * (lo + hi);
            if self.border_inside(&view(mid), w, h, sw, sh) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        let v = view(hi);
        for y in 0..h {
            for x in 0..w {
                let (sx, sy) = self.source_of(&v, x as f64, y as f64);
                let ok = sx.is_finite()
                    && sy.is_finite()
                    && sx >= 0.0
                    && sy >= 0.0
                    && sx <= sw as f64 - 1.0
                    && sy <= sh as f64 - 1.0;
                if !ok {
                    return Err(LensError::NoFit {
                        reason: format!(
                            "output pixel ({x}, {y}) samples ({sx:.3}, {sy:.3}), outside the sensor, \
                             although the border fits: the model folds over inside the view"
                        ),
                    });
                }
            }
        }
        Ok(v)
    }
}

/// A lens description read from a `fixsight-lens 1` text file (format in
/// `crate::warp`'s module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct LensSpec {
    /// Sensor camera.
    pub camera: Camera,
    /// Sensor width and height.
    pub sensor: (usize, usize),
    /// Corrected view width and height.
    pub output: (usize, usize),
    /// Corrected view intrinsics (given, or from the fit-to-view rule).
    pub view: Intrinsics,
    /// `true` when the view came from the fit-to-view rule.
    pub fitted: bool,
}

/// A problem in a lens file: line (0 = whole file / missing) and key.
#[derive(Debug, Error, PartialEq)]
#[error("{}: {}: {problem}", if *.line == 0 { "lens file".to_string() } else { format!("lens file line {}", .line) }, crate::files::shown(.key))]
pub struct LensFileError {
    /// 1-based line, or 0 for a missing key or a whole-file problem.
    pub line: usize,
    /// Key concerned.
    pub key: String,
    /// What is wrong.
    pub problem: String,
}

impl LensSpec {
    /// Parses and validates a lens file.
    pub fn parse(text: &str) -> Result<Self, LensFileError> {
        let err = |line: usize, key: &str, problem: String| LensFileError {
            line,
            key: key.to_string(),
            problem,
        };
        const KEYS: [&str; 19] = [
            "format",
            "model",
            "sensor_width",
            "sensor_height",
            "fx",
            "fy",
            "cx",
            "cy",
            "k1",
            "k2",
            "k3",
            "p1",
            "p2",
            "out_width",
            "out_height",
            "view",
            "view_fx",
            "view_fy",
            "view_cx",
        ];
        let mut kv: BTreeMap<String, (usize, String)> = BTreeMap::new();
        for (i, raw) in text.lines().enumerate() {
            let line = i + 1;
            let body = raw.split('#').next().unwrap_or("").trim();
            if body.is_empty() {
                continue;
            }
            let Some((k, v)) = body.split_once('=') else {
                return Err(err(line, body, "expected `key = value`".into()));
            };
            let (k, v) = (k.trim(), v.trim());
            if !KEYS.contains(&k) && k != "view_cy" {
                let why = if k.starts_with('\u{feff}') {
                    "unknown key (the file starts with a byte-order mark; save it as UTF-8 \
                     without one)"
                } else {
                    "unknown key"
                };
                return Err(err(line, k, why.into()));
            }
            if v.is_empty() {
                return Err(err(line, k, "empty value".into()));
            }
            if let Some((first, _)) = kv.get(k) {
                return Err(err(
                    line,
                    k,
                    format!("repeated (first given on line {first})"),
                ));
            }
            kv.insert(k.to_string(), (line, v.to_string()));
        }
        let text_of = |k: &str| -> Result<(usize, String), LensFileError> {
            kv.get(k)
                .cloned()
                .ok_or_else(|| err(0, k, "missing".into()))
        };
        let num = |k: &str, lo: f64, hi: f64| -> Result<f64, LensFileError> {
            let (line, v) = text_of(k)?;
            let x: f64 = v
                .parse()
                .map_err(|_| err(line, k, format!("{} is not a number", shown(&v))))?;
            if !x.is_finite() {
                return Err(err(line, k, format!("{} is not finite", shown(&v))));
            }
            if x < lo || x > hi {
                let range = if lo == f64::MIN_POSITIVE {
                    format!(
                        "is outside the accepted range (above 0, at most {})",
                        readable(hi)
                    )
                } else {
                    format!("is outside {}..={}", readable(lo), readable(hi))
                };
                return Err(err(line, k, format!("{} {range}", readable(x))));
            }
            Ok(x)
        };
        let int = |k: &str| -> Result<usize, LensFileError> {
            let (line, v) = text_of(k)?;
            let x: usize = v
                .parse()
                .map_err(|_| err(line, k, format!("{} is not a whole number", shown(&v))))?;
            if !(1..=32767).contains(&x) {
                return Err(err(line, k, format!("{x} is outside 1..=32767")));
            }
            Ok(x)
        };
        let (fl, fv) = text_of("format")?;
        if fv != "fixsight-lens 1" {
            return Err(err(
                fl,
                "format",
                format!("{} is not `fixsight-lens 1`", shown(&fv)),
            ));
        }
        let sensor = (int("sensor_width")?, int("sensor_height")?);
        let (sw, sh) = (sensor.0 as f64, sensor.1 as f64);
        let intrinsics = Intrinsics {
            fx: num("fx", f64::MIN_POSITIVE, 1e5)?,
            fy: num("fy", f64::MIN_POSITIVE, 1e5)?,
            cx: num("cx", -sw, 2.0 * sw)?,
            cy: num("cy", -sh, 2.0 * sh)?,
        };
        let (ml, model) = text_of("model")?;
        let allowed: &[&str] = match model.as_str() {
            "brown" => &["k1", "k2", "k3", "p1", "p2"],
            "fisheye" => &["k1", "k2"],
            _ => {
                return Err(err(
                    ml,
                    "model",
                    format!("{} is not `brown` or `fisheye`", shown(&model)),
                ))
            }
        };
        for k in ["k3", "p1", "p2"] {
            if !allowed.contains(&k) {
                if let Some((line, _)) = kv.get(k) {
                    return Err(err(
                        *line,
                        k,
                        format!("not a coefficient of model `{model}`"),
                    ));
                }
            }
        }
        let lens = if model == "brown" {
            LensModel::BrownConrady {
                k1: num("k1", -10.0, 10.0)?,
                k2: num("k2", -10.0, 10.0)?,
                k3: num("k3", -10.0, 10.0)?,
                p1: num("p1", -1.0, 1.0)?,
                p2: num("p2", -1.0, 1.0)?,
            }
        } else {
            LensModel::Equidistant {
                k1: num("k1", -10.0, 10.0)?,
                k2: num("k2", -10.0, 10.0)?,
            }
        };
        let output = (
            if kv.contains_key("out_width") {
                int("out_width")?
            } else {
                sensor.0
            },
            if kv.contains_key("out_height") {
                int("out_height")?
            } else {
                sensor.1
            },
        );
        let camera = Camera { intrinsics, lens };
        let mode = kv.get("view").map(|(l, v)| (*l, v.clone()));
        let (view, fitted) = match mode.as_ref().map(|(l, v)| (*l, v.as_str())) {
            None | Some((_, "fit")) => {
                let line = mode.as_ref().map_or(0, |m| m.0);
                let v = camera
                    .fit_view(output.0, output.1, sensor.0, sensor.1)
                    .map_err(|e| err(line, "view", e.to_string()))?;
                // The fitted view obeys the range of a manual one: a focal
                // length past it means a view of a few pixels of the sensor.
                if !(v.fx <= 1e5 && v.fy <= 1e5) {
                    return Err(err(
                        line,
                        "view",
                        format!(
                            "the fitted view needs f' = {} px, above the 100000 px a view may \
                             have: the principal point ({}, {}) leaves almost no sensor on one \
                             side for a {}x{} output; check cx and cy, or give a manual view",
                            readable(v.fx.max(v.fy)),
                            readable(intrinsics.cx),
                            readable(intrinsics.cy),
                            output.0,
                            output.1
                        ),
                    ));
                }
                (v, true)
            }
            Some((_, "manual")) => {
                let (ow, oh) = (output.0 as f64, output.1 as f64);
                (
                    Intrinsics {
                        fx: num("view_fx", f64::MIN_POSITIVE, 1e5)?,
                        fy: num("view_fy", f64::MIN_POSITIVE, 1e5)?,
                        cx: num("view_cx", -ow, 2.0 * ow)?,
                        cy: num("view_cy", -oh, 2.0 * oh)?,
                    },
                    false,
                )
            }
            Some((l, v)) => {
                return Err(err(
                    l,
                    "view",
                    format!("{} is not `fit` or `manual`", shown(v)),
                ))
            }
        };
        // The map must be finite and stay within one sensor size of the
        // sensor everywhere (the kernel's accepted coordinate range).
        for (x, y) in [
            (0, 0),
            (output.0 - 1, 0),
            (0, output.1 - 1),
            (output.0 - 1, output.1 - 1),
        ] {
            let (sx, sy) = camera.source_of(&view, x as f64, y as f64);
            if !(sx.is_finite()
                && sy.is_finite()
                && sx >= -sw
                && sx <= 2.0 * sw - 1.0
                && sy >= -sh
                && sy <= 2.0 * sh - 1.0)
            {
                return Err(err(
                    0,
                    "view",
                    format!("output corner ({x}, {y}) maps to ({sx:.2}, {sy:.2}), more than one sensor size outside the sensor"),
                ));
            }
        }
        Ok(Self {
            camera,
            sensor,
            output,
            view,
            fitted,
        })
    }
}

/// Reads and parses the lens file at `path`; errors name the file.
pub fn read_lens_file(path: &std::path::Path) -> anyhow::Result<LensSpec> {
    read_lens_file_text(path).map(|(spec, _)| spec)
}

/// As [`read_lens_file`], also returning the file's text as read (for a
/// digest of exactly what was parsed).
pub fn read_lens_file_text(path: &std::path::Path) -> anyhow::Result<(LensSpec, String)> {
    let text = crate::files::read_text(path)?;
    let spec = LensSpec::parse(&text)
        .map_err(|e| anyhow::anyhow!("{}: {e}", crate::files::shown_path(path)))?;
    Ok((spec, text))
}

/// Where the lens of a report comes from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum LensOrigin {
    /// The built-in demo lens ([`crate::scene::demo_camera`] at 320 x 240,
    /// fit-to-view corrected view).
    Demo,
    /// A lens file given by the user.
    File {
        /// The file's name as given (its last path component).
        name: String,
        /// SHA-256 of the file's bytes, 64 lower-case hex digits.
        sha256: String,
    },
}

/// The lens the report's lens-dependent rows use: a 320 x 240 sensor
/// camera and its 320 x 240 corrected view.
///
/// ```
/// use fixsight_verify::lens::{LensInUse, LensOrigin};
/// let demo = LensInUse::demo().unwrap();
/// assert_eq!(demo.origin, LensOrigin::Demo);
/// assert_eq!(demo.describe(), "built-in demo lens");
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct LensInUse {
    /// Sensor camera.
    pub camera: Camera,
    /// Corrected view intrinsics.
    pub view: Intrinsics,
    /// Where it comes from.
    pub origin: LensOrigin,
}

impl LensInUse {
    /// Width and height of the sensor and of the corrected view.
    pub const SIZE: (usize, usize) = (320, 240);

    /// The built-in demo lens at [`Self::SIZE`].
    pub fn demo() -> Result<Self, String> {
        let (w, h) = Self::SIZE;
        let camera = crate::scene::demo_camera(w, h);
        let view = camera.fit_view(w, h, w, h).map_err(|e| e.to_string())?;
        Ok(Self {
            camera,
            view,
            origin: LensOrigin::Demo,
        })
    }

    /// A parsed lens file `spec` whose text was `text`, named `name`. The
    /// caller has checked that sensor and view are [`Self::SIZE`].
    ///
    /// ```
    /// use fixsight_verify::lens::{LensInUse, LensOrigin, LensSpec};
    /// let text = "format = fixsight-lens 1\nmodel = fisheye\nsensor_width = 320\n\
    ///             sensor_height = 240\nfx = 130\nfy = 130\ncx = 160\ncy = 120\nk1 = 0.01\nk2 = 0\n";
    /// let spec = LensSpec::parse(text).unwrap();
    /// let lens = LensInUse::from_file(&spec, text, "cam.lens");
    /// assert!(lens.describe().starts_with("lens file `cam.lens` (SHA-256 "));
    /// ```
    pub fn from_file(spec: &LensSpec, text: &str, name: &str) -> Self {
        let sha256 = crate::golden::sha256_hex(text.as_bytes());
        Self {
            camera: spec.camera,
            view: spec.view,
            origin: LensOrigin::File {
                name: name.to_string(),
                sha256,
            },
        }
    }

    /// `true` for the built-in demo lens.
    pub fn is_demo(&self) -> bool {
        self.origin == LensOrigin::Demo
    }

    /// One line naming the lens: `built-in demo lens` or `lens file NAME
    /// (SHA-256 HEX)`.
    pub fn describe(&self) -> String {
        match &self.origin {
            LensOrigin::Demo => "built-in demo lens".into(),
            LensOrigin::File { name, sha256 } => {
                format!("lens file {} (SHA-256 {sha256})", shown(name))
            }
        }
    }
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

    /// Equidistant projection: a ray at 45 degrees off axis (x = 1, y = 0)
    /// lands at r_d = theta = pi/4 in focal units. Hand computation from the
    /// definition r_d = f * theta of the equidistant projection as classified
    /// in Miyamoto (1964), "Fish Eye Lens", J. Opt. Soc. Am. 54(8) (from
    /// memory); with k1 = 0.1: theta_d = pi/4 (1 + 0.1 (pi/4)^2)
    /// = 0.785398 * 1.061685 = 0.833846.
    #[test]
    fn fisheye_on_hand_computed_points() {
        let ideal = LensModel::Equidistant { k1: 0.0, k2: 0.0 };
        let (xd, yd) = ideal.distort(1.0, 0.0);
        assert!((xd - std::f64::consts::FRAC_PI_4).abs() < 1e-15 && yd == 0.0);
        let l = LensModel::Equidistant { k1: 0.1, k2: 0.0 };
        let (xd, _) = l.distort(1.0, 0.0);
        assert!((xd - 0.833_846).abs() < 1e-6, "{xd}");
        // (x, y) = (0.6, 0.8): r = 1 again, direction kept.
        let (a, b) = l.distort(0.6, 0.8);
        assert!((a - 0.6 * 0.833_846).abs() < 1e-6 && (b - 0.8 * 0.833_846).abs() < 1e-6);
        // Inversion round trip, and the out-of-field check.
        let (x, y) = l.undistort(a, b).unwrap();
        assert!((x - 0.6).abs() < 1e-10 && (y - 0.8).abs() < 1e-10);
        assert!(matches!(
            ideal.undistort(1.6, 0.0),
            Err(LensError::OutOfField { .. })
        ));
    }

    #[test]
    fn fit_to_view_keeps_every_pixel_inside() {
        let cam = Camera {
            intrinsics: Intrinsics {
                fx: 130.0,
                fy: 130.0,
                cx: 79.5,
                cy: 59.5,
            },
            lens: lens(),
        };
        let v = cam.fit_view(160, 120, 160, 120).unwrap();
        // The fitted view is tight: 0.1 % wider and the border leaves the sensor.
        let wider = Intrinsics {
            fx: v.fx * 0.999,
            fy: v.fy * 0.999,
            ..v
        };
        assert!(!cam.border_inside(&wider, 160, 120, 160, 120));
        assert!(cam.border_inside(&v, 160, 120, 160, 120));
        let fish = Camera {
            intrinsics: cam.intrinsics,
            lens: LensModel::Equidistant { k1: -0.02, k2: 0.0 },
        };
        assert!(fish.fit_view(160, 120, 160, 120).is_ok());
    }

    const GOOD: &str = "format = fixsight-lens 1\nmodel = brown\nsensor_width = 160\nsensor_height = 120\n\
        fx = 130\nfy = 130\ncx = 79.5\ncy = 59.5\nk1 = -0.28\nk2 = 0.09\nk3 = 0\np1 = 0.0005\np2 = -0.0003\n";

    #[test]
    fn lens_file_parses_and_names_line_and_key_of_each_problem() {
        let s = LensSpec::parse(GOOD).unwrap();
        assert!(s.fitted && s.output == (160, 120));
        let bad = |from: &str, to: &str| LensSpec::parse(&GOOD.replace(from, to)).unwrap_err();
        let e = bad("fy = 130\n", "");
        assert_eq!(
            (e.line, e.key.as_str(), e.problem.as_str()),
            (0, "fy", "missing")
        );
        let e = bad("k2 = 0.09", "k2 = zero");
        assert_eq!((e.line, e.key.as_str()), (10, "k2"));
        assert!(e.to_string().contains("line 10") && e.problem.contains("not a number"));
        let e = bad("cx = 79.5", "cx = inf");
        assert_eq!((e.line, e.key.as_str()), (7, "cx"));
        assert!(e.problem.contains("not finite"));
        let e = bad("cx = 79.5", "cx = NaN");
        assert!(e.problem.contains("not finite"));
        let e = bad("p1 = 0.0005", "p1 = 3");
        assert_eq!((e.line, e.key.as_str()), (12, "p1"));
        assert!(e.problem.contains("outside"));
        // Issue 16: a readable number, not the 300 digits of the smallest f64.
        let e = bad("fx = 130", "fx = 0");
        assert_eq!(
            e.problem,
            "0 is outside the accepted range (above 0, at most 100000)"
        );
        // Issue 16: an invisible character is shown as an escape.
        let e = LensSpec::parse(&format!("\u{feff}{GOOD}")).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("lens file line 1: `\\u{feff}format`: unknown key (the file starts with a byte-order mark"),
            "{e}"
        );
        // Found by the campaign: a principal point at the sensor edge made
        // the fitted view's focal length explode past the manual limit.
        let e = bad("cx = 79.5", "cx = 0.09");
        assert_eq!(e.key, "view");
        assert!(e.problem.contains("above the 100000 px"), "{e}");
        let e = bad("sensor_width = 160", "sensor_width = 0");
        assert_eq!((e.line, e.key.as_str()), (3, "sensor_width"));
        let e = bad("model = brown", "model = ultra");
        assert_eq!(e.line, 2);
        let e = LensSpec::parse(&format!("{GOOD}fx = 1\n")).unwrap_err();
        assert!(e.problem.contains("repeated (first given on line 5)"));
        let e = LensSpec::parse(&format!("{GOOD}zoom = 2\n")).unwrap_err();
        assert_eq!((e.line, e.key.as_str()), (14, "zoom"));
        // In range but absurd: principal point outside the sensor, so no
        // view centred on it can fit.
        let e = bad("cx = 79.5", "cx = -150");
        assert_eq!(e.key, "view");
        assert!(e.problem.contains("fit-to-view failed"), "{e}");
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
