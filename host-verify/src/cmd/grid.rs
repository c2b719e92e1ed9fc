//! `fixsight-verify grid`: a lens-undistortion control grid from a lens
//! file (format in [`crate::lens`]), written as Rust source, a C header and
//! a blob.

use crate::warp::grid::build_grid;
use crate::warp::grid_files::grid_files;
use fixsight::warp::WarpGeometry;

/// `fixsight-verify grid`: reads a lens file, builds the grid, writes
/// `<name>.rs`, `<name>.h` and `<name>.bin` into `out`; returns a summary.
pub fn run(
    lens_file: &std::path::Path,
    grid_log2: u32,
    frac_bits: u32,
    out: &std::path::Path,
    name: &str,
) -> anyhow::Result<String> {
    let text = std::fs::read_to_string(lens_file)
        .map_err(|e| anyhow::anyhow!("cannot read {}: {e}", lens_file.display()))?;
    let spec = crate::lens::LensSpec::parse(&text)?;
    let geom = WarpGeometry::new(
        spec.output.0,
        spec.output.1,
        spec.sensor.0,
        spec.sensor.1,
        frac_bits,
    )?;
    let mb = build_grid(&spec.camera, &spec.view, geom, grid_log2).map_err(anyhow::Error::msg)?;
    let origin = lens_file
        .file_name()
        .map_or("a lens file".into(), |f| f.to_string_lossy().to_string());
    let files = grid_files(&mb, name, &origin).map_err(anyhow::Error::msg)?;
    std::fs::create_dir_all(out)?;
    for (ext, bytes) in [
        ("rs", files.rust.as_bytes()),
        ("h", files.c_header.as_bytes()),
        ("bin", &files.blob[..]),
    ] {
        let p = out.join(format!("{name}.{ext}"));
        std::fs::write(&p, bytes)
            .map_err(|e| anyhow::anyhow!("cannot write {}: {e}", p.display()))?;
    }
    Ok(format!(
        "{}x{} view ({}; f' = {:.3} px) of a {}x{} sensor: grid step {} px, F = {frac_bits}, \
         {}x{} points, {} bytes (blob {} bytes); geometric error max {:.5} px, RMS {:.5} px\n\
         wrote {name}.rs, {name}.h, {name}.bin to {}",
        spec.output.0,
        spec.output.1,
        if spec.fitted {
            "fit-to-view"
        } else {
            "manual view"
        },
        spec.view.fx,
        spec.sensor.0,
        spec.sensor.1,
        1u32 << grid_log2,
        mb.grid.0,
        mb.grid.1,
        mb.table_bytes,
        files.blob.len(),
        mb.max_px,
        mb.rms_px,
        out.display()
    ))
}
