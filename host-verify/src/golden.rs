//! Golden vectors: fixed inputs, parameters and expected outputs that any
//! port of a kernel must reproduce bit for bit.
//!
//! # Format (fixsight golden, version 1)
//!
//! A folder (by default `golden/` at the top of the repository) holds
//! `manifest.json` and one binary file per image.
//!
//! ```text
//! {
//!   "format": "fixsight-golden",
//!   "version": 1,
//!   "generator": "fixsight 0.1.0",                 the kernels that computed "expected"
//!   "vectors": [
//!     {
//!       "id": "filter.binomial5.clamp.floor",         unique, [a-z0-9._-], starts with the kernel id
//!       "comment": "what the case exercises",
//!       "kernel": "filter.binomial5",                 kernel id: <family>.<function or preset>
//!       "params": { ... },                            kernel-specific, see the family's module docs
//!       "inputs":   [ <image>, ... ],
//!       "expected": [ <image>, ... ],
//!       "row_pad": 4                                  optional, 1..=64: padded rows (below)
//!     }
//!   ]
//! }
//! <image> = { "name": "src", "file": "<id>.src.bin", "elem": "u8" | "i16" | "u16" | "i32" | "u32",
//!             "width": W, "height": H, "channels": C, "sha256": "<64 hex digits of the file>" }
//! ```
//!
//! Each `.bin` file is the image's elements, row-major, rows packed
//! (stride = `width * channels`), channels interleaved, each element
//! little-endian; its length is exactly `width * height * channels *
//! size_of(elem)`.
//!
//! A vector with `row_pad` is run on padded rows: every image laid out with
//! rows of `width * channels + row_pad` elements, input padding bytes
//! [`IN_PAD_BYTE`], output buffers filled with [`OUT_PAD_BYTE`] before the
//! call, whose padding must hold it afterwards ([`padded`], [`out_buffer`],
//! [`unpad`]; the runner is [`crate::padded`], the exact rules are in
//! `golden/README.md`, "Padded rows"). The files stay packed; packed
//! vectors have no `row_pad` field, so they read as before, and a reader
//! built before the field existed rejects it (unknown fields are errors).
//!
//! Limits (checked with overflow-free arithmetic before anything is read or
//! allocated; a vector that breaks one fails, with the reason): width and
//! height `1..=`[`MAX_DIM`], channels `1..=`[`MAX_CHANNELS`], an image's
//! byte length at most [`crate::files::MAX_IMAGE_BYTES`], the manifest at
//! most [`crate::files::MAX_TEXT_BYTES`]; a manifest without vectors is an
//! error. Kernel parameters that size a buffer are limited by each family
//! ([`crate::family::buffer_len`]).
//!
//! `golden check` verifies the manifest, every digest and length, then
//! recomputes every vector with the kernels and compares the bytes: any
//! single-bit difference fails that vector. `golden write` refuses to
//! replace an existing manifest unless told to overwrite, writes every file
//! to a temporary name first and renames them into place (the manifest
//! last) only when all were written; it never deletes a file, and lists the
//! `.bin` files of the folder that the new manifest does not name.

use crate::files::{self, FileError, Outputs};
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::fs;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Largest width or height of a golden image (a grid blob is stored as one
/// row of bytes, hence more than the kernels' 32767).
pub const MAX_DIM: usize = 1 << 24;
/// Largest channel count of a golden image.
pub const MAX_CHANNELS: usize = 16;

/// Value of the `format` field.
pub const FORMAT: &str = "fixsight-golden";
/// Value of the `version` field this code reads and writes.
pub const VERSION: u32 = 1;
/// Manifest file name.
pub const MANIFEST: &str = "manifest.json";

/// The `generator` field this build writes: `fixsight` and the kernel
/// crate's version.
///
/// ```
/// assert!(fixsight_verify::golden::generator().starts_with("fixsight "));
/// ```
pub fn generator() -> String {
    format!("fixsight {}", fixsight::VERSION)
}

/// Element type of an image file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Elem {
    /// Unsigned 8-bit.
    U8,
    /// Signed 16-bit, little-endian.
    I16,
    /// Unsigned 16-bit, little-endian.
    U16,
    /// Signed 32-bit, little-endian.
    I32,
    /// Unsigned 32-bit, little-endian.
    U32,
}

