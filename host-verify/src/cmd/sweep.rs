//! `fixsight-verify sweep`: the warp precision sweep on a demo scene,
//! written as `sweep.md`, `sweep.json` and `sweep.png`.

use crate::warp::check::demo_view;
use crate::warp::sweep::{sweep, sweep_table};

/// `fixsight-verify sweep`: the precision sweep on the first demo scene,
/// written as `sweep.md`, `sweep.json` and `sweep.png` into `out`; returns
/// the table.
pub fn run(out: &std::path::Path) -> anyhow::Result<String> {
    let spec = &crate::scene::DEMO_SPECS[0];
    let s = crate::scene::render(spec, crate::scene::DEMO_WIDTH, crate::scene::DEMO_HEIGHT);
    let view = demo_view(&s).map_err(anyhow::Error::msg)?;
    let fb: Vec<u32> = (2..=10).collect();
    let steps: Vec<u32> = (2..=6).collect();
    let rows = sweep(&s.gray, s.width, s.height, &s.camera, &view, &fb, &steps)
        .map_err(anyhow::Error::msg)?;
    std::fs::create_dir_all(out)?;
    let table = format!(
        "Precision sweep on demo scene `{}` ({}x{}, fit-to-view undistortion, border fill 0).\n\
         Errors against the f64 bilinear reference at the exact lens coordinates.\n\n{}",
        s.name,
        s.width,
        s.height,
        sweep_table(&rows)
    );
    std::fs::write(out.join("sweep.md"), &table)?;
    std::fs::write(
        out.join("sweep.json"),
        serde_json::to_string_pretty(&rows)? + "\n",
    )?;
    crate::warp::sweep_plot::draw(&rows, &out.join("sweep.png"))?;
    Ok(table)
}
