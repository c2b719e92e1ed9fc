//! `fxs_point_job_*`: the whole job in point mode (kernel id
//! `pipeline.point_job`) over `fixsight::pipeline::PointJob`: camera rows
//! in; at the end of a frame the edge points corrected through an optional
//! control grid, line votes, peaks, the tape's two edges, the tracks and
//! the drift warning out. One fixed set of capacities (the job type of the
//! golden vectors and the on-target harness): rows up to
//! [`FXS_POINT_JOB_MAX_WIDTH`] pixels with `ceil(width / 16) * height` at
//! most [`FXS_POINT_JOB_MAP_WORDS`], [`FXS_POINT_JOB_BINS`] histogram bins,
//! [`FXS_POINT_JOB_GATE_BYTES`] gate bytes, [`FXS_POINT_JOB_THETA_BINS`] x
//! [`FXS_POINT_JOB_RHO_BINS`] vote cells, [`FXS_POINT_JOB_PEAKS`] peaks and
//! [`FXS_POINT_JOB_TRACKS`] tracks. The whole job lives by value in caller
//! storage (`fxs_point_job`), as the edge stream does (`pipeline.rs`);
//! it borrows nothing between calls (a grid is passed to each finish).
//!
//! Stack: `fxs_point_job_init` builds no job on the stack. It writes zero
//! bytes over the storage (a valid job: `zero_valid!` proves it when the
//! crate is compiled) and `PointJob::clear` turns them into the job `new`
//! makes, field by field in place (`boundary::store_cleared`). Writing
//! the value `PointJob::new()` into the storage made LLVM build the job
//! on the stack and copy it. In the Cortex-M4 library at `9b39bcf` the
//! init's frame is 376 bytes, 800 with the configuration it calls (frames
//! read from the disassembly), against 22 952 bytes at `7c57ca7`, no
//! constant of the job's size in flash (the library's `.rodata` is 6 401
//! bytes at both); the stack high-water mark of the golden vectors through C
//! went from 25 164 bytes to 2 588 (its deepest call is now a finish).
//! `fixsight-verify targets` fails when it exceeds 4 096 bytes
//! (`c_firmware::JOB_STACK_BUDGET`).
//!
//! Not a safety function (see the header): the drift warning is an aid
//! only.

use crate::boundary::{
    buf, disjoint, load, load_mut, optional, push_row, size, storage, store_cleared, Checked, Span,
    Stored,
};
use crate::lines::{outputs, params_c, params_of, peak_c, peak_params, peak_params_c};
use crate::lines::{FxsLinePeak, FxsPeakParams, FxsVoteParams};
use crate::marking::{limits_c, result_of, FxsMarkingLimits, FxsMarkingLine, FxsMarkingResult};
use crate::pipeline::{config_of, report_of, FxsEdgeConfig, FxsEdgeReport};
use crate::status::{finish, kernel, FxsStatus};
use crate::track::{config_c, put_slot_words, FxsFrameReport, FxsTrackConfig, FXS_TRACK_WORDS};
use crate::warp::{FxsControlGrid, GridObj};
use fixsight::marking::{Candidate, Polarity};
use fixsight::pipeline::{map_words, JobReport, PointJob, PointJobConfig};
use fixsight::track::track_words;

/// `FXS_POINT_JOB_MAX_WIDTH`: widest frame.
pub const FXS_POINT_JOB_MAX_WIDTH: usize = 320;
/// `FXS_POINT_JOB_MAP_WORDS`: class-map words, `ceil(width / 16) * height`
/// at most this (`map_words(320, 240)`).
pub const FXS_POINT_JOB_MAP_WORDS: usize = 4800;
/// `FXS_POINT_JOB_BINS`: histogram bins of the automatic thresholds.
pub const FXS_POINT_JOB_BINS: usize = 1024;
/// `FXS_POINT_JOB_GATE_BYTES`: candidates per frame whose gate byte is
/// kept (the first ones in raster order).
pub const FXS_POINT_JOB_GATE_BYTES: usize = 4096;
/// `FXS_POINT_JOB_THETA_BINS`: most vote columns.
pub const FXS_POINT_JOB_THETA_BINS: usize = 32;
/// `FXS_POINT_JOB_RHO_BINS`: vote rows when every column is used
/// (`theta_bins * rho_bins` at most 32 * 255 cells).
pub const FXS_POINT_JOB_RHO_BINS: usize = 255;
/// `FXS_POINT_JOB_PEAKS`: peaks kept per frame.
pub const FXS_POINT_JOB_PEAKS: usize = 8;
/// `FXS_POINT_JOB_TRACKS`: track slots.
pub const FXS_POINT_JOB_TRACKS: usize = 4;

