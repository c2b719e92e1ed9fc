//! `fixsight-verify calibrate`: a folder of checkerboard photographs in, a
//! `fixsight-lens 1` file (for the `grid` command) and a report out; the
//! calibration itself is in [`crate::calibrate`].
//!
//! 1. Every file in the folder whose name ends in `.png`, `.jpg` or `.jpeg`
//!    (any case) is an image, taken in name order; other files are listed
//!    in the report as ignored. A file that cannot be decoded stops the
//!    command (naming it), and so does an image whose size differs from the
//!    first one's. Colour images are converted to grey (the `image` crate's
//!    luma conversion).
//! 2. The board is sought in every image ([`crate::calibrate::corners`]); an image
//!    where it is not found completely is reported with the reason and
//!    skipped. Fewer than [`MIN_VIEWS`] views with the whole board stop the
//!    command, with every skipped file and its reason.
//! 3. Closed-form start and refinement ([`crate::calibrate::calibrate`]); degenerate
//!    poses, a failed refinement, a poor fit or a lens the file format or
//!    the grid builder rejects stop the command.
//! 4. Outputs, in `--out`: `views/<stem>.png` per used image,
//!    `calibration.txt`, `calibration.json`, then the lens file
//!    `lens.txt` last. None of them replaces an existing file unless
//!    `--overwrite` is given (the first existing one is named); each is
//!    written to a temporary file in its folder and renamed into place.
//!
//! No lens file is written on any failure.

use crate::calibrate::report::{self, Estimate, ImageRow, Report};
use crate::calibrate::{corners, Board, CalibError, Grey, ModelKind};
use crate::lens::LensSpec;
use std::path::{Path, PathBuf};

/// Fewest views with the whole board: with three or more, Zhang's
/// constraints determine `B` up to scale in general (Zhang 2000, section
/// 3.1); the accuracy study in the README measures what more views buy.
pub const MIN_VIEWS: usize = 3;
/// Name of the lens file in the output folder.
pub const LENS_FILE: &str = "lens.txt";

/// What the command is asked to do.
#[derive(Debug, Clone)]
pub struct Request {
    /// Image folder.
    pub images: PathBuf,
    /// The board.
    pub board: Board,
    /// Model to fit.
    pub model: ModelKind,
    /// Output folder.
    pub out: PathBuf,
    /// Control-point spacing log2 for the report's grid figures.
    pub grid_log2: u32,
    /// Fractional bits for the report's grid figures.
    pub frac_bits: u32,
    /// Replace existing outputs.
    pub overwrite: bool,
}

/// Parses `CxR` (e.g. `9x6`).
///
/// ```
/// use fixsight_verify::cmd::calibrate::parse_corners;
/// assert_eq!(parse_corners("9x6").unwrap(), (9, 6));
/// assert!(parse_corners("9by6").is_err());
/// ```
pub fn parse_corners(s: &str) -> Result<(usize, usize), String> {
    let (a, b) = s
        .split_once(['x', 'X'])
        .ok_or_else(|| format!("`{s}` is not COLSxROWS (for example 9x6)"))?;
    let n = |t: &str| {
        t.trim()
            .parse::<usize>()
            .map_err(|_| format!("`{s}` is not COLSxROWS (for example 9x6)"))
    };
    Ok((n(a)?, n(b)?))
}

/// Decoded grey images with their file names, and the names of the files
/// ignored.
pub type Folder = (Vec<(String, Grey)>, Vec<String>);

