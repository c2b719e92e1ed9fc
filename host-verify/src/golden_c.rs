//! The golden vectors as C99 source, for C ports and for the C firmware
//! and host test of the C ABI (`c-abi/`).
//!
//! [`c_source`] turns a golden folder into one translation unit that
//! defines
//!
//! ```c
//! const golden_vector GOLDEN_VECTORS[];   // manifest order
//! const int32_t GOLDEN_VECTOR_COUNT;
//! ```
//!
//! with the types of `c-abi/c/golden.h`: every image as its file bytes
//! (little-endian elements, packed rows, checked against the manifest's
//! length and SHA-256 first), every parameter flattened to a dotted key
//! (`{"border": {"fill": 200}}` becomes `border.fill = 200`) holding an
//! integer, a string or an integer array (booleans as 0 / 1). A vector's
//! `row_pad` (0 when absent) is the last field of its `golden_vector`.

use crate::golden::{self, Elem, ImageEntry};
use anyhow::{anyhow, bail, Context, Result};
use std::fmt::Write as _;
use std::path::Path;

/// C element-type code of `golden.h` (`GOLDEN_U8` ...).
fn elem_code(e: Elem) -> &'static str {
    match e {
        Elem::U8 => "GOLDEN_U8",
        Elem::I16 => "GOLDEN_I16",
        Elem::U16 => "GOLDEN_U16",
        Elem::I32 => "GOLDEN_I32",
        Elem::U32 => "GOLDEN_U32",
    }
}

/// A C string literal (the ids and keys are plain ASCII; anything else is
/// escaped).
fn c_str(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' | '\\' => {
                out.push('\\');
                out.push(c);
            }
            ' '..='~' => out.push(c),
            _ => {
                for b in c.to_string().bytes() {
                    let _ = write!(out, "\\{b:03o}");
                }
            }
        }
    }
    out.push('"');
    out
}

/// One flattened parameter as a `golden_param` initialiser; arrays are
/// emitted into `arrays` first.
fn params(
    prefix: &str,
    v: &serde_json::Value,
    tag: &str,
    arrays: &mut String,
    out: &mut Vec<String>,
) -> Result<()> {
    use serde_json::Value as J;
    match v {
        J::Object(m) => {
            for (k, x) in m {
                let key = if prefix.is_empty() {
                    k.clone()
                } else {
                    format!("{prefix}.{k}")
                };
                params(&key, x, tag, arrays, out)?;
            }
        }
        J::Null => {}
        J::Bool(b) => out.push(format!(
            "{{{}, GOLDEN_INT, {}, 0, 0, 0}}",
            c_str(prefix),
            *b as i64
        )),
        J::Number(n) => {
            let i = n
                .as_i64()
                .ok_or_else(|| anyhow!("parameter {prefix}: {n} is not an integer"))?;
            out.push(format!("{{{}, GOLDEN_INT, {i}LL, 0, 0, 0}}", c_str(prefix)));
        }
        J::String(s) => out.push(format!(
            "{{{}, GOLDEN_STR, 0, {}, 0, 0}}",
            c_str(prefix),
            c_str(s)
        )),
        J::Array(a) => {
            let ints: Vec<i64> = a
                .iter()
                .map(|e| {
                    e.as_i64()
                        .ok_or_else(|| anyhow!("parameter {prefix}: not an integer array"))
                })
                .collect::<Result<_>>()?;
            let name = format!("{tag}_p{}", out.len());
            let list: Vec<String> = ints.iter().map(|i| format!("{i}LL")).collect();
            writeln!(
                arrays,
                "static const int64_t {name}[] = {{{}}};",
                list.join(", ")
            )?;
            out.push(format!(
                "{{{}, GOLDEN_INTS, 0, 0, {name}, {}}}",
                c_str(prefix),
                ints.len()
            ));
        }
    }
    Ok(())
}

/// Bytes of one image as a C array definition; returns its initialiser.
fn image(dir: &Path, img: &ImageEntry, name: &str, arrays: &mut String) -> Result<String> {
    let blob = golden::load_image(dir, img).map_err(|e| anyhow!(e))?;
    write!(
        arrays,
        "static const uint8_t {name}[{}] = {{",
        blob.bytes.len()
    )?;
    for (i, b) in blob.bytes.iter().enumerate() {
        if i % 24 == 0 {
            arrays.push_str("\n ");
        }
        write!(arrays, " {b},")?;
    }
    arrays.push_str("\n};\n");
    Ok(format!(
        "{{{}, {}, {}, {}, {}, {name}, {}u}}",
        c_str(&img.name),
        elem_code(img.elem),
        img.width,
        img.height,
        img.channels,
        blob.bytes.len()
    ))
}

