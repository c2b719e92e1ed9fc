//! `fixsight-verify port-check`: compares the outputs a vendor's port
//! computed for the golden inputs with the golden expected outputs, bit for
//! bit (or, with `--tolerance`, within each kernel's declared bound).
//!
//! # What the port writes (the outputs folder)
//!
//! * For every vector it claims and every `expected` image of that vector,
//!   one file named exactly as the image's `file` field in
//!   `manifest.json` (for example `filter.binomial5.clamp.floor.dst.bin`),
//!   in the layout of the golden images: elements of the stated type,
//!   little-endian, row-major, rows packed, channels interleaved, exactly
//!   `width * height * channels * size_of(elem)` bytes
//!   (`golden/README.md`).
//! * For a vector with `row_pad` (padded rows), the file is instead the
//!   whole output buffer as the port's kernel left it: `height` rows of
//!   `width * channels + row_pad` elements, the buffer filled with bytes
//!   `0x3C` before the call (inputs laid out likewise, padding bytes
//!   `0xE7`; `golden/README.md`, "Padded rows"). The padding must still
//!   hold `0x3C`: a written padding element fails the vector, named by row
//!   and position.
//! * Optionally `claims.txt`: the kernel ids and vector ids the port
//!   implements, one per line (`#` starts a comment, blank lines are
//!   ignored). Without it the port claims every vector. A vector that is
//!   not claimed is listed by id as not claimed: it is never counted as
//!   passed and never skipped silently. An entry that names no kernel and
//!   no vector of the manifest is an error (a typo must not shrink the
//!   claim unnoticed).
//!
//! # Verdicts
//!
//! A claimed vector passes when every expected image has its file and every
//! element equals the expected one. Otherwise it fails, with, per image, the
//! first differing element in raster order (x, y, channel, expected, got)
//! and the number of differing elements, or why the file could not be
//! compared (missing, wrong length). The command exits non-zero when a
//! claimed vector fails or when the port claims nothing.
//!
//! With `--tolerance`, a kernel whose contract in the report (`report.json`
//! of `fixsight-verify report`, `--report`) is `tolerance` passes when every
//! element is within the row's `bound` of our output; bit-exact kernels and
//! kernels without a row are still compared bit for bit. This is weaker
//! than bit-exactness: it holds the port to the error budget our integer
//! output has against the `f64` reference, measured against our output, and
//! does not prove the port within the bound of the `f64` reference.

use crate::contract::{Contract, KernelReport};
use crate::files;
use crate::golden::{self, Blob, Elem, ImageEntry, VectorEntry};
use anyhow::{bail, Context};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Name of the optional claims file in the outputs folder.
pub const CLAIMS_FILE: &str = "claims.txt";

/// The first differing element of an image.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FirstDiff {
    /// Column.
    pub x: usize,
    /// Row.
    pub y: usize,
    /// Channel.
    pub channel: usize,
    /// Expected element.
    pub expected: i64,
    /// The port's element.
    pub got: i64,
}

/// How one expected image compared.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ImageVerdict {
    /// Every element within the allowed difference.
    Equal,
    /// Some elements differ.
    Differs {
        /// First in raster order (row, then column, then channel).
        first: FirstDiff,
        /// Elements outside the allowed difference.
        count: usize,
        /// Elements of the image.
        of: usize,
    },
    /// The file could not be compared (missing, unreadable, wrong length).
    Unusable(String),
}

/// One vector's outcome.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum VectorVerdict {
    /// Not claimed by the port.
    NotClaimed,
    /// Claimed; per expected image name, how it compared.
    Checked(Vec<(String, ImageVerdict)>),
}

impl VectorVerdict {
    /// `true` when claimed and every image equal.
    pub fn passed(&self) -> bool {
        matches!(self, VectorVerdict::Checked(v) if v.iter().all(|(_, i)| *i == ImageVerdict::Equal))
    }
}

/// Elements of an image as `i64`, through the blob's own element
/// conversions (`Blob::to_u8` ...).
fn elements(b: &Blob) -> Vec<i64> {
    match b.elem {
        Elem::U8 => b.to_u8().map(|v| v.into_iter().map(i64::from).collect()),
        Elem::I16 => b.to_i16().map(|v| v.into_iter().map(i64::from).collect()),
        Elem::U16 => b.to_u16().map(|v| v.into_iter().map(i64::from).collect()),
        Elem::I32 => b.to_i32().map(|v| v.into_iter().map(i64::from).collect()),
        Elem::U32 => b.to_u32().map(|v| v.into_iter().map(i64::from).collect()),
    }
    .unwrap_or_default()
}