const _: () = assert!(FXS_POINT_JOB_MAP_WORDS == map_words(320, 240));
const _: () = assert!(FXS_POINT_JOB_TRACKS == crate::track::FXS_TRACK_SLOTS);

/// The job kept in `fxs_point_job`.
pub(crate) type JobObj = PointJob<
    FXS_POINT_JOB_MAX_WIDTH,
    FXS_POINT_JOB_MAP_WORDS,
    FXS_POINT_JOB_BINS,
    FXS_POINT_JOB_GATE_BYTES,
    FXS_POINT_JOB_THETA_BINS,
    FXS_POINT_JOB_RHO_BINS,
    FXS_POINT_JOB_PEAKS,
    FXS_POINT_JOB_TRACKS,
>;

crate::boundary::object_storage!(
    /// `fxs_point_job`: storage for the whole job in point mode.
    FxsPointJob for JobObj, tag 0x4658_5032,
    FXS_POINT_JOB_SIZE = (FXS_POINT_JOB_SIZE_32: 52264, FXS_POINT_JOB_SIZE_64: 52360)
);
crate::boundary::zero_valid!(JobObj);

/// `fxs_point_job_config`: every setting of the job, one part per stage
/// (`PointJobConfig`).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsPointJobConfig {
    /// The edge stage.
    pub edges: FxsEdgeConfig,
    /// Line voting; its frame is the corrected view; `weight_shift` -1
    /// (unit votes).
    pub vote: FxsVoteParams,
    /// Peak selection.
    pub peaks: FxsPeakParams,
    /// Marking selection (point mode knows no polarity: the contrast rule
    /// is skipped).
    pub marking: FxsMarkingLimits,
    /// Tracker and drift warning.
    pub track: FxsTrackConfig,
}

/// `fxs_point_job_report`: what one frame gave (`JobReport`).
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsPointJobReport {
    /// Frame number given to the tracker.
    pub frame: u32,
    /// Edge points that cast votes.
    pub voted: u32,
    /// Edge points corrected outside the vote frame.
    pub outside: u32,
    /// Edge points past the gate bytes (no vote).
    pub ungated: u32,
    /// Peaks found (at most FXS_POINT_JOB_PEAKS).
    pub peaks: u32,
    /// The edge stage's report.
    pub edges: FxsEdgeReport,
    /// The marking selected from the lines.
    pub marking: FxsMarkingResult,
    /// The tracker's report, with the drift warning.
    pub track: FxsFrameReport,
}

/// The checked kernel configuration of a C one (each part as its own
/// family checks it, the rest by `PointJobConfig::check` in `configure`).
pub(crate) fn config(c: &FxsPointJobConfig) -> Checked<PointJobConfig> {
    Ok(PointJobConfig {
        edges: crate::pipeline::config(&c.edges)?,
        vote: params_of(&c.vote)?,
        peaks: peak_params(&c.peaks)?,
        marking: crate::marking::config(&c.marking)?,
        track: crate::track::config(&c.track)?,
    })
}

/// `fxs_point_job_demo_config`: the demo configuration at 320 x 240
/// (`PointJobConfig::DEMO_QVGA`).
///
/// # Safety
/// `config` one writable `fxs_point_job_config`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_demo_config(config: *mut FxsPointJobConfig) -> FxsStatus {
    let c = config_c_of(&PointJobConfig::DEMO_QVGA);
    // SAFETY: forwarded to the caller; the pointer is checked first.
    finish(unsafe { buf(config, 1, true).map(|b| b.slice_mut()[0] = c) })
}

