//! The whole job in image mode (`pipeline.image_job`,
//! [`fixsight::pipeline::ImageJob`]) over the demo sequence: the kernel
//! against the kernels composed on the host (bit-exact), against an `f64`
//! reference of the same job, and both against the sequence's truth.
//!
//! > **Not a safety function.** The drift warning measured here is an aid;
//! > a vehicle that can hurt people needs safety-rated sensing and control
//! > (ISO 3691-4, IEC 61508, ISO 13849) and local rules.
//!
//! # The three runs, per frame of "aisle-drift" (96 QVGA frames)
//!
//! * **fixed**: [`DemoImageJobQvga`] with [`ImageJobConfig::DEMO_QVGA`]
//!   (clamped border), camera rows pushed one by one through the demo
//!   lens's undistortion grid ([`crate::warp::grid::build_grid`] from the
//!   sequence's camera to its corrected view, step 16, 5 fractional bits,
//!   the bench's and `warp.grid_stream`'s step) and a ring of
//!   `band_rows(1)` source rows.
//! * **composed**: [`ControlGrid::warp_rows`] of the whole frame, then
//!   [`DemoPointJobQvga`] on the corrected frame finished without a grid.
//!   The fixed run must equal it bit for bit in every frame (report,
//!   peaks, lines, every track's words); a difference fails the row.
//! * **f64**: every corrected pixel is the `f64` bilinear value
//!   ([`crate::warp::reference::bilinear_f64`], clamped border) at the
//!   exact lens coordinate ([`crate::warp::reference::exact_map`]),
//!   rounded to 8 bits (the `f64` edge chain takes 8-bit frames); then the
//!   point-mode `f64` job after its edge stage
//!   ([`super::job::run_f64_with`]) with each edge pixel voting at its own
//!   position, with the fixed stage's control decisions
//!   ([`super::job::StageControl`]: its thresholds, applied to the `f64`
//!   magnitude as `t - 1/2`, and no tape handed to
//!   the tracker in a frame whose gate bytes overflowed).
//!
//! # Metrics
//!
//! The point mode's ([`super::job`], *Metrics*), with
//! `ram_bytes_qvga` / `ram_bytes_vga` = [`DemoImageJobQvga::ram_bytes`] /
//! [`DemoImageJobVga::ram_bytes`] plus the demo lens's ring at that size
//! (`band_rows(1) * width`, step 16, `F = 5`), `band_rows_qvga`,
//! `band_rows_vga` and `grid_bytes` (the grid's table, read only).
//!
//! # Golden kernel id `pipeline.image_job`
//!
//! Params: [`JobParams`] as for `pipeline.point_job`, with the grid
//! required (`grid_log2` 2..=6): input `grid` (i32, 2 channels, `cols x
//! rows`) is an undistortion grid whose output and source are both the
//! input frame size (`width x height`), `grid_frac_bits` its fractional
//! bits; the border is clamped. Inputs: `frames` u8, `width x (frames *
//! height)`; `grid`. Output `record` i32, one row per frame laid out as
//! for `pipeline.point_job` (the `outside` word is always 0).

use super::job::{
    compare_runs, frame_record, job_config, outcome, run_f64_with, run_frames, stage_controls,
    FixedRun, JobParams, RECORD_WORDS_PER_FRAME, VECTOR_PEAKS, VECTOR_TRACKS,
};
use crate::contract::KernelReport;
use crate::golden::{Blob, GoldenCase};
use crate::lens::LensInUse;
use crate::sequence::{Sequence, SequenceSpec, DEMO_SEQUENCE};
use crate::warp::grid::build_grid;
use crate::warp::reference::{bilinear_f64, exact_map};
use fixsight::filter::Border;
use fixsight::pipeline::{
    map_words, DemoImageJobQvga, DemoImageJobVga, DemoPointJobQvga, ImageJob, ImageJobConfig,
};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight::{ImageView, ImageViewMut};

/// The kernel id: the job type [`fixsight::pipeline::ImageJob`].
pub const IMAGE_KERNEL: &str = "pipeline.image_job";