/// Compares a port's bytes with an expected image, allowing elements to
/// differ by at most `allowed` (0: bit for bit).
///
/// ```
/// use fixsight_verify::cmd::port_check::{compare, FirstDiff, ImageVerdict};
/// use fixsight_verify::golden::Blob;
/// let want = Blob::from_u8("dst", 3, 2, 1, &[1, 2, 3, 4, 5, 6]);
/// assert_eq!(compare(&want, &[1, 2, 3, 4, 5, 6], 0), ImageVerdict::Equal);
/// assert_eq!(
///     compare(&want, &[1, 2, 3, 4, 9, 7], 0),
///     ImageVerdict::Differs {
///         first: FirstDiff { x: 1, y: 1, channel: 0, expected: 5, got: 9 },
///         count: 2,
///         of: 6,
///     }
/// );
/// assert_eq!(compare(&want, &[1, 2, 3, 4, 6, 7], 1), ImageVerdict::Equal);
/// assert!(matches!(compare(&want, &[1, 2], 0), ImageVerdict::Unusable(_)));
/// ```
pub fn compare(expected: &Blob, got: &[u8], allowed: i64) -> ImageVerdict {
    if got.len() != expected.bytes.len() {
        return ImageVerdict::Unusable(format!(
            "holds {} bytes, {}x{}x{} {:?} needs {}",
            got.len(),
            expected.width,
            expected.height,
            expected.channels,
            expected.elem,
            expected.bytes.len()
        ));
    }
    let want = elements(expected);
    let have = elements(&Blob {
        bytes: got.to_vec(),
        ..expected.clone()
    });
    let mut first = None;
    let mut count = 0;
    for (i, (&w, &g)) in want.iter().zip(&have).enumerate() {
        if (w - g).abs() > allowed {
            count += 1;
            if first.is_none() {
                let c = expected.channels.max(1);
                let px = i / c;
                first = Some(FirstDiff {
                    x: px % expected.width.max(1),
                    y: px / expected.width.max(1),
                    channel: i % c,
                    expected: w,
                    got: g,
                });
            }
        }
    }
    match first {
        None => ImageVerdict::Equal,
        Some(first) => ImageVerdict::Differs {
            first,
            count,
            of: want.len(),
        },
    }
}

/// Reads `claims.txt` of `outputs` if present: `None` claims everything.
/// Entries must name a kernel id or a vector id of the manifest.
pub fn read_claims(
    outputs: &Path,
    vectors: &[VectorEntry],
) -> anyhow::Result<Option<BTreeSet<String>>> {
    let path = outputs.join(CLAIMS_FILE);
    if std::fs::symlink_metadata(&path).is_err() {
        return Ok(None);
    }
    let text = files::read_text(&path)?;
    let known: BTreeSet<&str> = vectors
        .iter()
        .flat_map(|v| [v.id.as_str(), v.kernel.as_str()])
        .collect();
    let mut claims = BTreeSet::new();
    for (n, line) in text.lines().enumerate() {
        let entry = line.split('#').next().unwrap_or("").trim();
        if entry.is_empty() {
            continue;
        }
        if !known.contains(entry) {
            bail!(
                "{} line {}: `{}` is neither a kernel id nor a vector id of the manifest",
                files::shown_path(&path),
                n + 1,
                files::shown(entry)
            );
        }
        claims.insert(entry.to_string());
    }
    Ok(Some(claims))
}

/// Allowed element difference per kernel id from a report's rows: the
/// `bound` (rounded down) of rows whose contract is `tolerance`.
pub fn tolerances(report: &Path) -> anyhow::Result<BTreeMap<String, i64>> {
    #[derive(serde::Deserialize)]
    struct Rows {
        kernels: Vec<KernelReport>,
    }
    let text = files::read_text(report).with_context(|| {
        format!(
            "--tolerance needs the kernels' contracts: run `fixsight-verify report` first or \
             name its report.json with --report ({})",
            files::shown_path(report)
        )
    })?;
    let rows: Rows = serde_json::from_str(&text)
        .with_context(|| format!("{} is not a report.json", files::shown_path(report)))?;
    Ok(rows
        .kernels
        .into_iter()
        .filter(|r| r.contract == Contract::Tolerance && r.bound.is_finite() && r.bound >= 0.0)
        .map(|r| (r.name, r.bound.floor() as i64))
        .collect())
}

/// Bytes of the port's file for `want`: the packed image, or with
/// `row_pad` the whole padded output buffer.
fn padded_len(want: &Blob, row_pad: Option<usize>) -> usize {
    let stride = want.width * want.channels + row_pad.unwrap_or(0);
    stride * want.height * want.elem.size()
}

/// The packed pixels of a port's padded output buffer (a `row_pad`
/// vector), or why it cannot be compared: wrong length, or a padding
/// element that no longer holds [`golden::OUT_PAD_BYTE`].
fn from_padded(want: &Blob, bytes: Vec<u8>, pad: usize) -> Result<Vec<u8>, String> {
    let need = padded_len(want, Some(pad));
    if bytes.len() != need {
        return Err(format!(
            "holds {} bytes, the padded buffer of {}x{}x{} {:?} with row_pad {pad} needs {need}",
            bytes.len(),
            want.width,
            want.height,
            want.channels,
            want.elem
        ));
    }
    let buf = Blob {
        width: want.width * want.channels + pad,
        channels: 1,
        bytes,
        ..want.clone()
    };
    golden::unpad(&buf, want.width, want.channels).map(|b| b.bytes)
}

