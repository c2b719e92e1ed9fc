//! One name per kernel (issue 13): every kernel id of the registry
//! (`fixsight_verify::families::FAMILIES`) appears under the same name in
//! the kernel API (`kernels/src/<family>.rs`), the golden manifest, a
//! `report.json` written by the report code, the on-target dispatchers of
//! `targets/harness` and the README; and no retired word is left in code,
//! docs or vectors.

use fixsight_verify::families::{kernel_ids, FAMILIES};
use std::collections::BTreeSet;
use std::fs;
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn read(rel: &str) -> String {
    fs::read_to_string(root().join(rel)).unwrap_or_else(|e| panic!("{rel}: {e}"))
}

/// `pixel_map` -> `PixelMap`.
fn camel(snake: &str) -> String {
    snake
        .split('_')
        .map(|w| {
            let mut c = w.chars();
            c.next()
                .map(|f| f.to_ascii_uppercase().to_string() + c.as_str())
                .unwrap_or_default()
        })
        .collect()
}

/// Whether `src` has a public item called `name` (a function, a preset
/// constructor, or the type `camel(name)`) with a doc comment right above
/// it (attributes in between allowed).
fn documented_public_item(src: &str, name: &str) -> bool {
    let heads = [
        format!("pub fn {name}("),
        format!("pub const fn {name}("),
        format!("pub struct {} ", camel(name)),
        format!("pub struct {}<", camel(name)),
    ];
    let lines: Vec<&str> = src.lines().collect();
    lines.iter().enumerate().any(|(i, l)| {
        heads.iter().any(|h| l.starts_with(h.as_str()))
            && lines[..i]
                .iter()
                .rev()
                .map(|p| p.trim_start())
                .find(|p| !p.starts_with("#["))
                .is_some_and(|p| p.starts_with("///"))
    })
}

#[test]
fn every_kernel_id_is_named_after_its_file_and_api() {
    let mut seen = BTreeSet::new();
    for f in FAMILIES {
        assert!(!f.kernels.is_empty(), "family {} has no kernel id", f.name);
        let kernel_file = root().join("kernels/src").join(format!("{}.rs", f.name));
        // The family's host folder, every file of it.
        let host_dir = root().join("host-verify/src").join(f.name);
        let host: String = fs::read_dir(&host_dir)
            .unwrap_or_else(|e| panic!("{}: {e}", host_dir.display()))
            .map(|e| fs::read_to_string(e.unwrap().path()).unwrap())
            .collect();
        for id in f.kernels {
            assert!(seen.insert(*id), "kernel id {id} listed twice");
            let (fam, name) = id.split_once('.').expect("id is <family>.<name>");
            assert_eq!(fam, f.name, "{id} is registered under family {}", f.name);
            assert!(
                !name.is_empty()
                    && name
                        .chars()
                        .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_'),
                "{id}: the name part must be a snake_case identifier"
            );
            assert!(
                host.contains(&format!("`{id}`")) || host.contains(&format!("\"{id}\"")),
                "{id} is not named in host-verify/src/{}/",
                f.name
            );
            if f.composed_on_host {
                assert!(
                    !kernel_file.exists(),
                    "{id}: kernels/src/{}.rs exists, so the family is no host composition",
                    f.name
                );
                assert!(
                    host.contains("host composition"),
                    "host-verify/src/{}/ must say that {id} is a host composition",
                    f.name
                );
            } else {
                let src = fs::read_to_string(&kernel_file)
                    .unwrap_or_else(|e| panic!("{id}: {}: {e}", kernel_file.display()));
                assert!(
                    documented_public_item(&src, name),
                    "{id}: no documented `pub fn {name}` or `pub struct {}` in kernels/src/{}.rs",
                    camel(name),
                    f.name
                );
            }
        }
    }
}

