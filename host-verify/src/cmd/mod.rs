//! The bodies of the `fixsight-verify` commands, one module per command;
//! `main.rs` only parses the command line and calls them. Each returns
//! `Ok(true)` on success, `Ok(false)` when a check failed, `Err` when it
//! could not run.

pub mod budget;
pub mod calibrate;
pub mod flash;
pub mod frontier;
pub mod golden;
pub mod grid;
pub mod port_check;
pub mod report;
pub mod run;
pub mod sweep;
pub mod targets;

use std::path::PathBuf;

/// The golden folder: `dir` if given, else `golden` in the current folder.
/// Never a path compiled into the binary: a tool run from another folder
/// must not check or write the vectors of the checkout it was built from.
pub fn vectors_dir(dir: Option<PathBuf>) -> PathBuf {
    dir.unwrap_or_else(|| PathBuf::from("golden"))
}