/// Checks one vector's expected images against the port's files.
fn check_vector(
    vectors: &Path,
    outputs: &Path,
    v: &VectorEntry,
    allowed: i64,
) -> Vec<(String, ImageVerdict)> {
    v.expected
        .iter()
        .map(|img: &ImageEntry| {
            let verdict = match golden::load_image(vectors, img) {
                Err(why) => ImageVerdict::Unusable(format!("golden image: {why}")),
                Ok(want) => match files::plain_name(&img.file)
                    .map_err(|e| e.to_string())
                    .and_then(|name| {
                        let path = outputs.join(name);
                        if std::fs::symlink_metadata(&path).is_err() {
                            return Err(format!("{} is missing", files::shown_path(&path)));
                        }
                        files::read_bounded(&path, padded_len(&want, v.row_pad) as u64)
                            .map_err(|e| e.to_string())
                    }) {
                    Err(why) => ImageVerdict::Unusable(why),
                    Ok(bytes) => match v.row_pad {
                        None => compare(&want, &bytes, allowed),
                        Some(pad) => match from_padded(&want, bytes, pad) {
                            Ok(packed) => compare(&want, &packed, allowed),
                            Err(why) => ImageVerdict::Unusable(why),
                        },
                    },
                },
            };
            (img.name.clone(), verdict)
        })
        .collect()
}

/// The outcome of a run.
#[derive(Debug, Clone)]
pub struct Summary {
    /// Per vector id, in manifest order.
    pub vectors: Vec<(String, String, VectorVerdict)>,
}

impl Summary {
    /// Claimed vectors that passed.
    pub fn passed(&self) -> usize {
        self.vectors.iter().filter(|v| v.2.passed()).count()
    }
    /// Claimed vectors that failed.
    pub fn failed(&self) -> usize {
        self.vectors
            .iter()
            .filter(|v| !v.2.passed() && v.2 != VectorVerdict::NotClaimed)
            .count()
    }
    /// Vectors not claimed.
    pub fn not_claimed(&self) -> usize {
        self.vectors
            .iter()
            .filter(|v| v.2 == VectorVerdict::NotClaimed)
            .count()
    }
}

/// Compares the port's outputs in `outputs` with the vectors in `vectors`;
/// `report` gives the contracts when judging by tolerance.
pub fn check(vectors: &Path, outputs: &Path, report: Option<&Path>) -> anyhow::Result<Summary> {
    let manifest = golden::read_manifest(vectors)?;
    if !outputs.is_dir() {
        bail!(
            "the port's outputs folder {} does not exist or is not a folder",
            files::shown_path(outputs)
        );
    }
    let claims = read_claims(outputs, &manifest.vectors)?;
    let tol = match report {
        Some(r) => tolerances(r)?,
        None => BTreeMap::new(),
    };
    let vectors_out = manifest
        .vectors
        .iter()
        .map(|v| {
            let claimed = claims
                .as_ref()
                .is_none_or(|c| c.contains(&v.id) || c.contains(&v.kernel));
            let verdict = if claimed {
                let allowed = tol.get(&v.kernel).copied().unwrap_or(0);
                VectorVerdict::Checked(check_vector(vectors, outputs, v, allowed))
            } else {
                VectorVerdict::NotClaimed
            };
            (v.id.clone(), v.kernel.clone(), verdict)
        })
        .collect();
    Ok(Summary {
        vectors: vectors_out,
    })
}

/// The command: prints one line per vector and a summary; `Ok(false)` when
/// a claimed vector failed or nothing was claimed.
pub fn run(
    vectors: Option<PathBuf>,
    outputs: &Path,
    tolerance: bool,
    report: &Path,
) -> anyhow::Result<bool> {
    let dir = super::vectors_dir(vectors);
    let s = check(&dir, outputs, tolerance.then_some(report))?;
    for (id, kernel, v) in &s.vectors {
        let id = files::shown(id);
        match v {
            VectorVerdict::NotClaimed => println!("not claimed  {id} ({kernel})"),
            VectorVerdict::Checked(images) if v.passed() => {
                let _ = images;
                println!("pass         {id}")
            }
            VectorVerdict::Checked(images) => {
                for (name, iv) in images {
                    match iv {
                        ImageVerdict::Equal => {}
                        ImageVerdict::Differs { first, count, of } => println!(
                            "FAIL         {id} `{name}`: first difference at x {}, y {}, channel {}: \
                             expected {}, got {}; {count} of {of} elements differ",
                            first.x, first.y, first.channel, first.expected, first.got
                        ),
                        ImageVerdict::Unusable(why) => {
                            println!("FAIL         {id} `{name}`: {why}")
                        }
                    }
                }
            }
        }
    }
    let (p, f, n) = (s.passed(), s.failed(), s.not_claimed());
    println!(
        "port-check: {p} passed, {f} failed, {n} not claimed, of {} vectors ({}{})",
        s.vectors.len(),
        if tolerance {
            "tolerance-contract kernels within their bound"
        } else {
            "bit for bit"
        },
        if n > 0 {
            "; vectors not claimed are not passed"
        } else {
            ""
        }
    );
    if p + f == 0 {
        println!("the port claims no vector: nothing was checked");
    }
    Ok(f == 0 && p > 0)
}
