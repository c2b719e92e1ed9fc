//! `fixsight-verify run --pipeline`: the whole job in point mode
//! ([`fixsight::pipeline::PointJob`] with
//! [`PointJobConfig::DEMO_QVGA`]) over the user's own frames, against the
//! `f64` job of [`crate::pipeline::job`], frame by frame.
//!
//! > **Not a safety function.** The drift warning it prints is an aid for
//! > developing firmware; a vehicle that can hurt people needs safety-rated
//! > sensing and control under the applicable standards (ISO 3691-4,
//! > IEC 61508, ISO 13849) and local rules.
//!
//! # Input
//!
//! `--input` is one image or a folder of them, taken as one sequence of
//! frames in file-name order (colour to luma as for every `run`). The demo
//! job's configuration is for 320 x 240 frames (its vote frame, marking
//! rows and tape widths are in pixels of that size), so every frame must be
//! 320 x 240; another size is refused with the file's name and size.
//!
//! `--lens FILE` (a `fixsight-lens 1` file, as `calibrate` writes it)
//! corrects the edge points before voting: the fixed job through the
//! correction grid built from the file (step `2^3` px, 5 fractional bits:
//! [`crate::lines::GRID_LOG2`], [`crate::lines::GRID_FRAC_BITS`]), the
//! `f64` job through the lens model itself. Its sensor and corrected view
//! must both be 320 x 240. Without `--lens` the frames are taken as
//! already free of distortion (no correction in either run).
//!
//! # Output (in `--out`)
//!
//! * `pipeline.json`: per frame the file, the fixed job's thresholds, edge
//!   points and peaks, each run's tape edges `(rho px, theta deg)` about
//!   the image centre (`null` when no marking was found) and drift
//!   warning (frames to the crossing, `null` when none), and the summary
//!   figures printed on the terminal;
//! * `<stem>.pipeline.png` per frame: the corrected view (the frame itself
//!   without `--lens`; with it, the frame resampled through the `f64` lens
//!   model, bilinear, clamped border) with the fixed run's tape edges in red and the `f64`
//!   run's in green (yellow where they coincide).
//!
//! # Figures
//!
//! `line_rho_err_px_fixed_vs_f64_{max,mean}`,
//! `line_theta_err_deg_fixed_vs_f64_{max,mean}` (over the frames where
//! both found the tape), `lost_frames_fixed`, `lost_frames_f64`,
//! `first_warning_fixed`, `first_warning_f64` (-1: none),
//! `warning_frame_delta`, `warning_frames_differ`: the definitions of
//! [`crate::pipeline::job`] without the truth, which the user's frames do
//! not have.

use super::{inputs, load_grey, open_outputs, Luma};
use crate::files;
use crate::lens::{read_lens_file, LensSpec};
use crate::lines::{build_correction_grid, corrected_of, GRID_FRAC_BITS, GRID_LOG2};
use crate::pipeline::image::warp_f64;
use crate::pipeline::job::{run_f64_with, run_fixed, stage_controls, FixedVsF64, JobFrame};
use crate::warp::reference::exact_map;
use anyhow::{bail, Context};
use fixsight::pipeline::PointJobConfig;
use fixsight::warp::ControlGrid;
use std::path::Path;

/// The frame size of the demo job.
pub const FRAME: (usize, usize) = (
    PointJobConfig::DEMO_QVGA.vote.width,
    PointJobConfig::DEMO_QVGA.vote.height,
);

/// The safety note printed with every run.
pub const CAUTION: &str =
    "Not a safety function: the drift warning is a development aid. A vehicle \
that can hurt people needs safety-rated sensing and control under the applicable standards (for \
example ISO 3691-4, IEC 61508, ISO 13849) and local regulations.";

/// Reads and checks a lens file for the demo job.
pub fn load_lens(path: &Path) -> anyhow::Result<LensSpec> {
    let spec = read_lens_file(path)?;
    check_lens_size(path, &spec)?;
    Ok(spec)
}

/// Refuses a lens file `spec` read from `path` unless its sensor and
/// corrected view are both the demo job's frame size.
pub fn check_lens_size(path: &Path, spec: &LensSpec) -> anyhow::Result<()> {
    if spec.sensor != FRAME || spec.output != FRAME {
        bail!(
            "{}: the demo job (run --pipeline, report) needs a lens file for {}x{} frames with a {}x{} corrected view; this \
             one has a {}x{} sensor and a {}x{} view",
            files::shown_path(path),
            FRAME.0,
            FRAME.1,
            FRAME.0,
            FRAME.1,
            spec.sensor.0,
            spec.sensor.1,
            spec.output.0,
            spec.output.1
        );
    }
    Ok(())
}

