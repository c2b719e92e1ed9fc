//! Regression tests of the tool items of issue 16 (hostile input): the
//! tool never loses a user's file, never panics, never hangs, and says
//! clearly what was wrong. Each test names its item.

use fixsight_verify::families::check_golden;
use fixsight_verify::golden::{self, GoldenError, MANIFEST};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn repo_golden() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden")
}

fn tmp(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fsv-hostile-{tag}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

fn copy_golden(tag: &str) -> PathBuf {
    let d = tmp(tag);
    for e in fs::read_dir(repo_golden()).unwrap() {
        let e = e.unwrap();
        fs::copy(e.path(), d.join(e.file_name())).unwrap();
    }
    d
}

fn tool(cwd: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .current_dir(cwd)
        .args(args)
        .output()
        .unwrap()
}

fn text(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).to_string() + &String::from_utf8_lossy(&o.stderr)
}

fn snapshot(d: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<_> = fs::read_dir(d)
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            let b = if e.file_type().unwrap().is_file() {
                fs::read(e.path()).unwrap()
            } else {
                Vec::new()
            };
            (e.file_name().to_string_lossy().to_string(), b)
        })
        .collect();
    v.sort();
    v
}

/// Edits the manifest of `dir` with `f` on its JSON value.
fn edit_manifest(dir: &Path, f: impl FnOnce(&mut serde_json::Value)) {
    let p = dir.join(MANIFEST);
    let mut v: serde_json::Value = serde_json::from_str(&fs::read_to_string(&p).unwrap()).unwrap();
    f(&mut v);
    fs::write(&p, serde_json::to_string_pretty(&v).unwrap()).unwrap();
}

fn vector_mut<'a>(m: &'a mut serde_json::Value, kernel: &str) -> &'a mut serde_json::Value {
    m["vectors"]
        .as_array_mut()
        .unwrap()
        .iter_mut()
        .find(|v| v["kernel"] == kernel)
        .unwrap()
}

/// Items 1 and 2: `golden write` deletes no file it did not create, and
/// a write that fails leaves the folder as it was.
#[test]
fn golden_write_keeps_user_files_and_fails_whole() {
    let d = copy_golden("write");
    fs::write(d.join("calibration.bin"), b"user data").unwrap();
    let cases = fixsight_verify::families::all_cases(&fixsight_verify::scene::demo_scenes());
    // Without the flag: refused, nothing touched.
    let before = snapshot(&d);
    let e = golden::write(&d, &cases, false).unwrap_err();
    assert!(matches!(e, GoldenError::Exists { .. }), "{e}");
    assert_eq!(snapshot(&d), before);
    // A folder where a vector file goes: the write fails before any rename
    // and the old manifest, the old vectors and the user's file stay.
    let victim = format!("{}.{}.bin", cases[3].id, cases[3].expected[0].name);
    fs::remove_file(d.join(&victim)).unwrap();
    fs::create_dir(d.join(&victim)).unwrap();
    let before = snapshot(&d);
    let e = golden::write(&d, &cases, true).unwrap_err();
    assert!(e.to_string().contains(&victim), "{e}");
    assert_eq!(snapshot(&d), before, "a failed write changed the folder");
    fs::remove_dir(d.join(&victim)).unwrap();
    // With the flag it writes every vector, byte-identical to the
    // repository's, and leaves the user's file in place.
    let w = golden::write(&d, &cases, true).unwrap();
    assert_eq!(w.unreferenced, ["calibration.bin"]);
    assert_eq!(fs::read(d.join("calibration.bin")).unwrap(), b"user data");
    for (name, bytes) in snapshot(&repo_golden()) {
        if name.ends_with(".bin") {
            assert!(fs::read(d.join(&name)).unwrap() == bytes, "{name} differs");
        }
    }
    let ids = |m: golden::Manifest| m.vectors.into_iter().map(|v| v.id).collect::<Vec<_>>();
    assert_eq!(
        ids(w.manifest),
        ids(golden::read_manifest(&repo_golden()).unwrap())
    );
    fs::remove_dir_all(d).unwrap();
}

