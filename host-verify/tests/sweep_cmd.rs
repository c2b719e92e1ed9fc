//! `fixsight-verify sweep --kernel ID --param P` end to end: every kernel
//! the sweep takes, on small images written here, on the demo scenes and
//! through a lens file; the figures keep the kernel's bound; bad requests
//! (unknown kernel or parameter, bad values, options that do not apply,
//! unreadable input, existing outputs) give a message and exit status 2
//! without writing anything.

use std::fs;
use std::path::{Path, PathBuf};

mod common;

fn dir(name: &str) -> PathBuf {
    common::fresh_dir(&format!("sweep-{name}"))
}

fn sweep(args: &[&str]) -> (bool, String, String) {
    common::tool(&[&["sweep"], args].concat())
}

/// `sweep --kernel KERNEL --values VALUES [--input INPUT] --out OUT MORE...`.
fn sweep_kernel(
    kernel: &str,
    values: &str,
    input: Option<&Path>,
    out: &Path,
    more: &[&str],
) -> (bool, String, String) {
    let mut args = vec!["--kernel", kernel, "--values", values];
    if let Some(i) = input {
        args.extend(["--input", i.to_str().unwrap()]);
    }
    args.extend(["--out", out.to_str().unwrap()]);
    args.extend(more);
    sweep(&args)
}

/// A grey ramp with a bright disc and a dark bar, `w x h`.
fn picture(w: u32, h: u32) -> image::GrayImage {
    image::GrayImage::from_fn(w, h, |x, y| {
        let (cx, cy) = (w as i32 / 2, h as i32 / 2);
        let d = (x as i32 - cx).pow(2) + (y as i32 - cy).pow(2);
        if d < (h as i32 / 4).pow(2) {
            image::Luma([230])
        } else if (x as i32 - y as i32).abs() < 2 {
            image::Luma([15])
        } else {
            image::Luma([(40 + (x * 120) / w + (y * 60) / h) as u8])
        }
    })
}

