//! `fxs_image_job_*`: the whole job in image mode (kernel id
//! `pipeline.image_job`) over `fixsight::pipeline::ImageJob`: camera rows
//! in, each warped through the lens's control grid as soon as the source
//! rows it reads are in, the corrected rows through the edge stage; at the
//! end of a frame line votes at the points' own positions, peaks, the
//! tape's two edges, the tracks and the drift warning out. The capacities
//! are the point job's (`point_job.rs`, the golden vectors' job type) for
//! the corrected frame; the camera frame is the grid's source.
//!
//! Unlike `fxs_point_job`, the job keeps caller memory between calls: a
//! copy of the checked grid reads the grid's points or blob, and the ring
//! of camera rows is written by every push. Both are recorded in the
//! storage and checked against every later argument.
//!
//! Stack: `fxs_image_job_init` sets a fresh job in place as
//! `fxs_point_job_init` does (see there): zero bytes, which are a valid
//! `ImageJob` because its warp is a `repr(u8)` enum whose idle variant is
//! tag 0, then `ImageJob::clear`. In the Cortex-M4 library at `9b39bcf`
//! the init's frame is 568 bytes, 1 280 with what it calls, against a
//! 28 376-byte frame of the copy at `7c57ca7`; the stack high-water
//! mark of the two golden vectors through C went from 31 172 bytes to
//! 3 084 (budget 4 096, `c_firmware::JOB_STACK_BUDGET`).
//!
//! Not a safety function (see the header): the drift warning is an aid
//! only.

use crate::boundary::{
    border, buf, disjoint, load, load_mut, storage, store_cleared, Checked, Span, FXS_BORDER_CLAMP,
};
use crate::lines::FxsLinePeak;
use crate::marking::FxsMarkingLine;
use crate::point_job::{
    config_c_of, end_frame, push_job_row, read_lines, read_peaks, read_track_words,
    FxsPointJobConfig, FxsPointJobReport, JobObj, LineStage, FXS_POINT_JOB_BINS,
    FXS_POINT_JOB_GATE_BYTES, FXS_POINT_JOB_MAP_WORDS, FXS_POINT_JOB_MAX_WIDTH,
    FXS_POINT_JOB_PEAKS, FXS_POINT_JOB_RHO_BINS, FXS_POINT_JOB_THETA_BINS, FXS_POINT_JOB_TRACKS,
};
use crate::status::{finish, kernel, FxsStatus};
use crate::warp::{FxsControlGrid, GridObj};
use fixsight::filter::Border;
use fixsight::pipeline::{ImageJob, ImageJobConfig};

/// The kernel job behind `fxs_image_job`: the point job's capacities
/// behind the warp.
type ImageObj = ImageJob<
    'static,
    FXS_POINT_JOB_MAX_WIDTH,
    FXS_POINT_JOB_MAP_WORDS,
    FXS_POINT_JOB_BINS,
    FXS_POINT_JOB_GATE_BYTES,
    FXS_POINT_JOB_THETA_BINS,
    FXS_POINT_JOB_RHO_BINS,
    FXS_POINT_JOB_PEAKS,
    FXS_POINT_JOB_TRACKS,
>;

/// The job kept in `fxs_image_job` and the caller memory it keeps: the
/// grid's points or blob (read) and the ring (written).
pub(crate) struct ImageJobObj {
    job: ImageObj,
    borrowed: [Span; 2],
}

crate::boundary::object_storage!(
    /// `fxs_image_job`: storage for the whole job in image mode.
    FxsImageJob for ImageJobObj, tag 0x4658_5033,
    FXS_IMAGE_JOB_SIZE = (FXS_IMAGE_JOB_SIZE_32: 52384, FXS_IMAGE_JOB_SIZE_64: 52600)
);
crate::boundary::zero_valid!(ImageJobObj);

impl LineStage for ImageJobObj {
    fn stage(&self) -> &JobObj {
        self.job.line_stage()
    }