#[test]
fn golden_manifest_uses_exactly_the_registry_ids() {
    let m = fixsight_verify::golden::read_manifest(&root().join("golden")).unwrap();
    let ids: BTreeSet<&str> = kernel_ids().collect();
    let mut used = BTreeSet::new();
    for v in &m.vectors {
        assert!(
            ids.contains(v.kernel.as_str()),
            "vector {} names kernel {}, which the registry does not have",
            v.id,
            v.kernel
        );
        assert!(
            v.id.starts_with(&format!("{}.", v.kernel)),
            "vector id {} does not start with its kernel id {}",
            v.id,
            v.kernel
        );
        used.insert(v.kernel.as_str());
    }
    let missing: Vec<_> = ids.difference(&used).collect();
    assert!(
        missing.is_empty(),
        "kernel ids without a golden vector: {missing:?}"
    );
}

#[test]
fn report_rows_are_the_registry_ids_in_order() {
    let out = std::env::temp_dir().join(format!("fixsight-names-report-{}", std::process::id()));
    let _ = fs::remove_dir_all(&out);
    let lens = fixsight_verify::lens::LensInUse::demo().unwrap();
    let r = fixsight_verify::report::run(&out, &root().join("golden"), false, &lens).unwrap();
    let json: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let rows: Vec<(String, String)> = json["kernels"]
        .as_array()
        .unwrap()
        .iter()
        .map(|k| {
            (
                k["name"].as_str().unwrap().to_string(),
                k["family"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    let want: Vec<(String, String)> = FAMILIES
        .iter()
        .flat_map(|f| {
            f.kernels
                .iter()
                .map(|id| (id.to_string(), f.name.to_string()))
        })
        .collect();
    assert_eq!(
        rows, want,
        "report.json rows (name, family) differ from the registry"
    );
    assert!(r.pass, "the report itself fails");
    fs::remove_dir_all(&out).unwrap();
}

/// The rows `"<id>" => <module>::<function>,` of the harness's kernel
/// table (`targets/harness/src/kernels/mod.rs`, inside `kernel_table!`).
fn harness_table() -> Vec<(String, String)> {
    let text = read("targets/harness/src/kernels/mod.rs");
    let start = text
        .find("kernel_table! {")
        .expect("the harness has its kernel table");
    let body = &text[start..];
    let body = &body[..body.find("\n}").expect("the table ends")];
    body.lines()
        .filter_map(|l| {
            let (id, f) = l.trim().trim_end_matches(',').split_once(" => ")?;
            Some((id.trim_matches('"').to_string(), f.to_string()))
        })
        .collect()
}

#[test]
fn on_target_table_and_bench_stages_use_the_registry_ids() {
    let table = harness_table();
    let ids: Vec<String> = table.iter().map(|(id, _)| id.clone()).collect();
    let want: Vec<String> = kernel_ids().map(str::to_string).collect();
    assert_eq!(
        ids, want,
        "harness kernel table (left) vs the registry (right)"
    );
    for (id, f) in &table {
        // `nms.suppress` => `nms::suppress`: the dispatcher has the id's name.
        assert_eq!(
            f,
            &id.replacen('.', "::", 1),
            "table row {id} points at {f}"
        );
    }
    let ids: BTreeSet<&str> = kernel_ids().collect();
    // A port's image may add bench-only ids (`Port::adds`: the f32 port's
    // `float.point_job`), which no golden vector names.
    let added: BTreeSet<&str> = fixsight_verify::targets::PORTS
        .iter()
        .flat_map(|p| p.adds.iter().copied())
        .collect();
    for l in read("targets/harness/src/bench.rs").lines() {
        if let Some(k) = l.trim().strip_prefix("kernel: \"") {
            let k = k.split('"').next().unwrap();
            assert!(
                ids.contains(k) || added.contains(k),
                "bench stage kernel {k} is neither a registry id nor one a port adds"
            );
        }
    }
}

#[test]
fn readmes_name_every_kernel_id() {
    let readme = read("README.md");
    let targets = read("targets/README.md");
    for id in kernel_ids() {
        assert!(
            readme.contains(&format!("`{id}`")),
            "README.md does not name `{id}`"
        );
        assert!(
            targets.contains(&format!("| {id}")),
            "targets/README.md has no figure row for {id}"
        );
    }
}

/// Retired words: `(word, case sensitive)`. Checked in every file of the
/// repository that git would track (and in its name), except this test
/// and the "Renamed in this version" section for porters.
const RETIRED: [(&str, bool); 9] = [
    ("Replicate", false),
    ("Constant(", true),
    ("DenseMap", true),
    ("MeshTable", true),
    ("remap", false),
    ("mesh", false),
    ("--golden", true),
    ("low_fraction_bits", true),
    ("LENS_MESH_MESH", true),
];

/// Method names of the plotting crate (`plotters`) that contain a retired
/// word; calling them is not using the word.
const PLOTTING_API: [&str; 2] = ["configure_mesh", "disable_x_mesh"];

/// The section of `targets/README.md` that maps old words to new ones.
const RENAMED_HEADING: &str = "## Renamed in this version";

fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        let name = p.file_name().unwrap().to_string_lossy().to_string();
        if p.is_dir() {
            // Build folders and the tool's output folders (`fixsight-report/`,
            // `fixsight-grid/`, ...) are not part of the repository.
            if name != ".git" && name != "target" && !name.starts_with("fixsight-") {
                walk(&p, out);
            }
        } else {
            out.push(p);
        }
    }
}

/// The text that is checked: everything but the porters' section.
fn checked_text(rel: &str, text: &str) -> String {
    if rel != "targets/README.md" {
        return text.to_string();
    }
    let Some(start) = text.find(RENAMED_HEADING) else {
        return text.to_string();
    };
    let rest = &text[start + RENAMED_HEADING.len()..];
    let end = rest
        .find("\n## ")
        .map_or(text.len(), |e| start + RENAMED_HEADING.len() + e);
    format!("{}{}", &text[..start], &text[end..])
}

#[test]
fn no_retired_word_is_left() {
    let root = root().canonicalize().unwrap();
    let mut files = Vec::new();
    walk(&root, &mut files);
    let this = Path::new(file!()).file_name().unwrap().to_owned();
    let mut hits = Vec::new();
    let mut checked = 0;
    for p in files {
        let rel = p
            .strip_prefix(&root)
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        if rel.starts_with("tests/") && p.file_name() == Some(this.as_os_str()) {
            continue;
        }
        let bytes = fs::read(&p).unwrap();
        let text = match String::from_utf8(bytes) {
            Ok(t) => checked_text(&rel, &t),
            // Binary files (golden images): their names only.
            Err(_) => String::new(),
        };
        checked += 1;
        for (word, case) in RETIRED {
            let found = |s: &str| {
                if case {
                    s.contains(word)
                } else {
                    s.to_lowercase().contains(&word.to_lowercase())
                }
            };
            if found(&rel) {
                hits.push(format!("{rel}: file name contains `{word}`"));
            }
            for (n, line) in text.lines().enumerate() {
                // The plotting crate's own method names are not our words.
                let line = &PLOTTING_API
                    .iter()
                    .fold(line.to_string(), |l, api| l.replace(api, ""));
                if found(line) {
                    hits.push(format!("{rel}:{}: `{word}`: {}", n + 1, line.trim()));
                }
            }
        }
    }
    assert!(
        checked > 100,
        "walked only {checked} files from {}",
        root.display()
    );
    assert!(hits.is_empty(), "retired words left:\n{}", hits.join("\n"));
}

#[test]
fn the_porters_section_names_every_retired_word() {
    let t = read("targets/README.md");
    let start = t
        .find(RENAMED_HEADING)
        .expect("targets/README.md has the porters' section");
    let section = &t[start..];
    let section = &section[..section[3..].find("\n## ").map_or(section.len(), |e| e + 3)];
    for (word, _) in RETIRED {
        let w = word.trim_end_matches('(');
        assert!(
            section.to_lowercase().contains(&w.to_lowercase()),
            "the porters' section does not say what became of `{word}`"
        );
    }
}
