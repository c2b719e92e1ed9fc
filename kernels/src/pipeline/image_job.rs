//! The whole job in image mode ([`ImageJob`]): camera rows are warped
//! through the lens grid first, row by row, and the corrected rows go
//! through the same edge and line stages as in point mode.
//!
//! > **Not a safety function.** The drift warning is an aid for a vehicle
//! > that follows floor tape. It is not developed, assessed or certified
//! > as a safety function; a vehicle that can hurt people needs
//! > safety-rated sensing and control under the standards that apply to it
//! > (for example ISO 3691-4 for driverless industrial trucks, IEC 61508,
//! > ISO 13849) and local rules, with protective measures that do not
//! > depend on this software.
//!
//! Kernel id `pipeline.image_job`.
//!
//! # What a frame computes, bit for bit
//!
//! Source (camera) rows go into a [`GridStream`] over the caller's ring of
//! [`ControlGrid::band_rows`]`(1)` source rows; the stream makes output
//! strips of one row. Each corrected row is written by the stream straight
//! into the edge stage's row slot as soon as the source rows it reads are
//! in, and committed. When the frame ends the line stage runs on the edge
//! points as they are (the coordinates are already corrected). The result
//! is exactly what these kernels give when run one after another on the
//! whole frame (a property test checks it on random grids, frames and
//! sizes):
//!
//! 1. [`ControlGrid::warp_rows`] of the whole source frame with the
//!    configured [`Border`] (the integer model of [`crate::warp`]);
//! 2. [`PointJob`] on the corrected frame, finished without a correction
//!    grid (`finish(None)`): the edge stage, votes at the points' own
//!    positions ([`crate::lines::Accumulator::vote_row`] with the gate
//!    bytes), peaks, [`super::centre_line`], [`crate::marking::select`],
//!    the tracker. The job runs that very code: it owns a [`PointJob`]
//!    and feeds it the corrected rows, so both modes share one line
//!    stage.
//!
//! The vote frame is the grid's output frame; [`JobReport::outside`] is
//! always 0 (every point lies in the frame it votes in).
//!
//! # Memory (counted from the type)
//!
//! [`ImageJob::ram_bytes`] is `size_of::<Self>()`: the point-mode job
//! (its memory is documented on [`PointJob`]) and the stream's state. The
//! ring of source rows is the caller's (a `static`, or any buffer that
//! outlives the job): [`ImageJob::ring_bytes`] `= band_rows(1) *
//! src_width` bytes, from the grid. The grid itself is read only (flash).
//! For the demo lens (the host tool's demo camera, fit-to-view
//! undistortion to the same size, grid step 16, `F = 5`; host test
//! `demo_lens_band_rows`, `report.json` row `warp.grid_stream`) the ring
//! holds 19 rows at 320 x 240 and 35 rows at 640 x 480:
//!
//! | frame | type | `ram_bytes()` | ring | total |
//! |---|---|---|---|---|
//! | 320 x 240 | [`DemoImageJobQvga`] | 48 688 | 19 x 320 = 6 080 | 54 768 |
//! | 640 x 480 | [`DemoImageJobVga`] | 138 736 | 35 x 640 = 22 400 | 161 136 |
//!
//! The `ram_bytes()` column is `size_of` on a 64-bit host (checked by the
//! doc tests of the two types): the point-mode job's 48 496 and 138 544
//! bytes plus 192 bytes of stream state and frame height, of which the
//! words that hold sizes and references halve on a 32-bit core. The ring
//! rows come from the demo lens's grid (host test `demo_lens_band_rows`).
//!
//! # Bad input
//!
//! A row of the wrong length, a row past the source height, a frame ended
//! with too few rows, a ring that does not hold the band, a grid whose
//! output is wider or higher than the job's buffers or not the vote frame:
//! each is a typed error, and a rejected call leaves the job as it was.

use super::{ImageJob, JobReport, PointJob, PointJobConfig, EDGES_PER_FRAME};
use crate::error::{Error, Result};
use crate::filter::Border;
use crate::image::ImageViewMut;
use crate::lines::Peak;
use crate::marking::Candidate;
use crate::track::Tracker;
use crate::warp::{ControlGrid, GridStream};

