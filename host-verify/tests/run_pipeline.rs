//! `fixsight-verify run --pipeline` end to end: frames of the demo sequence
//! written as PNG files with the sequence's lens as a `fixsight-lens 1`
//! file; the command's fixed and `f64` tape edges must be what the library
//! runs give on the same frames, and bad input (wrong frame size, a lens
//! file for another size, `--lens` without `--pipeline`, existing outputs)
//! must give a message and a non-zero exit.

use fixsight::warp::ControlGrid;
use fixsight_verify::calibrate::{report::lens_text, ModelKind};
use fixsight_verify::lines::{build_correction_grid, GRID_FRAC_BITS, GRID_LOG2};
use fixsight_verify::pipeline::job::{run_f64, run_fixed, stage_controls};
use fixsight_verify::sequence::{Sequence, DEMO_SEQUENCE};
use std::fs;
use std::path::PathBuf;

mod common;

fn dir(name: &str) -> PathBuf {
    common::fresh_dir(&format!("job-{name}"))
}

fn run(args: &[&str]) -> (bool, String, String) {
    common::tool(&[&["run"], args].concat())
}

/// Frames 10..18 of the demo sequence (the tape in view, no occlusion) as
/// PNG files, and the sequence's lens file.
fn demo_input(d: &std::path::Path) -> (Vec<Vec<u8>>, Sequence, PathBuf) {
    let seq = Sequence::new(&DEMO_SEQUENCE).unwrap();
    let frames_dir = d.join("frames");
    fs::create_dir_all(&frames_dir).unwrap();
    let mut frames = Vec::new();
    for k in 10..18 {
        let px = seq.render(k);
        image::GrayImage::from_raw(320, 240, px.clone())
            .unwrap()
            .save(frames_dir.join(format!("frame{k:03}.png")))
            .unwrap();
        frames.push(px);
    }
    let lens = d.join("demo.lens");
    fs::write(
        &lens,
        lens_text(seq.camera(), ModelKind::Brown, (320, 240), &[]),
    )
    .unwrap();
    (frames, seq, lens)
}

#[test]
fn tape_edges_are_the_library_runs() {
    let d = dir("lib");
    let (frames, seq, lens) = demo_input(&d);
    let out = d.join("out");
    let (ok, stdout, err) = run(&[
        "--input",
        d.join("frames").to_str().unwrap(),
        "--pipeline",
        "--lens",
        lens.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(ok, "{stdout}\n{err}");
    assert!(stdout.contains("Not a safety function"), "{stdout}");
    for k in 10..18 {
        assert!(out.join(format!("frame{k:03}.pipeline.png")).is_file());
    }
    let json: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("pipeline.json")).unwrap()).unwrap();
    // The same runs through the library.
    let cg = build_correction_grid(
        seq.camera(),
        seq.view(),
        (320, 240),
        (320, 240),
        GRID_LOG2,
        GRID_FRAC_BITS,
    )
    .unwrap();
    let grid = ControlGrid::new(&cg.points, cg.geom, cg.k).unwrap();
    let fixed = run_fixed(&frames, Some(&grid)).unwrap();
    let reference = run_f64(&seq, &frames, &stage_controls(&fixed));
    let listed = json["frames"].as_array().unwrap();
    assert_eq!(listed.len(), 8);
    let mut found = 0;
    for (i, f) in listed.iter().enumerate() {
        for (run, key) in [(&fixed.frames[i], "fixed"), (&reference[i], "f64")] {
            match run.tape {
                None => assert!(f[key]["tape"].is_null(), "frame {i} {key}"),
                Some(t) => {
                    found += 1;
                    for (e, edge) in t.iter().enumerate() {
                        // The fixed lines are Q4 and binary angles, exact in
                        // f64; the f64 run's lens is re-read from the text
                        // file, equal to the last few bits.
                        let got = &f[key]["tape"][e];
                        let (rho, deg) = (got[0].as_f64().unwrap(), got[1].as_f64().unwrap());
                        let tol = if key == "fixed" { 0.0 } else { 1e-9 };
                        assert!(
                            (rho - edge.0).abs() <= tol,
                            "frame {i} {key}: {rho} {edge:?}"
                        );
                        let d = (deg - edge.1.to_degrees()).abs();
                        assert!(d <= tol.max(1e-12), "frame {i} {key}: {deg} {edge:?}");
                    }
                }
            }
            assert_eq!(
                f[key]["warning_frames"].as_u64(),
                run.warning.map(u64::from)
            );
        }
    }
    // The tape is in view in every one of these frames: the comparison is
    // not vacuous when the runs find it in at least half of them.
    assert!(found >= 8, "tape found {found} times in 16 runs");
    let m = &json["metrics"];
    assert_eq!(m["frames"].as_f64(), Some(8.0));
    assert!(m["line_rho_err_px_fixed_vs_f64_max"].as_f64().unwrap() >= 0.0);
    // A second run into the same folder is refused without --overwrite.
    let (ok, _, err) = run(&[
        "--input",
        d.join("frames").to_str().unwrap(),
        "--pipeline",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && err.contains("--overwrite"), "{err}");
    let _ = fs::remove_dir_all(&d);
}

#[test]
fn bad_input_gives_a_message() {
    let d = dir("bad");
    image::GrayImage::new(64, 48)
        .save(d.join("small.png"))
        .unwrap();
    let out = d.join("out");
    let o = out.to_str().unwrap();
    let (ok, _, err) = run(&[
        "--input",
        d.join("small.png").to_str().unwrap(),
        "--pipeline",
        "--out",
        o,
    ]);
    assert!(
        !ok && err.contains("64x48") && err.contains("320x240"),
        "{err}"
    );
    // A lens file for another size (the 640x480 example).
    let vga = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("data/demo-lens.txt");
    let (ok, _, err) = run(&[
        "--input",
        d.join("small.png").to_str().unwrap(),
        "--pipeline",
        "--lens",
        vga.to_str().unwrap(),
        "--out",
        o,
    ]);
    assert!(!ok && err.contains("640x480"), "{err}");
    // --lens belongs to --pipeline; --kernel and --pipeline exclude each other.
    let (ok, _, err) = run(&[
        "--input",
        d.join("small.png").to_str().unwrap(),
        "--kernel",
        "chain.edges",
        "--lens",
        vga.to_str().unwrap(),
        "--out",
        o,
    ]);
    assert!(!ok && err.contains("--pipeline"), "{err}");
    let (ok, _, err) = run(&["--input", d.join("small.png").to_str().unwrap(), "--out", o]);
    assert!(!ok && err.contains("--kernel"), "{err}");
    assert!(!out.exists());
    let _ = fs::remove_dir_all(&d);
}