/// Grid step of the demo lens's undistortion grid, log2 (16 px).
pub const IMAGE_GRID_LOG2: u32 = 4;
/// Fractional bits of the demo lens's undistortion grid.
pub const IMAGE_GRID_FRAC_BITS: u32 = 5;

fn e(err: fixsight::Error) -> String {
    err.to_string()
}

/// The demo lens's undistortion grid points for a `w x h` sequence: from
/// its corrected view to its camera, output and source both `w x h`.
pub fn demo_grid(
    seq: &Sequence,
    w: usize,
    h: usize,
    k: u32,
    f: u32,
) -> Result<(WarpGeometry, Vec<i32>), String> {
    let geom = WarpGeometry::new(w, h, w, h, f).map_err(e)?;
    let mb = build_grid(seq.camera(), seq.view(), geom, k)?;
    Ok((geom, mb.points))
}

/// Runs the kernel job over `frames` (camera frames of the demo size).
pub fn run_fixed(frames: &[Vec<u8>], grid: ControlGrid<'_>) -> Result<FixedRun, String> {
    let cfg = ImageJobConfig::DEMO_QVGA;
    let (w, h) = (cfg.job.vote.width, cfg.job.vote.height);
    let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid).map_err(e)?];
    let mut job: Box<DemoImageJobQvga> = Box::default();
    job.configure(&cfg, grid, &mut ring).map_err(e)?;
    run_frames(frames, w * h, &mut |img| {
        for r in img.chunks_exact(w) {
            job.push_row(r).map_err(e)?;
        }
        let rep = job.finish().map_err(e)?;
        let tr = job.tracker().ok_or("no tracker")?;
        Ok(outcome(rep, job.peaks(), job.lines(), tr))
    })
}

/// The whole-frame warp, then the point-mode job on the corrected frame
/// without a grid (module docs); returns the differences from the fixed
/// run's records, one per differing frame.
pub fn composed_differences(
    frames: &[Vec<u8>],
    grid: &ControlGrid<'_>,
    fixed: &FixedRun,
) -> Result<Vec<String>, String> {
    let cfg = ImageJobConfig::DEMO_QVGA;
    let (w, h) = (cfg.job.vote.width, cfg.job.vote.height);
    let mut job: Box<DemoPointJobQvga> = Box::default();
    job.configure(&cfg.job, w, h).map_err(e)?;
    let mut diffs = Vec::new();
    let mut out = vec![0u8; w * h];
    for (k, (img, rec)) in frames.iter().zip(&fixed.records).enumerate() {
        grid.warp_rows(
            &ImageView::new(img, w, h, w).map_err(e)?,
            &mut ImageViewMut::new(&mut out, w, h, w).map_err(e)?,
            0,
            cfg.border,
        )
        .map_err(e)?;
        for r in out.chunks_exact(w) {
            job.push_row(r).map_err(e)?;
        }
        let rep = job.finish(None).map_err(e)?;
        let tr = job.tracker().ok_or("no tracker")?;
        let (_, want) = outcome(rep, job.peaks(), job.lines(), tr);
        if *rec != want {
            diffs.push(format!(
                "frame {k}: the job differs from the kernels composed"
            ));
        }
    }
    Ok(diffs)
}

/// The `f64` warp of a camera frame: the bilinear value at the exact
/// lens coordinate of every corrected pixel, clamped border, rounded to
/// 8 bits.
pub fn warp_f64(img: &[u8], map: &[(f64, f64)], w: usize, h: usize) -> Vec<u8> {
    map.iter()
        .map(|&(sx, sy)| {
            bilinear_f64(img, w, h, 1, 0, sx, sy, Border::Clamp)
                .round()
                .clamp(0.0, 255.0) as u8
        })
        .collect()
}

/// Ring rows and bytes of the demo lens at `w x h` (step 16, `F = 5`).
fn demo_ring(w: usize, h: usize) -> Result<(usize, usize), String> {
    let spec = SequenceSpec {
        width: w,
        height: h,
        ..DEMO_SEQUENCE
    };
    let seq = Sequence::new(&spec)?;
    let (geom, pts) = demo_grid(&seq, w, h, IMAGE_GRID_LOG2, IMAGE_GRID_FRAC_BITS)?;
    let g = ControlGrid::new(&pts, geom, IMAGE_GRID_LOG2).map_err(e)?;
    let rows = g.band_rows(1).map_err(e)?;
    Ok((rows, rows * w))
}