impl Elem {
    /// Bytes per element.
    pub fn size(self) -> usize {
        match self {
            Elem::U8 => 1,
            Elem::I16 | Elem::U16 => 2,
            Elem::I32 | Elem::U32 => 4,
        }
    }
}

/// An image held in memory as its file bytes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Blob {
    /// Role in the vector (`src`, `dst`, `gx`, ...).
    pub name: String,
    /// Element type.
    pub elem: Elem,
    /// Width in pixels.
    pub width: usize,
    /// Height in rows.
    pub height: usize,
    /// Interleaved channels.
    pub channels: usize,
    /// Little-endian element bytes, row-major, packed.
    pub bytes: Vec<u8>,
}

macro_rules! blob_conv {
    ($from:ident, $to:ident, $t:ty, $elem:expr) => {
        /// Builds a blob from elements (packed rows).
        pub fn $from(
            name: &str,
            width: usize,
            height: usize,
            channels: usize,
            data: &[$t],
        ) -> Blob {
            Blob {
                name: name.to_string(),
                elem: $elem,
                width,
                height,
                channels,
                bytes: data.iter().flat_map(|v| v.to_le_bytes()).collect(),
            }
        }

        /// The elements, or an error naming the blob if its type differs.
        pub fn $to(&self) -> Result<Vec<$t>, String> {
            if self.elem != $elem {
                return Err(format!(
                    "image `{}` has element type {:?}, expected {:?}",
                    self.name, self.elem, $elem
                ));
            }
            const N: usize = std::mem::size_of::<$t>();
            Ok(self
                .bytes
                .chunks_exact(N)
                .map(|c| {
                    let mut a = [0u8; N];
                    a.copy_from_slice(c);
                    <$t>::from_le_bytes(a)
                })
                .collect())
        }
    };
}

impl Blob {
    blob_conv!(from_u8, to_u8, u8, Elem::U8);
    blob_conv!(from_i16, to_i16, i16, Elem::I16);
    blob_conv!(from_u16, to_u16, u16, Elem::U16);
    blob_conv!(from_i32, to_i32, i32, Elem::I32);
    blob_conv!(from_u32, to_u32, u32, Elem::U32);

    /// Expected byte length from the header fields; `None` when it does not
    /// fit a `usize`.
    pub fn expected_len(&self) -> Option<usize> {
        image_len(self.elem, self.width, self.height, self.channels)
    }
}

/// `width * height * channels * size_of(elem)` without overflow.
pub fn image_len(elem: Elem, width: usize, height: usize, channels: usize) -> Option<usize> {
    width
        .checked_mul(height)?
        .checked_mul(channels)?
        .checked_mul(elem.size())
}

/// One image entry of the manifest.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct ImageEntry {
    /// Role in the vector.
    pub name: String,
    /// File name inside the golden folder.
    pub file: String,
    /// Element type.
    pub elem: Elem,
    /// Width.
    pub width: usize,
    /// Height.
    pub height: usize,
    /// Channels.
    pub channels: usize,
    /// SHA-256 of the file, lower-case hex.
    pub sha256: String,
}

/// One vector of the manifest.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct VectorEntry {
    /// Unique id.
    pub id: String,
    /// What the case exercises.
    pub comment: String,
    /// `<family>.<kernel>`.
    pub kernel: String,
    /// Kernel parameters.
    pub params: serde_json::Value,
    /// Input images.
    pub inputs: Vec<ImageEntry>,
    /// Expected output images.
    pub expected: Vec<ImageEntry>,
    /// Padded rows: every image of the vector is run with a row stride of
    /// `width * channels + row_pad` elements ([`padded`]); absent (and
    /// not written) for packed vectors.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub row_pad: Option<usize>,
}

/// The manifest.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Manifest {
    /// Always [`FORMAT`].
    pub format: String,
    /// Always [`VERSION`].
    pub version: u32,
    /// The kernels that generated the expected outputs: `fixsight <crate
    /// version>` ([`generator`]); empty in manifests written before the
    /// field existed.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub generator: String,
    /// The vectors.
    pub vectors: Vec<VectorEntry>,
}