/// The images of a folder (step 1): decoded grey images with their file
/// names, and the names of ignored files.
///
/// ```
/// use fixsight_verify::cmd::calibrate::load_folder;
/// let dir = std::env::temp_dir().join(format!("fixsight-doc-empty-{}", std::process::id()));
/// std::fs::create_dir_all(&dir).unwrap();
/// std::fs::write(dir.join("notes.txt"), "x").unwrap();
/// let e = load_folder(&dir).unwrap_err();
/// assert!(e.to_string().contains("no .png/.jpg/.jpeg image"), "{e}");
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
pub fn load_folder(dir: &Path) -> Result<Folder, CalibError> {
    let entries = std::fs::read_dir(dir)
        .map_err(|e| CalibError::NoImages(format!("cannot list {}: {e}", dir.display())))?;
    let mut names = Vec::new();
    let mut ignored = Vec::new();
    for e in entries {
        let e =
            e.map_err(|e| CalibError::NoImages(format!("cannot list {}: {e}", dir.display())))?;
        let path = e.path();
        if !path.is_file() {
            continue;
        }
        let name = e.file_name().to_string_lossy().to_string();
        let ext = path
            .extension()
            .map(|x| x.to_string_lossy().to_ascii_lowercase())
            .unwrap_or_default();
        if ["png", "jpg", "jpeg"].contains(&ext.as_str()) {
            names.push((name, path));
        } else {
            ignored.push(name);
        }
    }
    names.sort();
    ignored.sort();
    if names.is_empty() {
        return Err(CalibError::NoImages(format!(
            "no .png/.jpg/.jpeg image in {}",
            dir.display()
        )));
    }
    let mut out: Vec<(String, Grey)> = Vec::with_capacity(names.len());
    for (name, path) in names {
        let img = image::open(&path).map_err(|e| CalibError::Unreadable {
            file: path.display().to_string(),
            reason: e.to_string(),
        })?;
        let g = img.to_luma8();
        let (w, h) = (g.width() as usize, g.height() as usize);
        if let Some((first, f)) = out.first() {
            if (f.width, f.height) != (w, h) {
                return Err(CalibError::MixedSizes {
                    file: path.display().to_string(),
                    size: (w, h),
                    first: dir.join(first).display().to_string(),
                    first_size: (f.width, f.height),
                });
            }
        }
        if w < 16 || h < 16 {
            return Err(CalibError::Unreadable {
                file: path.display().to_string(),
                reason: format!("{w}x{h} pixels is too small for a board"),
            });
        }
        out.push((name, Grey::from_u8(w, h, g.as_raw())));
    }
    Ok((out, ignored))
}

/// Writes `bytes` to `path` through a temporary file in the same folder.
fn put(path: &Path, bytes: &[u8]) -> Result<(), CalibError> {
    let err = |e: std::io::Error| CalibError::Write {
        file: path.display().to_string(),
        reason: e.to_string(),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    let tmp = path.with_file_name(format!(".{name}.tmp-{}", std::process::id()));
    std::fs::write(&tmp, bytes).map_err(err)?;
    std::fs::rename(&tmp, path).map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        err(e)
    })
}