/// The C form of a kernel configuration.
pub(crate) fn config_c_of(d: &PointJobConfig) -> FxsPointJobConfig {
    FxsPointJobConfig {
        edges: config_of(&d.edges),
        vote: params_c(&d.vote),
        peaks: peak_params_c(&d.peaks),
        marking: limits_c(d.marking.limits()),
        track: config_c(&d.track),
    }
}

/// `fxs_point_job_init`: a job for raw `width x height` frames under
/// `config`, checked (configuration, sizes against the capacities); frame
/// numbers from 0, no tracks.
///
/// # Safety
/// `job` writable storage used by no one else; `config` readable.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_init(
    job: *mut FxsPointJob,
    config: *const FxsPointJobConfig,
    width: i32,
    height: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let own = storage::<JobObj>(job)?;
            let c = buf(config, 1, false)?;
            disjoint(&[own, c.span()])?;
            let cfg = self::config(&c.slice()[0])?;
            let (w, h) = (size(width)?, size(height)?);
            // As `fxs_edge_stream_init`: a fresh job, configured in place;
            // a failed configuration leaves the storage not initialised.
            store_cleared(job, JobObj::clear, |j| kernel(j.configure(&cfg, w, h)))
        })()
    })
}

/// `fxs_point_job_push_row`: the next camera row (`row_len == width`
/// bytes of luma); `*rows_pushed` (may be NULL) the rows of the frame so
/// far.
///
/// # Safety
/// `job` initialised and used by no one else; `row` `row_len` readable
/// bytes; `rows_pushed` NULL or one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_push_row(
    job: *mut FxsPointJob,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { push_job_row::<JobObj>(job, row, row_len, rows_pushed, |j, r| j.push_row(r)) }
}

/// `fxs_*_job_push_row` of the job in `job`: the row checks of
/// `boundary::push_row` (against the job and the memory it keeps), then
/// `push`.
///
/// # Safety
/// As `fxs_point_job_push_row`.
pub(crate) unsafe fn push_job_row<J: LineStage>(
    job: *mut J::Storage,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
    push: impl FnOnce(&mut J, &[u8]) -> fixsight::Result<usize>,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        push_row(
            job,
            row,
            row_len,
            rows_pushed,
            |j: &J| j.borrowed(),
            |j, r| kernel(push(j, r)),
        )
    })
}

/// A job in caller storage whose stages after the edge points (peaks,
/// centred lines, tracks) the read-out and finish helpers below share:
/// the point-mode job itself, or the image-mode job's line stage
/// (`image_job.rs`).
pub(crate) trait LineStage: Stored {
    /// The point-mode job that holds the peaks, lines and tracks.
    fn stage(&self) -> &JobObj;
    /// Caller memory the job keeps between calls (read or written); no
    /// output may share a byte with it.
    fn borrowed(&self) -> [Span; 2];
}

impl LineStage for JobObj {
    fn stage(&self) -> &JobObj {
        self
    }

    fn borrowed(&self) -> [Span; 2] {
        [Span::EMPTY; 2]
    }
}

/// The C form of a job report.
fn job_report_c(r: &JobReport) -> FxsPointJobReport {
    FxsPointJobReport {
        frame: r.frame,
        voted: r.voted,
        outside: r.outside,
        ungated: r.ungated,
        peaks: r.peaks as u32,
        edges: report_of(&r.edges),
        marking: result_of(&r.marking),
        track: crate::track::report_of(&r.track),
    }
}

/// Ends a frame of the job in `job` with `run`, after checking that the
/// optional `report` shares no byte with the job, the memory it keeps or
/// `read` (further memory the call reads); writes the report.
///
/// # Safety
/// `job` initialised and used by no one else; `read` memory not written
/// during the call; `report` NULL or one writable `fxs_point_job_report`.
pub(crate) unsafe fn end_frame<J: LineStage>(
    job: *mut J::Storage,
    report: *mut FxsPointJobReport,
    read: [Span; 2],
    run: impl FnOnce(&mut J) -> fixsight::Result<JobReport>,
) -> Checked<()> {
    let r = optional(report)?;
    let r_span = r.map_or(Span::EMPTY, |b| b.span());
    disjoint(&[Span::object(job, true), read[0], read[1], r_span])?;
    // SAFETY: initialised and exclusively used by the caller's guarantee;
    // disjoint from the report and `read` (checked above).
    let j = unsafe { load_mut::<J>(job)? };
    let [b0, b1] = j.borrowed();
    disjoint(&[b0, b1, r_span])?;
    let rep = kernel(run(j))?;
    if let Some(r) = r {
        // SAFETY: checked, writable, disjoint from the job and its memory.
        unsafe { r.slice_mut()[0] = job_report_c(&rep) };
    }
    Ok(())
}