/// Every setting of the image-mode job: the point-mode job's settings
/// (edge stage, votes, peaks, marking, tracker; its vote frame is the
/// grid's output frame) and the warp's border rule.
///
/// ```
/// use fixsight::pipeline::{ImageJobConfig, PointJobConfig};
/// let c = ImageJobConfig::DEMO_QVGA;
/// assert_eq!(c.job, PointJobConfig::DEMO_QVGA);
/// assert!(c.job.check().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ImageJobConfig {
    /// The stages after the warp ([`PointJobConfig`]).
    pub job: PointJobConfig,
    /// Source pixels outside the camera frame ([`Border`], the rule of
    /// [`crate::warp`]).
    pub border: Border,
}

impl ImageJobConfig {
    /// The demo configuration at 320 x 240: [`PointJobConfig::DEMO_QVGA`]
    /// and [`Border::Clamp`] (a clamped border adds no step at the frame's
    /// edge for the edge stage to find).
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// assert_eq!(fixsight::pipeline::ImageJobConfig::DEMO_QVGA.border, Border::Clamp);
    /// ```
    pub const DEMO_QVGA: ImageJobConfig = ImageJobConfig {
        job: PointJobConfig::DEMO_QVGA,
        border: Border::Clamp,
    };
}

/// The demo job at 320 x 240: [`super::DemoPointJobQvga`]'s stages behind
/// the warp.
///
/// ```
/// assert_eq!(fixsight::pipeline::DemoImageJobQvga::ram_bytes(), 48_688);
/// ```
pub type DemoImageJobQvga<'a> = ImageJob<
    'a,
    320,
    { super::map_words(320, 240) },
    { super::DEMO.bins_needed() },
    { super::DEMO_QVGA_CAP },
    32,
    201,
    8,
    4,
>;

/// The demo job at 640 x 480: [`super::DemoPointJobVga`]'s stages behind
/// the warp.
///
/// ```
/// assert_eq!(fixsight::pipeline::DemoImageJobVga::ram_bytes(), 138_736);
/// ```
pub type DemoImageJobVga<'a> = ImageJob<
    'a,
    640,
    { super::map_words(640, 480) },
    { super::DEMO.bins_needed() },
    { 4 * super::DEMO_QVGA_CAP },
    32,
    401,
    8,
    4,
>;

/// The warp of an [`ImageJob`]: idle until configured, then running,
/// with the camera rows per frame (the grid's source height, at most
/// [`crate::image::MAX_DIM`]).
///
/// `repr(u8)` with `Idle = 0` fixes the layout (The Rust Reference, "Type
/// layout", primitive representation of enums with fields: the `u8` tag
/// first, then each variant's fields in order as in a `repr(C)` struct), so
/// an idle warp is its zero tag whatever the bytes after it, and zero bytes
/// are a valid `ImageJob` (every other field admits zero). The C ABI sets
/// its storage to a fresh job that way, with [`ImageJob::clear`] and no job
/// on the stack (its build checks that zero bytes are valid). An `Option`
/// would put `None` in a niche of the stream's own fields, a value other
/// than zero. The height sits in the tag's padding: the job is no larger
/// than with an `Option` and a separate `usize`.
#[derive(Debug)]
#[repr(u8)]
pub(super) enum Warp<'a> {
    /// Not configured.
    Idle = 0,
    /// Configured.
    Running {
        /// Camera rows per frame.
        src_height: u16,
        /// The grid stream.
        stream: GridStream<'a, 'a>,
    },
}

impl<'a> Warp<'a> {
    fn as_ref(&self) -> Option<&GridStream<'a, 'a>> {
        match self {
            Warp::Idle => None,
            Warp::Running { stream, .. } => Some(stream),
        }
    }

    fn as_mut(&mut self) -> Option<&mut GridStream<'a, 'a>> {
        match self {
            Warp::Idle => None,
            Warp::Running { stream, .. } => Some(stream),
        }
    }

    /// Camera rows per frame; 0 when idle.
    fn src_height(&self) -> usize {
        match self {
            Warp::Idle => 0,
            Warp::Running { src_height, .. } => usize::from(*src_height),
        }
    }
}

impl<
        const W: usize,
        const MAP_WORDS: usize,
        const BINS: usize,
        const CAP: usize,
        const T: usize,
        const R: usize,
        const K: usize,
        const N: usize,
    > Default for ImageJob<'_, W, MAP_WORDS, BINS, CAP, T, R, K, N>
{
    fn default() -> Self {
        Self::new()
    }
}

