//! The demo sequence on the core: every frame of the host's demo sequence
//! through the demo jobs of both lens modes, as a firmware would run them,
//! with one record and one instruction-count window per frame.
//!
//! The jobs are the kernel crate's own demo types and configurations,
//! nothing copied: `fixsight::pipeline::DemoPointJobQvga` under
//! `PointJobConfig::DEMO_QVGA` (point mode: edge points corrected through
//! the file's correction grid) and `DemoImageJobQvga` under
//! `ImageJobConfig::DEMO_QVGA` (image mode: camera rows warped through the
//! file's undistortion grid). Each sits in a `static`, is configured once
//! and then fed the frames one after another, 240 rows each, as a camera
//! interface would deliver them.
//!
//! The host (`fixsight-verify targets`) writes the sequence file and names
//! it on the semihosting command line: `-semihosting-config
//! ...,arg=fixsight,arg=<path>`. With no second word the firmware prints
//! `seq none` and skips this part.
//!
//! # Sequence file (version 1, little-endian)
//!
//! | bytes | field |
//! |---|---|
//! | 8 | `FXSSEQ01` |
//! | 4 x 9 | u32: width, height, frames; point grid step log2, fractional bits, words; image grid step log2, fractional bits, words |
//! | 4 x words | the point mode's correction grid, i32 (x, y) pairs, the layout of `fixsight::warp::ControlGrid` (output and source both width x height) |
//! | 4 x words | the image mode's undistortion grid, the same layout |
//! | width x height x frames | the camera frames, u8, packed rows |
//!
//! # Console lines
//!
//! ```text
//! seq none                                          no sequence named
//! seq-error <detail>                                the file could not be used
//! seq <kernel> <frame> ran win <w> px <n> stack <bytes> rec <words>
//! seq <kernel> <frame> ERROR win <w> px <n> stack <bytes> <detail>
//! seq-end <kernel> frames <n>
//! ```
//!
//! `rec` is followed by the frame's record (the layout of the golden
//! vectors' `record` output, `host-verify/src/pipeline/job.rs`), each word
//! as the hexadecimal of its two's-complement `u32`. The firmware does not
//! judge the records; the host compares them with its own run of the same
//! kernels. The window of frame `k` holds the frame's 240 row pushes, its
//! finish and the writing of its record.

use crate::kernels::pipeline::{put_record, GRID_WORDS, RING_BYTES, WORDS};
use crate::kernels::{Arena, Buf, Fail, Img, Params};
use crate::vectors::Elem;
use crate::{measure, sys, Console};
use core::fmt::Write;
use fixsight::pipeline::{DemoImageJobQvga, DemoPointJobQvga, ImageJobConfig, PointJobConfig};
use fixsight::warp::{ControlGrid, WarpGeometry};

/// File magic.
const MAGIC: &[u8; 8] = b"FXSSEQ01";
/// Header bytes: the magic and nine u32.
const HEADER: usize = 8 + 4 * 9;
/// Frame size of the demo jobs.
const W: usize = 320;
const H: usize = 240;

static mut POINT_JOB: DemoPointJobQvga = DemoPointJobQvga::new();
static mut IMAGE_JOB: DemoImageJobQvga<'static> = DemoImageJobQvga::new();
static mut POINT_GRID: [i32; GRID_WORDS] = [0; GRID_WORDS];
static mut IMAGE_GRID: [i32; GRID_WORDS] = [0; GRID_WORDS];
static mut RING: [u8; RING_BYTES] = [0; RING_BYTES];
/// The point mode's grid, set by [`run`] before the frames.
static mut POINT_CONTROL: Option<ControlGrid<'static>> = None;

/// The file's header.
struct Header {
    width: usize,
    height: usize,
    frames: usize,
    /// (step log2, fractional bits, words) of the point and image grids.
    grids: [(u32, u32, usize); 2],
}

fn u32_at(b: &[u8], i: usize) -> u32 {
    let o = 8 + 4 * i;
    u32::from_le_bytes([b[o], b[o + 1], b[o + 2], b[o + 3]])
}

/// Reads `words` i32 into `dst` from the handle.
fn read_words(h: usize, dst: &mut [i32]) -> Result<(), &'static str> {
    let mut b = [0u8; 256];
    for chunk in dst.chunks_mut(64) {
        let bytes = &mut b[..4 * chunk.len()];
        if !sys::read(h, bytes) {
            return Err("file ends inside a grid");
        }
        for (d, s) in chunk.iter_mut().zip(bytes.chunks_exact(4)) {
            *d = i32::from_le_bytes([s[0], s[1], s[2], s[3]]);
        }
    }
    Ok(())
}

