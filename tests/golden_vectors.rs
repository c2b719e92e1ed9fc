//! The golden vectors in `golden/` reproduce bit for bit, and every way a
//! golden folder can be damaged is reported as such.

use fixsight_verify::families::check_golden;
use fixsight_verify::golden::{self, GoldenError, MANIFEST};
use std::fs;
use std::path::{Path, PathBuf};

fn repo_golden() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../golden")
}

/// A scratch copy of the repository's golden folder.
fn copy_golden(tag: &str) -> PathBuf {
    let dst = std::env::temp_dir().join(format!("fixsight-golden-{tag}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&dst);
    fs::create_dir_all(&dst).unwrap();
    for e in fs::read_dir(repo_golden()).unwrap() {
        let e = e.unwrap();
        if e.file_type().unwrap().is_file() {
            fs::copy(e.path(), dst.join(e.file_name())).unwrap();
        }
    }
    dst
}

fn first_file(dir: &Path, ends: &str) -> PathBuf {
    let m = golden::read_manifest(dir).unwrap();
    let f = m
        .vectors
        .iter()
        .flat_map(|v| v.expected.iter())
        .find(|i| i.file.ends_with(ends))
        .unwrap();
    dir.join(&f.file)
}

#[test]
fn repository_vectors_reproduce_bit_for_bit() {
    let s = check_golden(&repo_golden()).unwrap();
    assert!(s.vectors >= 31, "only {} vectors", s.vectors);
    assert_eq!(s.failures, Vec::<(String, String)>::new());
    assert_eq!(s.passed, s.vectors);
}

#[test]
fn a_single_flipped_bit_fails_its_vector() {
    let dir = copy_golden("flip");
    let f = first_file(&dir, ".dst.bin");
    let mut b = fs::read(&f).unwrap();
    let mid = b.len() / 2;
    b[mid] ^= 1;
    fs::write(&f, &b).unwrap();
    let s = check_golden(&dir).unwrap();
    assert_eq!(s.failures.len(), 1);
    assert!(s.failures[0].1.contains("SHA-256"), "{}", s.failures[0].1);
    // Same flip with the digest updated: now the recomputation catches it.
    let text = fs::read_to_string(dir.join(MANIFEST)).unwrap();
    let old = golden::sha256_hex(&{
        let mut o = b.clone();
        o[mid] ^= 1;
        o
    });
    fs::write(
        dir.join(MANIFEST),
        text.replace(&old, &golden::sha256_hex(&b)),
    )
    .unwrap();
    let s = check_golden(&dir).unwrap();
    assert_eq!(s.failures.len(), 1);
    assert!(
        s.failures[0].1.contains("differs at pixel"),
        "{}",
        s.failures[0].1
    );
    fs::remove_dir_all(dir).unwrap();
}

#[test]
fn truncated_and_missing_files_are_named() {
    let dir = copy_golden("trunc");
    let f = first_file(&dir, ".dst.bin");
    let b = fs::read(&f).unwrap();
    fs::write(&f, &b[..b.len() - 1]).unwrap();
    let s = check_golden(&dir).unwrap();
    assert!(s.failures[0].1.contains("bytes but"), "{}", s.failures[0].1);
    fs::remove_file(&f).unwrap();
    let s = check_golden(&dir).unwrap();
    assert!(
        s.failures[0].1.contains("cannot read"),
        "{}",
        s.failures[0].1
    );
    fs::remove_dir_all(dir).unwrap();
}

#[test]
fn bad_manifests_give_typed_errors() {
    let dir = copy_golden("manifest");
    let text = fs::read_to_string(dir.join(MANIFEST)).unwrap();
    fs::write(dir.join(MANIFEST), &text[..text.len() / 2]).unwrap();
    assert!(matches!(check_golden(&dir), Err(GoldenError::Json { .. })));
    fs::write(
        dir.join(MANIFEST),
        text.replace("\"version\": 1", "\"version\": 9"),
    )
    .unwrap();
    let e = check_golden(&dir).unwrap_err();
    assert!(matches!(e, GoldenError::Version { found: 9, .. }));
    assert!(e.to_string().contains("version 9 is not supported"));
    fs::write(dir.join(MANIFEST), text.replace("fixsight-golden", "other")).unwrap();
    assert!(matches!(
        check_golden(&dir),
        Err(GoldenError::Format { .. })
    ));
    fs::write(
        dir.join(MANIFEST),
        text.replace(".src.bin", "/../../etc/passwd"),
    )
    .unwrap();
    assert!(matches!(
        check_golden(&dir),
        Err(GoldenError::Inconsistent { .. })
    ));
    fs::remove_dir_all(&dir).unwrap();
    assert!(matches!(check_golden(&dir), Err(GoldenError::File(_))));
}

#[test]
fn unknown_kernels_and_bad_params_fail_the_vector_not_the_tool() {
    let dir = copy_golden("params");
    let text = fs::read_to_string(dir.join(MANIFEST)).unwrap();
    let text = text.replacen("\"h_shift\": 6", "\"h_shift\": 99", 1);
    let text = text.replacen(
        "\"kernel\": \"gradient.direction\"",
        "\"kernel\": \"nosuch.kernel\"",
        1,
    );
    fs::write(dir.join(MANIFEST), text).unwrap();
    let s = check_golden(&dir).unwrap();
    let all: String = s.failures.iter().map(|f| f.1.clone() + "\n").collect();
    assert!(
        all.contains("shift of one tap set must be at most 16"),
        "{all}"
    );
    assert!(all.contains("belongs to no known family"), "{all}");
    fs::remove_dir_all(dir).unwrap();
}

#[test]
fn write_refuses_to_overwrite_without_the_flag() {
    let dir = copy_golden("write");
    let e = golden::write(&dir, &[], false).unwrap_err();
    assert!(matches!(e, GoldenError::Exists { .. }));
    assert!(e.to_string().contains("--overwrite"));
    fs::remove_dir_all(dir).unwrap();
}