impl<
        'a,
        const W: usize,
        const MAP_WORDS: usize,
        const BINS: usize,
        const CAP: usize,
        const T: usize,
        const R: usize,
        const K: usize,
        const N: usize,
    > ImageJob<'a, W, MAP_WORDS, BINS, CAP, T, R, K, N>
{
    /// An unconfigured job with zeroed buffers (`const`, for statics).
    ///
    /// ```
    /// use fixsight::pipeline::ImageJob;
    /// static _J: ImageJob<'static, 16, 16, 64, 32, 8, 9, 2, 2> = ImageJob::new();
    /// ```
    pub const fn new() -> Self {
        Self {
            warp: Warp::Idle,
            job: PointJob::new(),
        }
    }

    /// Back to the state [`ImageJob::new`] gives (unconfigured, the grid
    /// and the ring let go, every buffer zeroed), written field by field in
    /// place ([`PointJob::clear`]): no second job is built on the stack, as
    /// `*job = ImageJob::new()` may do.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
    /// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
    /// let grid = ControlGrid::new(&pts, geom, 4)?;
    /// let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid)?];
    /// let mut job: Box<DemoImageJobQvga> = Box::default();
    /// job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut ring)?;
    /// job.push_row(&[0; 320])?;
    /// job.clear();
    /// assert!(job.push_row(&[0; 320]).is_err()); // not configured any more
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn clear(&mut self) {
        // Every field by name (no `..`): a new field must be cleared here.
        let Self { warp, job } = self;
        *warp = Warp::Idle;
        job.clear();
    }

    /// Bytes of this type (`core::mem::size_of::<Self>()`): all the
    /// working memory but the caller's ring ([`ImageJob::ring_bytes`]).
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, DemoPointJobQvga};
    /// assert!(DemoImageJobQvga::ram_bytes() > DemoPointJobQvga::ram_bytes());
    /// // With the demo lens's ring of 19 rows of 320 bytes:
    /// assert_eq!(DemoImageJobQvga::ram_bytes() + 19 * 320, 54_768);
    /// ```
    pub const fn ram_bytes() -> usize {
        core::mem::size_of::<Self>()
    }

    /// Bytes of the ring of source rows `grid` needs: `band_rows(1) *
    /// src_width` ([`ControlGrid::band_rows`], one output row per strip).
    ///
    /// ```
    /// use fixsight::pipeline::DemoImageJobQvga;
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let geom = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// let grid = ControlGrid::new(&pts, geom, 2)?;
    /// assert_eq!(DemoImageJobQvga::ring_bytes(&grid)?, 2 * 8); // rows y and y + 1
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn ring_bytes(grid: &ControlGrid<'_>) -> Result<usize> {
        let rows = grid.band_rows(1)?;
        Ok(rows.saturating_mul(grid.geometry().src_width()))
    }

    /// Sets the configuration, the grid (camera frame = its source, vote
    /// frame = its output) and the caller's ring, checks that every buffer
    /// fits and starts afresh (as [`PointJob::configure`]: no track, frame
    /// number 0). Nothing changes when it fails.
    ///
    /// Errors: a vote frame other than the grid's output ->
    /// [`Error::SizeMismatch`]; a ring shorter than
    /// [`ImageJob::ring_bytes`] -> [`Error::BufferTooShort`] (as
    /// [`GridStream::new`]); as [`PointJob::configure`] for the output
    /// frame (wider than `W`, more pixels than `MAP_WORDS` holds, a bad
    /// configuration).
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// use fixsight::Error;
    /// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
    /// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
    /// let grid = ControlGrid::new(&pts, geom, 4)?;
    /// let mut job: Box<DemoImageJobQvga> = Box::default();
    /// let mut short = [0u8; 320];
    /// assert!(matches!(job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut short),
    ///                  Err(Error::BufferTooShort { .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn configure(
        &mut self,
        cfg: &ImageJobConfig,
        grid: ControlGrid<'a>,
        ring: &'a mut [u8],
    ) -> Result<()> {
        let g = grid.geometry();
        let out = (g.out_width(), g.out_height());
        let vote = (cfg.job.vote.width, cfg.job.vote.height);
        if vote != out {
            return Err(Error::SizeMismatch {
                what: "image job vote frame vs grid output",
                expected: out,
                got: vote,
            });
        }
        let src_height = u16::try_from(g.src_height()).map_err(|_| Error::TooLarge {
            width: g.src_width(),
            height: g.src_height(),
            limit: crate::image::MAX_DIM,
        })?;
        let warp = GridStream::new(grid, ring, 1, 1, cfg.border)?;
        self.job.configure(&cfg.job, out.0, out.1)?;
        self.warp = Warp::Running {
            src_height,
            stream: warp,
        };
        Ok(())
    }

    fn warp(&mut self) -> Result<&mut GridStream<'a, 'a>> {
        self.warp.as_mut().ok_or(Error::StreamOrder {
            reason: "image job used before configure",
        })
    }

    /// Source rows pushed in the frame in progress.
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert_eq!(j.rows_pushed(), 0);
    /// ```
    pub fn rows_pushed(&self) -> usize {
        self.warp.as_ref().map_or(0, |s| s.rows_pushed())
    }

    /// Corrected rows handed to the edge stage in the frame in progress.
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert_eq!(j.rows_out(), 0);
    /// ```
    pub fn rows_out(&self) -> usize {
        self.job.rows_pushed()
    }

    /// Pushes one camera row of 8-bit luma (`src_width` bytes exactly);
    /// every corrected row that becomes ready goes through the edge stage
    /// at once. Returns the source rows pushed so far.
    ///
    /// Errors (the job unchanged): not configured or every source row of
    /// the frame already in -> [`Error::StreamOrder`]; a wrong length ->
    /// [`Error::RowLength`].
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
    /// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
    /// let grid = ControlGrid::new(&pts, geom, 4)?;
    /// let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid)?];
    /// let mut job: Box<DemoImageJobQvga> = Box::default();
    /// job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut ring)?;
    /// assert!(job.push_row(&[0; 319]).is_err());
    /// assert_eq!(job.push_row(&[0; 320])?, 1);
    /// assert_eq!(job.push_row(&[0; 320])?, 2);
    /// assert_eq!(job.rows_out(), 1); // output row 0 reads source rows 0 and 1
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row(&mut self, row: &[u8]) -> Result<usize> {
        self.warp()?.push_row(row)?;
        self.drain()
    }

    /// The ring row the next camera row goes to
    /// ([`GridStream::row_slot`]): let the camera DMA write there, then
    /// call [`ImageJob::commit_row`].
    ///
    /// ```
    /// let mut j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.next_row_slot().is_err()); // not configured
    /// ```
    pub fn next_row_slot(&mut self) -> Result<&mut [u8]> {
        self.warp()?.row_slot()
    }

    /// Takes the row in the slot as the next camera row, then as
    /// [`ImageJob::push_row`]. Errors: as [`GridStream::commit_row`].
    ///
    /// ```
    /// let mut j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.commit_row().is_err()); // not configured
    /// ```
    pub fn commit_row(&mut self) -> Result<usize> {
        self.warp()?.commit_row()?;
        self.drain()
    }

    /// Moves every ready output row from the warp into the edge stage:
    /// the stream writes it straight into the stage's row slot. The
    /// configuration proved the output frame is the stage's frame, so the
    /// stage has room for every row the stream makes.
    fn drain(&mut self) -> Result<usize> {
        let Some(warp) = self.warp.as_mut() else {
            return Err(Error::StreamOrder {
                reason: "image job used before configure",
            });
        };
        while !warp.finished() {
            let slot = self.job.next_row_slot()?;
            let w = slot.len();
            let mut dst = ImageViewMut::new(slot, w, 1, w)?;
            if warp.next_strip_grey(&mut dst)?.is_none() {
                break;
            }
            self.job.commit_row()?;
        }
        Ok(warp.rows_pushed())
    }

    /// Ends a frame once every camera row is in and runs the line stage
    /// (votes without correction, peaks, marking, tracker; module docs).
    ///
    /// Errors (the job unchanged): fewer camera rows than the grid's
    /// source height -> [`Error::RowCount`]; not configured, or no frame
    /// in progress -> [`Error::StreamOrder`]. The tracker's errors (a
    /// frame number past `u32::MAX`) come after the frame was used.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// use fixsight::Error;
    /// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
    /// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
    /// let grid = ControlGrid::new(&pts, geom, 4)?;
    /// let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid)?];
    /// let mut job: Box<DemoImageJobQvga> = Box::default();
    /// job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut ring)?;
    /// for _ in 0..239 { job.push_row(&[90; 320])?; }
    /// assert!(matches!(job.finish(), Err(Error::RowCount { expected: 240, got: 239 })));
    /// job.push_row(&[90; 320])?;
    /// assert_eq!(job.finish()?.edges.height, 240);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish(&mut self) -> Result<JobReport> {
        let got = self.warp()?.rows_pushed();
        let expected = self.warp.src_height();
        if got < expected {
            return Err(Error::RowCount { expected, got });
        }
        let r = self.job.finish(None)?;
        self.warp()?.reset();
        Ok(r)
    }

    /// [`ImageJob::finish`] for a camera frame that ended early: the
    /// corrected rows made so far are the frame
    /// ([`PointJob::finish_short`]); the vote frame stays the declared
    /// one.
    ///
    /// Errors (the job unchanged): no corrected row was made yet (the
    /// first output row needs the first `band` camera rows) ->
    /// [`Error::StreamOrder`]; not configured.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
    /// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
    /// let grid = ControlGrid::new(&pts, geom, 4)?;
    /// let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid)?];
    /// let mut job: Box<DemoImageJobQvga> = Box::default();
    /// job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut ring)?;
    /// for _ in 0..100 { job.push_row(&[50; 320])?; }
    /// assert_eq!(job.finish_short()?.edges.height, 99);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish_short(&mut self) -> Result<JobReport> {
        self.warp()?;
        let r = self.job.finish_short(None)?;
        self.warp()?.reset();
        Ok(r)
    }

    /// Drops the frame in progress and counts it as a frame without a
    /// measurement ([`PointJob::drop_frame`]: the tracks coast through it).
    ///
    /// ```
    /// let mut j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// j.drop_frame(); // nothing to drop before configure
    /// assert_eq!(j.rows_pushed(), 0);
    /// ```
    pub fn drop_frame(&mut self) {
        if let Some(s) = self.warp.as_mut() {
            s.reset();
            self.job.drop_frame();
        }
    }

    /// Starts over with the same configuration, grid and ring
    /// ([`PointJob::reset`]: the frame in progress dropped, every track
    /// forgotten, frame numbers from 0).
    ///
    /// ```
    /// let mut j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// j.reset();
    /// assert!(j.report().is_none());
    /// ```
    pub fn reset(&mut self) {
        if let Some(s) = self.warp.as_mut() {
            s.reset();
            self.job.reset();
        }
    }

    /// The report of the last finished frame.
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.report().is_none());
    /// ```
    pub fn report(&self) -> Option<JobReport> {
        self.job.report()
    }

    /// The peaks of the last finished frame ([`PointJob::peaks`]).
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.peaks().is_empty());
    /// ```
    pub fn peaks(&self) -> &[Peak] {
        self.job.peaks()
    }

    /// The peaks' lines about the image centre ([`PointJob::lines`]).
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.lines().is_empty());
    /// ```
    pub fn lines(&self) -> &[Candidate] {
        self.job.lines()
    }

    /// The tracker; `None` before [`ImageJob::configure`].
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.tracker().is_none());
    /// ```
    pub fn tracker(&self) -> Option<&Tracker<N, EDGES_PER_FRAME>> {
        self.job.tracker()
    }

    /// The stages after the warp: the point-mode job the corrected rows
    /// go through (its edge stage, peaks, lines and tracker).
    ///
    /// ```
    /// let j = fixsight::pipeline::ImageJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.line_stage().edge_stage().report().is_none());
    /// ```
    pub fn line_stage(&self) -> &PointJob<W, MAP_WORDS, BINS, CAP, T, R, K, N> {
        &self.job
    }
}

