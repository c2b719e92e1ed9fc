//! The calibration report: a text summary, the same figures as JSON, and
//! one picture per image.
//!
//! # Figures
//!
//! * **Reprojection error** per image and overall: RMS and worst Euclidean
//!   distance between a detected corner and the refined model's projection
//!   of it, px.
//! * **Standard deviations** of every lens-file number (see
//!   [`super::refine`]).
//! * **Field coverage**: the image is cut into `8 x 6` cells (landscape;
//!   `6 x 8` portrait); the share of cells holding a detected corner, the
//!   share of the 24 cells on the image border that do, and the reach: the
//!   largest distance of a corner from the principal point as a share of
//!   the distance to the farthest image corner. A wide lens distorts most
//!   near the border, where the fitted polynomial is unconstrained if no
//!   corner was seen, so a warning is given when fewer than half the border
//!   cells hold a corner or the reach is below 0.8 (common practice, no
//!   source).
//! * **Grid error**: the control grid that the `grid` command would build
//!   from the written lens file (fit-to-view corrected view of the sensor's
//!   size) at the chosen spacing and fractional bits, measured against the
//!   exact lens map over every output pixel
//!   ([`crate::warp::grid::build_grid`]).
//!
//! # Pictures
//!
//! `views/<image file stem>.png`: the image in grey, each detected corner
//! as a green `+` (5 px arms), each reprojected corner as a red `x`, and a
//! yellow line from the detected corner along the error magnified 20
//! times. Skipped images get no picture.

use super::refine::Fit;
use super::ModelKind;
use crate::lens::{Camera, LensSpec};
use serde::Serialize;
use std::fmt::Write as _;

/// Border-cell share below which a coverage warning is given.
pub const MIN_EDGE_SHARE: f64 = 0.5;
/// Reach below which a coverage warning is given.
pub const MIN_REACH: f64 = 0.8;
/// Magnification of the error lines in the pictures.
pub const ERROR_SCALE: f64 = 20.0;

/// Coverage of the field of view by the detected corners (module docs).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Coverage {
    /// Share of all cells with a corner.
    pub cells: f64,
    /// Share of the border cells with a corner.
    pub edge_cells: f64,
    /// Largest corner distance from the principal point over the distance
    /// to the farthest image corner.
    pub reach: f64,
}

/// Measures coverage of a `size` image by `corners` around the principal
/// point `(cx, cy)`.
///
/// ```
/// use fixsight_verify::calibrate::report::coverage;
/// let c = coverage(&[(1.0, 1.0), (79.0, 59.0)], (80, 60), (40.0, 30.0));
/// assert_eq!(c.cells, 2.0 / 48.0);
/// assert_eq!(c.edge_cells, 2.0 / 24.0);
/// assert!(c.reach > 0.95);
/// ```
pub fn coverage(corners: &[(f64, f64)], size: (usize, usize), centre: (f64, f64)) -> Coverage {
    let (cols, rows) = if size.0 >= size.1 { (8, 6) } else { (6, 8) };
    let mut hit = vec![false; cols * rows];
    let (w, h) = (size.0 as f64, size.1 as f64);
    let far = [
        (0.0, 0.0),
        (w - 1.0, 0.0),
        (0.0, h - 1.0),
        (w - 1.0, h - 1.0),
    ]
    .iter()
    .map(|&(x, y)| (x - centre.0).hypot(y - centre.1))
    .fold(0.0, f64::max);
    let mut reach: f64 = 0.0;
    for &(x, y) in corners {
        let i = ((x / w * cols as f64).floor() as isize).clamp(0, cols as isize - 1) as usize;
        let j = ((y / h * rows as f64).floor() as isize).clamp(0, rows as isize - 1) as usize;
        hit[j * cols + i] = true;
        reach = reach.max((x - centre.0).hypot(y - centre.1));
    }
    let border = |i: usize, j: usize| i == 0 || j == 0 || i == cols - 1 || j == rows - 1;
    let (mut edge, mut edge_hit) = (0, 0);
    for j in 0..rows {
        for i in 0..cols {
            if border(i, j) {
                edge += 1;
                edge_hit += usize::from(hit[j * cols + i]);
            }
        }
    }
    Coverage {
        cells: hit.iter().filter(|&&b| b).count() as f64 / hit.len() as f64,
        edge_cells: edge_hit as f64 / edge as f64,
        reach: if far > 0.0 { reach / far } else { 0.0 },
    }
}