/// Degrees of a line `(rho px, theta rad)` for the JSON.
fn line_json(l: (f64, f64)) -> serde_json::Value {
    serde_json::json!([l.0, l.1.to_degrees()])
}

fn frame_json(f: &JobFrame) -> serde_json::Value {
    serde_json::json!({
        "tape": f.tape.map(|t| vec![line_json(t[0]), line_json(t[1])]),
        "warning_frames": f.warning,
    })
}

/// Marks line `(rho, theta)` about the image centre with bit `bit` in
/// `mask` (one byte per pixel of the frame).
fn mark_line(mask: &mut [u8], line: (f64, f64), bit: u8) {
    let (w, h) = FRAME;
    let (ox, oy) = ((w as f64 - 1.0) / 2.0, (h as f64 - 1.0) / 2.0);
    let (c, s) = (line.1.cos(), line.1.sin());
    let mut put = |x: f64, y: f64| {
        let (xi, yi) = (x.round(), y.round());
        if (0.0..w as f64).contains(&xi) && (0.0..h as f64).contains(&yi) {
            mask[yi as usize * w + xi as usize] |= bit;
        }
    };
    // x c + y s = rho about the centre: step along the longer axis.
    if s.abs() >= c.abs() {
        for x in 0..w {
            put(x as f64, oy + (line.0 - (x as f64 - ox) * c) / s);
        }
    } else {
        for y in 0..h {
            put(ox + (line.0 - (y as f64 - oy) * s) / c, y as f64);
        }
    }
}

/// The picture of a frame: `view` grey, the pixels of `mask` red (bit 0,
/// fixed), green (bit 1, `f64`) or yellow (both).
fn picture(view: &[u8], mask: &[u8]) -> Vec<u8> {
    view.iter()
        .zip(mask)
        .flat_map(|(&v, &m)| match m {
            1 => [255, 0, 0],
            2 => [0, 255, 0],
            3 => [255, 255, 0],
            _ => [v; 3],
        })
        .collect()
}