#[cfg(test)]
mod tests {
    //! The job against the kernels it composes, run one after another on
    //! whole frames.
    extern crate std;
    use super::*;
    use crate::pipeline::point_job::tests::frame;
    use crate::pipeline::{map_words, EdgeConfig, ThresholdRule, DEMO};
    use crate::warp::WarpGeometry;
    use crate::ImageView;
    use proptest::prelude::*;
    use std::boxed::Box;
    use std::vec;
    use std::vec::Vec;

    const TW: usize = 40;
    const TH: usize = 30;
    type Job<'a> =
        ImageJob<'a, TW, { map_words(TW, TH) }, { DEMO.bins_needed() }, 96, 128, 61, 6, 4>;
    type Plain = PointJob<TW, { map_words(TW, TH) }, { DEMO.bins_needed() }, 96, 128, 61, 6, 4>;

    /// Grid points for an `ow x oh` output over an `sw x sh` source (F =
    /// 4): the scaling between the two sizes, each point moved by up to
    /// `amp / 16` px (a lens-like bend when `bend`).
    #[allow(clippy::too_many_arguments)]
    fn grid_points(
        ow: usize,
        oh: usize,
        sw: usize,
        sh: usize,
        k: u32,
        seed: u64,
        amp: i32,
        bend: bool,
    ) -> (WarpGeometry, Vec<i32>) {
        let geom = WarpGeometry::new(ow, oh, sw, sh, 4).unwrap();
        let (cols, rows) = ControlGrid::grid_size(&geom, k).unwrap();
        let mut s = seed | 1;
        let mut pts = Vec::new();
        for j in 0..rows {
            for i in 0..cols {
                let (ox, oy) = ((i << k) as i64, (j << k) as i64);
                let bx = ox * 16 * sw as i64 / ow as i64;
                let by = oy * 16 * sh as i64 / oh as i64;
                // Barrel-like: points away from the centre pulled outwards.
                let (dx, dy) = if bend {
                    (
                        (ox - ow as i64 / 2) * (oy - oh as i64 / 2).abs() / 8,
                        (oy - oh as i64 / 2) * (ox - ow as i64 / 2).abs() / 8,
                    )
                } else {
                    (0, 0)
                };
                for (base, d, n_src) in [(bx, dx, sw as i64), (by, dy, sh as i64)] {
                    s = s.wrapping_mul(6364136223846793005).wrapping_add(1);
                    let n = ((s >> 40) % (2 * amp as u64 + 1)) as i64 - amp as i64;
                    // Into the accepted range (points past a small
                    // output's edge would scale out of it).
                    let v = (base + d + n).clamp(-16 * n_src, 16 * (2 * n_src - 1));
                    pts.push(v as i32);
                }
            }
        }
        (geom, pts)
    }

