//! `fixsight-verify run`: one kernel on the user's own images, fixed point
//! against its `f64` reference, with the report's metrics; or, with
//! `--pipeline`, the whole job over a sequence of frames ([`pipeline`]).
//!
//! # Input
//!
//! `--input` is an image file or a folder (its `.png`, `.pgm`, `.ppm`,
//! `.jpg`, `.jpeg` files in name order; other files are listed as
//! skipped). Grey images are used as they are. Colour images are turned
//! into 8-bit luma with the weights of the chosen standard, on the 8-bit
//! R'G'B' values as stored (no linearisation), rounded half up:
//!
//! * `bt601` (default): `Y = 0.299 R + 0.587 G + 0.114 B` (ITU-R BT.601);
//! * `bt709`: `Y = 0.2126 R + 0.7152 G + 0.0722 B` (ITU-R BT.709).
//!
//! An alpha channel is ignored. 16-bit images are reduced to 8 bits first
//! (the image crate's conversion, rounding to the nearest 8-bit value).
//!
//! # Kernels
//!
//! * the filter presets (`filter.binomial3` ... `filter.scharr_y`), border
//!   clamp: the kernel against the exact real-valued 2-D correlation (the
//!   error shows the rounding, at most 1/2 LSB for the smoothing presets);
//! * `gradient.magnitude_l1`, `gradient.magnitude_l2_approx`,
//!   `gradient.magnitude_l2_round`: on the Sobel gradients of the image,
//!   against the `f64` magnitude of the same gradients;
//! * `chain.edges`: the demo edge chain against the full-`f64` Canny with
//!   the same thresholds (as `t - 1/2` on the `f64` magnitude, the test
//!   the chain's rounded magnitude makes), thinned by the chain's rule,
//!   F1 within 1 px.
//!
//! # Output (in `--out`, per image `<stem>`)
//!
//! `<stem>.<kernel>.fixed.png`, `<stem>.<kernel>.f64.png` (the outputs as
//! 8-bit pictures: `u8` outputs as they are, others scaled by the largest
//! absolute value of the two to 0..255), `<stem>.<kernel>.diff.png` (`|fixed
//! - f64|`, white 0 to black at the largest difference) and
//! `<stem>.<kernel>.json` (the figures). Files are written as every command
//! writes them (`crate::files`): refused when they exist unless
//! `--overwrite`, temporary names renamed into place at the end.

pub mod pipeline;

use crate::chain::reference::{agreement, reference_of_chain};
use crate::edge_chain::{run_chain, DEMO};
use crate::files::{self, Outputs};
use crate::filter::reference::{real_taps, reference_real};
use crate::filter::run::run_whole;
use crate::filter::{preset, OutputParam, PRESETS};
use crate::gradient::reference::{reference_l1, reference_l2, reference_l2_round};
use crate::gradient::run::{run_pair, PairKernel};
use crate::metrics::ErrorStats;
use anyhow::{bail, Context};
use fixsight::filter::{sobel_x, sobel_y, Border};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Luma weights of a colour standard.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Luma {
    /// ITU-R BT.601.
    Bt601,
    /// ITU-R BT.709.
    Bt709,
}

impl Luma {
    /// Parses `bt601` or `bt709`.
    ///
    /// ```
    /// use fixsight_verify::cmd::run::Luma;
    /// assert_eq!(Luma::parse("bt709"), Ok(Luma::Bt709));
    /// assert!(Luma::parse("srgb").is_err());
    /// ```
    pub fn parse(s: &str) -> Result<Luma, String> {
        match s {
            "bt601" => Ok(Luma::Bt601),
            "bt709" => Ok(Luma::Bt709),
            _ => Err(format!("`{s}`: the luma standard is bt601 or bt709")),
        }
    }

    /// `(R, G, B)` weights.
    pub fn weights(self) -> [f64; 3] {
        match self {
            Luma::Bt601 => [0.299, 0.587, 0.114],
            Luma::Bt709 => [0.2126, 0.7152, 0.0722],
        }
    }

