//! `fixsight-verify report`: every contract and golden vector, printed as a
//! table and written as `report.json`.
//!
//! `--lens FILE` (a `fixsight-lens 1` file for 320 x 240 frames, as
//! `calibrate` writes it; checked as `run --pipeline --lens` checks it)
//! replaces the built-in demo lens in the rows that depend on the lens:
//! `warp.*` (the demo scenes rendered through it, the natural photographs
//! warped through it), `lines.correct_point` and the known lines of
//! `lines.peak`, `pipeline.point_job` and `pipeline.image_job` (the demo
//! sequence rendered through it). `marking.select` and the ring figures
//! (`band_*`, `ram_bytes_*`) stay on the demo lens and say so.

use super::vectors_dir;
use crate::files;
use crate::lens::{read_lens_file_text, LensInUse};
use crate::lines::{build_correction_grid, GRID_FRAC_BITS, GRID_LOG2};
use crate::report;
use crate::warp::check::{CHECK_FRAC_BITS, CHECK_GRID_LOG2};
use crate::warp::grid::build_grid;
use fixsight::warp::WarpGeometry;
use std::path::{Path, PathBuf};

/// Reads and checks a lens file for the report: the checks of
/// `run --pipeline --lens` (format, ranges, corners of the view, 320 x 240
/// sensor and view), then the two grids the rows build from it (the warp's
/// control grid, step 8, F = 7, and the correction grid of the edge
/// points, step 8, F = 5), which refuse a lens whose map folds back on
/// itself or cannot be inverted inside the view. The error names the file.
pub fn load_lens(path: &Path) -> anyhow::Result<LensInUse> {
    let (spec, text) = read_lens_file_text(path)?;
    super::run::pipeline::check_lens_size(path, &spec)?;
    let (w, h) = LensInUse::SIZE;
    let unusable = |what: &str, why: String| {
        anyhow::anyhow!(
            "{}: the lens cannot be used: {what}: {why}",
            files::shown_path(path)
        )
    };
    let geom = WarpGeometry::new(w, h, w, h, CHECK_FRAC_BITS)
        .map_err(|e| unusable("the warp geometry", e.to_string()))?;
    build_grid(&spec.camera, &spec.view, geom, CHECK_GRID_LOG2)
        .map_err(|e| unusable("the control grid of the corrected view", e))?;
    build_correction_grid(
        &spec.camera,
        &spec.view,
        (w, h),
        (w, h),
        GRID_LOG2,
        GRID_FRAC_BITS,
    )
    .map_err(|e| unusable("the correction grid of the edge points", e))?;
    let name = path
        .file_name()
        .map_or_else(|| files::shown_path(path), |n| n.to_string_lossy().into());
    Ok(LensInUse::from_file(&spec, &text, &name))
}

/// Runs the report into `out` with the golden folder `vectors` and the
/// lens file `lens` (the built-in demo lens without one), refusing to
/// replace the report's files unless `overwrite`. A bad lens file fails
/// before anything is computed or written.
pub fn run(
    out: &Path,
    vectors: Option<PathBuf>,
    lens: Option<&Path>,
    overwrite: bool,
) -> anyhow::Result<bool> {
    let lens = match lens {
        Some(p) => load_lens(p)?,
        None => LensInUse::demo().map_err(|e| anyhow::anyhow!("the demo lens: {e}"))?,
    };
    let r = report::run(out, &vectors_dir(vectors), overwrite, &lens)?;
    if crate::progress::quiet() {
        for k in r.kernels.iter().filter(|k| !k.pass) {
            println!("FAIL {}", k.name);
        }
        println!(
            "{}: {} kernel rows, golden vectors {}/{}",
            if r.pass { "PASS" } else { "FAIL" },
            r.kernels.len(),
            r.golden.passed,
            r.golden.vectors
        );
    } else {
        print!("{}", report::table(&r));
    }
    println!(
        "report written to {}",
        crate::files::shown_path(&out.join("report.json"))
    );
    Ok(r.pass)
}
