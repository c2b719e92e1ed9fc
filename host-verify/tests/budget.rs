//! `fixsight-verify budget` end to end on a `targets.json` in the format the
//! `targets` command writes: the sums, both verdicts and their exit codes,
//! the default stage choice, and bad input (no file, unknown core, unknown
//! kernel, zero size) as a message, never a panic.

use std::fs;
use std::path::PathBuf;
use std::process::Command;

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fixsight-budget-{name}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

fn budget(d: &PathBuf, args: &[&str]) -> (Option<i32>, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .arg("budget")
        .arg("--report")
        .arg(d)
        .args(args)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(!err.contains("panicked"), "{err}");
    (
        o.status.code(),
        String::from_utf8_lossy(&o.stdout).to_string(),
        err,
    )
}

const TARGETS: &str = r#"{"schema": 1, "targets": [
  {"name": "cortex-m4", "triple": "thumbv7em-none-eabihf", "vectors": 1, "passed": 1, "lang": "rust",
   "kernels": [
     {"name": "pipeline.edge_stream/bench", "instr_per_px": 300.0, "code_bytes": 1, "stack_bytes": 1},
     {"name": "pipeline.point_job/bench", "instr_per_px": 350.0, "code_bytes": 1, "stack_bytes": 1},
     {"name": "pipeline.image_job/bench", "instr_per_px": 400.0, "code_bytes": 1, "stack_bytes": 1},
     {"name": "filter.binomial5/binomial5", "instr_per_px": 33.0, "code_bytes": 1, "stack_bytes": 1},
     {"name": "pipeline.per_vector", "instr_per_px": 9000.0, "code_bytes": 1, "stack_bytes": 1}]},
  {"name": "cortex-m4", "triple": "thumbv7em-none-eabihf", "vectors": 1, "passed": 1, "lang": "c",
   "kernels": [{"name": "pipeline.point_job/bench", "instr_per_px": 1.0, "code_bytes": 1, "stack_bytes": 1}]}]}"#;

#[test]
fn sums_verdicts_and_default_stages() {
    let d = dir("sums");
    fs::write(d.join("targets.json"), TARGETS).unwrap();
    // Default: one whole job, point mode (the edge stage is inside it; the
    // image mode is another whole job, not added), Rust entry.
    // 350 * 320 * 240 * 30 = 806.4 M instr/s > 168 MHz.
    let (code, out, _) = budget(
        &d,
        &[
            "--width",
            "320",
            "--height",
            "240",
            "--fps",
            "30",
            "--clock-mhz",
            "168",
        ],
    );
    assert_eq!(code, Some(1), "{out}");
    assert!(
        out.contains("pipeline.point_job/bench")
            && !out.contains("pipeline.edge_stream")
            && !out.contains("pipeline.image_job"),
        "{out}"
    );
    assert!(
        out.contains("total: 806.40 M instructions/s, 480.0 %"),
        "{out}"
    );
    assert!(out.contains("DOES NOT FIT: 4.80 times"), "{out}");
    // 33 * 160 * 120 * 10 = 6.336 M instr/s on 48 MHz: fits, 86.8 % left.
    let (code, out, _) = budget(
        &d,
        &[
            "--width",
            "160",
            "--height",
            "120",
            "--fps",
            "10",
            "--clock-mhz",
            "48",
            "--kernel",
            "filter.binomial5",
        ],
    );
    assert_eq!(code, Some(0), "{out}");
    assert!(out.contains("FITS with 86.8 %"), "{out}");
    fs::remove_dir_all(&d).unwrap();
}

/// A core measured over the demo sequence as well as on the bench frame.
const WITH_SEQUENCE: &str = r#"{"schema": 1, "targets": [
  {"name": "cortex-m4", "triple": "thumbv7em-none-eabihf", "vectors": 1, "passed": 1, "lang": "rust",
   "kernels": [
     {"name": "pipeline.point_job/bench", "instr_per_px": 250.0, "code_bytes": 1, "stack_bytes": 1},
     {"name": "pipeline.point_job/demo_sequence", "instr_per_px": 300.0, "code_bytes": 1, "stack_bytes": 1,
      "sequence": {"frames": 96, "bit_exact_frames": 96, "instr_per_px_min": 200.0, "instr_per_px_max": 500.0}}]}]}"#;

#[test]
fn the_demo_sequence_replaces_the_bench_frame_and_its_worst_frame_decides() {
    let d = dir("sequence");
    fs::write(d.join("targets.json"), WITH_SEQUENCE).unwrap();
    // Mean 300 * 160 * 120 * 10 = 57.6 M instr/s on 100 MHz = 57.6 %; the
    // costliest frame 500 -> 96 %: fits, 4 % left. The bench entry (250)
    // is not added.
    let args = [
        "--width",
        "160",
        "--height",
        "120",
        "--fps",
        "10",
        "--clock-mhz",
        "100",
    ];
    let (code, out, _) = budget(&d, &args);
    assert_eq!(code, Some(0), "{out}");
    assert!(!out.contains("pipeline.point_job/bench"), "{out}");
    assert!(
        out.contains("total: 57.60 M instructions/s, 57.6 %"),
        "{out}"
    );
    assert!(
        out.contains("costliest frame of the demo sequence: 96.0 %"),
        "{out}"
    );
    assert!(out.contains("FITS with 4.0 %"), "{out}");
    // At 60 MHz the mean (96 %) fits but the costliest frame (160 %) does not.
    let (code, out, _) = budget(&d, &[&args[..6], &["--clock-mhz", "60"]].concat());
    assert_eq!(code, Some(1), "{out}");
    assert!(out.contains("DOES NOT FIT: 1.60 times"), "{out}");
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn bad_input_gives_a_message() {
    let d = dir("bad");
    let base = [
        "--width",
        "320",
        "--height",
        "240",
        "--fps",
        "30",
        "--clock-mhz",
        "168",
    ];
    let (code, _, err) = budget(&d, &base);
    assert_eq!(code, Some(2));
    assert!(err.contains("run `fixsight-verify targets"), "{err}");
    fs::write(d.join("targets.json"), TARGETS).unwrap();
    let (_, _, err) = budget(&d, &[&base[..], &["--core", "cortex-m7"]].concat());
    assert!(
        err.contains("no core `cortex-m7`") && err.contains("cortex-m4"),
        "{err}"
    );
    let (_, _, err) = budget(&d, &[&base[..], &["--kernel", "lines.peak"]].concat());
    assert!(err.contains("lines.peak"), "{err}");
    // An entry without a bench stage is not a cost per pixel.
    let (_, _, err) = budget(
        &d,
        &[&base[..], &["--kernel", "pipeline.per_vector"]].concat(),
    );
    assert!(err.contains("per output element"), "{err}");
    let (_, _, err) = budget(
        &d,
        &[
            "--width",
            "0",
            "--height",
            "240",
            "--fps",
            "30",
            "--clock-mhz",
            "168",
        ],
    );
    assert!(err.contains("--width"), "{err}");
    fs::write(d.join("targets.json"), "{ not json").unwrap();
    let (_, _, err) = budget(&d, &base);
    assert!(err.contains("not JSON"), "{err}");
    fs::remove_dir_all(&d).unwrap();
}
