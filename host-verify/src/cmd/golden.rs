//! `fixsight-verify golden check` and `golden write`.

use super::vectors_dir;
use crate::families::{all_cases, check_golden};
use crate::golden::{self, GoldenError};
use crate::scene::demo_scenes;
use std::path::PathBuf;

/// Recomputes every vector of the folder and compares bit for bit.
pub fn check(vectors: Option<PathBuf>) -> anyhow::Result<bool> {
    let dir = vectors_dir(vectors);
    let s = check_golden(&dir).map_err(|e| {
        // Steer toward regenerating only when the vectors were read and
        // differ; a folder that cannot be read needs another folder.
        let hint = match e {
            GoldenError::File(_) => {
                "hint: name the golden folder with `--vectors DIR` (default: `golden` in the \
                 current folder)"
            }
            _ => "hint: the manifest itself is damaged; restore it from version control",
        };
        anyhow::anyhow!("{e}\n{hint}")
    })?;
    for (id, why) in &s.failures {
        println!("FAIL {}: {why}", crate::files::shown(id));
    }
    println!(
        "{}/{} golden vectors reproduced bit for bit ({})",
        s.passed,
        s.vectors,
        crate::files::shown_path(&dir)
    );
    let pass = s.failures.is_empty() && s.passed == s.vectors && s.vectors > 0;
    if !pass {
        println!(
            "hint: if the kernels changed on purpose, regenerate with \
             `fixsight-verify golden write --overwrite` and say why in the commit"
        );
    }
    Ok(pass)
}

/// Regenerates the vectors from the current kernels. Refuses, before
/// computing anything, to replace a manifest unless `overwrite`.
pub fn write(vectors: Option<PathBuf>, overwrite: bool) -> anyhow::Result<bool> {
    let dir = vectors_dir(vectors);
    golden::refuse_existing(&dir, overwrite)?;
    let cases = all_cases(&demo_scenes());
    let w = golden::write(&dir, &cases, overwrite)?;
    println!(
        "wrote {} golden vectors to {}",
        w.manifest.vectors.len(),
        crate::files::shown_path(&dir)
    );
    if !w.unreferenced.is_empty() {
        println!(
            "note: {} .bin file(s) in that folder are not named by the new manifest and were \
             left in place: {}",
            w.unreferenced.len(),
            w.unreferenced
                .iter()
                .map(|n| crate::files::shown(n))
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    Ok(true)
}