/// One image in the report.
#[derive(Debug, Clone, Serialize)]
pub struct ImageRow {
    /// File name.
    pub file: String,
    /// `true` when its corners went into the fit.
    pub used: bool,
    /// Why it was skipped.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub skipped: Option<String>,
    /// RMS reprojection error, px.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rms_px: Option<f64>,
    /// Worst reprojection error, px.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub worst_px: Option<f64>,
    /// Board tilt against the sensor, degrees.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tilt_deg: Option<f64>,
}

/// A number with its standard deviation.
#[derive(Debug, Clone, Serialize)]
pub struct Estimate {
    /// Name as in the lens file.
    pub name: String,
    /// Value.
    pub value: f64,
    /// One standard deviation.
    pub std: f64,
}

/// The control-grid figures.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct GridError {
    /// Step, px.
    pub step_px: u32,
    /// Fractional bits.
    pub frac_bits: u32,
    /// Largest geometric error, px.
    pub max_px: f64,
    /// RMS geometric error, px.
    pub rms_px: f64,
    /// Control points (columns, rows).
    pub grid: (usize, usize),
}

/// The whole report (written as `calibration.json`, schema 1).
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// Schema version.
    pub schema: u32,
    /// Image folder.
    pub folder: String,
    /// Board inner corners (columns, rows).
    pub inner_corners: (usize, usize),
    /// Square size, mm.
    pub square_mm: f64,
    /// Model word.
    pub model: String,
    /// Image size.
    pub size: (usize, usize),
    /// Files in the folder without an image extension.
    pub ignored: Vec<String>,
    /// Every image.
    pub images: Vec<ImageRow>,
    /// Lens-file numbers with standard deviations.
    pub estimates: Vec<Estimate>,
    /// Overall RMS reprojection error, px.
    pub rms_px: f64,
    /// Overall worst reprojection error, px.
    pub worst_px: f64,
    /// Corners used.
    pub corners: usize,
    /// Field coverage.
    pub coverage: Coverage,
    /// Control-grid figures.
    pub grid: GridError,
    /// Warnings.
    pub warnings: Vec<String>,
    /// The lens file written.
    pub lens_file: String,
}

/// RMS and worst of a list of error vectors.
pub(crate) fn rms_worst(errors: &[(f64, f64)]) -> (f64, f64) {
    let n = errors.len().max(1) as f64;
    let s2: f64 = errors.iter().map(|e| e.0 * e.0 + e.1 * e.1).sum();
    let worst = errors.iter().map(|e| e.0.hypot(e.1)).fold(0.0, f64::max);
    ((s2 / n).sqrt(), worst)
}

