//! `fixsight-verify port-check` end to end: an example port of one kernel,
//! written again from the integer model in `kernels/src/filter.rs` without
//! calling the kernel crate, passes its vectors; the same port with one
//! pixel changed fails naming that pixel; bad folders and claims give a
//! message and a non-zero exit, never a panic.

use fixsight_verify::golden::{self, Blob};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

fn repo_golden() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden")
}

fn tmp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("fixsight-port-{name}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

fn port_check(outputs: &Path, extra: &[&str]) -> (bool, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .arg("port-check")
        .arg("--vectors")
        .arg(repo_golden())
        .arg("--outputs")
        .arg(outputs)
        .args(extra)
        .output()
        .unwrap();
    let (out, err) = (
        String::from_utf8_lossy(&o.stdout).to_string(),
        String::from_utf8_lossy(&o.stderr).to_string(),
    );
    assert!(
        !err.contains("panicked") && !err.contains("backtrace"),
        "{err}"
    );
    (o.status.success(), out, err)
}

/// The example port: the 5-tap binomial smoothing `[1 4 6 4 1] / 16` in
/// both directions, as `kernels/src/filter.rs` states it: exact `i32` sum
/// of `v[j] * h[i] * P(x + i - 2, y + j - 2)`, then `(acc + 128) >> 8`,
/// saturated to `0..=255`; `P` clamps coordinates or returns the fill value.
/// The taps are the binomial coefficients C(4, k) (Pascal's triangle).
/// Rows of `src` are `src_stride` bytes apart, rows of `out` `out_stride`;
/// only the `w` pixels of each output row are written.
fn port_binomial5(
    (src, src_stride): (&[u8], usize),
    (w, h): (usize, usize),
    fill: Option<u8>,
    (out, out_stride): (&mut [u8], usize),
) {
    const T: [i32; 5] = [1, 4, 6, 4, 1];
    let p = |x: i64, y: i64| -> i32 {
        let inside = x >= 0 && y >= 0 && x < w as i64 && y < h as i64;
        match (inside, fill) {
            (true, _) | (false, None) => {
                let cx = x.clamp(0, w as i64 - 1) as usize;
                let cy = y.clamp(0, h as i64 - 1) as usize;
                src[cy * src_stride + cx] as i32
            }
            (false, Some(c)) => c as i32,
        }
    };
    for y in 0..h {
        for x in 0..w {
            let mut acc = 0i32;
            for (j, vj) in T.iter().enumerate() {
                for (i, hi) in T.iter().enumerate() {
                    acc += vj * hi * p(x as i64 + i as i64 - 2, y as i64 + j as i64 - 2);
                }
            }
            out[y * out_stride + x] = ((acc + 128) >> 8).clamp(0, 255) as u8;
        }
    }
}

/// Runs the example port over the binomial5 vectors, writing its outputs
/// and a claims file; returns (file name, width, output) per vector. A
/// padded-row vector (`row_pad`) runs as `golden/README.md` says: input
/// rows padded with `0xE7` bytes, the output buffer filled with `0x3C`
/// first, the whole buffer written; `overrun` makes the port write one
/// element past every output row of those vectors (a broken row loop).
fn write_port_with(dir: &Path, overrun: bool) -> Vec<(String, usize, Vec<u8>)> {
    let g = repo_golden();
    let m = golden::read_manifest(&g).unwrap();
    let mut written = Vec::new();
    for v in m.vectors.iter().filter(|v| v.kernel == "filter.binomial5") {
        let src: Blob = golden::load_image(&g, &v.inputs[0]).unwrap();
        let fill = v.params["border"]["fill"].as_u64().map(|c| c as u8);
        let (w, h) = (src.width, src.height);
        let pad = v.row_pad.unwrap_or(0);
        let stride = w + pad;
        let mut input = vec![golden::IN_PAD_BYTE; stride * h];
        for y in 0..h {
            input[y * stride..y * stride + w].copy_from_slice(&src.bytes[y * w..(y + 1) * w]);
        }
        let mut out = vec![golden::OUT_PAD_BYTE; stride * h];
        port_binomial5((&input, stride), (w, h), fill, (&mut out, stride));
        if overrun && pad > 0 {
            for y in 0..h {
                out[y * stride + w] = out[y * stride + w - 1];
            }
        }
        fs::write(dir.join(&v.expected[0].file), &out).unwrap();
        written.push((v.expected[0].file.clone(), stride, out));
    }
    fs::write(
        dir.join("claims.txt"),
        "# the example port implements one kernel\nfilter.binomial5\n",
    )
    .unwrap();
    written
}

fn write_port(dir: &Path) -> Vec<(String, usize, Vec<u8>)> {
    write_port_with(dir, false)
}

#[test]
fn an_independent_port_passes_and_a_corrupted_one_fails_at_its_pixel() {
    let d = tmp("example");
    let written = write_port(&d);
    // Three small crops, the two long rows (256 and 317 pixels) and the
    // padded copy of the clamped crop.
    assert_eq!(written.len(), 6, "the manifest's binomial5 vectors");
    let (ok, out, _) = port_check(&d, &[]);
    assert!(ok, "{out}");
    let total = golden::read_manifest(&repo_golden()).unwrap().vectors.len();
    let summary = format!(
        "port-check: 6 passed, 0 failed, {} not claimed, of {total} vectors",
        total - 6
    );
    assert!(out.contains(&summary), "{out}");
    assert!(
        out.contains("not claimed  `filter.binomial3.clamp.floor`"),
        "{out}"
    );

    // One pixel changed at (x, y) = (5, 2) of the first vector.
    let (file, w, mut bytes) = written[0].clone();
    let (x, y) = (5usize, 2usize);
    let was = bytes[y * w + x];
    bytes[y * w + x] = was ^ 0x10;
    fs::write(d.join(&file), &bytes).unwrap();
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok, "{out}");
    let want = format!(
        "first difference at x {x}, y {y}, channel 0: expected {was}, got {}; 1 of {} elements differ",
        was ^ 0x10,
        bytes.len()
    );
    assert!(out.contains(&want), "{out}");
    assert!(out.contains("5 passed, 1 failed"), "{out}");

    // A truncated file is named, not compared.
    fs::write(d.join(&file), &bytes[..10]).unwrap();
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok && out.contains("holds 10 bytes"), "{out}");
    fs::remove_dir_all(&d).unwrap();
}