    fn borrowed(&self) -> [Span; 2] {
        self.borrowed
    }
}

/// `fxs_image_job_config`: every setting of the job (`ImageJobConfig`).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsImageJobConfig {
    /// The stages after the warp; `job.vote`'s frame must be the grid's
    /// output frame.
    pub job: FxsPointJobConfig,
    /// Camera pixels outside the frame: `FXS_BORDER_CLAMP` or a fill
    /// value 0..=255.
    pub border: i32,
}

/// The checked kernel configuration of a C one.
fn config(c: &FxsImageJobConfig) -> Checked<ImageJobConfig> {
    Ok(ImageJobConfig {
        job: crate::point_job::config(&c.job)?,
        border: border(c.border)?,
    })
}

/// `fxs_image_job_demo_config`: the demo configuration at 320 x 240
/// (`ImageJobConfig::DEMO_QVGA`: the point job's, clamped border).
///
/// # Safety
/// `config` one writable `fxs_image_job_config`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_demo_config(config: *mut FxsImageJobConfig) -> FxsStatus {
    let d = ImageJobConfig::DEMO_QVGA;
    let c = FxsImageJobConfig {
        job: config_c_of(&d.job),
        border: match d.border {
            Border::Clamp => FXS_BORDER_CLAMP,
            Border::Fill(v) => i32::from(v),
        },
    };
    // SAFETY: forwarded to the caller; the pointer is checked first.
    finish(unsafe { buf(config, 1, true).map(|b| b.slice_mut()[0] = c) })
}

/// `fxs_image_job_ring_len`: bytes of the smallest ring of camera rows a
/// job over `grid` takes (`ImageJob::ring_bytes`: `band_rows(1) *
/// src_width`).
///
/// # Safety
/// `grid` initialised; `ring_len` one writable `uintptr_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_ring_len(
    grid: *const FxsControlGrid,
    ring_len: *mut usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        load::<GridObj>(grid).and_then(|m| {
            let out = buf(ring_len, 1, true)?;
            disjoint(&[Span::object(grid, false), m.borrowed(), out.span()])?;
            out.slice_mut()[0] = kernel(ImageObj::ring_bytes(m.grid()))?;
            Ok(())
        })
    })
}

/// `fxs_image_job_init`: a job under `config` whose camera frame is the
/// grid's source and whose corrected (vote) frame is its output, camera
/// rows kept in `ring[ring_len]`; frame numbers from 0, no tracks.
///
/// # Safety
/// `job` writable storage used by no one else; `config` readable; `grid`
/// initialised (copied: its storage may go, its points or blob stay
/// borrowed, valid and unchanged while the job is used); `ring`
/// `ring_len` writable bytes that nothing else touches while the job is
/// used.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_init(
    job: *mut FxsImageJob,
    config: *const FxsImageJobConfig,
    grid: *const FxsControlGrid,
    ring: *mut u8,
    ring_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let own = storage::<ImageJobObj>(job)?;
            let c = buf(config, 1, false)?;
            let m = load::<GridObj>(grid)?;
            let g = m.grid().geometry();
            // As the grid stream: the kernel uses whole rows, at most the
            // source height; only those are borrowed.
            let rows = (ring_len / g.src_width()).min(g.src_height());
            let r = buf(ring, ring_len, true)?.first(rows * g.src_width());
            let borrowed = [m.borrowed(), r.span()];
            let grid_span = Span::object(grid, false);
            disjoint(&[own, c.span(), grid_span, borrowed[0], borrowed[1]])?;
            let cfg = self::config(&c.slice()[0])?;
            let fresh = |o: &mut ImageJobObj| {
                o.job.clear();
                o.borrowed = borrowed;
            };
            // As `fxs_point_job_init`: a fresh job, configured in place; a
            // failed configuration leaves the storage not initialised.
            store_cleared(job, fresh, |o| {
                kernel(o.job.configure(&cfg, *m.grid(), r.slice_mut()))
            })
        })()
    })
}

