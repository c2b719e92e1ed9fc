//! `fixsight-verify golden check` and `golden write`.

use super::vectors_dir;
use crate::families::{all_cases, check_golden};
use crate::golden;
use crate::scene::demo_scenes;
use std::path::PathBuf;

/// Recomputes every vector of the folder and compares bit for bit.
pub fn check(vectors: Option<PathBuf>) -> anyhow::Result<bool> {
    let dir = vectors_dir(vectors);
    let s = check_golden(&dir).map_err(|e| {
        anyhow::anyhow!("{e}\nhint: regenerate with `fixsight-verify golden write --overwrite` only if the kernels changed on purpose")
    })?;
    for (id, why) in &s.failures {
        println!("FAIL {id}: {why}");
    }
    println!(
        "{}/{} golden vectors reproduced bit for bit ({})",
        s.passed,
        s.vectors,
        dir.display()
    );
    Ok(s.failures.is_empty() && s.passed == s.vectors)
}

/// Regenerates the vectors from the current kernels (refuses to replace a
/// manifest unless `overwrite`).
pub fn write(vectors: Option<PathBuf>, overwrite: bool) -> anyhow::Result<bool> {
    let dir = vectors_dir(vectors);
    let cases = all_cases(&demo_scenes());
    let m = golden::write(&dir, &cases, overwrite)?;
    println!(
        "wrote {} golden vectors to {}",
        m.vectors.len(),
        dir.display()
    );
    Ok(true)
}