/// The lens file text for a fitted camera (`fixsight-lens 1`, fit-to-view
/// corrected view of the sensor's size); `header` lines become comments.
///
/// ```
/// use fixsight_verify::calibrate::{report::lens_text, ModelKind};
/// use fixsight_verify::lens::{Camera, Intrinsics, LensSpec};
/// let cam = Camera {
///     intrinsics: Intrinsics { fx: 300.0, fy: 301.0, cx: 160.0, cy: 120.0 },
///     lens: ModelKind::Fisheye.lens(&[-0.03, 0.002]),
/// };
/// let text = lens_text(&cam, ModelKind::Fisheye, (320, 240), &["a test".into()]);
/// let spec = LensSpec::parse(&text).unwrap();
/// assert_eq!(spec.camera, cam);
/// ```
pub fn lens_text(
    camera: &Camera,
    model: ModelKind,
    size: (usize, usize),
    header: &[String],
) -> String {
    let mut s = String::new();
    for h in header {
        let _ = writeln!(s, "# {h}");
    }
    let k = camera.intrinsics;
    let _ = writeln!(
        s,
        "format = fixsight-lens 1\nmodel = {}\nsensor_width = {}\nsensor_height = {}",
        model.word(),
        size.0,
        size.1
    );
    for (name, v) in [("fx", k.fx), ("fy", k.fy), ("cx", k.cx), ("cy", k.cy)] {
        let _ = writeln!(s, "{name} = {v}");
    }
    for (name, v) in model.names().iter().zip(super::coefficients(&camera.lens)) {
        let _ = writeln!(s, "{name} = {v}");
    }
    let _ = writeln!(
        s,
        "# Corrected view: the sensor's size, intrinsics from the fit-to-view rule.\n\
         out_width = {}\nout_height = {}\nview = fit",
        size.0, size.1
    );
    s
}

/// Builds the control grid of a parsed lens file and measures it.
pub(crate) fn grid_error(
    spec: &LensSpec,
    grid_log2: u32,
    frac_bits: u32,
) -> Result<GridError, String> {
    let geom = fixsight::warp::WarpGeometry::new(
        spec.output.0,
        spec.output.1,
        spec.sensor.0,
        spec.sensor.1,
        frac_bits,
    )
    .map_err(|e| e.to_string())?;
    let mb = crate::warp::grid::build_grid(&spec.camera, &spec.view, geom, grid_log2)?;
    Ok(GridError {
        step_px: 1 << grid_log2,
        frac_bits,
        max_px: mb.max_px,
        rms_px: mb.rms_px,
        grid: mb.grid,
    })
}

/// Coverage and other warnings for a fit.
pub(crate) fn warnings(cov: &Coverage, fit: &Fit, rows: &[ImageRow]) -> Vec<String> {
    let mut w = Vec::new();
    if cov.edge_cells < MIN_EDGE_SHARE || cov.reach < MIN_REACH {
        w.push(format!(
            "corners cover {:.0} % of the border cells and reach {:.0} % of the way to the \
             farthest image corner: the distortion near the image edges is extrapolated, not \
             measured; add views with the board near the edges and corners of the image",
            100.0 * cov.edge_cells,
            100.0 * cov.reach
        ));
    }
    let typical = fit.rms_px.max(0.05);
    for r in rows {
        if let Some(rms) = r.rms_px {
            if rms > 3.0 * typical {
                w.push(format!(
                    "{}: reprojection RMS {rms:.3} px, over 3 times the overall {:.3} px \
                     (blurred, moved, or a corner mislocated); consider removing it",
                    r.file, fit.rms_px
                ));
            }
        }
    }
    w
}