/// Ends a frame (`short`: with fewer rows than declared) through the
/// optional grid.
///
/// # Safety
/// As `fxs_point_job_finish`.
unsafe fn end(
    job: *mut FxsPointJob,
    grid: *const FxsControlGrid,
    report: *mut FxsPointJobReport,
    short: bool,
) -> Checked<()> {
    optional(report)?;
    let (g, read) = if grid.is_null() {
        (None, [Span::EMPTY; 2])
    } else {
        // SAFETY: an initialised grid, not written during the call, by the
        // caller's guarantee.
        let go = unsafe { load::<GridObj>(grid)? };
        (Some(go.grid()), [Span::object(grid, false), go.borrowed()])
    };
    // SAFETY: forwarded to the caller; the grid's memory is only read.
    unsafe {
        end_frame::<JobObj>(job, report, read, |j| {
            if short {
                j.finish_short(g)
            } else {
                j.finish(g)
            }
        })
    }
}

/// `fxs_point_job_finish`: ends a frame of the declared height and runs
/// the rest of the job through `grid` (NULL: the raw frame is the vote
/// frame); `report` may be NULL.
///
/// # Safety
/// `job` initialised and used by no one else; `grid` NULL or initialised,
/// not written during the call; `report` NULL or one writable
/// `fxs_point_job_report`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_finish(
    job: *mut FxsPointJob,
    grid: *const FxsControlGrid,
    report: *mut FxsPointJobReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { end(job, grid, report, false) })
}

/// `fxs_point_job_finish_short`: as `fxs_point_job_finish` after fewer
/// rows than declared (at least one).
///
/// # Safety
/// As `fxs_point_job_finish`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_finish_short(
    job: *mut FxsPointJob,
    grid: *const FxsControlGrid,
    report: *mut FxsPointJobReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { end(job, grid, report, true) })
}

/// `fxs_point_job_drop_frame`: drops the frame in progress and counts it
/// as a frame without a measurement (the tracks coast through it).
///
/// # Safety
/// `job` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_drop_frame(job: *mut FxsPointJob) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<JobObj>(job).map(|j| j.drop_frame()) })
}

/// `fxs_point_job_reset`: starts over with the same configuration: frame
/// in progress dropped, tracks forgotten, frame numbers from 0 (the
/// automatic thresholds carried to the next frame stay).
///
/// # Safety
/// `job` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_reset(job: *mut FxsPointJob) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<JobObj>(job).map(|j| j.reset()) })
}

/// Writes the items `list` takes from the job's line stage into
/// `out[out_len]` (1..=FXS_LINES_MAX_OUT, disjoint from the job and the
/// memory it keeps) and how many into `*found`.
///
/// # Safety
/// As `fxs_point_job_peaks`, with `out` of type `T`.
unsafe fn put_list<'a, J: LineStage + 'a, T, I: Iterator<Item = T>>(
    job: *const J::Storage,
    out: *mut T,
    out_len: usize,
    found: *mut i32,
    list: impl FnOnce(&'a JobObj) -> I,
) -> Checked<()> {
    // SAFETY: initialised and not written during the call by the caller's
    // guarantee.
    let j = unsafe { load::<J>(job)? };
    let (o, f, _) = outputs(out, out_len, found)?;
    let [b0, b1] = j.borrowed();
    disjoint(&[Span::object(job, false), b0, b1, o.span(), f.span()])?;
    let mut n = 0;
    // SAFETY: checked, writable, disjoint from the job and each other.
    for (d, x) in unsafe { o.slice_mut() }.iter_mut().zip(list(j.stage())) {
        *d = x;
        n += 1;
    }
    // SAFETY: as above.
    unsafe { f.slice_mut()[0] = n };
    Ok(())
}

/// The peaks of the line stage of the job in `job` (`fxs_*_job_peaks`).
///
/// # Safety
/// As `fxs_point_job_peaks`.
pub(crate) unsafe fn read_peaks<J: LineStage>(
    job: *const J::Storage,
    out: *mut FxsLinePeak,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        put_list::<J, _, _>(job, out, out_len, found, |j| j.peaks().iter().map(peak_c))
    })
}

