//! `fixsight-verify report`: every contract and golden vector, printed as a
//! table and written as `report.json`.

use super::vectors_dir;
use crate::report;
use std::path::{Path, PathBuf};

/// Runs the report into `out` with the golden folder `vectors`.
pub fn run(out: &Path, vectors: Option<PathBuf>) -> anyhow::Result<bool> {
    let r = report::run(out, &vectors_dir(vectors))?;
    print!("{}", report::table(&r));
    println!("report written to {}", out.join("report.json").display());
    Ok(r.pass)
}