/// `fxs_image_job_push_row`: the next camera row (`row_len ==
/// src_width` bytes of luma), warped and pushed through the edge stage as
/// far as it allows; `*rows_pushed` (may be NULL) the camera rows of the
/// frame so far.
///
/// # Safety
/// `job` initialised and used by no one else; `row` `row_len` readable
/// bytes; `rows_pushed` NULL or one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_push_row(
    job: *mut FxsImageJob,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { push_job_row::<ImageJobObj>(job, row, row_len, rows_pushed, |o, r| o.job.push_row(r)) }
}

/// `fxs_image_job_finish`: ends a frame once every camera row is in and
/// runs the line stage; `report` may be NULL.
///
/// # Safety
/// `job` initialised and used by no one else; `report` NULL or one
/// writable `fxs_point_job_report`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_finish(
    job: *mut FxsImageJob,
    report: *mut FxsPointJobReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { end_frame::<ImageJobObj>(job, report, [Span::EMPTY; 2], |o| o.job.finish()) })
}

/// `fxs_image_job_finish_short`: as `fxs_image_job_finish` for a camera
/// frame that ended early (the corrected rows made so far are the frame;
/// at least one).
///
/// # Safety
/// As `fxs_image_job_finish`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_finish_short(
    job: *mut FxsImageJob,
    report: *mut FxsPointJobReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        end_frame::<ImageJobObj>(job, report, [Span::EMPTY; 2], |o| o.job.finish_short())
    })
}

/// `fxs_image_job_drop_frame`: drops the frame in progress and counts it
/// as a frame without a measurement (the tracks coast through it).
///
/// # Safety
/// `job` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_drop_frame(job: *mut FxsImageJob) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<ImageJobObj>(job).map(|o| o.job.drop_frame()) })
}

/// `fxs_image_job_reset`: starts over with the same configuration, grid
/// and ring: frame in progress dropped, tracks forgotten, frame numbers
/// from 0.
///
/// # Safety
/// `job` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_reset(job: *mut FxsImageJob) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<ImageJobObj>(job).map(|o| o.job.reset()) })
}

/// `fxs_image_job_peaks`: as `fxs_point_job_peaks` (lines of the
/// corrected frame).
///
/// # Safety
/// `job` initialised, not written during the call; `out` `out_len`
/// writable `fxs_line_peak`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_peaks(
    job: *const FxsImageJob,
    out: *mut FxsLinePeak,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_peaks::<ImageJobObj>(job, out, out_len, found) }
}

/// `fxs_image_job_lines`: as `fxs_point_job_lines`.
///
/// # Safety
/// `job` initialised, not written during the call; `out` `out_len`
/// writable `fxs_marking_line`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_lines(
    job: *const FxsImageJob,
    out: *mut FxsMarkingLine,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_lines::<ImageJobObj>(job, out, out_len, found) }
}

/// `fxs_image_job_track_words`: as `fxs_point_job_track_words`.
///
/// # Safety
/// `job` initialised; `words` `words_len` writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_image_job_track_words(
    job: *const FxsImageJob,
    slot: i32,
    words: *mut i32,
    words_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_track_words::<ImageJobObj>(job, slot, words, words_len) }
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::{ImageJobObj, ImageObj};
    use crate::boundary::{cleared_over_garbage, Span};
    use std::boxed::Box;
    use std::format;

    /// Zero bytes and `clear` over any old bytes give the job `new` makes
    /// (and the borrowed spans given).
    #[test]
    fn init_storage_holds_a_new_job() {
        let spans = [Span::object(8 as *const u32, true), Span::EMPTY];
        let clear = |o: &mut ImageJobObj| {
            o.job.clear();
            o.borrowed = spans;
        };
        let got = cleared_over_garbage(clear, |o| format!("{:?} {:?}", o.job, o.borrowed));
        let want: Box<ImageObj> = Box::default();
        assert_eq!(got, format!("{want:?} {spans:?}"));
    }
}