/// The whole comparison over a sequence (the demo's in the report).
pub fn image_row(seq: &Sequence) -> Result<KernelReport, String> {
    let spec = seq.spec();
    let (w, h) = (spec.width, spec.height);
    let (geom, pts) = demo_grid(seq, w, h, IMAGE_GRID_LOG2, IMAGE_GRID_FRAC_BITS)?;
    let grid = ControlGrid::new(&pts, geom, IMAGE_GRID_LOG2).map_err(e)?;
    let frames: Vec<Vec<u8>> = (0..spec.frames).map(|k| seq.render(k)).collect();
    let fixed = run_fixed(&frames, grid)?;
    let mut pr = composed_differences(&frames, &grid, &fixed)?;
    let map = exact_map(seq.camera(), seq.view(), w, h);
    let warped: Vec<Vec<u8>> = frames.iter().map(|f| warp_f64(f, &map, w, h)).collect();
    let reference = run_f64_with(&warped, &stage_controls(&fixed), &|x, y| Some((x, y)));
    let mut row = compare_runs(
        IMAGE_KERNEL,
        spec,
        seq,
        &fixed,
        &reference,
        &mut pr,
        vec![
            format!(
                "whole job in image mode over the {} sequence ({} frames {}x{}): the kernel vs the \
                 whole-frame warp then the point-mode job without a grid, frame by frame; f64 and \
                 truth figures in metrics",
                spec.name, spec.frames, w, h
            ),
            "ops per pixel per frame: the whole job (row-streamed warp, edge stage, gate bytes, \
             votes, peaks, marking, tracker)"
                .into(),
        ],
    );
    let (rq, bq) = demo_ring(320, 240)?;
    let (rv, bv) = demo_ring(640, 480)?;
    let m = &mut row.metrics;
    let mut put = |k: &str, v: f64| {
        m.insert(k.into(), v);
    };
    put("band_rows_qvga", rq as f64);
    put("band_rows_vga", rv as f64);
    put(
        "ram_bytes_qvga",
        (DemoImageJobQvga::ram_bytes() + bq) as f64,
    );
    put("ram_bytes_vga", (DemoImageJobVga::ram_bytes() + bv) as f64);
    put("grid_bytes", (pts.len() * 4) as f64);
    super::job::put_counts(&mut row, &fixed);
    for p in pr.drain(..) {
        row.fail(p);
    }
    Ok(row)
}

/// The report row on the demo sequence seen through `lens`.
pub fn check_image(lens: &LensInUse) -> KernelReport {
    let mut row = super::job::row_or_failure(
        IMAGE_KERNEL,
        super::job::demo_sequence_through(lens).and_then(|seq| image_row(&seq)),
    );
    row.notes.push(super::job::lens_note(lens));
    if !lens.is_demo() {
        row.notes.push(
            "band_rows_* and ram_bytes_* stay on the built-in demo lens (its ring at QVGA and VGA)"
                .into(),
        );
    }
    row
}

/// The golden vectors' image job (the harness's): [`super::job::VectorJob`]
/// behind the warp.
pub type VectorImageJob<'a> =
    ImageJob<'a, 320, { map_words(320, 240) }, 1024, 4096, 32, 255, VECTOR_PEAKS, VECTOR_TRACKS>;

