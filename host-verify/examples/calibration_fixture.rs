//! Writes the rendered views and true corner positions that the outside
//! corner check (`host-verify/tests/calibrate.rs`) compares against
//! scikit-image's corners; `outside_corners.py` in the same folder then
//! adds that library's corners.
//!
//! ```sh
//! cargo run --release -p fixsight-verify --example calibration_fixture -- host-verify/tests/data/calibrate
//! /path/to/python host-verify/tests/data/calibrate/outside_corners.py host-verify/tests/data/calibrate
//! ```

use fixsight_verify::calibrate::synth;
use std::fmt::Write as _;

/// Views in the fixture, their pose seed and first render seed.
pub const VIEWS: usize = 3;
const POSE_SEED: u64 = 31;
const RENDER_SEED: u64 = 3100;

fn main() {
    let dir = std::path::PathBuf::from(
        std::env::args()
            .nth(1)
            .unwrap_or_else(|| "host-verify/tests/data/calibrate".into()),
    );
    std::fs::create_dir_all(&dir).unwrap();
    let spec = synth::SynthSpec::wide_angle(320, 240);
    let mut truth = String::from(
        "# True inner-corner positions of the rendered views (x y, px, pixel centres at integers),\n\
         # row-major per view; written by `--example calibration_fixture`.\n# view i j x y\n",
    );
    for (v, pose) in synth::poses(&spec, VIEWS, POSE_SEED)
        .unwrap()
        .iter()
        .enumerate()
    {
        let g = synth::render(&spec, pose, RENDER_SEED + v as u64);
        image::GrayImage::from_raw(320, 240, g.to_u8())
            .unwrap()
            .save(dir.join(format!("view{v}.png")))
            .unwrap();
        let t = synth::true_corners(&spec, pose).unwrap();
        for (k, (x, y)) in t.iter().enumerate() {
            let _ = writeln!(
                truth,
                "{v} {} {} {x:.6} {y:.6}",
                k % spec.board.cols,
                k / spec.board.cols
            );
        }
    }
    std::fs::write(dir.join("truth.txt"), truth).unwrap();
    println!("wrote {VIEWS} views and truth.txt to {}", dir.display());
}
