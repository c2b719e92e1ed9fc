//! Helpers the command tests share: a fresh temporary folder and a run of
//! the tool that fails the test on a panic.

// Each test file uses a subset of these helpers.
#![allow(dead_code)]

use std::fs;
use std::path::PathBuf;
use std::process::Command;

/// A new empty folder `fixsight-<name>-<pid>` in the system's temporary
/// folder.
pub fn fresh_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fixsight-{name}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

/// Runs `fixsight-verify <args>`: success, standard output, standard
/// error; a panic message fails the test.
pub fn tool(args: &[&str]) -> (bool, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(args)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(!err.contains("panicked"), "{err}");
    (
        o.status.success(),
        String::from_utf8_lossy(&o.stdout).to_string(),
        err,
    )
}