/// A vector with its images in memory (what a family produces and what
/// `golden write` stores).
#[derive(Debug, Clone)]
pub struct GoldenCase {
    /// Unique id.
    pub id: String,
    /// What the case exercises.
    pub comment: String,
    /// `<family>.<kernel>`.
    pub kernel: String,
    /// Kernel parameters.
    pub params: serde_json::Value,
    /// Inputs.
    pub inputs: Vec<Blob>,
    /// Expected outputs.
    pub expected: Vec<Blob>,
    /// Padding elements after every row when the vector is run
    /// ([`VectorEntry::row_pad`]); `None` for packed rows.
    pub row_pad: Option<usize>,
}

/// Everything that can go wrong reading or writing golden vectors.
#[derive(Debug, Error)]
pub enum GoldenError {
    /// A file could not be read or written (the message names it).
    #[error(transparent)]
    File(#[from] FileError),
    /// The manifest lists no vectors.
    #[error("{}: the manifest lists no vectors; an empty golden folder proves nothing", files::shown_path(.path))]
    Empty {
        /// The manifest.
        path: PathBuf,
    },
    /// The manifest is not valid JSON of the expected shape.
    #[error("{} is not a valid golden manifest: {source}", files::shown_path(.path))]
    Json {
        /// The manifest.
        path: PathBuf,
        /// The parse error (with line and column).
        source: serde_json::Error,
    },
    /// Wrong `format` field.
    #[error("{}: format is {}, expected `{FORMAT}`", files::shown_path(.path), files::shown(.found))]
    Format {
        /// The manifest.
        path: PathBuf,
        /// What it says.
        found: String,
    },
    /// Unsupported version.
    #[error("{}: version {found} is not supported (this tool reads version {VERSION})", files::shown_path(.path))]
    Version {
        /// The manifest.
        path: PathBuf,
        /// What it says.
        found: u32,
    },
    /// A structural problem in the manifest.
    #[error("{}: vector {}: {reason}", files::shown_path(.path), files::shown(.id))]
    Inconsistent {
        /// The manifest.
        path: PathBuf,
        /// The vector.
        id: String,
        /// What is wrong.
        reason: String,
    },
    /// `golden write` would replace existing vectors.
    #[error("{} already exists; pass --overwrite to replace the golden vectors", files::shown_path(.path))]
    Exists {
        /// The manifest that exists.
        path: PathBuf,
    },
}

/// Result of a `golden check`.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct GoldenSummary {
    /// Vectors in the manifest.
    pub vectors: usize,
    /// Vectors reproduced bit for bit.
    pub passed: usize,
    /// `(id, reason)` of every failed vector.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub failures: Vec<(String, String)>,
}

/// Lower-case hex SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Reads and validates the manifest's structure (not the image files).
pub fn read_manifest(dir: &Path) -> Result<Manifest, GoldenError> {
    let path = dir.join(MANIFEST);
    let text = files::read_text(&path)?;
    parse_manifest(&text, &path)
}

