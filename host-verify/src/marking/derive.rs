//! Derivation of the selection's limits from the camera geometry (see the
//! family's module docs).

use crate::scene;
use crate::sequence::DEMO_SEQUENCE;
use fixsight::marking::{MarkingConfig, MarkingLimits, TapeContrast};
use std::f64::consts::PI;
use thiserror::Error;

/// What the limits are derived from (module docs). Lengths in metres,
/// angles in degrees, image figures in pixels of the corrected view.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MarkingGeometry {
    /// Focal length of the corrected view, px.
    pub focal_px: f64,
    /// Near row, px below the image centre (`(H - 1) / 2` is the bottom row).
    pub near_row_px: f64,
    /// Camera height above the floor.
    pub camera_height_m: f64,
    /// Tolerance of the camera height (+-).
    pub camera_height_tol_m: f64,
    /// Camera pitch below the horizon.
    pub pitch_deg: f64,
    /// Tolerance of the pitch (+-).
    pub pitch_tol_deg: f64,
    /// Tape width.
    pub tape_width_m: f64,
    /// Tolerance of the visible tape width (+-).
    pub tape_width_tol_m: f64,
    /// Largest heading of the vehicle against the tape.
    pub max_heading_deg: f64,
    /// Largest lateral offset of the tape's centre from the camera axis on
    /// the near row's ground line.
    pub max_lateral_m: f64,
    /// Accuracy of the offered lines in `rho`, px.
    pub line_rho_tol_px: f64,
    /// Accuracy of the offered lines in `theta`, degrees.
    pub line_theta_tol_deg: f64,
    /// Tape brighter or darker than the floor.
    pub contrast: TapeContrast,
}

/// Why a derivation was refused.
#[derive(Debug, Error, PartialEq)]
pub enum DeriveError {
    /// An input is out of its range.
    #[error("`{name}` = {value} is out of range: expected {expected}")]
    Input {
        /// Field name.
        name: &'static str,
        /// Value given.
        value: f64,
        /// Accepted range, in words.
        expected: &'static str,
    },
    /// A row is not below the horizon for some pitch within tolerance.
    #[error("{row} row y = {y_px:.3} px is not below the horizon (y = {horizon_px:.3} px at pitch {pitch_deg:.3} degrees): the floor is not seen there")]
    AboveHorizon {
        /// `near` or `far`.
        row: &'static str,
        /// The row.
        y_px: f64,
        /// The horizon.
        horizon_px: f64,
        /// The pitch.
        pitch_deg: f64,
    },
    /// The tape edges could tilt more than the selection accepts.
    #[error("tape edges may tilt {tilt_deg:.2} degrees from the vertical, above the selection's 60: narrow the lateral range or the heading")]
    TooSteep {
        /// Largest tilt, degrees.
        tilt_deg: f64,
    },
    /// The near-separation minimum falls to 0: a doubled edge could pass
    /// for a tape.
    #[error("the near-row separation could be as small as {min_sep_px:.3} px: the tolerances are too loose to tell a tape from a doubled edge")]
    TooLoose {
        /// The separation minimum before clamping, px.
        min_sep_px: f64,
    },
    /// A derived limit is out of the kernel's range.
    #[error("the derived limits are refused by the kernel: {0}")]
    Kernel(fixsight::Error),
}

/// A derivation's result and its intermediate figures (pixels, degrees).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Derivation {
    /// The limits.
    pub limits: MarkingLimits,
    /// Near, far and horizon rows (rounded to Q4).
    pub rows_px: (f64, f64, f64),
    /// Far-to-near separation ratio rule 4 expects, and its extremes over
    /// the pitch tolerance.
    pub ratio: (f64, f64, f64),
    /// Half-width of the lateral window before the line error.
    pub lateral_px: f64,
    /// Largest tilt before quantisation, degrees.
    pub tilt_deg: f64,
    /// Column error of an offered line on the near row, and its share of
    /// the convergence residual.
    pub line_err_px: (f64, f64),
    /// Tape separation on the near row: smallest, nominal, largest (no
    /// line error).
    pub near_tape_px: (f64, f64, f64),
    /// Convergence tolerance (before rounding up to Q4).
    pub converge_tol_px: f64,
}