/// A port whose row loop writes one element past each row passes every
/// packed vector (its pixels are right) but fails the padded one, naming
/// the first overwritten padding element.
#[test]
fn a_port_writing_into_the_row_padding_fails() {
    let d = tmp("overrun");
    let written = write_port_with(&d, true);
    let (file, stride, _) = written
        .iter()
        .find(|(f, _, _)| f.contains(".pad"))
        .expect("a padded binomial5 vector")
        .clone();
    assert_eq!(stride, 41, "width 37 with row_pad 4");
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok, "{out}");
    let id = file.trim_end_matches(".dst.bin");
    assert!(
        out.contains(&format!(
            "FAIL         `{id}` `dst`: image `dst`: the kernel wrote into the row padding: \
             padding element 0 after row 0 (stride 41 elements); 23 padding element(s) overwritten"
        )),
        "{out}"
    );
    assert!(out.contains("5 passed, 1 failed"), "{out}");
    // The same buffer cut to the packed size is refused by its length.
    let full = fs::read(d.join(&file)).unwrap();
    fs::write(d.join(&file), &full[..37 * 23]).unwrap();
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok && out.contains("with row_pad 4 needs 943"), "{out}");
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn without_claims_every_vector_is_claimed_and_missing_outputs_fail() {
    let d = tmp("empty");
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok);
    let total = golden::read_manifest(&repo_golden()).unwrap().vectors.len();
    let summary = format!("0 passed, {total} failed, 0 not claimed");
    assert!(out.contains(&summary), "{out}");
    assert!(out.contains("is missing"), "{out}");
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn bad_folders_and_claims_give_a_message() {
    let d = tmp("bad");
    // A claim that names nothing of the manifest.
    fs::write(d.join("claims.txt"), "filter.binomial5\nfilter.binomail3\n").unwrap();
    let (ok, _, err) = port_check(&d, &[]);
    assert!(
        !ok && err.contains("line 2") && err.contains("filter.binomail3"),
        "{err}"
    );
    // A claims file that claims nothing.
    fs::write(d.join("claims.txt"), "# nothing yet\n").unwrap();
    let (ok, out, _) = port_check(&d, &[]);
    assert!(!ok && out.contains("claims no vector"), "{out}");
    // No outputs folder.
    let (ok, _, err) = port_check(&d.join("absent"), &[]);
    assert!(!ok && err.contains("does not exist"), "{err}");
    // --tolerance without a report.
    let (ok, _, err) = port_check(&d, &["--tolerance", "--report", "/nonexistent/report.json"]);
    assert!(
        !ok && err.contains("run `fixsight-verify report` first"),
        "{err}"
    );
    fs::remove_dir_all(&d).unwrap();
}