    /// 8-bit luma of an 8-bit R'G'B' pixel, rounded half up.
    ///
    /// ```
    /// use fixsight_verify::cmd::run::Luma;
    /// assert_eq!(Luma::Bt601.of([255, 255, 255]), 255);
    /// assert_eq!(Luma::Bt601.of([255, 0, 0]), 76);   // 76.245
    /// assert_eq!(Luma::Bt709.of([255, 0, 0]), 54);   // 54.213
    /// ```
    pub fn of(self, rgb: [u8; 3]) -> u8 {
        let w = self.weights();
        let y = w[0] * rgb[0] as f64 + w[1] * rgb[1] as f64 + w[2] * rgb[2] as f64;
        (y + 0.5).floor().clamp(0.0, 255.0) as u8
    }
}

/// A grey image.
#[derive(Debug, Clone)]
pub struct Grey {
    /// Width.
    pub w: usize,
    /// Height.
    pub h: usize,
    /// Pixels, row-major.
    pub px: Vec<u8>,
}

/// Largest width or height `run` takes (the kernels' limit).
pub const MAX_SIDE: u32 = 32767;

/// Decodes an image file into grey (luma for colour images).
pub fn load_grey(path: &Path, luma: Luma) -> anyhow::Result<Grey> {
    let bytes = files::read_bounded(path, files::MAX_IMAGE_BYTES)?;
    grey_from_bytes(&bytes, luma).with_context(|| {
        format!(
            "{} is not an image this tool reads",
            files::shown_path(path)
        )
    })
}

/// Decodes image bytes (PNG, PGM/PPM, JPEG, told apart by their first
/// bytes) into grey. The decoder is limited before it allocates: sides up
/// to [`MAX_SIDE`], at most [`files::MAX_IMAGE_BYTES`] of decoded pixels, so
/// a header that claims a huge image is refused, not allocated.
///
/// ```
/// use fixsight_verify::cmd::run::{grey_from_bytes, Luma};
/// let mut pgm = b"P5\n2 1\n255\n".to_vec();
/// pgm.extend([7, 200]);
/// assert_eq!(grey_from_bytes(&pgm, Luma::Bt601).unwrap().px, [7, 200]);
/// assert!(grey_from_bytes(b"P5\n30000 30000\n255\n", Luma::Bt601).is_err());
/// ```
pub fn grey_from_bytes(bytes: &[u8], luma: Luma) -> anyhow::Result<Grey> {
    let mut reader = image::ImageReader::new(std::io::Cursor::new(bytes)).with_guessed_format()?;
    let mut limits = image::Limits::default();
    limits.max_image_width = Some(MAX_SIDE);
    limits.max_image_height = Some(MAX_SIDE);
    limits.max_alloc = Some(files::MAX_IMAGE_BYTES);
    reader.limits(limits);
    let img = reader.decode()?;
    let (w, h) = (img.width() as usize, img.height() as usize);
    if w == 0 || h == 0 {
        bail!("the image is {w}x{h}");
    }
    let px = if img.color().has_color() {
        img.to_rgb8()
            .pixels()
            .map(|p| luma.of([p[0], p[1], p[2]]))
            .collect()
    } else {
        img.to_luma8().into_raw()
    };
    Ok(Grey { w, h, px })
}

/// Ids `run` accepts.
pub fn kernels() -> Vec<&'static str> {
    let mut v: Vec<&str> = PRESETS.iter().map(|p| p.id).collect();
    v.extend([
        "gradient.magnitude_l1",
        "gradient.magnitude_l2_approx",
        "gradient.magnitude_l2_round",
        "chain.edges",
    ]);
    v
}

/// A gradient magnitude kernel and its `f64` reference.
type MagnitudePair = (PairKernel<u16>, fn(i16, i16) -> f64);

/// Fixed-point and `f64` outputs of a kernel on one image, and its figures.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Kernel output widened to `f64`.
    pub fixed: Vec<f64>,
    /// Reference output.
    pub reference: Vec<f64>,
    /// Named figures.
    pub metrics: BTreeMap<String, f64>,
}

fn stats_metrics(fixed: &[f64], reference: &[f64], peak: f64) -> BTreeMap<String, f64> {
    let s = ErrorStats::compare(fixed, reference, peak);
    let mut m = BTreeMap::new();
    s.add_to(&mut m, "");
    m.insert("max_abs_err".into(), s.max_abs);
    m.insert("within_1lsb_share".into(), s.share_within(1));
    m.insert("samples".into(), s.samples as f64);
    m
}

