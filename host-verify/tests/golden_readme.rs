//! `golden/README.md` documents every kernel of the manifest: one table row
//! per kernel id with its vector count, every parameter key and every input
//! and expected image name, so a porter reading the README sees what the
//! manifest holds.

use fixsight_verify::golden;
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

#[derive(Default)]
struct Kernel {
    vectors: usize,
    names: BTreeSet<String>,
}

#[test]
fn every_kernel_parameter_and_image_of_the_manifest_has_its_row() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden");
    let readme = std::fs::read_to_string(dir.join("README.md")).unwrap();
    let manifest = golden::read_manifest(&dir).unwrap();
    let mut kernels: BTreeMap<String, Kernel> = BTreeMap::new();
    for v in &manifest.vectors {
        let k = kernels.entry(v.kernel.clone()).or_default();
        k.vectors += 1;
        if let Some(obj) = v.params.as_object() {
            k.names.extend(obj.keys().cloned());
        }
        k.names
            .extend(v.inputs.iter().chain(&v.expected).map(|i| i.name.clone()));
    }
    let mut missing = Vec::new();
    for (id, k) in &kernels {
        let head = format!("| `{id}` |");
        let Some(row) = readme.lines().find(|l| l.starts_with(&head)) else {
            missing.push(format!("no row for `{id}`"));
            continue;
        };
        let cells: Vec<&str> = row.split('|').map(str::trim).collect();
        if cells.get(2) != Some(&k.vectors.to_string().as_str()) {
            missing.push(format!(
                "`{id}`: {} vectors in the manifest, the row says {:?}",
                k.vectors,
                cells.get(2)
            ));
        }
        for n in &k.names {
            if !row.contains(&format!("`{n}`")) {
                missing.push(format!("`{id}`: `{n}` not in its row"));
            }
        }
    }
    assert!(missing.is_empty(), "golden/README.md: {missing:#?}");
}
