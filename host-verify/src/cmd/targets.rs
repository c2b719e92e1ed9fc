//! `fixsight-verify targets`: the golden vectors on emulated cores (the
//! driver is [`crate::targets`]).

use super::vectors_dir;
use crate::files::{FileError, Outputs};
use std::path::{Path, PathBuf};

/// Builds and runs the firmware for every core (or only the Rust or only
/// the C firmware, `lang`; only the Rust images named in `cores`, if any),
/// writes `targets.json` and the console logs in `targets-logs/` to `out`,
/// measuring code bytes by `method`. Unless `overwrite`, refuses before
/// building anything when either exists.
pub fn run(
    out: &Path,
    vectors: Option<PathBuf>,
    lang: Option<&str>,
    cores: &[String],
    method: crate::targets::CodeBytes,
    overwrite: bool,
) -> anyhow::Result<bool> {
    // Checks the names (and that targets.json does not exist yet); the file
    // itself is written by the driver through another set.
    drop(Outputs::new(
        out,
        [crate::targets::TARGETS_JSON],
        overwrite,
        "--overwrite",
    )?);
    let logs = out.join(crate::targets::LOGS_DIR);
    if !overwrite && std::fs::symlink_metadata(&logs).is_ok() {
        return Err(FileError::Exists {
            path: logs,
            flag: "--overwrite",
        }
        .into());
    }
    crate::targets::run(out, &vectors_dir(vectors), lang, cores, method)
}
