//! `fixsight-verify golden extra` end to end: vectors at a size of the
//! caller's choosing that `golden check` reproduces, the same seed giving
//! the same bytes, and bad sizes or an existing folder refused with a
//! message before anything is written.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fixsight-extra-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn tool(args: &[&str]) -> Output {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(args)
        .output()
        .unwrap();
    assert!(
        !String::from_utf8_lossy(&o.stderr).contains("panicked"),
        "{o:?}"
    );
    o
}

fn extra(seed: &str, w: &str, h: &str, out: &Path) -> Output {
    let out = out.to_str().unwrap();
    tool(&[
        "golden", "extra", "--seed", seed, "--width", w, "--height", h, "--out", out,
    ])
}

#[test]
fn extra_vectors_are_reproduced_and_repeatable() {
    let d = dir("ok");
    let (a, b) = (d.join("a"), d.join("b"));
    // 37 x 9: a row length that is a tail after every block size.
    let o = extra("5", "37", "9", &a);
    assert_eq!(o.status.code(), Some(0), "{o:?}");
    assert!(String::from_utf8_lossy(&o.stdout).contains("of 37x9 (seed 5)"));
    let m: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(a.join("manifest.json")).unwrap()).unwrap();
    let vs = m["vectors"].as_array().unwrap();
    // Every row-loop kernel: 7 presets, 5 gradient kernels, 2 suppressions,
    // 3 hysteresis steps, thinning, the chain.
    assert_eq!(vs.len(), 19);
    assert!(vs
        .iter()
        .all(|v| v["id"].as_str().unwrap().ends_with(".seed5-37x9")));
    assert!(vs.iter().all(|v| v["inputs"][0]["width"] == 37));
    let o = tool(&["golden", "check", "--vectors", a.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{o:?}");
    assert!(String::from_utf8_lossy(&o.stdout).contains("19/19"));
    // The same seed and size give the same files.
    assert_eq!(extra("5", "37", "9", &b).status.code(), Some(0));
    assert_eq!(
        std::fs::read(a.join("manifest.json")).unwrap(),
        std::fs::read(b.join("manifest.json")).unwrap()
    );
    // Another seed gives another image.
    let c = d.join("c");
    assert_eq!(extra("6", "37", "9", &c).status.code(), Some(0));
    let src = |p: &Path| {
        std::fs::read(p.join(format!(
            "chain.edges.seed{}-37x9.src.bin",
            if p == c { 6 } else { 5 }
        )))
        .unwrap()
    };
    assert_ne!(src(&a), src(&c));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn bad_sizes_and_existing_folders_are_refused() {
    let d = dir("bad");
    for (w, h, says) in [
        ("0", "5", "--width and --height must be 1..=4096"),
        ("5", "4097", "--width and --height must be 1..=4096"),
        ("4096", "4096", "at most 4194304"),
    ] {
        let o = extra("1", w, h, &d.join("x"));
        assert_eq!(o.status.code(), Some(2), "{o:?}");
        assert!(String::from_utf8_lossy(&o.stderr).contains(says), "{o:?}");
        assert!(!d.join("x").join("manifest.json").exists());
    }
    let o = extra("1", "-3", "5", &d.join("x"));
    assert_eq!(o.status.code(), Some(2), "{o:?}");
    let keep = d.join("keep");
    assert_eq!(extra("1", "8", "4", &keep).status.code(), Some(0));
    let before = std::fs::read(keep.join("manifest.json")).unwrap();
    let o = extra("2", "8", "4", &keep);
    assert_eq!(o.status.code(), Some(2), "{o:?}");
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("--overwrite"),
        "{o:?}"
    );
    assert_eq!(std::fs::read(keep.join("manifest.json")).unwrap(), before);
    let _ = std::fs::remove_dir_all(&d);
}
