//! `fixsight-verify grid`: a lens-undistortion control grid from a lens
//! file (format in [`crate::lens`]), written as Rust source, a C header and
//! a blob.

use crate::files::{self, Outputs};
use crate::lens::readable;
use crate::warp::grid::build_grid;
use crate::warp::grid_files::grid_files;
use fixsight::warp::WarpGeometry;
use std::path::Path;

/// The three output names for `name`, after checking that `name` is a plain
/// file stem of letters, digits, `_`, `-` and `.` (it also becomes the
/// identifier stem of the Rust and C constants).
pub fn output_names(name: &str) -> anyhow::Result<[String; 3]> {
    files::plain_name(name)?;
    if !name
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || "_-.".contains(c))
    {
        anyhow::bail!(
            "--name {} may hold only letters, digits, `_`, `-` and `.` (it names the files and \
             the constants in them); the folder is chosen with --out",
            files::shown(name)
        );
    }
    Ok(["rs", "h", "bin"].map(|ext| format!("{name}.{ext}")))
}

/// `fixsight-verify grid`: reads a lens file, builds the grid, writes
/// `<name>.rs`, `<name>.h` and `<name>.bin` into `out` (refusing to replace
/// any of them unless `overwrite`, before anything is computed); returns a
/// summary.
pub fn run(
    lens_file: &Path,
    grid_log2: u32,
    frac_bits: u32,
    out: &Path,
    name: &str,
    overwrite: bool,
) -> anyhow::Result<String> {
    let names = output_names(name)?;
    let mut outputs = Outputs::new(
        out,
        names.iter().map(String::as_str),
        overwrite,
        "--overwrite",
    )?;
    let spec = crate::lens::read_lens_file(lens_file)?;
    let geom = WarpGeometry::new(
        spec.output.0,
        spec.output.1,
        spec.sensor.0,
        spec.sensor.1,
        frac_bits,
    )
    .map_err(|e| anyhow::anyhow!("--frac-bits {frac_bits} with the lens file's sizes: {e}"))?;
    let mb = build_grid(&spec.camera, &spec.view, geom, grid_log2)
        .map_err(|e| anyhow::anyhow!("{}: {e}", files::shown_path(lens_file)))?;
    let origin = lens_file.file_name().map_or("a lens file".into(), |f| {
        files::shown(&f.to_string_lossy()).replace("*/", "*\\/")
    });
    let gf = grid_files(&mb, name, &origin).map_err(anyhow::Error::msg)?;
    for (n, bytes) in names
        .iter()
        .zip([gf.rust.as_bytes(), gf.c_header.as_bytes(), &gf.blob[..]])
    {
        outputs.write(n, bytes)?;
    }
    outputs.commit()?;
    Ok(format!(
        "{}x{} view ({}; f' = {} px) of a {}x{} sensor: grid step {} px, F = {frac_bits}, \
         {}x{} points, {} bytes (blob {} bytes); geometric error max {:.5} px, RMS {:.5} px \
         ({})\nwrote {}, {}, {} to {}",
        spec.output.0,
        spec.output.1,
        if spec.fitted {
            "fit-to-view"
        } else {
            "manual view"
        },
        readable(spec.view.fx),
        spec.sensor.0,
        spec.sensor.1,
        1u32 << grid_log2,
        mb.grid.0,
        mb.grid.1,
        mb.table_bytes,
        gf.blob.len(),
        mb.max_px,
        mb.rms_px,
        if mb.measured_every == 1 {
            "every output pixel".to_string()
        } else {
            format!(
                "sampled every {} px in x and y, the last row and column included",
                mb.measured_every
            )
        },
        names[0],
        names[1],
        names[2],
        files::shown_path(out)
    ))
}
