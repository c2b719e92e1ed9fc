//! Turns the golden manifest into static Rust data.
//!
//! Input: `$FIXSIGHT_GOLDEN_DIR/manifest.json` (default `../../golden`).
//! Output: `$OUT_DIR/vectors.rs` with
//! * `pub static VECTORS: &[Vector]` (files embedded with `include_bytes!`
//!   after checking their length and SHA-256 against the manifest; each
//!   vector's dispatch function is `crate::kernels::lookup("<kernel id>")`,
//!   evaluated by the compiler);
//! * `pub const ONLY: Option<&[&str]>`, the kernel ids of a code-size image.
//!
//! Which kernel ids the firmware serves is not decided here, and no source
//! text is searched: it is the table in `src/kernels/mod.rs`, which the
//! compiler checks.
//!
//! Code-size images: with `FIXSIGHT_ONLY_KERNELS` set (comma-separated
//! kernel ids, or `none`) `ONLY` lists them, and the table routes every
//! vector and bench stage of any other kernel to `crate::kernels::noop`
//! (decided at compile time, so the other kernels are not linked). The
//! harness code (decoding, comparing, measuring, printing) is therefore the
//! same in every such image, and the growth of `.text` of the image for
//! kernel K over the `none` image is the code K adds: the kernel itself,
//! everything it pulls in, and its dispatch function. These images are
//! measured, not run, by `fixsight-verify targets --code-bytes rebuild`;
//! the default (`graph`) measures the image that runs the vectors instead
//! and builds none of them (`host-verify/src/codebytes.rs`).
//!
//! Also passes the target triple to the harness (`FIXSIGHT_TARGET`).

use sha2::{Digest, Sha256};
use std::collections::BTreeSet;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

fn main() {
    let here = PathBuf::from(std::env::var("CARGO_MANIFEST_DIR").unwrap());
    let golden = match std::env::var("FIXSIGHT_GOLDEN_DIR") {
        Ok(d) => PathBuf::from(d),
        Err(_) => here.join("../../golden"),
    };
    println!("cargo:rerun-if-env-changed=FIXSIGHT_GOLDEN_DIR");
    println!("cargo:rerun-if-env-changed=FIXSIGHT_ONLY_KERNELS");
    let manifest_path = golden.join("manifest.json");
    println!("cargo:rerun-if-changed={}", manifest_path.display());
    println!(
        "cargo:rustc-env=FIXSIGHT_TARGET={}",
        std::env::var("TARGET").unwrap()
    );

    let only: Option<BTreeSet<String>> = std::env::var("FIXSIGHT_ONLY_KERNELS").ok().map(|s| {
        s.split(',')
            .map(|k| k.trim().to_string())
            .filter(|k| !k.is_empty() && k != "none")
            .collect()
    });

    let vectors: Vec<serde_json::Value> = match std::fs::read_to_string(&manifest_path) {
        Ok(text) => {
            let m: serde_json::Value = serde_json::from_str(&text)
                .unwrap_or_else(|e| panic!("{}: not JSON: {e}", manifest_path.display()));
            assert_eq!(
                m["format"],
                "fixsight-golden",
                "{}: wrong format field",
                manifest_path.display()
            );
            assert_eq!(
                m["version"],
                1,
                "{}: unsupported version",
                manifest_path.display()
            );
            m["vectors"].as_array().cloned().unwrap_or_default()
        }
        Err(_) => {
            println!(
                "cargo:warning=no golden manifest at {}; building with zero vectors",
                manifest_path.display()
            );
            Vec::new()
        }
    };

    let mut out = String::new();
    out.push_str(
        "/// Every golden vector in manifest order.\npub static VECTORS: &[Vector] = &[\n",
    );
    for v in &vectors {
        let kernel = v["kernel"].as_str().expect("vector without kernel");
        let id = v["id"].as_str().expect("vector without id");
        // A field this build does not know (a newer layout rule) must not
        // be ignored: the vector would run under the wrong rules.
        for key in v.as_object().expect("vector is an object").keys() {
            assert!(
                ["id", "comment", "kernel", "params", "inputs", "expected", "row_pad"]
                    .contains(&key.as_str()),
                "vector {id}: unknown field `{key}`"
            );
        }
        let row_pad = match &v["row_pad"] {
            serde_json::Value::Null => 0,
            r => r
                .as_u64()
                .filter(|&p| (1..=64).contains(&p))
                .unwrap_or_else(|| panic!("vector {id}: row_pad must be 1..=64")),
        };
        let mut params = Vec::new();
        flatten("", &v["params"], &mut params);
        writeln!(out, "    Vector {{").unwrap();
        writeln!(out, "        id: {id:?},\n        kernel: {kernel:?},").unwrap();
        writeln!(out, "        run: crate::kernels::lookup({kernel:?}),").unwrap();
        writeln!(out, "        params: &[{}],", params.join(", ")).unwrap();
        writeln!(out, "        row_pad: {row_pad},").unwrap();
        for (field, key) in [("inputs", "inputs"), ("expected", "expected")] {
            writeln!(out, "        {field}: &[").unwrap();
            for img in v[key].as_array().expect("image list") {
                out.push_str(&image(&golden, id, img));
            }
            writeln!(out, "        ],").unwrap();
        }
        writeln!(out, "    }},").unwrap();
    }
    out.push_str("];\n\n");

    out.push_str(
        "/// Kernel ids dispatched by a code-size image (`FIXSIGHT_ONLY_KERNELS`);\n\
         /// `None` in a conformance image, which dispatches every id.\n",
    );
    match &only {
        None => out.push_str("pub const ONLY: Option<&[&str]> = None;\n"),
        Some(ids) => {
            let list: Vec<String> = ids.iter().map(|k| format!("{k:?}")).collect();
            writeln!(
                out,
                "pub const ONLY: Option<&[&str]> = Some(&[{}]);",
                list.join(", ")
            )
            .unwrap();
        }
    }

    let dst = PathBuf::from(std::env::var("OUT_DIR").unwrap()).join("vectors.rs");
    std::fs::write(dst, out).unwrap();
}

