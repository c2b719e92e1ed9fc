//! `fixsight-verify golden export-c` end to end: the exported C data and
//! runner, compiled with the system `gcc` (C99, warnings as errors) with a
//! port of the 5-tap binomial smoothing written in C from the integer model
//! of `kernels/src/filter.rs`, pass; a port with one pixel wrong fails at
//! that pixel; kernels the port does not implement are listed as not
//! claimed; a selection that names nothing is refused.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

mod common;

use common::tool;

fn tmp(name: &str) -> PathBuf {
    common::fresh_dir(&format!("export-{name}"))
}

/// The port in C: `[1 4 6 4 1] / 16` both ways (binomial coefficients
/// C(4, k), Pascal's triangle), exact sum, `(acc + 128) >> 8`, saturated;
/// border `clamp` or `border.fill`. `WRONG_X >= 0` corrupts one pixel of
/// the first vector; `OVERRUN` makes it write one element past every
/// output row of padded-row vectors (`row_pad`), whose rows it writes
/// `width + row_pad` bytes apart.
const PORT_C: &str = r#"
#include <stdio.h>
#include <string.h>
#include "golden_vectors.h"
#ifndef WRONG_X
#define WRONG_X -1
#define WRONG_Y -1
#endif
#ifndef OVERRUN
#define OVERRUN 0
#endif
static int32_t param(const golden_vector *v, const char *key, int32_t *value) {
    for (int32_t i = 0; i < v->nparams; i++)
        if (strcmp(v->params[i].key, key) == 0) { *value = (int32_t)v->params[i].value; return 1; }
    return 0;
}
int32_t golden_port_run(const golden_vector *v, int32_t k, uint8_t *out) {
    static const int32_t t[5] = {1, 4, 6, 4, 1};
    if (strcmp(v->kernel, "filter.binomial5") != 0 || k != 0) return 1;
    const golden_image *src = &v->inputs[0];
    int32_t w = src->width, h = src->height, fill = 0, s = w + v->row_pad;
    int32_t has_fill = param(v, "border.fill", &fill);
    for (int32_t y = 0; y < h; y++)
        for (int32_t x = 0; x < w; x++) {
            int32_t acc = 0;
            for (int32_t j = 0; j < 5; j++)
                for (int32_t i = 0; i < 5; i++) {
                    int32_t sx = x + i - 2, sy = y + j - 2, p;
                    if (sx >= 0 && sy >= 0 && sx < w && sy < h) p = src->bytes[sy * w + sx];
                    else if (has_fill) p = fill;
                    else {
                        sx = sx < 0 ? 0 : (sx >= w ? w - 1 : sx);
                        sy = sy < 0 ? 0 : (sy >= h ? h - 1 : sy);
                        p = src->bytes[sy * w + sx];
                    }
                    acc += t[j] * t[i] * p;
                }
            int32_t r = (acc + 128) >> 8;
            out[y * s + x] = (uint8_t)(r < 0 ? 0 : (r > 255 ? 255 : r));
            if (OVERRUN && v->row_pad > 0 && x == w - 1) out[y * s + w] = out[y * s + x];
        }
    if (v == &GOLDEN_VECTORS[0] && WRONG_X >= 0) out[WRONG_Y * w + WRONG_X] ^= 1;
    return 0;
}
void golden_port_print(const char *line) { puts(line); }
int main(void) { return golden_check_all(); }
"#;

fn build_and_run(dir: &Path, defines: &[&str]) -> (bool, String) {
    fs::write(dir.join("port.c"), PORT_C).unwrap();
    let exe = dir.join("port");
    let out = Command::new("gcc")
        .args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-O1"])
        .args(defines)
        .arg("-I")
        .arg(dir)
        .args(["golden_vectors.c", "golden_check.c", "port.c", "-o"])
        .arg(&exe)
        .current_dir(dir)
        .output()
        .expect("gcc (apt-get install -y --no-install-recommends gcc libc6-dev)");
    assert!(
        out.status.success(),
        "gcc failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let run = Command::new(&exe).output().unwrap();
    (
        run.status.success(),
        String::from_utf8_lossy(&run.stdout).to_string(),
    )
}

fn golden() -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../golden")
        .display()
        .to_string()
}

#[test]
fn exported_vectors_check_a_c_port_on_the_host() {
    let d = tmp("port");
    let out = d.display().to_string();
    let g = golden();
    let (ok, stdout, err) = tool(&[
        "golden",
        "export-c",
        "--vectors",
        &g,
        "--select",
        "filter.binomial5",
        "--out",
        &out,
    ]);
    assert!(ok, "{err}");
    // The three small crops, the two long rows (256 and 317 pixels) and
    // the padded copy of the clamped crop.
    assert!(stdout.contains("wrote 6 golden vectors"), "{stdout}");
    let (ok, log) = build_and_run(&d, &[]);
    assert!(ok, "{log}");
    assert!(
        log.contains("summary passed 6 failed 0 not-claimed 0"),
        "{log}"
    );

    // Writing past the row into the padding fails the padded vector only.
    let (ok, log) = build_and_run(&d, &["-DOVERRUN=1"]);
    assert!(!ok, "{log}");
    assert!(
        log.contains(
            "FAIL filter.binomial5.clamp.floor.pad4 dst padding y 0 element 0 overwritten 23"
        ),
        "{log}"
    );
    assert!(
        log.contains("summary passed 5 failed 1 not-claimed 0"),
        "{log}"
    );

    let (ok, log) = build_and_run(&d, &["-DWRONG_X=4", "-DWRONG_Y=3"]);
    assert!(!ok, "{log}");
    assert!(
        log.contains("FAIL filter.binomial5.clamp.floor dst x 4 y 3 channel 0"),
        "{log}"
    );
    assert!(log.contains("differing 1 of"), "{log}");

    // A second export is refused without --overwrite; the family exports
    // every filter vector, the port claims only its kernel.
    let (ok, _, err) = tool(&[
        "golden",
        "export-c",
        "--vectors",
        &g,
        "--select",
        "filter",
        "--out",
        &out,
    ]);
    assert!(!ok && err.contains("--overwrite"), "{err}");
    let (ok, _, err) = tool(&[
        "golden",
        "export-c",
        "--vectors",
        &g,
        "--select",
        "filter",
        "--out",
        &out,
        "--overwrite",
    ]);
    assert!(ok, "{err}");
    let (ok, log) = build_and_run(&d, &[]);
    assert!(ok, "{log}");
    assert!(
        log.contains("not-claimed filter.sobel_x.clamp.floor"),
        "{log}"
    );
    assert!(
        log.contains("summary passed 6 failed 0 not-claimed 39"),
        "{log}"
    );
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn a_selection_that_names_nothing_is_refused() {
    let d = tmp("none");
    let (ok, _, err) = tool(&[
        "golden",
        "export-c",
        "--vectors",
        &golden(),
        "--select",
        "filter.binomail5",
        "--out",
        &d.display().to_string(),
    ]);
    assert!(!ok && err.contains("filter.binomail5"), "{err}");
    assert_eq!(fs::read_dir(&d).unwrap().count(), 0, "nothing written");
    fs::remove_dir_all(&d).unwrap();
}