    fn config(fixed: bool, gate: bool, w: usize, h: usize, border: Border) -> ImageJobConfig {
        let edges = if fixed {
            EdgeConfig {
                thresholds: ThresholdRule::Fixed { low: 20, high: 60 },
                ..DEMO
            }
        } else {
            DEMO
        };
        let mut job = PointJobConfig {
            edges,
            ..PointJobConfig::DEMO_QVGA
        };
        job.vote.width = w;
        job.vote.height = h;
        job.vote.rho_bins = 61;
        job.vote.theta_bins = 64;
        job.vote.theta_step_log2 = 10;
        job.peaks.threshold = 8;
        if !gate {
            job.vote.gate = None;
        }
        ImageJobConfig { job, border }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// Frame after frame: the job equals the whole-frame warp, then
        /// the point-mode job (edge stage and line stage, no grid) on the
        /// corrected frame.
        #[test]
        fn job_equals_the_whole_frame_kernels_composed(
            ow in 1usize..=TW, oh in 1usize..=TH, sw in 1usize..=TW + 8, sh in 1usize..=TH + 8,
            k in 2u32..=4, amp in 0i32..24, bend in any::<bool>(), fixed in any::<bool>(),
            gate in any::<bool>(), fill in any::<bool>(),
            seeds in proptest::collection::vec(any::<u64>(), 1..4), short in 0usize..TH + 8,
        ) {
            let (geom, pts) = grid_points(ow, oh, sw, sh, k, seeds[0], amp, bend);
            let grid = ControlGrid::new(&pts, geom, k).unwrap();
            let border = if fill { Border::Fill(17) } else { Border::Clamp };
            let cfg = config(fixed, gate, ow, oh, border);
            let mut ring = vec![0u8; Job::ring_bytes(&grid).unwrap()];
            let mut job: Box<Job> = Box::default();
            job.configure(&cfg, grid, &mut ring).unwrap();
            let mut plain: Box<Plain> = Box::default();
            plain.configure(&cfg.job, ow, oh).unwrap();
            for (f, &sd) in seeds.iter().enumerate() {
                let img = frame(sd, sw, sh);
                let mut out = vec![0u8; ow * oh];
                grid.warp_rows(
                    &ImageView::new(&img, sw, sh, sw).unwrap(),
                    &mut ImageViewMut::new(&mut out, ow, oh, ow).unwrap(),
                    0,
                    border,
                ).unwrap();
                // The last frame of a case may end early.
                let rows = if f + 1 == seeds.len() && short > 0 { short.min(sh) } else { sh };
                for r in img.chunks_exact(sw).take(rows) {
                    job.push_row(r).unwrap();
                }
                let made = job.rows_out();
                let got = if rows < sh {
                    let row_count = matches!(job.finish(), Err(Error::RowCount { .. }));
                    prop_assert!(row_count);
                    if made == 0 {
                        prop_assert!(job.finish_short().is_err());
                        job.drop_frame();
                        plain.drop_frame();
                        continue;
                    }
                    job.finish_short().unwrap()
                } else {
                    prop_assert_eq!(made, oh);
                    job.finish().unwrap()
                };
                for r in out.chunks_exact(ow).take(made) {
                    plain.push_row(r).unwrap();
                }
                let want = if made < oh {
                    plain.finish_short(None).unwrap()
                } else {
                    plain.finish(None).unwrap()
                };
                prop_assert_eq!(got, want);
                prop_assert_eq!(got.outside, 0);
                prop_assert_eq!(job.peaks(), plain.peaks());
                prop_assert_eq!(job.lines(), plain.lines());
                let (a, b) = (job.tracker().unwrap(), plain.tracker().unwrap());
                for i in 0..4 {
                    prop_assert_eq!(a.slot(i), b.slot(i));
                }
                prop_assert_eq!(job.report(), Some(want));
            }
        }

        /// Rows between good ones that are refused (wrong length, one too
        /// many, an early finish) change nothing; the DMA path is the
        /// push path.
        #[test]
        fn refused_rows_change_nothing(
            seed in any::<u64>(), bad in proptest::collection::vec((0usize..4, 0usize..60), 1..10),
        ) {
            let (geom, pts) = grid_points(TW, TH, TW, TH, 3, seed, 12, true);
            let grid = ControlGrid::new(&pts, geom, 3).unwrap();
            let cfg = config(false, true, TW, TH, Border::Clamp);
            let (mut ra, mut rb) = (vec![0u8; TW * TH], vec![0u8; TW * TH]);
            let (mut a, mut b): (Box<Job>, Box<Job>) = (Box::default(), Box::default());
            a.configure(&cfg, grid, &mut ra).unwrap();
            b.configure(&cfg, grid, &mut rb).unwrap();
            let img = frame(seed, TW, TH);
            let mut bad = bad.into_iter();
            for r in img.chunks_exact(TW) {
                if let Some((kind, len)) = bad.next() {
                    let before = (b.rows_pushed(), b.rows_out());
                    let refused = match kind {
                        0 => b.push_row(&vec![1u8; if len == TW { TW + 1 } else { len }]).is_err(),
                        1 => b.finish().is_err(),
                        2 => b.finish().is_err_and(|e| matches!(e, Error::RowCount { expected: TH, .. })),
                        _ => b.push_row(&[]).is_err(),
                    };
                    prop_assert!(refused);
                    prop_assert_eq!((b.rows_pushed(), b.rows_out()), before);
                }
                a.push_row(r).unwrap();
                b.next_row_slot().unwrap().copy_from_slice(r);
                b.commit_row().unwrap();
            }
            prop_assert!(b.push_row(&img[..TW]).is_err());
            prop_assert!(b.commit_row().is_err());
            prop_assert_eq!(a.finish().unwrap(), b.finish().unwrap());
            prop_assert_eq!(a.peaks(), b.peaks());
        }
    }