/// The demo camera's inputs (module docs): the corrected view of the demo
/// lens at 320 x 240 (fit-to-view), the scene's camera height, pitch and
/// tape, the bottom row as near row.
pub fn demo_geometry() -> MarkingGeometry {
    let view = DEMO_SEQUENCE
        .view()
        .expect("the demo lens has a fit-to-view corrected view");
    MarkingGeometry {
        focal_px: view.fx,
        near_row_px: (scene::DEMO_HEIGHT as f64 - 1.0) / 2.0,
        camera_height_m: scene::CAMERA_HEIGHT_M,
        camera_height_tol_m: 0.02,
        pitch_deg: scene::CAMERA_PITCH_DEG,
        pitch_tol_deg: 1.0,
        tape_width_m: scene::TAPE_WIDTH_M,
        tape_width_tol_m: 0.005,
        max_heading_deg: 15.0,
        max_lateral_m: 0.15,
        line_rho_tol_px: 1.0,
        line_theta_tol_deg: 1.0,
        contrast: TapeContrast::Brighter,
    }
}

fn check_input(
    name: &'static str,
    value: f64,
    ok: bool,
    expected: &'static str,
) -> Result<(), DeriveError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(DeriveError::Input {
            name,
            value,
            expected,
        })
    }
}

/// Derives the limits (module docs).
pub fn derive(g: &MarkingGeometry) -> Result<Derivation, DeriveError> {
    check_input(
        "focal_px",
        g.focal_px,
        g.focal_px > 0.0 && g.focal_px <= 1e5,
        "0 < f <= 100000",
    )?;
    check_input(
        "near_row_px",
        g.near_row_px,
        g.near_row_px.abs() <= 32767.0,
        "|y| <= 32767",
    )?;
    check_input(
        "camera_height_tol_m",
        g.camera_height_tol_m,
        g.camera_height_tol_m >= 0.0,
        ">= 0",
    )?;
    check_input(
        "camera_height_m",
        g.camera_height_m,
        g.camera_height_m > g.camera_height_tol_m,
        "> its tolerance",
    )?;
    check_input(
        "pitch_tol_deg",
        g.pitch_tol_deg,
        g.pitch_tol_deg >= 0.0,
        ">= 0",
    )?;
    check_input(
        "pitch_deg",
        g.pitch_deg,
        g.pitch_deg - g.pitch_tol_deg > 0.0 && g.pitch_deg + g.pitch_tol_deg < 90.0,
        "pitch +- tolerance within (0, 90)",
    )?;
    check_input(
        "tape_width_tol_m",
        g.tape_width_tol_m,
        g.tape_width_tol_m >= 0.0,
        ">= 0",
    )?;
    check_input(
        "tape_width_m",
        g.tape_width_m,
        g.tape_width_m > g.tape_width_tol_m,
        "> its tolerance",
    )?;
    check_input(
        "max_heading_deg",
        g.max_heading_deg,
        (0.0..80.0).contains(&g.max_heading_deg),
        "0 <= psi < 80",
    )?;
    check_input(
        "max_lateral_m",
        g.max_lateral_m,
        g.max_lateral_m >= 0.0,
        ">= 0",
    )?;
    check_input(
        "line_rho_tol_px",
        g.line_rho_tol_px,
        g.line_rho_tol_px >= 0.0,
        ">= 0",
    )?;
    check_input(
        "line_theta_tol_deg",
        g.line_theta_tol_deg,
        (0.0..10.0).contains(&g.line_theta_tol_deg),
        "0 <= e < 10",
    )?;
    let f = g.focal_px;
    let phi = g.pitch_deg.to_radians();
    let pitches: Vec<f64> = (0..=20)
        .map(|i| (g.pitch_deg - g.pitch_tol_deg + g.pitch_tol_deg * i as f64 / 10.0).to_radians())
        .collect();
    let heights = [
        g.camera_height_m - g.camera_height_tol_m,
        g.camera_height_m + g.camera_height_tol_m,
    ];
    let horizon = |p: f64| -f * p.tan();
    let q4 = |y: f64| (y * 16.0).round() / 16.0;
    let y_n = q4(g.near_row_px);
    let y_h = q4(horizon(phi));
    let y_f = q4((y_n + y_h) / 2.0);
    for (row, y) in [("near", y_n), ("far", y_f)] {
        for &p in &pitches {
            if y <= horizon(p) {
                return Err(DeriveError::AboveHorizon {
                    row,
                    y_px: y,
                    horizon_px: horizon(p),
                    pitch_deg: p.to_degrees(),
                });
            }
        }
    }
    if y_f <= y_h || y_n <= y_f {
        return Err(DeriveError::AboveHorizon {
            row: "far",
            y_px: y_f,
            horizon_px: y_h,
            pitch_deg: g.pitch_deg,
        });
    }
    let k = |y: f64, h: f64, p: f64| (y * p.cos() + f * p.sin()) / h;
    let (mut k_lo, mut k_hi) = (f64::INFINITY, 0f64);
    for &h in &heights {
        for &p in &pitches {
            k_lo = k_lo.min(k(y_n, h, p));
            k_hi = k_hi.max(k(y_n, h, p));
        }
    }
    let ratio = (y_f - y_h) / (y_n - y_h);
    let true_ratio = |p: f64| (y_f - horizon(p)) / (y_n - horizon(p));
    let ratio_dev = pitches
        .iter()
        .map(|&p| (true_ratio(p) - ratio).abs())
        .fold(0.0, f64::max);
    let psi = g.max_heading_deg.to_radians();
    let (w, dw) = (g.tape_width_m, g.tape_width_tol_m);
    let e_t = g.line_theta_tol_deg.to_radians();
    let lateral = (g.max_lateral_m + (w + dw) / (2.0 * psi.cos())) * k_hi;
    let vp = f * psi.tan() / (pitches[20]).cos();
    let depth = pitches
        .iter()
        .map(|&p| y_n - horizon(p))
        .fold(f64::INFINITY, f64::min);
    let tilt = ((lateral + vp) / depth).atan() + e_t;
    if tilt > PI / 3.0 {
        return Err(DeriveError::TooSteep {
            tilt_deg: tilt.to_degrees(),
        });
    }
    let e_n = g.line_rho_tol_px / tilt.cos() + e_t * (y_n.abs() + lateral * tilt.tan());
    let near_tape = (
        (w - dw) * k_lo,
        w * k(y_n, g.camera_height_m, phi),
        (w + dw) * k_hi / psi.cos(),
    );
    let max_horizon = pitches
        .iter()
        .map(|&p| horizon(p).abs())
        .fold(0.0, f64::max);
    let per_line = (1.0 - ratio)
        * (g.line_rho_tol_px / tilt.cos() + e_t * (max_horizon + vp * tilt.tan()))
        + e_t * ratio_dev * (lateral * tilt.tan() + y_n.abs());
    let converge_tol = near_tape.2 * ratio_dev + 2.0 * per_line;
    let near_sep_min = near_tape.0 - 2.0 * e_n;
    if near_sep_min < 1.0 / 16.0 {
        return Err(DeriveError::TooLoose {
            min_sep_px: near_sep_min,
        });
    }
    let down = |v: f64| (v * 16.0).floor() as i32;
    let up = |v: f64| (v * 16.0).ceil() as i32;
    let limits = MarkingLimits {
        near_row_q4: (y_n * 16.0) as i32,
        far_row_q4: (y_f * 16.0) as i32,
        horizon_row_q4: (y_h * 16.0) as i32,
        max_tilt: (tilt / PI * 65536.0).ceil() as u16,
        near_x_min_q4: down(-(lateral + e_n)),
        near_x_max_q4: up(lateral + e_n),
        near_sep_min_q4: down(near_sep_min),
        near_sep_nominal_q4: (near_tape.1 * 16.0).round() as i32,
        near_sep_max_q4: up(near_tape.2 + 2.0 * e_n),
        converge_tol_q4: up(converge_tol),
        contrast: g.contrast,
    };
    MarkingConfig::new(limits).map_err(DeriveError::Kernel)?;
    Ok(Derivation {
        limits,
        rows_px: (y_n, y_f, y_h),
        ratio: (
            ratio,
            pitches
                .iter()
                .map(|&p| true_ratio(p))
                .fold(f64::INFINITY, f64::min),
            pitches.iter().map(|&p| true_ratio(p)).fold(0.0, f64::max),
        ),
        lateral_px: lateral,
        tilt_deg: tilt.to_degrees(),
        line_err_px: (e_n, per_line),
        near_tape_px: near_tape,
        converge_tol_px: converge_tol,
    })
}

/// The limits of [`derive`].
pub fn derive_limits(g: &MarkingGeometry) -> Result<MarkingLimits, DeriveError> {
    derive(g).map(|d| d.limits)
}

/// A second configuration for the vectors: a VGA view (focal 420 px) of
/// a camera 0.30 m up, pitched 40 degrees, looking for a 19 mm dark tape.
pub fn vga_dark_geometry() -> MarkingGeometry {
    MarkingGeometry {
        focal_px: 420.0,
        near_row_px: 239.5,
        camera_height_m: 0.30,
        camera_height_tol_m: 0.01,
        pitch_deg: 40.0,
        pitch_tol_deg: 0.5,
        tape_width_m: 0.019,
        tape_width_tol_m: 0.002,
        max_heading_deg: 10.0,
        max_lateral_m: 0.1,
        line_rho_tol_px: 1.0,
        line_theta_tol_deg: 0.5,
        contrast: TapeContrast::Darker,
    }
}