/// The C translation unit for the golden folder `dir`.
pub fn c_source(dir: &Path) -> Result<String> {
    c_source_of(dir, |_| true, "golden.h").map(|(c, _)| c)
}

/// The vectors of `dir` that `select` keeps, as C source including
/// `header`, and the largest expected image in bytes (what a runner needs
/// for one static output buffer).
pub fn c_source_of(
    dir: &Path,
    select: impl Fn(&golden::VectorEntry) -> bool,
    header: &str,
) -> Result<(String, usize)> {
    let m =
        golden::read_manifest(dir).with_context(|| format!("golden folder {}", dir.display()))?;
    if m.vectors.is_empty() {
        bail!("{}: no golden vectors", dir.display());
    }
    let chosen: Vec<&golden::VectorEntry> = m.vectors.iter().filter(|v| select(v)).collect();
    if chosen.is_empty() {
        bail!("{}: no golden vector was selected", dir.display());
    }
    // With padded rows an output buffer holds the padding too.
    let largest = chosen
        .iter()
        .flat_map(|v| v.expected.iter().map(|i| (i, v.row_pad.unwrap_or(0))))
        .filter_map(|(i, pad)| {
            let stride = i.width.checked_mul(i.channels)?.checked_add(pad)?;
            golden::image_len(i.elem, stride, i.height, 1)
        })
        .max()
        .unwrap_or(0);
    let mut arrays = String::new();
    let mut table = String::new();
    for (i, v) in chosen.iter().enumerate() {
        let tag = format!("v{i}");
        let mut ps = Vec::new();
        params("", &v.params, &tag, &mut arrays, &mut ps)?;
        let mut imgs = |list: &[ImageEntry], role: &str| -> Result<String> {
            let mut out = Vec::new();
            for (k, img) in list.iter().enumerate() {
                out.push(image(dir, img, &format!("{tag}_{role}{k}"), &mut arrays)?);
            }
            let arr = format!("{tag}_{role}");
            writeln!(
                arrays,
                "static const golden_image {arr}[] = {{{}}};",
                out.join(", ")
            )?;
            Ok(arr)
        };
        let ins = imgs(&v.inputs, "in")?;
        let outs = imgs(&v.expected, "out")?;
        let parr = if ps.is_empty() {
            "0".to_string()
        } else {
            let arr = format!("{tag}_params");
            writeln!(
                arrays,
                "static const golden_param {arr}[] = {{{}}};",
                ps.join(", ")
            )?;
            arr
        };
        writeln!(
            table,
            "    {{{}, {}, {parr}, {}, {ins}, {}, {outs}, {}, {}}},",
            c_str(&v.id),
            c_str(&v.kernel),
            ps.len(),
            v.inputs.len(),
            v.expected.len(),
            v.row_pad.unwrap_or(0)
        )?;
    }
    Ok((
        format!(
            "/* Generated by fixsight-verify from {}/manifest.json ({}): {} golden vectors.\n \
             * Do not edit; regenerate with the golden folder. */\n\
             #include \"{header}\"\n\n{arrays}\nconst golden_vector GOLDEN_VECTORS[] = {{\n{table}}};\n\
             const int32_t GOLDEN_VECTOR_COUNT = {};\n",
            dir.file_name().and_then(|n| n.to_str()).unwrap_or("golden"),
            if m.generator.is_empty() {
                "generator not recorded"
            } else {
                m.generator.as_str()
            },
            chosen.len(),
            chosen.len()
        ),
        largest,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_and_flattens() {
        assert_eq!(c_str("a\"b\\c"), "\"a\\\"b\\\\c\"");
        let mut arrays = String::new();
        let mut out = Vec::new();
        let p = serde_json::json!({"border": {"fill": 200}, "h": [1, -2], "output": "u8"});
        params("", &p, "v9", &mut arrays, &mut out).unwrap();
        assert_eq!(out[0], "{\"border.fill\", GOLDEN_INT, 200LL, 0, 0, 0}");
        assert_eq!(out[1], "{\"h\", GOLDEN_INTS, 0, 0, v9_p1, 2}");
        assert_eq!(out[2], "{\"output\", GOLDEN_STR, 0, \"u8\", 0, 0}");
        assert!(arrays.contains("static const int64_t v9_p1[] = {1LL, -2LL};"));
        assert!(params(
            "",
            &serde_json::json!({"x": 0.5}),
            "v",
            &mut arrays,
            &mut out
        )
        .is_err());
    }

    #[test]
    fn the_repository_vectors_become_c() {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden");
        let c = c_source(&dir).unwrap();
        let n = golden::read_manifest(&dir).unwrap().vectors.len();
        assert!(c.contains(&format!("const int32_t GOLDEN_VECTOR_COUNT = {n};")));
        assert!(c.contains("GOLDEN_U8, "));
    }
}
