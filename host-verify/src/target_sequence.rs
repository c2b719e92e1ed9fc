//! The demo sequence on the emulated cores, part of `fixsight-verify
//! targets`: every frame of the demo sequence through the kernel crate's
//! demo jobs of both lens modes on each core, each frame's record compared
//! with the host's run of the same kernels, word for word, and each
//! frame's exact instruction count.
//!
//! The host renders the sequence ([`DEMO_SEQUENCE`], 96 frames of 320 x
//! 240 through the demo lens), builds the two grids the report's job rows
//! use (the point mode's correction grid, step `2^GRID_LOG2`, and the image
//! mode's undistortion grid, step `2^IMAGE_GRID_LOG2`), writes them into a
//! sequence file (format in `targets/harness/src/sequence.rs`) and names
//! it on the firmware's semihosting command line. The firmware runs
//! `DemoPointJobQvga` under `PointJobConfig::DEMO_QVGA` and
//! `DemoImageJobQvga` under `ImageJobConfig::DEMO_QVGA` over the frames and
//! prints one record per frame; the host runs the same types and
//! configurations ([`crate::pipeline::job::run_fixed`],
//! [`crate::pipeline::image::run_fixed`]) and compares.
//!
//! Figures per core and mode, in `targets.json` as the kernel entry
//! `<kernel id>/demo_sequence`: instructions per pixel over all frames
//! (total instructions / total pixels), the fewest and most of one frame,
//! frames run and frames whose record is bit-identical.
//!
//! > Not a safety function: the drift warning in these records is an aid
//! > only (see the README's caution).

use crate::lines::{GRID_FRAC_BITS, GRID_LOG2};
use crate::pipeline::image::{demo_grid, IMAGE_GRID_FRAC_BITS, IMAGE_GRID_LOG2, IMAGE_KERNEL};
use crate::pipeline::job::{record_words, sequence_correction_grid, FixedRun, JOB_KERNEL};
use crate::sequence::{Sequence, DEMO_SEQUENCE};
use crate::targets::Call;
use anyhow::{anyhow, bail, Context, Result};
use fixsight::warp::{ControlGrid, WarpGeometry};
use std::path::{Path, PathBuf};

/// File name of the sequence file in the logs folder.
pub const SEQUENCE_FILE: &str = "demo-sequence.bin";
/// Bench-stage name of the sequence figures (`<kernel id>/demo_sequence`).
pub const STAGE: &str = "demo_sequence";
/// File magic (version 1).
const MAGIC: &[u8; 8] = b"FXSSEQ01";