/// The report as text; the last line is the lens file's path.
pub fn text(r: &Report) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Lens calibration of {} images in {} ({}x{} px): board {}x{} inner corners, {} mm \
         squares, model {}",
        r.images.len(),
        r.folder,
        r.size.0,
        r.size.1,
        r.inner_corners.0,
        r.inner_corners.1,
        r.square_mm,
        r.model
    );
    if !r.ignored.is_empty() {
        let _ = writeln!(
            s,
            "Not images (no .png/.jpg/.jpeg extension), ignored: {}",
            r.ignored.join(", ")
        );
    }
    let used = r.images.iter().filter(|i| i.used).count();
    let _ = writeln!(
        s,
        "\nViews used: {used} of {}; {} corners.",
        r.images.len(),
        r.corners
    );
    let name_w = r
        .images
        .iter()
        .map(|i| i.file.chars().count())
        .max()
        .unwrap_or(4)
        .max(5);
    let _ = writeln!(
        s,
        "  {:<name_w$}  {:>8}  {:>8}  {:>6}",
        "image", "RMS px", "worst px", "tilt"
    );
    for i in &r.images {
        match (&i.skipped, i.rms_px, i.worst_px, i.tilt_deg) {
            (None, Some(rms), Some(worst), Some(t)) => {
                let _ = writeln!(
                    s,
                    "  {:<name_w$}  {rms:>8.4}  {worst:>8.4}  {t:>5.1}°",
                    i.file
                );
            }
            (Some(why), ..) => {
                let _ = writeln!(s, "  {:<name_w$}  skipped: {why}", i.file);
            }
            _ => {}
        }
    }
    let _ = writeln!(
        s,
        "  {:<name_w$}  {:>8.4}  {:>8.4}",
        "all", r.rms_px, r.worst_px
    );
    let _ = writeln!(
        s,
        "\nLens (value, one standard deviation from the Jacobian):"
    );
    for e in &r.estimates {
        let unit = if ["fx", "fy", "cx", "cy"].contains(&e.name.as_str()) {
            " px"
        } else {
            ""
        };
        let _ = writeln!(
            s,
            "  {:<3} = {:>14.6} +- {:.6}{unit}",
            e.name, e.value, e.std
        );
    }
    let c = &r.coverage;
    let _ = writeln!(
        s,
        "\nField coverage: corners in {:.0} % of the image cells, {:.0} % of the border cells; \
         reach {:.0} % of the way from the principal point to the farthest image corner.",
        100.0 * c.cells,
        100.0 * c.edge_cells,
        100.0 * c.reach
    );
    let m = &r.grid;
    let _ = writeln!(
        s,
        "Control grid from this lens file (fit-to-view, spacing {} px, {} fractional bits, {}x{} points): \
         geometric error max {:.5} px, RMS {:.5} px.",
        m.step_px, m.frac_bits, m.grid.0, m.grid.1, m.max_px, m.rms_px
    );
    for w in &r.warnings {
        let _ = writeln!(s, "WARNING: {w}");
    }
    let _ = writeln!(
        s,
        "Pictures: views/<image>.png (green +: detected corner, red x: reprojected, yellow: \
         error x{ERROR_SCALE})."
    );
    let _ = writeln!(s, "Lens file:\n{}", r.lens_file);
    s
}

/// The picture of one view (module docs) as an RGB image.
///
/// ```
/// use fixsight_verify::calibrate::{report::picture, Grey};
/// let g = Grey::from_u8(20, 20, &[100; 400]);
/// let img = picture(&g, &[(10.0, 10.0)], &[(10.5, 10.0)]);
/// assert_eq!(img.get_pixel(10, 5).0, [0, 255, 0]);
/// ```
pub fn picture(
    g: &crate::calibrate::Grey,
    seen: &[(f64, f64)],
    model: &[(f64, f64)],
) -> image::RgbImage {
    let (w, h) = (g.width as u32, g.height as u32);
    let grey = g.to_u8();
    let mut img = image::RgbImage::from_fn(w, h, |x, y| {
        let v = grey[(y * w + x) as usize];
        image::Rgb([v, v, v])
    });
    let mut put = |x: f64, y: f64, c: [u8; 3]| {
        let (xi, yi) = (x.round(), y.round());
        if xi >= 0.0 && yi >= 0.0 && xi < w as f64 && yi < h as f64 {
            img.put_pixel(xi as u32, yi as u32, image::Rgb(c));
        }
    };
    for (&(sx, sy), &(mx, my)) in seen.iter().zip(model) {
        let (ex, ey) = ((mx - sx) * ERROR_SCALE, (my - sy) * ERROR_SCALE);
        let n = ex.hypot(ey).ceil() as usize;
        for k in 0..=n {
            let a = k as f64 / n.max(1) as f64;
            put(sx + a * ex, sy + a * ey, [255, 220, 0]);
        }
        for d in -3..=3 {
            let d = d as f64;
            put(mx + d, my + d, [255, 40, 40]);
            put(mx + d, my - d, [255, 40, 40]);
        }
        for d in -5..=5 {
            let d = d as f64;
            put(sx + d, sy, [0, 255, 0]);
            put(sx, sy + d, [0, 255, 0]);
        }
    }
    img
}
