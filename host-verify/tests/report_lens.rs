//! `report --lens FILE`: a lens file written by the tool itself for the
//! demo camera gives the default report's figures in every lens-dependent
//! row; another lens changes those rows and no other; the report names the
//! lens; bad lens files stop the command before anything is written.
//!
//! The whole report takes minutes in a test build, so the rows are checked
//! through the functions the report calls (on one demo scene and a short
//! piece of the demo sequence); the command itself is run only on bad files,
//! which it refuses before any work.

mod common;

use common::fresh_dir;
use fixsight::lines::{PeakParams, VoteParams};
use fixsight_verify::calibrate::{report::lens_text, ModelKind};
use fixsight_verify::cmd::report::load_lens;
use fixsight_verify::contract::KernelReport;
use fixsight_verify::families::FAMILIES;
use fixsight_verify::golden::{sha256_hex, GoldenSummary};
use fixsight_verify::lens::{Camera, LensInUse, LensModel};
use fixsight_verify::lines::{grid_row, run_known_lines};
use fixsight_verify::pipeline::job::{demo_sequence_through, job_row};
use fixsight_verify::report::{table, LensInfo, Report, SCHEMA};
use fixsight_verify::scene::{demo_camera, render, Scene, DEMO_SPECS};
use fixsight_verify::sequence::{Sequence, SequenceSpec, DEMO_SEQUENCE};
use std::fs;
use std::path::{Path, PathBuf};

/// A row without its notes (which name the lens), as JSON.
fn figures(r: &KernelReport) -> serde_json::Value {
    let mut v = serde_json::to_value(r).unwrap();
    v.as_object_mut().unwrap().remove("notes");
    v
}

fn all_figures(rows: &[KernelReport]) -> Vec<serde_json::Value> {
    rows.iter().map(figures).collect()
}

/// Writes `camera` as a lens file the way `calibrate` does.
fn write_lens(d: &Path, name: &str, camera: &Camera) -> PathBuf {
    let p = d.join(name);
    fs::write(&p, lens_text(camera, ModelKind::Brown, (320, 240), &[])).unwrap();
    p
}

/// A valid lens other than the demo's: longer focal length, weaker barrel,
/// other tangential terms, principal point off centre.
fn other_camera() -> Camera {
    let mut c = demo_camera(320, 240);
    c.intrinsics.fx = 150.0;
    c.intrinsics.fy = 151.0;
    c.intrinsics.cx = 162.0;
    c.intrinsics.cy = 117.0;
    c.lens = LensModel::BrownConrady {
        k1: -0.12,
        k2: 0.01,
        k3: 0.0,
        p1: -0.001,
        p2: 0.0008,
    };
    c
}

fn one_scene() -> Vec<Scene> {
    vec![render(&DEMO_SPECS[0], 320, 240)]
}

/// The first eight frames of the demo sequence: enough for the job's
/// figures to depend on the lens, short enough for a test build.
const SHORT: SequenceSpec = SequenceSpec {
    frames: 8,
    ..DEMO_SEQUENCE
};

#[test]
fn a_demo_lens_file_gives_the_default_figures() {
    let d = fresh_dir("report-lens-same");
    let path = write_lens(&d, "demo.lens", &demo_camera(320, 240));
    let file = load_lens(&path).unwrap();
    let demo = LensInUse::demo().unwrap();
    assert!(!file.is_demo());
    // The text holds every coefficient to the last bit.
    assert_eq!(file.camera, demo.camera);
    assert_eq!(file.view, demo.view);
    let scenes = one_scene();
    let warp = |l: &LensInUse| fixsight_verify::warp::check::check(&scenes, l);
    let (a, b) = (warp(&demo), warp(&file));
    assert_eq!(a.len(), 3);
    assert_eq!(all_figures(&a), all_figures(&b));
    assert!(b.iter().all(|r| r.pass), "{b:?}");
    let grid = |l: &LensInUse| grid_row(&scenes, l).unwrap();
    assert_eq!(figures(&grid(&demo)), figures(&grid(&file)));
    let known = |l: &LensInUse| {
        let s = run_known_lines(6, &VoteParams::DEMO_QVGA, &PeakParams::DEMO, l).unwrap();
        (
            s.cases,
            s.recovered,
            s.max_rho_px,
            s.mean_theta_deg,
            s.failed,
        )
    };
    assert_eq!(known(&demo), known(&file));
    // The demo sequence through the file is the demo sequence.
    let seq = demo_sequence_through(&file).unwrap();
    let plain = Sequence::new(&DEMO_SEQUENCE).unwrap();
    assert_eq!(seq.render(40), plain.render(40));
    assert_eq!(seq.view(), plain.view());
    let job = |s: Sequence| figures(&job_row(&s).unwrap());
    assert_eq!(
        job(Sequence::new(&SHORT).unwrap()),
        job(Sequence::through(&SHORT, file.camera, file.view).unwrap())
    );
    let _ = fs::remove_dir_all(&d);
}

