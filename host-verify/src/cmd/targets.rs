//! `fixsight-verify targets`: the golden vectors on emulated cores (the
//! driver is [`crate::targets`]).

use super::vectors_dir;
use std::path::{Path, PathBuf};

/// Builds and runs the firmware for every core, writes `targets.json` to
/// `out`.
pub fn run(out: &Path, vectors: Option<PathBuf>) -> anyhow::Result<bool> {
    crate::targets::run(out, &vectors_dir(vectors))
}