/// Parses and validates a manifest's text; `path` names it in errors.
pub fn parse_manifest(text: &str, path: &Path) -> Result<Manifest, GoldenError> {
    let path = path.to_path_buf();
    let m: Manifest = serde_json::from_str(text).map_err(|source| GoldenError::Json {
        path: path.clone(),
        source,
    })?;
    if m.format != FORMAT {
        return Err(GoldenError::Format {
            path,
            found: m.format,
        });
    }
    if m.version != VERSION {
        return Err(GoldenError::Version {
            path,
            found: m.version,
        });
    }
    if m.vectors.is_empty() {
        return Err(GoldenError::Empty { path });
    }
    let mut seen = std::collections::BTreeSet::new();
    for v in &m.vectors {
        let bad = |reason: String| GoldenError::Inconsistent {
            path: path.clone(),
            id: v.id.clone(),
            reason,
        };
        if !seen.insert(v.id.clone()) {
            return Err(bad("id appears more than once".into()));
        }
        if v.id.is_empty()
            || !v
                .id
                .chars()
                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || "._-".contains(c))
        {
            return Err(bad("id must be non-empty and use only a-z 0-9 . _ -".into()));
        }
        for img in v.inputs.iter().chain(&v.expected) {
            if img.file.contains('/') || img.file.contains('\\') || img.file.starts_with('.') {
                return Err(bad(format!(
                    "file name `{}` must be a plain name inside the golden folder",
                    img.file
                )));
            }
            if img.sha256.len() != 64 || !img.sha256.chars().all(|c| c.is_ascii_hexdigit()) {
                return Err(bad(format!(
                    "image `{}`: sha256 must be 64 hex digits",
                    img.name
                )));
            }
        }
        if v.expected.is_empty() {
            return Err(bad("no expected output".into()));
        }
        if let Some(pad) = v.row_pad {
            if pad == 0 || pad > MAX_ROW_PAD {
                return Err(bad(format!(
                    "row_pad {pad} is outside 1..={MAX_ROW_PAD} (leave it out for packed rows)"
                )));
            }
        }
    }
    Ok(m)
}

/// Checks an image entry's sizes against the limits in the module docs.
pub fn check_image_entry(img: &ImageEntry) -> Result<usize, String> {
    let name = files::shown(&img.name);
    for (what, v, max) in [
        ("width", img.width, MAX_DIM),
        ("height", img.height, MAX_DIM),
        ("channels", img.channels, MAX_CHANNELS),
    ] {
        if v == 0 || v > max {
            return Err(format!("image {name}: {what} {v} is outside 1..={max}"));
        }
    }
    match image_len(img.elem, img.width, img.height, img.channels) {
        Some(n) if n as u64 <= files::MAX_IMAGE_BYTES => Ok(n),
        _ => Err(format!(
            "image {name}: {}x{}x{} {:?} needs more than the {} bytes allowed per image",
            img.width,
            img.height,
            img.channels,
            img.elem,
            files::MAX_IMAGE_BYTES
        )),
    }
}

/// Loads one image of a vector, checking its sizes, length and digest.
pub fn load_image(dir: &Path, img: &ImageEntry) -> Result<Blob, String> {
    let len = check_image_entry(img)?;
    let path = dir.join(files::plain_name(&img.file).map_err(|e| e.to_string())?);
    let bytes = files::read_bounded(&path, len as u64).map_err(|e| match e {
        FileError::TooLarge { size, .. } => format!(
            "{} holds {size} bytes or more but {}x{}x{} {:?} needs {len}",
            files::shown(&img.file),
            img.width,
            img.height,
            img.channels,
            img.elem
        ),
        e => e.to_string(),
    })?;
    let blob = Blob {
        name: img.name.clone(),
        elem: img.elem,
        width: img.width,
        height: img.height,
        channels: img.channels,
        bytes,
    };
    if blob.bytes.len() != len {
        return Err(format!(
            "{} holds {} bytes but {}x{}x{} {:?} needs {len}",
            files::shown(&img.file),
            blob.bytes.len(),
            img.width,
            img.height,
            img.channels,
            img.elem,
        ));
    }
    let digest = sha256_hex(&blob.bytes);
    if !digest.eq_ignore_ascii_case(&img.sha256) {
        return Err(format!(
            "{} has SHA-256 {digest}, manifest says {} (file changed or corrupted)",
            files::shown(&img.file),
            img.sha256
        ));
    }
    Ok(blob)
}

/// Recomputes one golden vector: `(kernel id, params, inputs) -> outputs`,
/// or a message saying what was wrong with the vector.
pub type RunVector = fn(&str, &serde_json::Value, &[Blob]) -> Result<Vec<Blob>, String>;

/// Recomputes one golden vector with padded rows: `(kernel id, params,
/// packed inputs, row_pad) -> packed outputs`, having run the kernel on
/// buffers laid out as [`padded`] describes and checked that the padding of
/// every output is untouched ([`unpad`]).
pub type RunPadded = fn(&str, &serde_json::Value, &[Blob], usize) -> Result<Vec<Blob>, String>;

