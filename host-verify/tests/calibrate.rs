//! The `calibrate` command end to end on rendered checkerboard views, and
//! every kind of bad input: a clear message naming the file, a non-zero
//! exit, and never a lens file.

use fixsight_verify::calibrate::{calibrate, corners, synth, ModelKind, Pose};
use fixsight_verify::lens::LensSpec;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

const W: usize = 320;
const H: usize = 240;

fn spec() -> synth::SynthSpec {
    synth::SynthSpec::wide_angle(W, H)
}

/// Six rendered views of the wide-angle spec (rendered once per run).
fn views() -> &'static Vec<(Pose, image::GrayImage)> {
    static V: OnceLock<Vec<(Pose, image::GrayImage)>> = OnceLock::new();
    V.get_or_init(|| {
        let s = spec();
        synth::poses(&s, 6, 2024)
            .unwrap()
            .into_iter()
            .enumerate()
            .map(|(k, p)| {
                let g = synth::render(&s, &p, 500 + k as u64);
                (
                    p,
                    image::GrayImage::from_raw(W as u32, H as u32, g.to_u8()).unwrap(),
                )
            })
            .collect()
    })
}

fn fresh_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fixsight-calib-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(images: &Path, out: &Path, extra: &[&str]) -> (bool, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(["calibrate", "--images"])
        .arg(images)
        .args(["--inner-corners", "9x6", "--square-mm", "30", "--out"])
        .arg(out)
        .args(extra)
        .output()
        .unwrap();
    (
        o.status.success(),
        String::from_utf8_lossy(&o.stdout).to_string(),
        String::from_utf8_lossy(&o.stderr).to_string(),
    )
}

#[test]
fn rendered_views_give_back_the_lens() {
    let s = spec();
    let mut found = Vec::new();
    let mut worst_corner: f64 = 0.0;
    let mut sum2 = 0.0;
    for (pose, img) in views() {
        let g = fixsight_verify::calibrate::Grey::from_u8(W, H, img.as_raw());
        let c = corners::find_board(&g, &s.board).unwrap();
        let truth = synth::true_corners(&s, pose).unwrap();
        for (a, b) in c.iter().zip(&truth) {
            let d = (a.0 - b.0).hypot(a.1 - b.1);
            worst_corner = worst_corner.max(d);
            sum2 += d * d;
        }
        found.push(c);
    }
    let corner_rms = (sum2 / (found.len() * s.board.count()) as f64).sqrt();
    assert!(
        corner_rms < 0.15 && worst_corner < 0.8,
        "corners: RMS {corner_rms}, worst {worst_corner}"
    );
    let fit = calibrate(&s.board, &found, (W, H), ModelKind::Brown).unwrap();
    let (k, t) = (fit.camera.intrinsics, s.camera.intrinsics);
    assert!(
        (k.fx / t.fx - 1.0).abs() < 0.01 && (k.fy / t.fy - 1.0).abs() < 0.01,
        "{k:?} vs {t:?}"
    );
    assert!(
        (k.cx - t.cx).abs() < 2.0 && (k.cy - t.cy).abs() < 2.0,
        "{k:?} vs {t:?}"
    );
    // Over the disc the corners reach (beyond it the polynomial is
    // extrapolated; the README's study gives the whole-image figures).
    let k0 = s.camera.intrinsics;
    let reach = found
        .iter()
        .flatten()
        .map(|p| (p.0 - k0.cx).hypot(p.1 - k0.cy))
        .fold(0.0, f64::max);
    let (max, rms) = synth::map_error(&s.camera, &fit.camera, W, H, 4, reach);
    assert!(rms < 0.6 && max < 1.2, "map error max {max} RMS {rms}");
    assert!(fit.rms_px < 0.2, "reprojection RMS {}", fit.rms_px);
}

#[test]
fn rendered_fisheye_views_give_back_the_lens() {
    let s = synth::SynthSpec::fisheye(W, H);
    let mut found = Vec::new();
    for (k, pose) in synth::poses(&s, 8, 77).unwrap().iter().enumerate() {
        let g = synth::render(&s, pose, 900 + k as u64);
        if let Ok(c) = corners::find_board(&g, &s.board) {
            found.push(c);
        }
    }
    assert!(found.len() >= 5, "only {} of 8 boards found", found.len());
    let fit = calibrate(&s.board, &found, (W, H), ModelKind::Fisheye).unwrap();
    let (k, t) = (fit.camera.intrinsics, s.camera.intrinsics);
    assert!(
        (k.fx / t.fx - 1.0).abs() < 0.01 && (k.fy / t.fy - 1.0).abs() < 0.01,
        "{k:?} vs {t:?}"
    );
    let (max, rms) = synth::map_error(&s.camera, &fit.camera, W, H, 4, f64::INFINITY);
    assert!(rms < 0.5 && max < 3.0, "map error max {max} RMS {rms}");
}