/// Runs `kernel` on `g`.
pub fn apply(kernel: &str, g: &Grey) -> anyhow::Result<Outcome> {
    let e = |e: fixsight::Error| anyhow::anyhow!("{e}");
    if let Some(p) = preset(kernel) {
        let f = (p.make)(Border::Clamp);
        let reference = reference_real(
            &g.px,
            g.w,
            g.h,
            &real_taps(f.horizontal()),
            &real_taps(f.vertical()),
            Border::Clamp,
        );
        let (fixed, peak): (Vec<f64>, f64) = match p.output {
            OutputParam::U8 => (
                run_whole::<u8>(&f, &g.px, g.w, g.h)
                    .map_err(e)?
                    .iter()
                    .map(|&v| v as f64)
                    .collect(),
                255.0,
            ),
            OutputParam::I16 => (
                run_whole::<i16>(&f, &g.px, g.w, g.h)
                    .map_err(e)?
                    .iter()
                    .map(|&v| v as f64)
                    .collect(),
                65535.0,
            ),
        };
        let metrics = stats_metrics(&fixed, &reference, peak);
        return Ok(Outcome {
            fixed,
            reference,
            metrics,
        });
    }
    let mag: Option<MagnitudePair> = match kernel {
        "gradient.magnitude_l1" => Some((fixsight::gradient::magnitude_l1, reference_l1)),
        "gradient.magnitude_l2_approx" => {
            Some((fixsight::gradient::magnitude_l2_approx, reference_l2))
        }
        "gradient.magnitude_l2_round" => {
            Some((fixsight::gradient::magnitude_l2_round, reference_l2_round))
        }
        _ => None,
    };
    if let Some((k, r)) = mag {
        let gx = run_whole::<i16>(&sobel_x(Border::Clamp), &g.px, g.w, g.h).map_err(e)?;
        let gy = run_whole::<i16>(&sobel_y(Border::Clamp), &g.px, g.w, g.h).map_err(e)?;
        let m = run_pair(&gx, &gy, g.w, g.h, k).map_err(|s| anyhow::anyhow!(s))?;
        let fixed: Vec<f64> = m.iter().map(|&v| v as f64).collect();
        let reference: Vec<f64> = gx.iter().zip(&gy).map(|(&x, &y)| r(x, y)).collect();
        let metrics = stats_metrics(&fixed, &reference, 65535.0);
        return Ok(Outcome {
            fixed,
            reference,
            metrics,
        });
    }
    if kernel == "chain.edges" {
        let c = run_chain(&g.px, g.w, g.h, &DEMO).map_err(|s| anyhow::anyhow!(s))?;
        let (low, high) = (c.thresholds.low(), c.thresholds.high());
        let reference = reference_of_chain(&g.px, g.w, g.h, low, high);
        let ag = agreement(&c.thin, &reference, g.w, g.h);
        let metrics = BTreeMap::from([
            ("f1".to_string(), ag.f1),
            ("precision".to_string(), ag.precision),
            ("recall".to_string(), ag.recall),
            ("fixed_edge_px".to_string(), ag.kernel_px as f64),
            ("f64_edge_px".to_string(), ag.reference_px as f64),
            ("low".to_string(), low as f64),
            ("high".to_string(), high as f64),
        ]);
        return Ok(Outcome {
            fixed: c.thin.iter().map(|&v| v as f64).collect(),
            reference: reference.iter().map(|&v| v as f64).collect(),
            metrics,
        });
    }
    bail!(
        "{}: run takes one of {}",
        files::shown(kernel),
        kernels().join(", ")
    )
}

/// 8-bit picture of two outputs on one scale: as they are when both fit
/// 0..255, else `|v|` scaled by the largest of both to 0..255.
fn pictures(a: &[f64], b: &[f64]) -> (Vec<u8>, Vec<u8>) {
    let fits = a.iter().chain(b).all(|&v| (0.0..=255.0).contains(&v));
    let top = a
        .iter()
        .chain(b)
        .fold(0.0f64, |m, &v| m.max(v.abs()))
        .max(1e-12);
    let f = |v: f64| -> u8 {
        if fits {
            v.round() as u8
        } else {
            (255.0 * v.abs() / top).round() as u8
        }
    };
    (
        a.iter().map(|&v| f(v)).collect(),
        b.iter().map(|&v| f(v)).collect(),
    )
}