/// The two ways of recomputing a vector: packed rows, and padded rows
/// (vectors with `row_pad`).
#[derive(Clone, Copy)]
pub struct Runners {
    /// Vectors without `row_pad`.
    pub packed: RunVector,
    /// Vectors with `row_pad`.
    pub padded: RunPadded,
}

/// Checks one vector: loads its files and recomputes it with `run`.
fn check_vector(dir: &Path, v: &VectorEntry, run: Runners) -> Result<(), String> {
    let inputs = v
        .inputs
        .iter()
        .map(|i| load_image(dir, i))
        .collect::<Result<Vec<_>, _>>()?;
    let expected = v
        .expected
        .iter()
        .map(|i| load_image(dir, i))
        .collect::<Result<Vec<_>, _>>()?;
    let got = match v.row_pad {
        None => (run.packed)(&v.kernel, &v.params, &inputs)?,
        Some(pad) => (run.padded)(&v.kernel, &v.params, &inputs, pad)?,
    };
    compare_outputs(&expected, &got)
}

/// Compares produced images with expected ones, bit for bit.
pub fn compare_outputs(expected: &[Blob], got: &[Blob]) -> Result<(), String> {
    if expected.len() != got.len() {
        return Err(format!(
            "kernel produced {} images, {} expected",
            got.len(),
            expected.len()
        ));
    }
    for (e, g) in expected.iter().zip(got) {
        if (e.elem, e.width, e.height, e.channels) != (g.elem, g.width, g.height, g.channels) {
            return Err(format!(
                "image `{}`: produced {:?} {}x{}x{}, expected {:?} {}x{}x{}",
                e.name,
                g.elem,
                g.width,
                g.height,
                g.channels,
                e.elem,
                e.width,
                e.height,
                e.channels
            ));
        }
        if let Some(pos) = e.bytes.iter().zip(&g.bytes).position(|(a, b)| a != b) {
            let elem = pos / e.elem.size();
            let px = elem / e.channels;
            let differing = e
                .bytes
                .chunks(e.elem.size())
                .zip(g.bytes.chunks(e.elem.size()))
                .filter(|(a, b)| a != b)
                .count();
            return Err(format!(
                "image `{}` differs at pixel ({}, {}) channel {}; {differing} element(s) differ",
                e.name,
                px % e.width,
                px / e.width,
                elem % e.channels
            ));
        }
    }
    Ok(())
}

/// Checks every vector in `dir`, recomputing each with `run`
/// (`crate::families::check_golden` passes the registry's). Manifest-level
/// problems are errors; per-vector problems are listed in the summary's
/// `failures`.
pub fn check(dir: &Path, run: Runners) -> Result<GoldenSummary, GoldenError> {
    Ok(check_manifest(dir, &read_manifest(dir)?, run))
}

/// Checks every vector of a parsed manifest against the files of `dir`.
pub fn check_manifest(dir: &Path, m: &Manifest, run: Runners) -> GoldenSummary {
    let mut s = GoldenSummary {
        vectors: m.vectors.len(),
        ..Default::default()
    };
    let bar = crate::progress::bar(m.vectors.len() as u64, "golden vectors");
    for v in &m.vectors {
        bar.set_message(v.id.clone());
        match check_vector(dir, v, run) {
            Ok(()) => s.passed += 1,
            Err(e) => s.failures.push((v.id.clone(), e)),
        }
        bar.inc(1);
    }
    bar.finish_and_clear();
    s
}

/// Refuses to go on when `dir` holds a manifest and `overwrite` is not
/// set: `golden write` calls this before computing anything.
pub fn refuse_existing(dir: &Path, overwrite: bool) -> Result<(), GoldenError> {
    let mpath = dir.join(MANIFEST);
    if !overwrite && fs::symlink_metadata(&mpath).is_ok() {
        return Err(GoldenError::Exists { path: mpath });
    }
    Ok(())
}

/// What `golden write` did.
#[derive(Debug, Clone)]
pub struct Written {
    /// The manifest written.
    pub manifest: Manifest,
    /// `.bin` files of the folder that the new manifest does not name; the
    /// tool leaves them in place.
    pub unreferenced: Vec<String>,
}