/// Flattens JSON params into `("key", Param::...)` literals.
fn flatten(prefix: &str, v: &serde_json::Value, out: &mut Vec<String>) {
    use serde_json::Value as J;
    let key = |k: &str| {
        if prefix.is_empty() {
            k.to_string()
        } else {
            format!("{prefix}.{k}")
        }
    };
    match v {
        J::Object(m) => {
            for (k, x) in m {
                let kk = key(k);
                match x {
                    J::Object(_) => flatten(&kk, x, out),
                    _ => out.push(format!("({kk:?}, {})", param(x))),
                }
            }
        }
        J::Null => {}
        other => out.push(format!("({prefix:?}, {})", param(other))),
    }
}

fn param(x: &serde_json::Value) -> String {
    use serde_json::Value as J;
    match x {
        J::Null => "crate::kernels::Param::Null".into(),
        J::Bool(b) => format!("crate::kernels::Param::Bool({b})"),
        J::Number(n) => match n.as_i64() {
            Some(i) => format!("crate::kernels::Param::Int({i})"),
            None => format!("crate::kernels::Param::Num({:?})", n.to_string()),
        },
        J::String(s) => format!("crate::kernels::Param::Str({s:?})"),
        J::Array(a) => {
            let ints: Option<Vec<String>> = a
                .iter()
                .map(|e| e.as_i64().map(|i| i.to_string()))
                .collect();
            match ints {
                Some(list) => format!("crate::kernels::Param::Ints(&[{}])", list.join(", ")),
                // Arrays of other things: keep the JSON text.
                None => format!("crate::kernels::Param::Num({:?})", x.to_string()),
            }
        }
        J::Object(_) => unreachable!("objects are flattened"),
    }
}

/// One `ImageSpec` literal, after checking the file against the manifest.
fn image(golden: &Path, id: &str, img: &serde_json::Value) -> String {
    let file = img["file"].as_str().expect("image without file");
    let path = golden.join(file);
    println!("cargo:rerun-if-changed={}", path.display());
    let bytes =
        std::fs::read(&path).unwrap_or_else(|e| panic!("vector {id}: {}: {e}", path.display()));
    let elem = img["elem"].as_str().expect("image without elem");
    let size = match elem {
        "u8" => 1,
        "i16" | "u16" => 2,
        "i32" | "u32" => 4,
        other => panic!("vector {id}: unknown element type {other}"),
    };
    let dim = |k: &str| {
        img[k]
            .as_u64()
            .unwrap_or_else(|| panic!("vector {id}: image without {k}")) as usize
    };
    let (w, h, c) = (dim("width"), dim("height"), dim("channels"));
    assert_eq!(
        bytes.len(),
        w * h * c * size,
        "vector {id}: {file} has the wrong length"
    );
    let digest: String = Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    assert_eq!(
        Some(digest.as_str()),
        img["sha256"].as_str(),
        "vector {id}: {file} does not match its sha256 in the manifest"
    );
    let variant = elem.to_uppercase();
    format!(
        "            ImageSpec {{ name: {:?}, elem: Elem::{variant}, width: {w}, height: {h}, channels: {c}, bytes: include_bytes!({:?}) }},\n",
        img["name"].as_str().expect("image without name"),
        path.canonicalize().unwrap().display().to_string(),
    )
}