/// The command: returns whether every frame ran.
pub fn run(
    input: &Path,
    lens: Option<&Path>,
    out: &Path,
    luma: Luma,
    overwrite: bool,
) -> anyhow::Result<bool> {
    let spec = lens.map(load_lens).transpose()?;
    let (images, skipped) = inputs(input)?;
    let stems: Vec<String> = images
        .iter()
        .map(|p| p.file_stem().unwrap_or_default().to_string_lossy().into())
        .collect();
    let mut names: Vec<String> = stems.iter().map(|s| format!("{s}.pipeline.png")).collect();
    names.push("pipeline.json".into());
    let mut o = open_outputs(out, &names, overwrite, &skipped)?;
    let mut frames = Vec::with_capacity(images.len());
    let bar = crate::progress::bar(images.len() as u64, "reading frames");
    for p in &images {
        bar.inc(1);
        let g = load_grey(p, luma)?;
        if (g.w, g.h) != FRAME {
            bail!(
                "{} is {}x{}: --pipeline runs the demo job configuration, which takes {}x{} frames",
                files::shown_path(p),
                g.w,
                g.h,
                FRAME.0,
                FRAME.1
            );
        }
        frames.push(g.px);
    }
    bar.finish_and_clear();
    let cg = match &spec {
        Some(s) => Some(
            build_correction_grid(&s.camera, &s.view, FRAME, FRAME, GRID_LOG2, GRID_FRAC_BITS)
                .map_err(|e| anyhow::anyhow!("the correction grid of the lens file: {e}"))?,
        ),
        None => None,
    };
    let grid = match &cg {
        Some(c) => Some(
            ControlGrid::new(&c.points, c.geom, c.k)
                .map_err(|e| anyhow::anyhow!("the correction grid of the lens file: {e}"))?,
        ),
        None => None,
    };
    let fixed = run_fixed(&frames, grid.as_ref()).map_err(|e| anyhow::anyhow!(e))?;
    let controls = stage_controls(&fixed);
    let reference = match &spec {
        Some(s) => run_f64_with(&frames, &controls, &|x, y| {
            corrected_of(&s.camera, &s.view, x, y)
        }),
        None => run_f64_with(&frames, &controls, &|x, y| Some((x, y))),
    };
    let cmp = FixedVsF64::of(&fixed.frames, &reference);
    let map = spec
        .as_ref()
        .map(|s| exact_map(&s.camera, &s.view, FRAME.0, FRAME.1));
    let mut per_frame = Vec::new();
    for (k, (((a, b), rec), stem)) in fixed
        .frames
        .iter()
        .zip(&reference)
        .zip(&fixed.records)
        .zip(&stems)
        .enumerate()
    {
        let rep = &rec.0;
        let view = match &map {
            Some(m) => warp_f64(&frames[k], m, FRAME.0, FRAME.1),
            None => frames[k].clone(),
        };
        let mut mask = vec![0u8; view.len()];
        for (run, bit) in [(a, 1), (b, 2)] {
            for l in run.tape.iter().flatten() {
                mark_line(&mut mask, *l, bit);
            }
        }
        let img = image::RgbImage::from_raw(FRAME.0 as u32, FRAME.1 as u32, picture(&view, &mask))
            .context("the picture has the frame's size")?;
        o.write_with(&format!("{stem}.pipeline.png"), |path| {
            img.save_with_format(path, image::ImageFormat::Png)
                .map_err(std::io::Error::other)
        })?;
        let show = |f: &JobFrame| match (f.tape, f.warning) {
            (None, _) => "no marking".to_string(),
            (Some(t), wr) => format!(
                "tape ({:.2} px, {:.2} deg) ({:.2} px, {:.2} deg){}",
                t[0].0,
                t[0].1.to_degrees(),
                t[1].0,
                t[1].1.to_degrees(),
                wr.map_or(String::new(), |n| format!(", WARNING in {n} frames"))
            ),
        };
        println!(
            "{} fixed: {} | f64: {}",
            files::shown_path(&images[k]),
            show(a),
            show(b)
        );
        per_frame.push(serde_json::json!({
            "input": images[k].display().to_string(),
            "thresholds": [rep.edges.thresholds.0, rep.edges.thresholds.1],
            "edge_points": rep.edges.edge_points,
            "peaks": rep.peaks,
            "fixed": frame_json(a),
            "f64": frame_json(b),
        }));
    }
    let ((rho_max, rho_mean), (th_max, th_mean)) = cmp.line_figures();
    let first = |f: Option<usize>| f.map_or(-1.0, |v| v as f64);
    let summary = [
        ("frames", cmp.frames as f64),
        ("line_rho_err_px_fixed_vs_f64_max", rho_max),
        ("line_rho_err_px_fixed_vs_f64_mean", rho_mean),
        ("line_theta_err_deg_fixed_vs_f64_max", th_max),
        ("line_theta_err_deg_fixed_vs_f64_mean", th_mean),
        ("lost_frames_fixed", cmp.lost[0] as f64),
        ("lost_frames_f64", cmp.lost[1] as f64),
        ("first_warning_fixed", first(cmp.first_warning[0])),
        ("first_warning_f64", first(cmp.first_warning[1])),
        ("warning_frame_delta", cmp.warning_frame_delta()),
        ("warning_frames_differ", cmp.warning_frames_differ as f64),
    ];
    let json = serde_json::json!({
        "job": "pipeline.point_job",
        "configuration": "PointJobConfig::DEMO_QVGA",
        "lens": lens.map(|p| p.display().to_string()),
        "luma": match luma { Luma::Bt601 => "bt601", Luma::Bt709 => "bt709" },
        "metrics": summary.iter().map(|(k, v)| (k.to_string(), *v)).collect::<std::collections::BTreeMap<_, _>>(),
        "frames": per_frame,
        "caution": CAUTION,
    });
    o.write(
        "pipeline.json",
        (serde_json::to_string_pretty(&json)? + "\n").as_bytes(),
    )?;
    o.commit()?;
    let figures: Vec<String> = summary
        .iter()
        .map(|(k, v)| format!("{k} {}", crate::lens::readable(*v)))
        .collect();
    println!(
        "pipeline.point_job over {} frames: {}",
        cmp.frames,
        figures.join(", ")
    );
    println!("{CAUTION}");
    println!("written to {}", files::shown_path(out));
    Ok(true)
}
