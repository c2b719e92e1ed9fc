//! `fixsight-verify run` end to end on images written here: a colour PNG
//! (luma by the stated ITU-R formula), a binary PGM, a folder with a file
//! that is not an image; the figures agree with the kernel's contract; bad
//! input (unknown kernel, truncated image, existing outputs) gives a
//! message and a non-zero exit.

use std::fs;
use std::path::PathBuf;

mod common;

fn dir(name: &str) -> PathBuf {
    common::fresh_dir(&format!("run-{name}"))
}

fn run(args: &[&str]) -> (bool, String, String) {
    common::tool(&[&["run"], args].concat())
}

/// A 40x30 colour gradient with a bright disc.
fn colour(w: u32, h: u32) -> image::RgbImage {
    image::RgbImage::from_fn(w, h, |x, y| {
        let d = ((x as i32 - 20).pow(2) + (y as i32 - 15).pow(2)) < 80;
        if d {
            image::Rgb([250, 240, 30])
        } else {
            image::Rgb([(x * 6) as u8, (y * 8) as u8, 90])
        }
    })
}

#[test]
fn colour_grey_and_folders() {
    let d = dir("ok");
    let input = d.join("in");
    fs::create_dir_all(&input).unwrap();
    colour(40, 30).save(input.join("a.png")).unwrap();
    // Binary PGM (Netpbm P5), written by hand so the reader is not checked
    // against itself.
    let mut pgm = b"P5\n16 12\n255\n".to_vec();
    pgm.extend((0..16 * 12).map(|i| ((i * 7) % 256) as u8));
    fs::write(input.join("b.pgm"), pgm).unwrap();
    fs::write(input.join("notes.txt"), "x").unwrap();
    let out = d.join("out");
    let (ok, stdout, err) = run(&[
        "--input",
        input.to_str().unwrap(),
        "--kernel",
        "filter.binomial5",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(ok, "{err}");
    assert!(stdout.contains("skipped `notes.txt`"), "{stdout}");
    // The smoothing's rounding error is at most 1/2 LSB (filter contract).
    for stem in ["a", "b"] {
        let j: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(out.join(format!("{stem}.filter.binomial5.json"))).unwrap(),
        )
        .unwrap();
        assert!(j["metrics"]["max_abs_err"].as_f64().unwrap() <= 0.5, "{j}");
        for s in ["fixed", "f64", "diff"] {
            assert!(out
                .join(format!("{stem}.filter.binomial5.{s}.png"))
                .is_file());
        }
    }
    // Luma: ITU-R BT.601 weights 0.299, 0.587, 0.114 on the stored values,
    // checked on the disc colour (250, 240, 30): 74.75 + 140.88 + 3.42 = 219.05.
    let fixed = image::open(out.join("a.filter.binomial5.fixed.png"))
        .unwrap()
        .to_luma8();
    assert_eq!(fixed.get_pixel(20, 15)[0], 219);
    // A second run refuses to replace the outputs.
    let (ok, _, err) = run(&[
        "--input",
        input.to_str().unwrap(),
        "--kernel",
        "filter.binomial5",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && err.contains("--overwrite"), "{err}");
    // BT.709 on the same colour: 53.15 + 171.65 + 2.17 = 226.97 -> 227.
    let (ok, _, err) = run(&[
        "--input",
        input.join("a.png").to_str().unwrap(),
        "--kernel",
        "filter.binomial5",
        "--out",
        out.to_str().unwrap(),
        "--luma",
        "bt709",
        "--overwrite",
    ]);
    assert!(ok, "{err}");
    let fixed = image::open(out.join("a.filter.binomial5.fixed.png"))
        .unwrap()
        .to_luma8();
    assert_eq!(fixed.get_pixel(20, 15)[0], 227);
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn bad_input_gives_a_message() {
    let d = dir("bad");
    colour(8, 8).save(d.join("a.png")).unwrap();
    let out = d.join("out");
    let (ok, _, err) = run(&[
        "--input",
        d.join("a.png").to_str().unwrap(),
        "--kernel",
        "lines.peak",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && err.contains("run takes one of"), "{err}");
    let bytes = fs::read(d.join("a.png")).unwrap();
    fs::write(d.join("cut.png"), &bytes[..bytes.len() / 2]).unwrap();
    let (ok, _, err) = run(&[
        "--input",
        d.join("cut.png").to_str().unwrap(),
        "--kernel",
        "chain.edges",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && err.contains("cut.png"), "{err}");
    let (ok, _, err) = run(&[
        "--input",
        d.join("absent").to_str().unwrap(),
        "--kernel",
        "chain.edges",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && err.contains("absent"), "{err}");
    let (ok, _, err) = run(&[
        "--input",
        d.join("a.png").to_str().unwrap(),
        "--kernel",
        "chain.edges",
        "--luma",
        "srgb",
    ]);
    assert!(!ok && err.contains("bt601"), "{err}");
    fs::remove_dir_all(&d).unwrap();
}