#[test]
fn command_writes_a_lens_file_the_grid_command_takes_and_never_overwrites() {
    let dir = fresh_dir("ok");
    let (images, out) = (dir.join("photos"), dir.join("out"));
    std::fs::create_dir_all(&images).unwrap();
    for (k, (_, img)) in views().iter().take(5).enumerate() {
        img.save(images.join(format!("view{k}.png"))).unwrap();
    }
    std::fs::write(images.join("notes.txt"), "taken on the bench").unwrap();
    let (ok, stdout, stderr) = run(&images, &out, &[]);
    assert!(ok, "{stdout}\n{stderr}");
    let lens = out.join("lens.txt");
    assert_eq!(stdout.lines().last().unwrap(), lens.display().to_string());
    assert!(stdout.contains("notes.txt") && stdout.contains("Control grid from this lens file"));
    let spec = LensSpec::parse(&std::fs::read_to_string(&lens).unwrap()).unwrap();
    let t = spec_truth();
    assert!((spec.camera.intrinsics.fx / t.fx - 1.0).abs() < 0.01);
    assert_eq!(spec.sensor, (W, H));
    for k in 0..5 {
        assert!(out.join(format!("views/view{k}.png")).exists());
    }
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("calibration.json")).unwrap())
            .unwrap();
    assert_eq!(json["images"].as_array().unwrap().len(), 5);
    // The grid command accepts the lens file.
    let m = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(["grid", "--lens"])
        .arg(&lens)
        .arg("--out")
        .arg(dir.join("grid"))
        .output()
        .unwrap();
    assert!(m.status.success(), "{}", String::from_utf8_lossy(&m.stderr));
    // A second run refuses to replace, naming the file; --overwrite replaces.
    let before = std::fs::read(&lens).unwrap();
    let (ok, _, stderr) = run(&images, &out, &[]);
    assert!(
        !ok && stderr.contains("exists; pass --overwrite"),
        "{stderr}"
    );
    assert!(stderr.contains(&out.display().to_string()), "{stderr}");
    assert_eq!(std::fs::read(&lens).unwrap(), before);
    let (ok, stdout, stderr) = run(&images, &out, &["--overwrite"]);
    assert!(ok, "{stdout}\n{stderr}");
    // No temporary file is left behind.
    let left: Vec<_> = std::fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains(".tmp-"))
        .collect();
    assert!(left.is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

fn spec_truth() -> fixsight_verify::lens::Intrinsics {
    spec().camera.intrinsics
}

/// Runs the command on a prepared folder and checks the failure.
fn refuses(name: &str, prepare: impl Fn(&Path), wants: &[&str]) {
    let dir = fresh_dir(name);
    let (images, out) = (dir.join("photos"), dir.join("out"));
    std::fs::create_dir_all(&images).unwrap();
    prepare(&images);
    let (ok, stdout, stderr) = run(&images, &out, &[]);
    assert!(!ok, "{name}: succeeded\n{stdout}");
    for w in wants {
        assert!(stderr.contains(w), "{name}: `{w}` missing from\n{stderr}");
    }
    assert!(
        !out.join("lens.txt").exists(),
        "{name}: a lens file was written"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

fn blank(path: &Path, w: u32, h: u32) {
    image::GrayImage::from_fn(w, h, |x, y| image::Luma([(40 + (x + 2 * y) % 150) as u8]))
        .save(path)
        .unwrap();
}

#[test]
fn no_board_is_refused_naming_each_file() {
    refuses(
        "noboard",
        |d| {
            for k in 0..3 {
                blank(&d.join(format!("empty{k}.png")), W as u32, H as u32);
            }
        },
        &[
            "0 image(s) with the whole board",
            "empty0.png",
            "empty2.png",
            "no checkerboard corner found",
        ],
    );
}

#[test]
fn too_few_views_are_refused() {
    refuses(
        "toofew",
        |d| {
            for (k, (_, img)) in views().iter().take(2).enumerate() {
                img.save(d.join(format!("v{k}.png"))).unwrap();
            }
        },
        &["2 image(s) with the whole board, at least 3 needed"],
    );
}

#[test]
fn boards_parallel_to_the_sensor_are_refused() {
    let s = spec();
    let c = (
        (s.board.cols as f64 - 1.0) * 15.0,
        (s.board.rows as f64 - 1.0) * 15.0,
    );
    refuses(
        "parallel",
        |d| {
            for (k, (turn, dx, dy)) in [
                (0.0, 0.0, 0.0),
                (0.3, 12.0, -8.0),
                (-0.25, -10.0, 6.0),
                (0.1, 5.0, 10.0),
            ]
            .into_iter()
            .enumerate()
            {
                let r =
                    nalgebra::Rotation3::from_scaled_axis(nalgebra::Vector3::new(0.0, 0.0, turn));
                let centre = r * nalgebra::Vector3::new(c.0, c.1, 0.0);
                let pose = Pose {
                    rot: [0.0, 0.0, turn],
                    t: [dx - centre.x, dy - centre.y, 330.0],
                };
                let g = synth::render(&s, &pose, 40 + k as u64);
                image::GrayImage::from_raw(W as u32, H as u32, g.to_u8())
                    .unwrap()
                    .save(d.join(format!("flat{k}.png")))
                    .unwrap();
            }
        },
        &["degenerate poses", "flat0.png"],
    );
}

#[test]
fn mixed_sizes_are_refused_naming_the_file() {
    refuses(
        "mixed",
        |d| {
            views()[0].1.save(d.join("a.png")).unwrap();
            blank(&d.join("b.png"), 160, 120);
        },
        &["b.png", "(160, 120)", "(320, 240)"],
    );
}

#[test]
fn unreadable_images_are_refused_naming_the_file() {
    refuses(
        "unreadable",
        |d| {
            views()[0].1.save(d.join("a.png")).unwrap();
            std::fs::write(d.join("broken.jpg"), b"not an image at all").unwrap();
        },
        &["cannot read image", "broken.jpg"],
    );
}

#[test]
fn a_missing_folder_is_refused() {
    let dir = fresh_dir("missing");
    let (ok, _, stderr) = run(&dir.join("nowhere"), &dir.join("out"), &[]);
    assert!(!ok && stderr.contains("nowhere"), "{stderr}");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Rows `view a b ...` of a fixture file (comments skipped).
fn fixture_rows(name: &str) -> Vec<Vec<f64>> {
    let p = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/calibrate")
        .join(name);
    std::fs::read_to_string(&p)
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| l.split_whitespace().map(|t| t.parse().unwrap()).collect())
        .collect()
}

/// Outside check of the corner positions: scikit-image 0.26.0 (Harris
/// response, peaks, `corner_subpix`; the fixture script
/// `tests/data/calibrate/outside_corners.py` names the versions) on the same
/// rendered views (`--example calibration_fixture`). Every true corner that
/// the library found within 1.5 px is compared: our corner and the
/// library's must agree closely, and ours must be at least as close to the
/// truth.
#[test]
fn corners_agree_with_a_general_purpose_library() {
    let truth = fixture_rows("truth.txt");
    let outside = fixture_rows("skimage_corners.txt");
    let board = spec().board;
    let (mut n, mut agree2, mut agree_max, mut ours2, mut theirs2, mut total) =
        (0usize, 0.0, 0f64, 0.0, 0.0, 0usize);
    let (mut ours_max, mut theirs_max) = (0f64, 0f64);
    for v in 0..3 {
        let img = image::open(
            Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("tests/data/calibrate/view{v}.png")),
        )
        .unwrap()
        .to_luma8();
        let g = fixsight_verify::calibrate::Grey::from_u8(W, H, img.as_raw());
        let ours = corners::find_board(&g, &board).unwrap();
        let t: Vec<(f64, f64)> = truth
            .iter()
            .filter(|r| r[0] as usize == v)
            .map(|r| (r[3], r[4]))
            .collect();
        assert_eq!(t.len(), board.count());
        // Our labelling may be the 180-degree turn of the truth's.
        let d = |a: &(f64, f64), b: &(f64, f64)| (a.0 - b.0).hypot(a.1 - b.1);
        let straight = d(&ours[0], &t[0]) < 2.0;
        for (k, tc) in t.iter().enumerate() {
            let o = if straight {
                ours[k]
            } else {
                ours[t.len() - 1 - k]
            };
            total += 1;
            let nearest = outside
                .iter()
                .filter(|r| r[0] as usize == v)
                .map(|r| (r[1], r[2]))
                .min_by(|a, b| d(a, tc).total_cmp(&d(b, tc)))
                .unwrap();
            if d(&nearest, tc) > 1.5 {
                continue;
            }
            n += 1;
            let a = d(&o, &nearest);
            agree2 += a * a;
            agree_max = agree_max.max(a);
            ours2 += d(&o, tc).powi(2);
            theirs2 += d(&nearest, tc).powi(2);
            ours_max = ours_max.max(d(&o, tc));
            theirs_max = theirs_max.max(d(&nearest, tc));
        }
    }
    let rms = |s: f64| (s / n as f64).sqrt();
    println!(
        "{n} of {total} corners found by both; ours vs library RMS {:.4} px, worst {agree_max:.4} px; \
         vs truth: ours RMS {:.4} px (worst {ours_max:.4}), library RMS {:.4} px (worst {theirs_max:.4})",
        rms(agree2),
        rms(ours2),
        rms(theirs2)
    );
    assert!(n * 10 >= total * 9, "the library found only {n} of {total}");
    assert!(
        rms(agree2) < 0.3 && agree_max < 1.5,
        "{} {agree_max}",
        rms(agree2)
    );
    assert!(rms(ours2) <= rms(theirs2) && ours_max <= theirs_max);
}