/// Writes `cases` as a golden folder (rules in the module docs). Refuses to
/// replace an existing manifest, or any file it would write, unless
/// `overwrite`.
pub fn write(dir: &Path, cases: &[GoldenCase], overwrite: bool) -> Result<Written, GoldenError> {
    refuse_existing(dir, overwrite)?;
    let mpath = dir.join(MANIFEST);
    let mut vectors = Vec::new();
    let mut images: Vec<(String, &[u8])> = Vec::new();
    for c in cases {
        let mut entry = |b: &'_ Blob| -> ImageEntry {
            let file = format!("{}.{}.bin", c.id, b.name);
            ImageEntry {
                name: b.name.clone(),
                file,
                elem: b.elem,
                width: b.width,
                height: b.height,
                channels: b.channels,
                sha256: sha256_hex(&b.bytes),
            }
        };
        let inputs: Vec<ImageEntry> = c.inputs.iter().map(&mut entry).collect();
        let expected: Vec<ImageEntry> = c.expected.iter().map(&mut entry).collect();
        for (e, b) in inputs
            .iter()
            .zip(&c.inputs)
            .chain(expected.iter().zip(&c.expected))
        {
            images.push((e.file.clone(), &b.bytes));
        }
        vectors.push(VectorEntry {
            id: c.id.clone(),
            comment: c.comment.clone(),
            kernel: c.kernel.clone(),
            params: c.params.clone(),
            inputs,
            expected,
            row_pad: c.row_pad,
        });
    }
    let m = Manifest {
        format: FORMAT.into(),
        version: VERSION,
        generator: generator(),
        vectors,
    };
    let text = serde_json::to_string_pretty(&m).map_err(|source| GoldenError::Json {
        path: mpath.clone(),
        source,
    })? + "\n";
    let names: Vec<&str> = images
        .iter()
        .map(|(n, _)| n.as_str())
        .chain([MANIFEST])
        .collect();
    let mut out = Outputs::new(dir, names.iter().copied(), overwrite, "--overwrite")?;
    for (name, bytes) in &images {
        out.write(name, bytes)?;
    }
    out.write(MANIFEST, text.as_bytes())?;
    out.commit()?;
    let named: std::collections::BTreeSet<&str> = names.into_iter().collect();
    let mut unreferenced: Vec<String> = fs::read_dir(dir)
        .map(|rd| {
            rd.flatten()
                .map(|e| e.file_name().to_string_lossy().to_string())
                .filter(|n| n.ends_with(".bin") && !named.contains(n.as_str()))
                .collect()
        })
        .unwrap_or_default();
    unreferenced.sort();
    // Validate what was written with the same reader `check` uses.
    Ok(Written {
        manifest: read_manifest(dir)?,
        unreferenced,
    })
}

/// Largest `row_pad` a vector may ask for, in elements.
pub const MAX_ROW_PAD: usize = 64;
/// Every byte of an input's padding elements (`row_pad` vectors).
pub const IN_PAD_BYTE: u8 = 0xE7;
/// Every byte of an output buffer before the kernel runs (`row_pad`
/// vectors); its padding elements must still hold it afterwards.
pub const OUT_PAD_BYTE: u8 = 0x3C;

/// The buffer a runner of a `row_pad` vector hands the kernel for image
/// `b`: `height` rows of `stride = width * channels + row_pad` elements,
/// row `y`'s pixels at elements `y * stride ..`, followed by `row_pad`
/// padding elements whose every byte is `pad_byte` (the last row too). The
/// result is a blob of width `stride`, one channel, and the bytes of that
/// buffer ([`IN_PAD_BYTE`] for inputs, [`OUT_PAD_BYTE`] for outputs, where
/// the pixels are `pad_byte` too when `b` is only a shape).
///
/// ```
/// use fixsight_verify::golden::{padded, Blob, IN_PAD_BYTE};
/// let b = Blob::from_u8("src", 2, 2, 1, &[1, 2, 3, 4]);
/// let p = padded(&b, 1, IN_PAD_BYTE);
/// assert_eq!((p.width, p.height), (3, 2));
/// assert_eq!(p.bytes, [1, 2, IN_PAD_BYTE, 3, 4, IN_PAD_BYTE]);
/// ```
pub fn padded(b: &Blob, row_pad: usize, pad_byte: u8) -> Blob {
    let row = b.width * b.channels * b.elem.size();
    let pad = vec![pad_byte; row_pad * b.elem.size()];
    Blob {
        name: b.name.clone(),
        elem: b.elem,
        width: b.width * b.channels + row_pad,
        height: b.height,
        channels: 1,
        bytes: b
            .bytes
            .chunks(row.max(1))
            .flat_map(|r| r.iter().chain(&pad).copied())
            .collect(),
    }
}