/// Runs the command (module docs); returns the report text, whose last
/// line is the lens file's path.
///
/// ```
/// use fixsight_verify::calibrate::{synth, Board, ModelKind};
/// use fixsight_verify::cmd::calibrate::{run, Request};
/// let dir = std::env::temp_dir().join(format!("fixsight-doc-run-{}", std::process::id()));
/// let photos = dir.join("photos");
/// std::fs::create_dir_all(&photos).unwrap();
/// let spec = synth::SynthSpec::wide_angle(320, 240);
/// for (k, pose) in synth::poses(&spec, 4, 8).unwrap().iter().enumerate() {
///     let g = synth::render(&spec, pose, k as u64);
///     image::GrayImage::from_raw(320, 240, g.to_u8()).unwrap()
///         .save(photos.join(format!("{k}.png"))).unwrap();
/// }
/// let req = Request {
///     images: photos,
///     board: Board::new(9, 6, 30.0).unwrap(),
///     model: ModelKind::Brown,
///     out: dir.join("out"),
///     grid_log2: 4,
///     frac_bits: 5,
///     overwrite: false,
/// };
/// let text = run(&req).unwrap();
/// assert!(text.trim_end().ends_with("lens.txt"));
/// // A second run does not replace the outputs.
/// assert!(run(&req).unwrap_err().to_string().contains("exists"));
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
pub fn run(req: &Request) -> Result<String, CalibError> {
    let lens_path = req.out.join(LENS_FILE);
    let (images, ignored) = load_folder(&req.images)?;
    let size = (images[0].1.width, images[0].1.height);
    let mut found = Vec::new();
    let mut rows = Vec::new();
    let mut skipped = Vec::new();
    let bar = crate::progress::bar(images.len() as u64, "finding the board");
    for (name, g) in &images {
        bar.set_message(name.clone());
        bar.inc(1);
        match corners::find_board(g, &req.board) {
            Ok(c) => {
                found.push((name.clone(), g, c));
                rows.push(ImageRow {
                    file: name.clone(),
                    used: true,
                    skipped: None,
                    rms_px: None,
                    worst_px: None,
                    tilt_deg: None,
                });
            }
            Err(why) => {
                skipped.push((req.images.join(name).display().to_string(), why.to_string()));
                rows.push(ImageRow {
                    file: name.clone(),
                    used: false,
                    skipped: Some(why.to_string()),
                    rms_px: None,
                    worst_px: None,
                    tilt_deg: None,
                });
            }
        }
    }
    bar.finish_and_clear();
    if found.len() < MIN_VIEWS {
        return Err(CalibError::TooFewViews {
            found: found.len(),
            needed: MIN_VIEWS,
            skipped,
        });
    }
    let views: Vec<Vec<(f64, f64)>> = found.iter().map(|f| f.2.clone()).collect();
    let fit =
        crate::calibrate::calibrate(&req.board, &views, size, req.model).map_err(|e| match e {
            CalibError::Degenerate(why) => CalibError::Degenerate(format!(
                "{why} (views: {})",
                found
                    .iter()
                    .map(|f| f.0.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            )),
            e => e,
        })?;
    for (k, row) in rows.iter_mut().filter(|r| r.used).enumerate() {
        let (rms, worst) = report::rms_worst(&fit.errors[k]);
        row.rms_px = Some(rms);
        row.worst_px = Some(worst);
        row.tilt_deg = Some(fit.poses[k].tilt_deg());
    }
    let all: Vec<(f64, f64)> = fit.errors.iter().flatten().copied().collect();
    let (rms_px, worst_px) = report::rms_worst(&all);
    let header = vec![
        format!(
            "Calibrated by `fixsight-verify calibrate` from {} views of a {}x{} board ({} mm squares) in {}.",
            found.len(),
            req.board.cols,
            req.board.rows,
            req.board.square,
            req.images.display()
        ),
        format!(
            "Reprojection RMS {rms_px:.4} px, worst {worst_px:.4} px; standard deviations in calibration.txt."
        ),
    ];
    let lens = report::lens_text(&fit.camera, req.model, size, &header);
    let spec = LensSpec::parse(&lens).map_err(|e| CalibError::BadLens(e.to_string()))?;
    let grid =
        report::grid_error(&spec, req.grid_log2, req.frac_bits).map_err(CalibError::BadLens)?;
    let k = fit.camera.intrinsics;
    let mut estimates: Vec<Estimate> = [("fx", k.fx), ("fy", k.fy), ("cx", k.cx), ("cy", k.cy)]
        .iter()
        .zip(fit.std_intrinsics)
        .map(|(&(n, v), s)| Estimate {
            name: n.into(),
            value: v,
            std: s,
        })
        .collect();
    for ((n, v), s) in req
        .model
        .names()
        .iter()
        .zip(crate::calibrate::coefficients(&fit.camera.lens))
        .zip(&fit.std_coefficients)
    {
        estimates.push(Estimate {
            name: (*n).into(),
            value: v,
            std: *s,
        });
    }
    let cov = report::coverage(
        &views.iter().flatten().copied().collect::<Vec<_>>(),
        size,
        (k.cx, k.cy),
    );
    let warnings = report::warnings(&cov, &fit, &rows);
    let r = Report {
        schema: 1,
        folder: req.images.display().to_string(),
        inner_corners: (req.board.cols, req.board.rows),
        square_mm: req.board.square,
        model: req.model.word().into(),
        size,
        ignored,
        images: rows,
        estimates,
        rms_px,
        worst_px,
        corners: all.len(),
        coverage: cov,
        grid,
        warnings,
        lens_file: lens_path.display().to_string(),
    };
    // Outputs: check every target first, so nothing is half-written.
    let views_dir = req.out.join("views");
    let mut targets: Vec<(PathBuf, Vec<u8>)> = Vec::new();
    for (v, (name, g, seen)) in found.iter().enumerate() {
        let model: Vec<(f64, f64)> = seen
            .iter()
            .zip(&fit.errors[v])
            .map(|(&(x, y), &(dx, dy))| (x + dx, y + dy))
            .collect();
        let stem = Path::new(name)
            .file_stem()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_else(|| name.clone());
        let mut png = Vec::new();
        report::picture(g, seen, &model)
            .write_to(&mut std::io::Cursor::new(&mut png), image::ImageFormat::Png)
            .map_err(|e| CalibError::Write {
                file: views_dir.join(format!("{stem}.png")).display().to_string(),
                reason: e.to_string(),
            })?;
        targets.push((views_dir.join(format!("{stem}.png")), png));
    }
    let text = report::text(&r);
    let json = serde_json::to_string_pretty(&r).map_err(|e| CalibError::Write {
        file: "calibration.json".into(),
        reason: e.to_string(),
    })?;
    targets.push((req.out.join("calibration.txt"), text.clone().into_bytes()));
    targets.push((req.out.join("calibration.json"), json.into_bytes()));
    targets.push((lens_path, lens.into_bytes()));
    if !req.overwrite {
        if let Some((p, _)) = targets.iter().find(|(p, _)| p.exists()) {
            return Err(CalibError::Exists(p.display().to_string()));
        }
    }
    for dir in [&req.out, &views_dir] {
        std::fs::create_dir_all(dir).map_err(|e| CalibError::Write {
            file: dir.display().to_string(),
            reason: e.to_string(),
        })?;
    }
    for (p, bytes) in &targets {
        put(p, bytes)?;
    }
    Ok(text)
}
