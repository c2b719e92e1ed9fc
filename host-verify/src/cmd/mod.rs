//! The bodies of the `fixsight-verify` commands, one module per command;
//! `main.rs` only parses the command line and calls them. Each returns
//! `Ok(true)` on success, `Ok(false)` when a check failed, `Err` when it
//! could not run.

pub mod calibrate;
pub mod golden;
pub mod grid;
pub mod report;
pub mod sweep;
pub mod targets;

use std::path::PathBuf;

/// The golden folder: `dir` if given; else `golden/` in the current folder
/// if it has a manifest; else the repository's `golden/` next to this crate.
pub fn vectors_dir(dir: Option<PathBuf>) -> PathBuf {
    if let Some(d) = dir {
        return d;
    }
    let here = PathBuf::from("golden");
    if here.join(crate::golden::MANIFEST).exists() {
        return here;
    }
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("..")
        .join("golden")
}