/// Recomputes a `pipeline.image_job` vector (module docs).
pub fn run_image_vector(params: &serde_json::Value, inputs: &[Blob]) -> Result<Vec<Blob>, String> {
    let p: JobParams = crate::family::parse_params(IMAGE_KERNEL, params)?;
    let b = crate::family::input(inputs, "frames")?;
    if p.frames.checked_mul(p.height) != Some(b.height) || p.frames == 0 {
        return Err(format!(
            "frames input is {} rows high, {} x {} expected",
            b.height, p.frames, p.height
        ));
    }
    if p.grid_log2 == 0 {
        return Err("pipeline.image_job needs a grid (grid_log2 2..=6)".into());
    }
    let w = b.width;
    let cfg = ImageJobConfig {
        job: job_config(&p, w)?,
        border: Border::Clamp,
    };
    let pts = crate::family::input(inputs, "grid")?.to_i32()?;
    let geom = WarpGeometry::new(w, p.height, w, p.height, p.grid_frac_bits).map_err(e)?;
    let grid = ControlGrid::new(&pts, geom, p.grid_log2).map_err(e)?;
    let mut ring = vec![0u8; VectorImageJob::ring_bytes(&grid).map_err(e)?];
    let mut job: Box<VectorImageJob> = Box::default();
    job.configure(&cfg, grid, &mut ring).map_err(e)?;
    let data = b.to_u8()?;
    let mut rec = Vec::new();
    for f in 0..p.frames {
        for y in 0..p.height {
            let o = (f * p.height + y) * w;
            job.push_row(&data[o..o + w]).map_err(e)?;
        }
        let r = job.finish().map_err(e)?;
        rec.extend(frame_record(job.line_stage(), &r));
    }
    Ok(vec![Blob::from_i32(
        "record",
        RECORD_WORDS_PER_FRAME,
        p.frames,
        1,
        &rec,
    )])
}

/// The golden cases: the point mode's frames (frames 52..56 of the demo
/// sequence at 80 x 60, the demo configuration scaled to a quarter)
/// through the demo lens's undistortion grid at that size, step 4 with the
/// demo gate; and step 8 without a gate.
pub fn image_golden_cases() -> Vec<GoldenCase> {
    let (w, h) = (80usize, 60usize);
    let (seq, base, frames_blob) = super::job::quarter_case();
    let run = |_: &str, p: &serde_json::Value, i: &[Blob]| run_image_vector(p, i);
    let mut v = Vec::new();
    for (k, gated, name) in [
        (2u32, true, "aisle-quarter-step4"),
        (3, false, "aisle-quarter-step8-ungated"),
    ] {
        let (geom, pts) = demo_grid(&seq, w, h, k, IMAGE_GRID_FRAC_BITS)
            .expect("an undistortion grid for the demo lens at 80 x 60");
        let (cols, rows) = ControlGrid::grid_size(&geom, k).expect("grid size");
        let p = JobParams {
            grid_log2: k,
            grid_frac_bits: IMAGE_GRID_FRAC_BITS,
            gate: if gated { base.gate } else { 0 },
            ..base.clone()
        };
        v.push(crate::family::case(
            run,
            &format!("{IMAGE_KERNEL}.{name}"),
            format!(
                "the point mode's 80x60 frames warped row by row through the demo lens's \
                 undistortion grid (step {}, F = {IMAGE_GRID_FRAC_BITS}, clamped border); {}",
                1 << k,
                if gated {
                    "the demo gate"
                } else {
                    "every column (no gate)"
                }
            ),
            IMAGE_KERNEL,
            serde_json::to_value(&p).expect("serialisable"),
            vec![
                frames_blob.clone(),
                Blob::from_i32("grid", cols, rows, 2, &pts),
            ],
        ));
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn vectors_recompute_and_refuse_a_missing_grid() {
        let cases = image_golden_cases();
        assert_eq!(cases.len(), 2);
        for c in &cases {
            let again = run_image_vector(&c.params, &c.inputs).unwrap();
            assert_eq!(again, c.expected, "{}", c.id);
            // Some frame found lines.
            let rec = again[0].to_i32().unwrap();
            assert!(
                rec.chunks(RECORD_WORDS_PER_FRAME).any(|f| f[8] > 0),
                "{}",
                c.id
            );
        }
        let mut p = cases[0].params.clone();
        p["grid_log2"] = serde_json::json!(0);
        assert!(run_image_vector(&p, &cases[0].inputs).is_err());
    }

    #[test]
    fn demo_ring_is_the_documented_band() {
        // The figures of the kernel's module docs (image_job.rs).
        assert_eq!(demo_ring(320, 240).unwrap(), (19, 6080));
        assert_eq!(demo_ring(640, 480).unwrap(), (35, 22400));
        assert_eq!(DemoImageJobQvga::ram_bytes() + 6080, 54_768);
    }
}