/// The images of `input`: the file itself, or the folder's image files in
/// name order (and the names skipped).
pub fn inputs(input: &Path) -> anyhow::Result<(Vec<PathBuf>, Vec<String>)> {
    let meta = std::fs::metadata(input)
        .with_context(|| format!("cannot read {}", files::shown_path(input)))?;
    if meta.is_file() {
        return Ok((vec![input.to_path_buf()], vec![]));
    }
    let mut images = Vec::new();
    let mut skipped = Vec::new();
    for entry in std::fs::read_dir(input)
        .with_context(|| format!("cannot list {}", files::shown_path(input)))?
    {
        let p = entry?.path();
        let ext = p
            .extension()
            .map(|x| x.to_string_lossy().to_ascii_lowercase())
            .unwrap_or_default();
        if p.is_file() && ["png", "pgm", "ppm", "jpg", "jpeg"].contains(&ext.as_str()) {
            images.push(p);
        } else {
            skipped.push(p.file_name().unwrap_or_default().to_string_lossy().into());
        }
    }
    images.sort();
    skipped.sort();
    if images.is_empty() {
        bail!(
            "no .png/.pgm/.ppm/.jpg/.jpeg image in {}",
            files::shown_path(input)
        );
    }
    Ok((images, skipped))
}

/// The outputs `names` in `out` (refused when one exists, unless
/// `overwrite`), after listing the inputs that were skipped.
fn open_outputs(
    out: &Path,
    names: &[String],
    overwrite: bool,
    skipped: &[String],
) -> anyhow::Result<Outputs> {
    let o = Outputs::new(
        out,
        names.iter().map(String::as_str),
        overwrite,
        "--overwrite",
    )?;
    for s in skipped {
        println!("skipped {} (not an image file)", files::shown(s));
    }
    Ok(o)
}

/// The command.
pub fn run(
    input: &Path,
    kernel: &str,
    out: &Path,
    luma: Luma,
    overwrite: bool,
) -> anyhow::Result<bool> {
    if !kernels().contains(&kernel) {
        bail!(
            "{}: run takes one of {}",
            files::shown(kernel),
            kernels().join(", ")
        );
    }
    let (images, skipped) = inputs(input)?;
    let mut names = Vec::new();
    for p in &images {
        let stem = p.file_stem().unwrap_or_default().to_string_lossy();
        for suffix in ["fixed.png", "f64.png", "diff.png", "json"] {
            names.push(format!("{stem}.{kernel}.{suffix}"));
        }
    }
    let mut o = open_outputs(out, &names, overwrite, &skipped)?;
    for p in &images {
        let g = load_grey(p, luma)?;
        let r = apply(kernel, &g)?;
        let stem = p
            .file_stem()
            .unwrap_or_default()
            .to_string_lossy()
            .to_string();
        let (fa, fb) = pictures(&r.fixed, &r.reference);
        let diff: Vec<f64> = r
            .fixed
            .iter()
            .zip(&r.reference)
            .map(|(a, b)| (a - b).abs())
            .collect();
        let top = diff.iter().fold(0.0f64, |m, &v| m.max(v)).max(1e-12);
        let dimg: Vec<u8> = diff
            .iter()
            .map(|&d| 255 - (255.0 * d / top).round() as u8)
            .collect();
        for (suffix, px) in [("fixed.png", fa), ("f64.png", fb), ("diff.png", dimg)] {
            let img = image::GrayImage::from_raw(g.w as u32, g.h as u32, px)
                .context("output has the image's size")?;
            o.write_with(&format!("{stem}.{kernel}.{suffix}"), |path| {
                img.save_with_format(path, image::ImageFormat::Png)
                    .map_err(std::io::Error::other)
            })?;
        }
        let json = serde_json::json!({
            "input": p.display().to_string(),
            "kernel": kernel,
            "width": g.w,
            "height": g.h,
            "luma": match luma { Luma::Bt601 => "bt601", Luma::Bt709 => "bt709" },
            "metrics": r.metrics,
        });
        o.write(
            &format!("{stem}.{kernel}.json"),
            (serde_json::to_string_pretty(&json)? + "\n").as_bytes(),
        )?;
        let figures: Vec<String> = r
            .metrics
            .iter()
            .map(|(k, v)| format!("{k} {v:.6}"))
            .collect();
        println!(
            "{} ({}x{}) {kernel}: {}",
            files::shown_path(p),
            g.w,
            g.h,
            figures.join(", ")
        );
    }
    o.commit()?;
    println!("written to {}", files::shown_path(out));
    Ok(true)
}