fn json(out: &Path) -> serde_json::Value {
    serde_json::from_str(&fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap()
}

fn rows(j: &serde_json::Value) -> Vec<serde_json::Value> {
    j["rows"].as_array().unwrap().clone()
}

fn f(r: &serde_json::Value, k: &str) -> f64 {
    r[k].as_f64().unwrap_or_else(|| panic!("{k} in {r}"))
}

/// The three files exist; the plot is a 900 x 560 picture with more than
/// one colour (lines and text on white).
fn outputs_written(out: &Path) {
    plot_written(out, (900, 560), 500);
}

/// `sweep.md` exists and `sweep.png` has `size` and more than `coloured`
/// coloured pixels; returns the picture.
fn plot_written(out: &Path, size: (u32, u32), coloured: usize) -> image::RgbImage {
    assert!(out.join("sweep.md").is_file());
    let png = image::open(out.join("sweep.png")).unwrap().to_rgb8();
    assert_eq!(png.dimensions(), size);
    let n = png
        .pixels()
        .filter(|p| p[0] != p[1] || p[1] != p[2])
        .count();
    assert!(n > coloured, "{n} coloured pixels");
    png
}

/// Every row keeps its bound (when the kernel has one).
fn within_bounds(rs: &[serde_json::Value]) {
    for r in rs {
        if let Some(b) = r["bound"].as_f64() {
            assert!(f(r, "max_abs") <= b + 1e-9, "{r}");
        }
    }
}

#[test]
fn pixel_map_on_an_image_file() {
    let d = dir("pixel-map");
    picture(48, 32).save(d.join("ramp.png")).unwrap();
    let out = d.join("out");
    let ramp = d.join("ramp.png");
    let (ok, stdout, err) = sweep_kernel("warp.pixel_map", "8,3", Some(&ramp), &out, &[]);
    assert!(ok, "{err}");
    assert!(stdout.contains("| ramp | 3 | 1536 |"), "{stdout}");
    outputs_written(&out);
    let j = json(&out);
    assert_eq!(j["param"], "frac_bits");
    assert!(j["lens"].as_str().unwrap().contains("demo lens"));
    let rs = rows(&j);
    assert_eq!(rs.len(), 2);
    assert_eq!(
        (rs[0]["value"].as_u64(), rs[1]["value"].as_u64()),
        (Some(3), Some(8))
    );
    within_bounds(&rs);
    // The rounding of the coordinates is at most 2^-(F+1) per axis.
    for r in &rs {
        let fb = r["value"].as_u64().unwrap() as i32;
        assert!(f(&r["extra"], "geo_max_px") <= 2f64.powi(-fb - 1) * 2f64.sqrt() + 1e-12);
    }
    assert!(f(&rs[1], "bound") < f(&rs[0], "bound"));
    // A second run refuses to replace the files and leaves them alone.
    let before = fs::read(out.join("sweep.json")).unwrap();
    let (ok, _, err) = sweep_kernel("warp.pixel_map", "4", Some(&ramp), &out, &[]);
    assert!(
        !ok && err.contains("sweep.md") && err.contains("--overwrite"),
        "{err}"
    );
    assert_eq!(fs::read(out.join("sweep.json")).unwrap(), before);
    let (ok, _, err) = sweep_kernel("warp.pixel_map", "4", Some(&ramp), &out, &["--overwrite"]);
    assert!(ok, "{err}");
    assert_eq!(rows(&json(&out)).len(), 1);
    fs::remove_dir_all(d).unwrap();
}

/// A 320 x 240 lens file in the `fixsight-lens 1` format for an
/// equidistant (fisheye) lens, not the demo's.
fn lens_file(d: &Path) -> PathBuf {
    let p = d.join("cam.lens");
    fs::write(
        &p,
        "format = fixsight-lens 1\nmodel = fisheye\nsensor_width = 320\nsensor_height = 240\n\
         fx = 170\nfy = 171\ncx = 158\ncy = 122\nk1 = 0.02\nk2 = -0.003\n",
    )
    .unwrap();
    p
}

#[test]
fn control_grid_steps_through_a_lens_file() {
    let d = dir("grid");
    let input = d.join("in");
    fs::create_dir_all(&input).unwrap();
    picture(320, 240).save(input.join("frame.png")).unwrap();
    fs::write(input.join("notes.txt"), "x").unwrap();
    let lens = lens_file(&d);
    let out = d.join("out");
    let grid = ["--param", "grid_log2", "--lens", lens.to_str().unwrap()];
    let (ok, stdout, err) = sweep_kernel("warp.control_grid", "3..=4", Some(&input), &out, &grid);
    assert!(ok, "{err}");
    assert!(stdout.contains("skipped `notes.txt`"), "{stdout}");
    outputs_written(&out);
    let j = json(&out);
    assert!(
        j["lens"].as_str().unwrap().contains("lens file `cam.lens`"),
        "{j}"
    );
    let rs = rows(&j);
    assert_eq!(rs.len(), 2);
    within_bounds(&rs);
    // 41 x 31 and 21 x 16 control points of 8 bytes (grid_size: ceil(320 / 2^k) + 1
    // columns, ceil(240 / 2^k) + 1 rows).
    assert_eq!(f(&rs[0]["extra"], "table_bytes"), (41.0 * 31.0) * 8.0);
    assert_eq!(f(&rs[1]["extra"], "table_bytes"), (21.0 * 16.0) * 8.0);
    // The lens file is for 320 x 240 images only.
    picture(64, 48).save(d.join("small.png")).unwrap();
    let small = d.join("small.png");
    let (ok, _, err) = sweep_kernel("warp.control_grid", "3", Some(&small), &d.join("o2"), &grid);
    assert!(
        !ok && err.contains("64x48") && err.contains("320x240"),
        "{err}"
    );
    fs::remove_dir_all(d).unwrap();
}

#[test]
fn gaussian_coefficient_bits_on_the_demo_scenes() {
    let d = dir("filter");
    let out = d.join("out");
    let (ok, stdout, err) = sweep_kernel("filter.separable", "3,10", None, &out, &[]);
    assert!(ok, "{err}");
    assert!(stdout.contains("the demo scenes"), "{stdout}");
    outputs_written(&out);
    let rs = rows(&json(&out));
    // Three demo scenes, two values each.
    assert_eq!(rs.len(), 6);
    within_bounds(&rs);
    for r in &rs {
        assert!(f(r, "bound").is_finite() && f(r, "bound") >= 0.5);
    }
    fs::remove_dir_all(d).unwrap();
}

#[test]
fn trig_table_bits() {
    let d = dir("cos-sin");
    let out = d.join("out");
    let (ok, _, err) = sweep(&["--kernel", "lines.cos_sin", "--out", out.to_str().unwrap()]);
    assert!(ok, "{err}");
    outputs_written(&out);
    let rs = rows(&json(&out));
    assert_eq!(rs.len(), 7, "default values 8..=14");
    within_bounds(&rs);
    for r in &rs {
        assert_eq!(r["samples"].as_u64(), Some(2 * 131072));
        // A rounded value of a real number is at least a quarter LSB off
        // somewhere among 262144 samples, and never more than the bound.
        assert!(f(r, "max_abs") > 0.25, "{r}");
    }
    fs::remove_dir_all(d).unwrap();
}

#[test]
fn accumulator_trig_bits_on_an_image() {
    let d = dir("votes");
    picture(64, 48).save(d.join("bar.png")).unwrap();
    let out = d.join("out");
    let bar = d.join("bar.png");
    let (ok, _, err) = sweep_kernel("lines.accumulator", "8,14", Some(&bar), &out, &[]);
    assert!(ok, "{err}");
    outputs_written(&out);
    let rs = rows(&json(&out));
    assert_eq!(rs.len(), 2);
    // 32 columns x rows of 2 px out to the half diagonal 40 px: 41 rows.
    for r in &rs {
        assert_eq!(r["samples"].as_u64(), Some(32 * 41));
        assert!(r["bound"].is_null());
        assert!(f(&r["extra"], "edge_points") > 0.0);
    }
    fs::remove_dir_all(d).unwrap();
}

#[test]
fn bad_requests_are_refused_before_anything_is_written() {
    let d = dir("bad");
    let out = d.join("out");
    let o = out.to_str().unwrap();
    fs::write(d.join("noise.png"), b"not a picture").unwrap();
    let noise = d.join("noise.png");
    let missing = d.join("missing.png");
    let lens = lens_file(&d);
    let cases: Vec<(Vec<&str>, &[&str])> = vec![
        (
            vec!["--kernel", "filter.sobel_x"],
            &["filter.sobel_x", "warp.pixel_map", "lines.accumulator"],
        ),
        (
            vec!["--kernel", "warp.pixel_map", "--param", "grid_log2"],
            &["grid_log2", "frac_bits"],
        ),
        (
            vec!["--kernel", "warp.control_grid"],
            &["--param", "frac_bits, grid_log2"],
        ),
        (
            vec!["--kernel", "warp.pixel_map", "--values", "1..=4"],
            &["2..=10", "not 1"],
        ),
        (
            vec!["--kernel", "lines.cos_sin", "--values", "eight"],
            &["--values", "A..=B"],
        ),
        (
            vec!["--kernel", "filter.separable", "--values", "12"],
            &["coeff_bits 12", "accumulator"],
        ),
        (
            vec![
                "--kernel",
                "filter.separable",
                "--lens",
                lens.to_str().unwrap(),
            ],
            &["--lens", "warp"],
        ),
        (
            vec![
                "--kernel",
                "lines.cos_sin",
                "--input",
                noise.to_str().unwrap(),
            ],
            &["--input", "binary angle"],
        ),
        (
            vec![
                "--kernel",
                "filter.separable",
                "--input",
                missing.to_str().unwrap(),
            ],
            &["missing.png"],
        ),
        (
            vec![
                "--kernel",
                "filter.separable",
                "--input",
                noise.to_str().unwrap(),
            ],
            &["noise.png", "not an image"],
        ),
        (
            vec![
                "--kernel",
                "warp.pixel_map",
                "--lens",
                noise.to_str().unwrap(),
            ],
            &["noise.png"],
        ),
        (vec!["--param", "frac_bits"], &["--kernel"]),
    ];
    for (args, words) in cases {
        let all = [&args[..], &["--out", o]].concat();
        let (ok, _, err) = sweep(&all);
        assert!(!ok, "{args:?} succeeded");
        for w in words {
            assert!(err.contains(w), "{args:?}: `{w}` not in {err}");
        }
        assert!(!out.exists(), "{args:?} wrote {}", out.display());
    }
    let run = std::process::Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(["sweep", "--kernel", "nope", "--out", o])
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(2));
    fs::remove_dir_all(d).unwrap();
}

/// Without `--kernel` the command is the warp precision sweep on the first
/// demo scene, as before: 9 fractional bits x (pixel map + 5 grid steps).
#[test]
fn without_a_kernel_the_warp_sweep_runs_as_before() {
    let d = dir("legacy");
    let out = d.join("out");
    let (ok, stdout, err) = sweep(&["--out", out.to_str().unwrap()]);
    assert!(ok, "{err}");
    assert!(stdout.contains("| 7 | grid 16 |"), "{stdout}");
    let rows: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    assert_eq!(rows.as_array().unwrap().len(), 9 * 6);
    // Two labelled panels (the plot code of `sweep --kernel`): six coloured
    // lines, and dark text pixels in the title band above each panel.
    let png = plot_written(&out, (1200, 520), 2000);
    for x0 in [0, 600] {
        let dark = (x0..x0 + 600)
            .flat_map(|x| (0..30).map(move |y| (x, y)))
            .filter(|&(x, y)| png.get_pixel(x, y)[0] < 100)
            .count();
        assert!(dark > 50, "no title text above the panel at x {x0}: {dark}");
    }
    fs::remove_dir_all(d).unwrap();
}
