//! `fixsight-verify report`: every contract and golden vector, printed as a
//! table and written as `report.json`.

use super::vectors_dir;
use crate::report;
use std::path::{Path, PathBuf};

/// Runs the report into `out` with the golden folder `vectors` (refusing
/// to replace the report's files unless `overwrite`).
pub fn run(out: &Path, vectors: Option<PathBuf>, overwrite: bool) -> anyhow::Result<bool> {
    let r = report::run(out, &vectors_dir(vectors), overwrite)?;
    print!("{}", report::table(&r));
    println!(
        "report written to {}",
        crate::files::shown_path(&out.join("report.json"))
    );
    Ok(r.pass)
}