/// Item 1 at the command line: refused before computing, the manifest
/// named, no `--overwrite` needed for a first write.
#[test]
fn golden_write_command_refuses_first() {
    let d = copy_golden("write-cli");
    let o = tool(&d, &["golden", "write", "--vectors", "."]);
    assert_eq!(o.status.code(), Some(2));
    let t = text(&o);
    assert!(
        t.contains("manifest.json") && t.contains("--overwrite"),
        "{t}"
    );
    fs::remove_dir_all(d).unwrap();
}

/// Item 3: output names stay inside the output folder, and no command
/// replaces a file silently.
#[test]
fn grid_names_and_existing_outputs() {
    let d = tmp("grid");
    let lens = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/demo-lens.txt");
    let lens = lens.to_str().unwrap();
    for bad in ["../x", "/abs/path", "a/b", ".hidden", "a b"] {
        let o = tool(&d, &["grid", "--lens", lens, "--out", "out", "--name", bad]);
        assert_eq!(o.status.code(), Some(2), "--name {bad}");
        assert!(
            text(&o).contains("--name") || text(&o).contains("output name"),
            "{}",
            text(&o)
        );
    }
    assert!(!d.join("x.rs").exists() && !d.join("out").exists());
    let o = tool(&d, &["grid", "--lens", lens, "--out", "out"]);
    assert!(o.status.success(), "{}", text(&o));
    let before = snapshot(&d.join("out"));
    let o = tool(&d, &["grid", "--lens", lens, "--out", "out"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("lens_grid.rs") && text(&o).contains("--overwrite"));
    assert_eq!(snapshot(&d.join("out")), before);
    let o = tool(&d, &["grid", "--lens", lens, "--out", "out", "--overwrite"]);
    assert!(o.status.success(), "{}", text(&o));
    assert_eq!(snapshot(&d.join("out")), before, "same input, same files");
    // sweep refuses an existing output before running.
    fs::create_dir_all(d.join("sw")).unwrap();
    fs::write(d.join("sw/sweep.png"), b"mine").unwrap();
    let o = tool(&d, &["sweep", "--out", "sw"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("sweep.png"));
    assert_eq!(fs::read(d.join("sw/sweep.png")).unwrap(), b"mine");
    // report too.
    fs::create_dir_all(d.join("rep")).unwrap();
    fs::write(d.join("rep/report.json"), b"mine").unwrap();
    let o = tool(&d, &["report", "--out", "rep", "--vectors", "nowhere"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("report.json"));
    assert_eq!(fs::read(d.join("rep/report.json")).unwrap(), b"mine");
    fs::remove_dir_all(d).unwrap();
}

/// Item 4: sizes and parameters that would overflow or exhaust memory fail
/// their vector, with the reason; the rest still pass.
#[test]
fn huge_sizes_and_parameters_fail_their_vector() {
    let d = copy_golden("huge");
    let n = golden::read_manifest(&d).unwrap().vectors.len();
    edit_manifest(&d, |m| {
        // An image width of 2^63 with an empty file (the length wraps to 0).
        let v = vector_mut(m, "filter.binomial3");
        let f = v["inputs"][0]["file"].as_str().unwrap().to_string();
        v["inputs"][0]["width"] = serde_json::json!(1u64 << 63);
        v["inputs"][0]["sha256"] = serde_json::json!(golden::sha256_hex(b""));
        fs::write(d.join(f), b"").unwrap();
        vector_mut(m, "hysteresis.link")["params"]["stack"] = serde_json::json!(1u64 << 62);
        vector_mut(m, "hysteresis.thresholds")["params"]["bins"] = serde_json::json!(1u64 << 61);
        vector_mut(m, "warp.control_grid")["params"]["strip_rows"] = serde_json::json!(1u64 << 63);
        vector_mut(m, "chain.edges")["params"]["bins"] = serde_json::json!(1_000_000_000u64);
    });
    let s = check_golden(&d).unwrap();
    let reasons: String = s
        .failures
        .iter()
        .map(|f| format!("{}: {}\n", f.0, f.1))
        .collect();
    assert!(
        reasons.contains("width 9223372036854775808 is outside"),
        "{reasons}"
    );
    assert!(
        reasons.contains("hysteresis stack = 4611686018427387904"),
        "{reasons}"
    );
    assert!(
        reasons.contains("histogram bins = 2305843009213693952"),
        "{reasons}"
    );
    assert!(reasons.contains("histogram bins = 1000000000"), "{reasons}");
    // A strip taller than the frame is the whole frame: still reproduced.
    assert_eq!(s.failures.len(), 4, "{reasons}");
    assert_eq!(s.passed, n - 4);
    fs::remove_dir_all(d).unwrap();
}

/// Item 5: only regular files are read, with a size cap; no hang on a FIFO,
/// no endless read of a device.
#[cfg(unix)]
#[test]
fn devices_fifos_and_links_are_refused() {
    let d = copy_golden("special");
    let m = golden::read_manifest(&d).unwrap();
    let first = &m.vectors[0].inputs[0].file;
    let second = &m.vectors[1].inputs[0].file;
    fs::remove_file(d.join(first)).unwrap();
    std::os::unix::fs::symlink("/dev/zero", d.join(first)).unwrap();
    fs::remove_file(d.join(second)).unwrap();
    assert!(Command::new("mkfifo")
        .arg(d.join(second))
        .status()
        .unwrap()
        .success());
    let s = check_golden(&d).unwrap();
    let reasons: String = s.failures.iter().map(|f| f.1.clone() + "\n").collect();
    assert_eq!(s.failures.len(), 2, "{reasons}");
    assert!(
        reasons.contains("a device") && reasons.contains("a FIFO"),
        "{reasons}"
    );
    // The manifest itself.
    fs::rename(d.join(MANIFEST), d.join("m.json")).unwrap();
    std::os::unix::fs::symlink("/dev/zero", d.join(MANIFEST)).unwrap();
    let e = check_golden(&d).unwrap_err();
    assert!(e.to_string().contains("not a regular file"), "{e}");
    // A lens file.
    let o = tool(&d, &["grid", "--lens", "/dev/zero", "--out", "g"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("`/dev/zero` is a device"), "{}", text(&o));
    fs::remove_dir_all(d).unwrap();
}

fn lens_file(d: &Path, body: &str) -> String {
    let p = d.join("lens.txt");
    fs::write(
        &p,
        format!(
            "format = fixsight-lens 1\nsensor_width = 640\nsensor_height = 480\nfx = 500\n\
             fy = 500\ncx = 319.5\ncy = 239.5\n{body}"
        ),
    )
    .unwrap();
    p.to_str().unwrap().to_string()
}

/// Item 6: a view at the documented maximum size does not exhaust memory:
/// the grid at the default step is refused with the limit named, a larger
/// step is built with a sampled error and no per-pixel map.
#[test]
fn largest_view_is_bounded() {
    let d = tmp("big");
    let lens = lens_file(
        &d,
        "model = brown\nk1 = -0.1\nk2 = 0\nk3 = 0\np1 = 0\np2 = 0\nout_width = 32767\n\
         out_height = 32767\nview = manual\nview_fx = 25000\nview_fy = 25000\n\
         view_cx = 16383\nview_cy = 16383\n",
    );
    let o = tool(&d, &["grid", "--lens", &lens, "--out", "g"]);
    assert_eq!(o.status.code(), Some(2));
    let t = text(&o);
    assert!(
        t.contains("more than the 16777216 bytes") && t.contains("--grid-log2 5"),
        "{t}"
    );
    let o = tool(
        &d,
        &["grid", "--lens", &lens, "--out", "g", "--grid-log2", "6"],
    );
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("sampled every 16 px"), "{}", text(&o));
    fs::remove_dir_all(d).unwrap();
}

/// Item 8: a map that folds back on itself is refused.
#[test]
fn folding_lens_is_refused() {
    let d = tmp("fold");
    let lens = lens_file(
        &d,
        "model = brown\nk1 = -1\nk2 = 0\nk3 = 0\np1 = 0\np2 = 0\n",
    );
    let o = tool(&d, &["grid", "--lens", &lens, "--out", "g"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("folds back on itself"), "{}", text(&o));
    assert!(!d.join("g/lens_grid.bin").exists());
    fs::remove_dir_all(d).unwrap();
}

/// Item 9: a manifest without vectors is a failure.
#[test]
fn empty_manifest_fails() {
    let d = tmp("empty");
    fs::write(
        d.join(MANIFEST),
        r#"{"format": "fixsight-golden", "version": 1, "vectors": []}"#,
    )
    .unwrap();
    assert!(matches!(check_golden(&d), Err(GoldenError::Empty { .. })));
    let o = tool(&d, &["golden", "check", "--vectors", "."]);
    assert_ne!(o.status.code(), Some(0));
    assert!(text(&o).contains("lists no vectors"), "{}", text(&o));
    fs::remove_dir_all(d).unwrap();
}

/// Messages: the default folder is `golden` in the current folder, a
/// missing folder gets no `--overwrite` hint, paths are named.
#[test]
fn messages_name_paths_and_default_folder_is_local() {
    let d = tmp("msg");
    let o = tool(&d, &["golden", "check"]);
    assert_eq!(o.status.code(), Some(2));
    let t = text(&o);
    assert!(t.contains("cannot read `golden/manifest.json`"), "{t}");
    assert!(!t.contains("--overwrite") && t.contains("--vectors"), "{t}");
    let o = tool(&d, &["grid", "--lens", "no such\u{feff}.txt"]);
    assert!(
        text(&o).contains("cannot read `no such\\u{feff}.txt`"),
        "{}",
        text(&o)
    );
    fs::remove_dir_all(d).unwrap();
}

/// Every numeric parameter of every golden vector, one at a time, set to
/// each of a set of extreme values: the vector runs or fails with a
/// message, never panics, never allocates without bound (an allocation
/// failure would abort this test) and never loops for long. Found two
/// faults once: a suppression radius of 10^9 looped for minutes, and an
/// accumulator of 10^9 rows was allocated before its parameters were
/// checked.
#[test]
fn every_parameter_at_its_extremes_fails_cleanly() {
    use fixsight_verify::families::run_vector;
    const EXTREMES: [i128; 9] = [
        0,
        1,
        -1,
        1_000_000_000,
        1 << 31,
        1 << 62,
        1 << 63,
        u64::MAX as i128,
        i64::MIN as i128,
    ];
    fn leaves(v: &serde_json::Value, path: Vec<String>, out: &mut Vec<Vec<String>>) {
        match v {
            serde_json::Value::Object(o) => {
                for (k, c) in o {
                    let mut p = path.clone();
                    p.push(k.clone());
                    leaves(c, p, out);
                }
            }
            serde_json::Value::Number(_) => out.push(path),
            _ => {}
        }
    }
    let dir = repo_golden();
    let m = golden::read_manifest(&dir).unwrap();
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let mut bad = Vec::new();
    let mut runs = 0usize;
    for v in &m.vectors {
        let inputs: Vec<_> = v
            .inputs
            .iter()
            .map(|i| golden::load_image(&dir, i).unwrap())
            .collect();
        let mut paths = Vec::new();
        leaves(&v.params, Vec::new(), &mut paths);
        for path in paths {
            for x in EXTREMES {
                let mut p = v.params.clone();
                let mut slot = &mut p;
                for k in &path {
                    slot = &mut slot[k.as_str()];
                }
                *slot = serde_json::from_str(&x.to_string()).unwrap();
                let t = std::time::Instant::now();
                let r = std::panic::catch_unwind(|| run_vector(&v.kernel, &p, &inputs));
                let s = t.elapsed().as_secs_f64();
                runs += 1;
                let what = format!("{} {} = {x}", v.id, path.join("."));
                if r.is_err() {
                    bad.push(format!("{what}: panicked"));
                } else if s > 20.0 {
                    bad.push(format!("{what}: took {s:.1} s"));
                }
            }
        }
    }
    std::panic::set_hook(hook);
    assert!(runs > 1000, "only {runs} runs");
    assert!(
        bad.is_empty(),
        "{} of {runs} runs:\n{}",
        bad.len(),
        bad.join("\n")
    );
}