/// Reads the header and both grids into their statics.
fn read_head(h: usize) -> Result<Header, &'static str> {
    let mut b = [0u8; HEADER];
    if !sys::read(h, &mut b) {
        return Err("file shorter than its header");
    }
    if &b[..8] != MAGIC {
        return Err("not a version-1 sequence file (magic FXSSEQ01)");
    }
    let g = |i: usize| (u32_at(&b, i), u32_at(&b, i + 1), u32_at(&b, i + 2) as usize);
    let head = Header {
        width: u32_at(&b, 0) as usize,
        height: u32_at(&b, 1) as usize,
        frames: u32_at(&b, 2) as usize,
        grids: [g(3), g(6)],
    };
    if (head.width, head.height) != (W, H) || head.frames == 0 {
        return Err("the demo jobs take 320 x 240 frames, at least one");
    }
    if head.grids.iter().any(|g| g.2 > GRID_WORDS) {
        return Err("a grid has more words than the firmware keeps (41 x 31 points)");
    }
    // SAFETY: single-threaded; no job holds a reference to the grids yet
    // (`run` clears the image job, which drops its grid, before this).
    let (pg, ig) = unsafe {
        (
            &mut *core::ptr::addr_of_mut!(POINT_GRID),
            &mut *core::ptr::addr_of_mut!(IMAGE_GRID),
        )
    };
    read_words(h, &mut pg[..head.grids[0].2])?;
    read_words(h, &mut ig[..head.grids[1].2])?;
    Ok(head)
}

/// The grid over a static store.
fn grid_of(
    store: &'static [i32; GRID_WORDS],
    (log2, frac, words): (u32, u32, usize),
) -> Result<ControlGrid<'static>, Fail> {
    let geom = WarpGeometry::new(W, H, W, H, frac)?;
    Ok(ControlGrid::new(&store[..words], geom, log2)?)
}

/// One frame through the point-mode job: input `frame` (u8, 320 x 240),
/// output `record` (i32, [`WORDS`] x 1).
fn point_frame(
    _: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: single-threaded; `run` configured the job and set the grid
    // before the frames, and nothing else touches them meanwhile.
    let (job, grid) = unsafe {
        (
            &mut *core::ptr::addr_of_mut!(POINT_JOB),
            (*core::ptr::addr_of!(POINT_CONTROL)).as_ref(),
        )
    };
    let (frame, rec) = frame_io(ins, outs)?;
    for row in frame.chunks_exact(W) {
        job.push_row(row)?;
    }
    let r = job.finish(grid)?;
    put_record(&r, job.peaks(), job.tracker(), rec)
}

/// One frame through the image-mode job (as [`point_frame`]).
fn image_frame(
    _: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: as in `point_frame`.
    let job = unsafe { &mut *core::ptr::addr_of_mut!(IMAGE_JOB) };
    let (frame, rec) = frame_io(ins, outs)?;
    for row in frame.chunks_exact(W) {
        job.push_row(row)?;
    }
    let r = job.finish()?;
    put_record(&r, job.peaks(), job.tracker(), rec)
}

/// The frame and record buffers of a frame call.
fn frame_io<'r>(
    ins: &'r [Img<'_>],
    outs: &'r mut [Img<'_>],
) -> Result<(&'r [u8], &'r mut [i32]), Fail> {
    let frame = match ins.first().map(|i| &i.buf) {
        Some(Buf::U8(f)) if f.len() == W * H => &**f,
        _ => return Err(Fail::Harness("frame must be u8, 320 x 240")),
    };
    match outs.first_mut().map(|o| &mut o.buf) {
        Some(Buf::I32(r)) if r.len() == WORDS => Ok((frame, &mut **r)),
        _ => Err(Fail::Harness("record must be i32, WORDS x 1")),
    }
}