#[test]
fn another_lens_changes_the_lens_rows_only() {
    let d = fresh_dir("report-lens-other");
    let path = write_lens(&d, "other.lens", &other_camera());
    let other = load_lens(&path).unwrap();
    let demo = LensInUse::demo().unwrap();
    let scenes = one_scene();
    let warp = |l: &LensInUse| fixsight_verify::warp::check::check(&scenes, l);
    let (a, b) = (warp(&demo), warp(&other));
    for (x, y) in a.iter().zip(&b) {
        assert_ne!(figures(x), figures(y), "{}", x.name);
        assert!(y.pass, "{y:?}");
        assert!(
            y.notes.iter().any(|n| n.contains("`other.lens`")),
            "{:?}",
            y.notes
        );
    }
    // The control grid's geometric error is a figure of the lens alone.
    assert_ne!(
        a[1].metrics["grid_max_px"], b[1].metrics["grid_max_px"],
        "warp.control_grid"
    );
    let (ga, gb) = (
        grid_row(&scenes, &demo).unwrap(),
        grid_row(&scenes, &other).unwrap(),
    );
    assert_ne!(ga.max_abs_err, gb.max_abs_err);
    assert_ne!(
        ga.metrics["lens_turn_max_deg"],
        gb.metrics["lens_turn_max_deg"]
    );
    let ja = job_row(&Sequence::new(&SHORT).unwrap()).unwrap();
    let jb = job_row(&Sequence::through(&SHORT, other.camera, other.view).unwrap()).unwrap();
    assert_ne!(figures(&ja), figures(&jb));
    // A family that does not depend on the lens gives the same rows.
    let filter = FAMILIES.iter().find(|f| f.name == "filter").unwrap();
    assert_eq!(
        all_figures(&(filter.check)(&scenes, &demo)),
        all_figures(&(filter.check)(&scenes, &other))
    );
    // The row kept on the demo lens says so with the other lens only.
    let marking = FAMILIES.iter().find(|f| f.name == "marking").unwrap();
    let (ma, mb) = ((marking.check)(&[], &demo), (marking.check)(&[], &other));
    assert_eq!(all_figures(&ma), all_figures(&mb));
    let kept = |rows: &[KernelReport]| {
        rows.iter()
            .flat_map(|r| &r.notes)
            .any(|n| n.starts_with("computed with the built-in demo lens"))
    };
    assert!(!kept(&ma) && kept(&mb));
    let _ = fs::remove_dir_all(&d);
}

#[test]
fn the_report_names_its_lens() {
    let d = fresh_dir("report-lens-named");
    let path = write_lens(&d, "named.lens", &other_camera());
    let lens = load_lens(&path).unwrap();
    let digest = sha256_hex(&fs::read(&path).unwrap());
    let report = |lens: &LensInUse| Report {
        schema: SCHEMA,
        pass: true,
        lens: LensInfo::of(lens),
        golden: GoldenSummary {
            vectors: 0,
            passed: 0,
            failures: Vec::new(),
        },
        scenes: Vec::new(),
        kernels: Vec::new(),
        targets: None,
        frontier: None,
        flash: None,
    };
    let r = report(&lens);
    let line = format!("lens: lens file `named.lens` (SHA-256 {digest})");
    assert!(table(&r).contains(&line), "{}", table(&r));
    let json = serde_json::to_value(&r).unwrap();
    assert_eq!(json["lens"]["file"], "named.lens");
    assert_eq!(json["lens"]["sha256"], digest.as_str());
    let html = fixsight_verify::html::render(&r, &[]).unwrap();
    assert!(html.contains(&digest), "{html}");
    let demo = report(&LensInUse::demo().unwrap());
    assert!(table(&demo).contains("lens: built-in demo lens\n"));
    let json = serde_json::to_value(&demo).unwrap();
    assert_eq!(json["lens"]["description"], "built-in demo lens");
    assert!(json["lens"].get("sha256").is_none());
    let _ = fs::remove_dir_all(&d);
}

#[test]
fn bad_lens_files_stop_the_report_before_anything() {
    let d = fresh_dir("report-lens-bad");
    let good = fs::read_to_string(write_lens(&d, "good.lens", &demo_camera(320, 240))).unwrap();
    let wrong_format = d.join("wrong-format.lens");
    fs::write(
        &wrong_format,
        good.replace("fixsight-lens 1", "fixsight-lens 2"),
    )
    .unwrap();
    // k1 = -0.9 passes the file's corner checks, but its map folds back
    // inside the 320 x 240 view (found by the grid builders).
    let folding = d.join("folding.lens");
    let k1 = good
        .lines()
        .find(|l| l.starts_with("k1 = "))
        .unwrap()
        .to_string();
    fs::write(&folding, good.replace(&k1, "k1 = -0.9")).unwrap();
    let binary = d.join("binary.lens");
    fs::write(&binary, [0xffu8, 0xfe, 0x00, 0x41]).unwrap();
    let vga = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("data/demo-lens.txt");
    // An earlier report the failed runs must leave alone.
    let kept = d.join("kept");
    fs::create_dir_all(&kept).unwrap();
    fs::write(kept.join("report.json"), "earlier report\n").unwrap();
    for (lens, says) in [
        (d.join("missing.lens"), "missing.lens"),
        (wrong_format, "fixsight-lens 1"),
        (folding, "folds back on itself"),
        (binary, "binary.lens"),
        (vga, "640x480"),
    ] {
        for (out, overwrite) in [(d.join("new"), false), (kept.clone(), true)] {
            let mut args = vec![
                "report",
                "--lens",
                lens.to_str().unwrap(),
                "--out",
                out.to_str().unwrap(),
            ];
            if overwrite {
                args.push("--overwrite");
            }
            let (ok, stdout, err) = common::tool(&args);
            assert!(!ok, "{}: {stdout}", lens.display());
            assert!(err.starts_with("error: "), "{err}");
            assert!(err.contains(says), "{}: {err}", lens.display());
            assert!(!err.contains("backtrace"), "{err}");
            assert!(stdout.is_empty(), "{stdout}");
        }
        assert!(!d.join("new").exists());
        assert_eq!(
            fs::read_to_string(kept.join("report.json")).unwrap(),
            "earlier report\n"
        );
        assert_eq!(fs::read_dir(&kept).unwrap().count(), 1);
    }
    let _ = fs::remove_dir_all(&d);
}