/// An output buffer for an image of `elem`, `width x height x channels`
/// with `row_pad` padding elements a row, every byte [`OUT_PAD_BYTE`].
///
/// ```
/// use fixsight_verify::golden::{out_buffer, Elem, OUT_PAD_BYTE};
/// let b = out_buffer("dst", Elem::I16, 3, 2, 1, 2);
/// assert_eq!((b.width, b.bytes.len()), (5, 20));
/// assert!(b.bytes.iter().all(|&x| x == OUT_PAD_BYTE));
/// ```
pub fn out_buffer(
    name: &str,
    elem: Elem,
    width: usize,
    height: usize,
    channels: usize,
    row_pad: usize,
) -> Blob {
    let stride = width * channels + row_pad;
    Blob {
        name: name.to_string(),
        elem,
        width: stride,
        height,
        channels: 1,
        bytes: vec![OUT_PAD_BYTE; stride * height * elem.size()],
    }
}

/// The packed image of `width x height x channels` out of a padded output
/// buffer `p` (as [`out_buffer`] made it, after the kernel ran), or an error
/// naming the first padding element that no longer holds [`OUT_PAD_BYTE`]
/// and how many were overwritten.
///
/// ```
/// use fixsight_verify::golden::{out_buffer, unpad, Elem};
/// let mut p = out_buffer("dst", Elem::U8, 2, 1, 1, 1);
/// p.bytes[..2].copy_from_slice(&[7, 8]);
/// assert_eq!(unpad(&p, 2, 1).unwrap().bytes, [7, 8]);
/// p.bytes[2] = 0;
/// assert!(unpad(&p, 2, 1).unwrap_err().contains("padding"));
/// ```
pub fn unpad(p: &Blob, width: usize, channels: usize) -> Result<Blob, String> {
    let size = p.elem.size();
    let row = width * channels * size;
    let stride = p.width * p.channels * size;
    if channels == 0 || row > stride || stride == 0 || p.bytes.len() != stride * p.height {
        return Err(format!(
            "image `{}`: a padded buffer of {} bytes cannot hold {} rows of {width} x {channels}",
            p.name,
            p.bytes.len(),
            p.height
        ));
    }
    let mut first = None;
    let mut touched = 0usize;
    let mut bytes = Vec::with_capacity(row * p.height);
    for (y, r) in p.bytes.chunks(stride).enumerate() {
        bytes.extend_from_slice(&r[..row]);
        for (k, e) in r[row..].chunks(size).enumerate() {
            if e.iter().any(|&b| b != OUT_PAD_BYTE) {
                first.get_or_insert((k, y));
                touched += 1;
            }
        }
    }
    if let Some((k, y)) = first {
        return Err(format!(
            "image `{}`: the kernel wrote into the row padding: padding element {k} after row {y} \
             (stride {} elements); {touched} padding element(s) overwritten",
            p.name,
            stride / size
        ));
    }
    Ok(Blob {
        name: p.name.clone(),
        elem: p.elem,
        width,
        height: p.height,
        channels,
        bytes,
    })
}

/// Crops a `w x h` window at `(x0, y0)` out of a scene (for small golden
/// inputs that still look like the demo world).
pub fn crop(scene: &crate::scene::Scene, x0: usize, y0: usize, w: usize, h: usize) -> Vec<u8> {
    (y0..y0 + h)
        .flat_map(|y| {
            scene.gray[y * scene.width + x0..y * scene.width + x0 + w]
                .iter()
                .copied()
        })
        .collect()
}