/// The sequence file and what the host expects of it.
#[derive(Debug, Clone)]
pub struct OnTargetSequence {
    /// Absolute path of the file (named on the semihosting command line).
    pub path: PathBuf,
    /// Frames in the file.
    pub frames: usize,
    /// Per kernel id: the host's record of every frame.
    pub expected: Vec<(&'static str, Vec<Vec<i32>>)>,
}

/// Flat records of a fixed run.
fn records(run: &FixedRun) -> Vec<Vec<i32>> {
    run.records
        .iter()
        .map(|(rep, peaks, _, slots)| record_words(rep, peaks, slots))
        .collect()
}

/// The sequence file's bytes (layout in `targets/harness/src/sequence.rs`).
pub fn encode(
    (w, h): (usize, usize),
    grids: [(u32, u32, &[i32]); 2],
    frames: &[Vec<u8>],
) -> Result<Vec<u8>> {
    let u = |v: usize| u32::try_from(v).map_err(|_| anyhow!("{v} does not fit a u32"));
    let mut b = MAGIC.to_vec();
    for v in [w, h, frames.len()] {
        b.extend(u(v)?.to_le_bytes());
    }
    for (log2, frac, pts) in grids {
        for v in [log2, frac, u(pts.len())?] {
            b.extend(v.to_le_bytes());
        }
    }
    for (_, _, pts) in grids {
        for p in pts {
            b.extend(p.to_le_bytes());
        }
    }
    for f in frames {
        if f.len() != w * h {
            bail!("a frame has {} bytes, {w} x {h} expected", f.len());
        }
        b.extend(f);
    }
    Ok(b)
}

/// Renders the demo sequence, runs the host kernels over it and writes the
/// sequence file into `dir`.
pub fn prepare(dir: &Path) -> Result<OnTargetSequence> {
    let seq = Sequence::new(&DEMO_SEQUENCE).map_err(|e| anyhow!("demo sequence: {e}"))?;
    let spec = seq.spec();
    let (w, h) = (spec.width, spec.height);
    let frames: Vec<Vec<u8>> = (0..spec.frames).map(|k| seq.render(k)).collect();
    let cg = sequence_correction_grid(&seq).map_err(|e| anyhow!("correction grid: {e}"))?;
    if cg.geom != WarpGeometry::new(w, h, w, h, GRID_FRAC_BITS)? || cg.k != GRID_LOG2 {
        bail!("the correction grid's geometry is not the one the firmware rebuilds");
    }
    let (ig_geom, ig) = demo_grid(&seq, w, h, IMAGE_GRID_LOG2, IMAGE_GRID_FRAC_BITS)
        .map_err(|e| anyhow!("undistortion grid: {e}"))?;
    let point = crate::pipeline::job::run_fixed(
        &frames,
        Some(&ControlGrid::new(&cg.points, cg.geom, GRID_LOG2)?),
    )
    .map_err(|e| anyhow!("host point job: {e}"))?;
    let image = crate::pipeline::image::run_fixed(
        &frames,
        ControlGrid::new(&ig, ig_geom, IMAGE_GRID_LOG2)?,
    )
    .map_err(|e| anyhow!("host image job: {e}"))?;
    let bytes = encode(
        (w, h),
        [
            (GRID_LOG2, GRID_FRAC_BITS, &cg.points),
            (IMAGE_GRID_LOG2, IMAGE_GRID_FRAC_BITS, &ig),
        ],
        &frames,
    )?;
    std::fs::create_dir_all(dir)?;
    let path = std::fs::canonicalize(dir)?.join(SEQUENCE_FILE);
    if path
        .to_string_lossy()
        .contains(|c: char| c.is_whitespace() || c == ',')
    {
        bail!(
            "the sequence file's path {} holds a space or comma, which the emulator's \
             command line cannot carry; choose an --out folder without them",
            path.display()
        );
    }
    std::fs::write(&path, bytes).with_context(|| format!("writing {}", path.display()))?;
    Ok(OnTargetSequence {
        path,
        frames: frames.len(),
        expected: vec![
            (JOB_KERNEL, records(&point)),
            (IMAGE_KERNEL, records(&image)),
        ],
    })
}

/// One `seq` line of the console.
#[derive(Debug, Clone, PartialEq)]
pub struct FrameLine {
    /// Kernel id.
    pub kernel: String,
    /// Frame index.
    pub frame: usize,
    /// `ran` or `ERROR`.
    pub status: String,
    /// Instruction-count window.
    pub window: Option<usize>,
    /// Pixels of the frame.
    pub px: u64,
    /// Stack bytes.
    pub stack: u64,
    /// The record's words (empty on `ERROR`).
    pub record: Vec<i32>,
    /// The line verbatim.
    pub line: String,
}

/// What the firmware printed about the sequence.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Printed {
    /// Every frame line in order.
    pub frames: Vec<FrameLine>,
    /// `seq-end` lines: kernel id and frame count.
    pub ends: Vec<(String, usize)>,
    /// `seq-error` details and `seq none`.
    pub errors: Vec<String>,
}

/// Reads the `seq` lines of a console (protocol in
/// `targets/harness/src/sequence.rs`).
pub fn parse(console: &str) -> Result<Printed> {
    let mut p = Printed::default();
    for l in console.lines() {
        let f: Vec<&str> = l.split_whitespace().collect();
        let after = |k: &str| f.iter().position(|x| *x == k).and_then(|i| f.get(i + 1));
        match f.first().copied() {
            Some("seq") if f.get(1) == Some(&"none") => p.errors.push(l.into()),
            Some("seq-error") => p.errors.push(l.into()),
            Some("seq-end") => p.ends.push((
                f.get(1).copied().unwrap_or("").into(),
                after("frames").and_then(|v| v.parse().ok()).unwrap_or(0),
            )),
            Some("seq") if f.len() >= 4 => {
                let record = match f.iter().position(|x| *x == "rec") {
                    Some(i) => f[i + 1..]
                        .iter()
                        .map(|x| u32::from_str_radix(x, 16).map(|v| v as i32))
                        .collect::<Result<Vec<i32>, _>>()
                        .map_err(|_| anyhow!("a record word is not hexadecimal: {l}"))?,
                    None => Vec::new(),
                };
                p.frames.push(FrameLine {
                    kernel: f[1].into(),
                    frame: f[2].parse().map_err(|_| anyhow!("bad frame index: {l}"))?,
                    status: f[3].into(),
                    window: after("win").and_then(|v| v.parse().ok()),
                    px: after("px").and_then(|v| v.parse().ok()).unwrap_or(0),
                    stack: after("stack").and_then(|v| v.parse().ok()).unwrap_or(0),
                    record,
                    line: l.into(),
                })
            }
            _ => {}
        }
    }
    Ok(p)
}