/// The centred lines of the line stage of the job in `job`
/// (`fxs_*_job_lines`).
///
/// # Safety
/// As `fxs_point_job_lines`.
pub(crate) unsafe fn read_lines<J: LineStage>(
    job: *const J::Storage,
    out: *mut FxsMarkingLine,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        put_list::<J, _, _>(job, out, out_len, found, |j| j.lines().iter().map(line_c))
    })
}

/// Track slot `slot` of the line stage of the job in `job`
/// (`fxs_*_job_track_words`).
///
/// # Safety
/// As `fxs_point_job_track_words`.
pub(crate) unsafe fn read_track_words<J: LineStage>(
    job: *const J::Storage,
    slot: i32,
    words: *mut i32,
    words_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        load::<J>(job).and_then(|j| {
            let [b0, b1] = j.borrowed();
            let w = buf(words, words_len, true)?.first(FXS_TRACK_WORDS);
            disjoint(&[b0, b1, w.span()])?;
            put_slot_words(Span::object(job, false), slot, words, words_len, |s| {
                track_words(j.stage().tracker().and_then(|t| t.slot(s)))
            })
        })
    })
}

/// `fxs_point_job_peaks`: the peaks of the last finished frame (vote-frame
/// lines, strongest first), up to `out_len` (1..=FXS_LINES_MAX_OUT);
/// `*found` how many were written.
///
/// # Safety
/// `job` initialised, not written during the call; `out` `out_len`
/// writable `fxs_line_peak`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_peaks(
    job: *const FxsPointJob,
    out: *mut FxsLinePeak,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_peaks::<JobObj>(job, out, out_len, found) }
}

/// The C form of a centred line.
fn line_c(c: &Candidate) -> FxsMarkingLine {
    FxsMarkingLine {
        rho_q4: c.rho_q4,
        theta: c.theta,
        polarity: match c.polarity {
            Polarity::Rising => 1,
            Polarity::Falling => -1,
            Polarity::Unknown => 0,
        },
        votes: c.votes,
    }
}

/// `fxs_point_job_lines`: the peaks' lines about the image centre, as the
/// marking selection took them (its `left`, `right` index this list), up
/// to `out_len` (1..=FXS_LINES_MAX_OUT); `*found` how many were written.
///
/// # Safety
/// `job` initialised, not written during the call; `out` `out_len`
/// writable `fxs_marking_line`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_lines(
    job: *const FxsPointJob,
    out: *mut FxsMarkingLine,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_lines::<JobObj>(job, out, out_len, found) }
}

/// `fxs_point_job_track_words`: the state of track slot `slot`
/// (0..FXS_POINT_JOB_TRACKS) after the last finished frame, as
/// `fxs_tracker_slot_words` gives it.
///
/// # Safety
/// `job` initialised; `words` `words_len` writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_point_job_track_words(
    job: *const FxsPointJob,
    slot: i32,
    words: *mut i32,
    words_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    unsafe { read_track_words::<JobObj>(job, slot, words, words_len) }
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::JobObj;
    use crate::boundary::cleared_over_garbage;
    use crate::pipeline::StreamObj;
    use std::boxed::Box;
    use std::format;

    /// Zero bytes and `clear` over any old bytes give the job (and the
    /// edge stream of `fxs_edge_stream_init`) `new` makes.
    #[test]
    fn init_storage_holds_a_new_job() {
        let got = cleared_over_garbage(JobObj::clear, |j: &JobObj| format!("{j:?}"));
        assert_eq!(got, format!("{:?}", Box::<JobObj>::default()));
        let got = cleared_over_garbage(StreamObj::clear, |s: &StreamObj| format!("{s:?}"));
        assert_eq!(got, format!("{:?}", Box::<StreamObj>::default()));
    }
}