/// Runs the sequence named on the command line, if any. A code-size image
/// (`crate::vectors::ONLY`) skips it at compile time, so the demo jobs are
/// not linked into images that measure other kernels. Never inlined: the
/// host's code-bytes graph (`host-verify/src/codebytes.rs`) leaves it out
/// of the harness's baseline by this symbol, as the code-size images leave
/// it out.
#[inline(never)]
pub fn run(con: &mut Console, words: &mut [u32]) {
    if crate::vectors::ONLY.is_some() {
        return;
    }
    let mut line = [0u8; 512];
    let Some(n) = sys::command_line(&mut line) else {
        let _ = writeln!(con, "seq none");
        return;
    };
    let Some(path) = line[..n]
        .split(|&b| b == b' ')
        .filter(|w| !w.is_empty())
        .nth(1)
    else {
        let _ = writeln!(con, "seq none");
        return;
    };
    let Some(h) = sys::open_read(path) else {
        let _ = writeln!(con, "seq-error cannot open the sequence file");
        return;
    };
    if let Err(e) = run_file(con, words, h) {
        let _ = writeln!(con, "seq-error {e}");
    }
    sys::close(h);
}

/// Both modes over the open file.
fn run_file(con: &mut Console, words: &mut [u32], h: usize) -> Result<(), Fail> {
    // SAFETY: single-threaded; clearing the image job (in place, no fresh
    // job on the stack) drops the references to IMAGE_GRID and RING it may
    // hold, so the ones made below and in `read_head` are the only ones.
    unsafe { (*core::ptr::addr_of_mut!(IMAGE_JOB)).clear() };
    let head = read_head(h).map_err(Fail::Harness)?;
    let frames_at = HEADER + 4 * (head.grids[0].2 + head.grids[1].2);
    let mut arena = Arena::new(words);
    let (Some(frame), Some(rec)) = (
        arena.image_filled(Elem::U8, W, H, 1, 0),
        arena.image_filled(Elem::I32, WORDS, 1, 1, 0),
    ) else {
        return Err(Fail::Harness("arena full"));
    };
    let mut ins = [frame];
    let mut outs = [rec];

    // SAFETY: single-threaded; the grid stores were filled by `read_head`
    // and are only read from now on; RING is referenced by the image job
    // alone.
    let (pg, ig, ring) = unsafe {
        (
            &*core::ptr::addr_of!(POINT_GRID),
            &*core::ptr::addr_of!(IMAGE_GRID),
            &mut *core::ptr::addr_of_mut!(RING),
        )
    };
    let point_grid = grid_of(pg, head.grids[0])?;
    let image_grid = grid_of(ig, head.grids[1])?;
    // SAFETY: single-threaded; no other reference to these statics exists.
    let (pj, ij) = unsafe {
        *core::ptr::addr_of_mut!(POINT_CONTROL) = Some(point_grid);
        (
            &mut *core::ptr::addr_of_mut!(POINT_JOB),
            &mut *core::ptr::addr_of_mut!(IMAGE_JOB),
        )
    };
    pj.configure(&PointJobConfig::DEMO_QVGA, W, H)?;
    let need = DemoImageJobQvga::ring_bytes(&image_grid)?;
    let ring = ring.get_mut(..need).ok_or(Fail::Harness(
        "the image grid's band needs more ring rows than the firmware keeps",
    ))?;
    ij.configure(&ImageJobConfig::DEMO_QVGA, image_grid, ring)?;

    for (kernel, step) in [
        ("pipeline.point_job", point_frame as crate::kernels::RunFn),
        ("pipeline.image_job", image_frame),
    ] {
        if !sys::seek(h, frames_at) {
            return Err(Fail::Harness("cannot seek to the frames"));
        }
        for k in 0..head.frames {
            let Buf::U8(f) = &mut ins[0].buf else {
                return Err(Fail::Harness("frame buffer"));
            };
            if !sys::read(h, f) {
                return Err(Fail::Harness("file ends inside a frame"));
            }
            let m = measure(step, &Params::EMPTY, &ins, &mut outs, &mut arena);
            let _ = write!(
                con,
                "seq {kernel} {k} {} win {} px {} stack {}",
                if m.result.is_ok() { "ran" } else { "ERROR" },
                m.window,
                W * H,
                m.stack
            );
            if let Err(e) = m.result {
                let _ = writeln!(con, " {e}");
                return Err(e);
            }
            let _ = write!(con, " rec");
            if let Buf::I32(r) = &outs[0].buf {
                for &x in r.iter() {
                    let _ = write!(con, " {:x}", x as u32);
                }
            }
            let _ = writeln!(con);
        }
        let _ = writeln!(con, "seq-end {kernel} frames {}", head.frames);
    }
    Ok(())
}
