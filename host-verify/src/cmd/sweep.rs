//! `fixsight-verify sweep`: the warp precision sweep on a demo scene,
//! written as `sweep.md`, `sweep.json` and `sweep.png`.

use crate::files::Outputs;
use crate::warp::check::demo_view;
use crate::warp::sweep::{sweep, sweep_table};

/// The files the sweep writes.
pub const OUTPUTS: [&str; 3] = ["sweep.md", "sweep.json", "sweep.png"];

/// `fixsight-verify sweep`: the precision sweep on the first demo scene,
/// written as `sweep.md`, `sweep.json` and `sweep.png` into `out` (refusing
/// to replace any of them unless `overwrite`, before the sweep runs);
/// returns the table.
pub fn run(out: &std::path::Path, overwrite: bool) -> anyhow::Result<String> {
    let mut outputs = Outputs::new(out, OUTPUTS, overwrite, "--overwrite")?;
    let spec = &crate::scene::DEMO_SPECS[0];
    let s = crate::scene::render(spec, crate::scene::DEMO_WIDTH, crate::scene::DEMO_HEIGHT);
    let view = demo_view(&s).map_err(anyhow::Error::msg)?;
    let fb: Vec<u32> = (2..=10).collect();
    let steps: Vec<u32> = (2..=6).collect();
    let rows = sweep(&s.gray, s.width, s.height, &s.camera, &view, &fb, &steps)
        .map_err(anyhow::Error::msg)?;
    let table = format!(
        "Precision sweep on demo scene `{}` ({}x{}, fit-to-view undistortion, border fill 0).\n\
         Errors against the f64 bilinear reference at the exact lens coordinates.\n\n{}",
        s.name,
        s.width,
        s.height,
        sweep_table(&rows)
    );
    outputs.write(OUTPUTS[0], table.as_bytes())?;
    outputs.write(
        OUTPUTS[1],
        (serde_json::to_string_pretty(&rows)? + "\n").as_bytes(),
    )?;
    outputs.write_with(OUTPUTS[2], |p| {
        crate::warp::sweep_plot::draw(&rows, p).map_err(|e| std::io::Error::other(e.to_string()))
    })?;
    outputs.commit()?;
    Ok(table)
}