/// Compares what `core` printed with the host's records. Returns one
/// measured call per frame (stage [`STAGE`], status `pass` when the record
/// is bit-identical, else `FAIL`) and the problems.
pub(crate) fn check(
    core: &str,
    printed: &Printed,
    seq: &OnTargetSequence,
) -> (Vec<Call>, Vec<String>) {
    let mut calls = Vec::new();
    let mut problems: Vec<String> = printed
        .errors
        .iter()
        .map(|e| format!("{core}: demo sequence: {e}"))
        .collect();
    for (kernel, want) in &seq.expected {
        let got: Vec<&FrameLine> = printed
            .frames
            .iter()
            .filter(|f| f.kernel == *kernel)
            .collect();
        let ended = printed
            .ends
            .iter()
            .any(|(k, n)| k == kernel && *n == seq.frames);
        if got.len() != want.len() || !ended {
            problems.push(format!(
                "{core}: demo sequence: {kernel} ran {} of {} frames",
                got.len(),
                want.len()
            ));
        }
        let mut first_wrong = None;
        for (i, f) in got.iter().enumerate() {
            let expected = want.get(f.frame).filter(|_| f.frame == i);
            let same = f.status == "ran" && expected == Some(&f.record);
            if !same && first_wrong.is_none() {
                first_wrong = Some(describe(f, expected));
            }
            calls.push(Call {
                kernel: kernel.to_string(),
                stage: Some(STAGE.into()),
                status: if same { "pass" } else { "FAIL" }.into(),
                window: f.window,
                px: f.px,
                stack: f.stack,
                line: f.line.chars().take(160).collect(),
            });
        }
        if let Some(d) = first_wrong {
            problems.push(format!("{core}: demo sequence: {kernel} {d}"));
        }
    }
    (calls, problems)
}

/// The first difference of a frame from what the host computed.
fn describe(f: &FrameLine, expected: Option<&Vec<i32>>) -> String {
    let Some(want) = expected else {
        return format!("frame {}: out of order or unexpected", f.frame);
    };
    if f.status != "ran" {
        return format!("frame {}: {}", f.frame, f.line);
    }
    match want.iter().zip(&f.record).position(|(a, b)| a != b) {
        Some(i) => format!(
            "frame {}: record word {i} is {}, the host's is {}",
            f.frame, f.record[i], want[i]
        ),
        None => format!(
            "frame {}: record of {} words, the host's has {}",
            f.frame,
            f.record.len(),
            want.len()
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn seq() -> OnTargetSequence {
        OnTargetSequence {
            path: PathBuf::from("/x"),
            frames: 2,
            expected: vec![(JOB_KERNEL, vec![vec![0, -1], vec![1, 2]])],
        }
    }

    #[test]
    fn bit_identical_frames_pass_and_a_changed_word_is_named() {
        let good = "seq pipeline.point_job 0 ran win 5 px 76800 stack 9 rec 0 ffffffff\n\
                    seq pipeline.point_job 1 ran win 6 px 76800 stack 9 rec 1 2\n\
                    seq-end pipeline.point_job frames 2\n";
        let (calls, problems) = check("m4", &parse(good).unwrap(), &seq());
        assert!(problems.is_empty(), "{problems:?}");
        assert_eq!(calls.len(), 2);
        assert!(calls
            .iter()
            .all(|c| c.status == "pass" && c.stage.as_deref() == Some(STAGE)));
        assert_eq!(calls[1].window, Some(6));

        let bad = good.replace("rec 1 2", "rec 1 3");
        let (calls, problems) = check("m4", &parse(&bad).unwrap(), &seq());
        assert_eq!(calls[1].status, "FAIL");
        assert_eq!(problems.len(), 1);
        assert!(problems[0].contains("frame 1: record word 1 is 3, the host's is 2"));
    }

    #[test]
    fn missing_frames_errors_and_bad_words_are_reported() {
        let short = "seq pipeline.point_job 0 ran win 5 px 76800 stack 9 rec 0 ffffffff\n\
                     seq-error file ends inside a frame\n";
        let (_, problems) = check("m4", &parse(short).unwrap(), &seq());
        assert_eq!(problems.len(), 2, "{problems:?}");
        assert!(problems.iter().any(|p| p.contains("ran 1 of 2 frames")));
        assert!(parse("seq pipeline.point_job 0 ran win 5 rec zz\n").is_err());
        let none = parse("seq none\n").unwrap();
        assert_eq!(none.errors.len(), 1);
    }

    #[test]
    fn file_layout_is_the_documented_one() {
        let b = encode((2, 1), [(3, 5, &[1, -2]), (4, 5, &[7])], &[vec![9, 8]]).unwrap();
        assert_eq!(&b[..8], MAGIC);
        let u = |i: usize| u32::from_le_bytes(b[8 + 4 * i..12 + 4 * i].try_into().unwrap());
        assert_eq!(
            (0..9).map(u).collect::<Vec<_>>(),
            [2, 1, 1, 3, 5, 2, 4, 5, 1]
        );
        assert_eq!(b.len(), 8 + 36 + 12 + 2);
        assert_eq!(&b[44..48], &1i32.to_le_bytes());
        assert_eq!(&b[48..52], &(-2i32).to_le_bytes());
        assert_eq!(&b[56..], &[9, 8]);
        assert!(encode((2, 2), [(3, 5, &[]), (4, 5, &[])], &[vec![0]]).is_err());
    }
}