    #[test]
    fn bad_configurations_are_typed_errors() {
        let (geom, pts) = grid_points(TW, TH, TW, TH, 3, 5, 8, true);
        let grid = ControlGrid::new(&pts, geom, 3).unwrap();
        let band = grid.band_rows(1).unwrap();
        let cfg = config(false, true, TW, TH, Border::Clamp);
        // A failed configure keeps its ring borrowed for the job's life:
        // one ring per attempt, all made before the job.
        let mut short = vec![0u8; (band - 1) * TW];
        let (mut ring, mut ring1, mut ring2) = (
            vec![0u8; band * TW],
            vec![0u8; band * TW],
            vec![0u8; TW * TH],
        );
        let mut job: Box<Job> = Box::default();
        // Unconfigured.
        assert!(matches!(
            job.push_row(&[0; TW]),
            Err(Error::StreamOrder { .. })
        ));
        assert!(matches!(job.finish(), Err(Error::StreamOrder { .. })));
        assert!(matches!(job.finish_short(), Err(Error::StreamOrder { .. })));
        // A ring one row short of the band.
        assert!(matches!(
            job.configure(&cfg, grid, &mut short),
            Err(Error::BufferTooShort { .. })
        ));
        // A vote frame other than the grid's output.
        let wrong = config(false, true, TW - 1, TH, Border::Clamp);
        assert!(matches!(
            job.configure(&wrong, grid, &mut ring1),
            Err(Error::SizeMismatch { .. })
        ));
        // An output frame wider than the job's buffers.
        let (g2, p2) = grid_points(TW + 1, TH, TW, TH, 3, 5, 0, false);
        let wide = ControlGrid::new(&p2, g2, 3).unwrap();
        assert!(matches!(
            job.configure(
                &config(false, true, TW + 1, TH, Border::Clamp),
                wide,
                &mut ring2
            ),
            Err(Error::BufferTooShort { .. })
        ));
        assert!(job.report().is_none() && job.tracker().is_none());
        // Configured: lengths, too many rows, too few rows.
        job.configure(&cfg, grid, &mut ring).unwrap();
        assert!(matches!(
            job.push_row(&[0; TW - 1]),
            Err(Error::RowLength {
                expected: TW,
                got: 39,
                ..
            })
        ));
        assert!(matches!(job.finish_short(), Err(Error::StreamOrder { .. })));
        for _ in 0..TH {
            job.push_row(&[9; TW]).unwrap();
        }
        assert!(matches!(
            job.push_row(&[9; TW]),
            Err(Error::StreamOrder { .. })
        ));
        assert_eq!(job.finish().unwrap().frame, 0);
        assert!(matches!(
            job.finish(),
            Err(Error::RowCount {
                expected: TH,
                got: 0
            })
        ));
        // Dropped and reset frames number as the point-mode job does.
        job.push_row(&[9; TW]).unwrap();
        job.drop_frame();
        for _ in 0..TH {
            job.push_row(&[9; TW]).unwrap();
        }
        assert_eq!(job.finish().unwrap().frame, 2);
        job.reset();
        for _ in 0..TH {
            job.push_row(&[9; TW]).unwrap();
        }
        assert_eq!(job.finish().unwrap().frame, 0);
        assert_eq!(job.line_stage().report(), job.report());
    }

    /// A job after a few frames, cleared: the one `new` makes, field for
    /// field (the point job's own fields: `clear_gives_a_new_job` of the
    /// point job), with the grid and ring let go.
    #[test]
    fn clear_gives_a_new_job() {
        use std::format;
        let (geom, pts) = grid_points(TW, TH, TW + 4, TH + 2, 3, 7, 10, true);
        let grid = ControlGrid::new(&pts, geom, 3).unwrap();
        let cfg = config(false, true, TW, TH, Border::Clamp);
        let mut ring = vec![0u8; Job::ring_bytes(&grid).unwrap()];
        let fresh = format!("{:?}", Job::new());
        let mut job: Box<Job> = Box::default();
        job.configure(&cfg, grid, &mut ring).unwrap();
        for seed in 1..3 {
            for r in frame(seed, TW + 4, TH + 2).chunks_exact(TW + 4) {
                job.push_row(r).unwrap();
            }
            job.finish().unwrap();
        }
        assert!(matches!(job.warp, Warp::Running { src_height: 32, .. }));
        job.clear();
        assert!(matches!(job.warp, Warp::Idle));
        assert_eq!(format!("{job:?}"), fresh);
        assert!(matches!(job.finish(), Err(Error::StreamOrder { .. })));
    }
}
