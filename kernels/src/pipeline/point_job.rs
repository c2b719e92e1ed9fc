//! The whole job in point mode ([`PointJob`]): its configuration, its
//! frame report and its rules. The rules are documented on [`PointJob`].

use core::num::NonZeroU32;

use super::{EdgeStream, FrameReport, PointJob, Stepped, DEMO};
use crate::arith::round_shift;
use crate::error::{Error, Result};
use crate::gradient;
use crate::hysteresis::NONE;
use crate::lines::{Accumulator, Line, Peak, PeakParams, VoteParams};
use crate::marking::{self, sin_cos_q15, Candidate, Marking, MarkingConfig, Polarity};
use crate::ops::{tally, Op};
use crate::track::{self, Detection, TrackConfig, Tracker, RHO_LIMIT_Q4};
use crate::warp::ControlGrid;

/// Every setting of the point-mode job, composed of the settings of its
/// stages (nothing is repeated: each stage reads its own part).
///
/// ```
/// use fixsight::pipeline::{PointJobConfig, DEMO};
/// let c = PointJobConfig::DEMO_QVGA;
/// assert_eq!(c.edges, DEMO);
/// assert!(c.check().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PointJobConfig {
    /// The edge stage ([`super::EdgeConfig`]).
    pub edges: super::EdgeConfig,
    /// Line voting ([`VoteParams`]); its frame is the corrected view.
    /// Point mode casts unit votes (`weight_shift` must be `None`).
    pub vote: VoteParams,
    /// Peak selection ([`PeakParams`]).
    pub peaks: PeakParams,
    /// Marking selection ([`MarkingConfig`]).
    pub marking: MarkingConfig,
    /// Tracker and drift warning ([`TrackConfig`]).
    pub track: TrackConfig,
}

impl PointJobConfig {
    /// The demo configuration at 320 x 240: the demo constants of every
    /// stage ([`DEMO`], [`VoteParams::DEMO_QVGA`], [`PeakParams::DEMO`],
    /// [`MarkingConfig::DEMO`], [`TrackConfig::DEMO`]). The host tool's
    /// report, the golden vectors and the on-target harness all use this
    /// constant.
    ///
    /// ```
    /// use fixsight::pipeline::PointJobConfig;
    /// assert_eq!(PointJobConfig::DEMO_QVGA.vote.width, 320);
    /// ```
    pub const DEMO_QVGA: PointJobConfig = PointJobConfig {
        edges: DEMO,
        vote: VoteParams::DEMO_QVGA,
        peaks: PeakParams::DEMO,
        marking: MarkingConfig::DEMO,
        track: TrackConfig::DEMO,
    };

    /// The candidate budget a job with `cap` gate bytes gives its edge
    /// stage ([`EdgeStream::set_candidate_budget`]): `cap` when the votes
    /// are gated, none when they are not (nothing is kept per candidate)
    /// or `cap` is 0. [`PointJob::configure`] applies it; a composition of
    /// the kernels that should equal the job applies the same.
    ///
    /// ```
    /// use fixsight::pipeline::PointJobConfig;
    /// let mut c = PointJobConfig::DEMO_QVGA;
    /// assert_eq!(c.candidate_budget(4096).map(|b| b.get()), Some(4096));
    /// c.vote.gate = None;
    /// assert_eq!(c.candidate_budget(4096), None);
    /// ```
    pub fn candidate_budget(&self, cap: usize) -> Option<NonZeroU32> {
        self.vote
            .gate
            .and(NonZeroU32::new(u32::try_from(cap).unwrap_or(u32::MAX)))
    }

    /// Checks every stage's settings and what point mode adds: unit votes
    /// (`vote.weight_shift` `None`), a gate code that fits a byte
    /// (`vote.theta_step_log2 >= 9` when the votes are gated, see
    /// [`VoteParams::gate_code`]), peak settings that pass
    /// [`PeakParams::check`].
    ///
    /// ```
    /// use fixsight::pipeline::PointJobConfig;
    /// let mut c = PointJobConfig::DEMO_QVGA;
    /// c.vote.weight_shift = Some(2);
    /// assert!(c.check().is_err());
    /// ```
    pub fn check(&self) -> Result<()> {
        self.edges.check()?;
        self.vote.check()?;
        self.track.validate()?;
        if let Some(k) = self.vote.weight_shift {
            return Err(Error::BadParameter {
                name: "vote.weight_shift",
                expected: "None (point mode casts unit votes)",
                got: k as i64,
            });
        }
        if self.vote.gate.is_some() && self.vote.theta_step_log2 < 9 {
            return Err(Error::BadParameter {
                name: "vote.theta_step_log2",
                expected: "9..=14 when the votes are gated (one gate byte per candidate)",
                got: self.vote.theta_step_log2 as i64,
            });
        }
        self.peaks.check(&self.vote)
    }
}

/// What one frame of the job gave ([`PointJob::finish`]).
///
/// ```
/// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
/// let mut job: Box<DemoPointJobQvga> = Box::default();
/// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
/// for _ in 0..240 { job.push_row(&[90u8; 320])?; }
/// let r = job.finish(None)?;
/// assert_eq!((r.frame, r.peaks, r.voted), (0, 0, 0)); // a flat frame has no edge
/// assert!(r.marking.found().is_none() && r.track.warning.is_none());
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct JobReport {
    /// Frame number given to the tracker (counts finished and dropped
    /// frames since [`PointJob::configure`] or [`PointJob::reset`]).
    pub frame: u32,
    /// The edge stage's report. The gate bytes stand for the point
    /// gradients: with gated votes `gradients_dropped` counts the
    /// candidates whose gate byte was not kept (past the `CAP`-th), as an
    /// [`EdgeStream`] with `CAP` point gradients would; without a gate it
    /// counts every candidate (nothing is kept).
    pub edges: FrameReport,
    /// Edge points that cast votes.
    pub voted: u32,
    /// Edge points whose corrected position fell outside the vote frame
    /// (no vote; ungated points are not corrected, so not counted here).
    pub outside: u32,
    /// Edge points whose candidate came after the first `CAP` of the frame
    /// when the votes are gated: no gate byte was kept, no vote. When it is
    /// not 0 the frame's vote is incomplete: its peaks, lines and marking
    /// are reported, but the tracker gets no detection (every track
    /// coasts), so a partial vote never moves or starts a track.
    pub ungated: u32,
    /// Peaks found (at most `K`), in [`PointJob::peaks`] and
    /// [`PointJob::lines`].
    pub peaks: u8,
    /// The marking selected from the lines.
    pub marking: Marking,
    /// The tracker's report, with the drift warning. **Not a safety
    /// function** (see [`PointJob`]).
    pub track: track::FrameReport,
}

/// Number of detections the job hands the tracker per frame: the two
/// tape edges.
pub const EDGES_PER_FRAME: usize = 2;

/// The frame rule of a job in point mode: a correction grid maps the
/// raw frame (`raw`, its output) to the vote frame (`vote.width x
/// vote.height`, its source); without a grid the two frames are one.
///
/// Errors: [`Error::SizeMismatch`] naming the pair that differs.
///
/// ```
/// use fixsight::lines::VoteParams;
/// use fixsight::pipeline::check_frames;
/// let vote = VoteParams::DEMO_QVGA; // 320 x 240
/// assert!(check_frames(None, (320, 240), &vote).is_ok());
/// assert!(check_frames(None, (640, 480), &vote).is_err());
/// ```
pub fn check_frames(
    grid: Option<&ControlGrid<'_>>,
    raw: (usize, usize),
    vote: &VoteParams,
) -> Result<()> {
    let want = (vote.width, vote.height);
    let (what, expected, got) = match grid {
        Some(g) => {
            let geo = g.geometry();
            let out = (geo.out_width(), geo.out_height());
            if out != raw {
                ("correction grid output vs raw frame", raw, out)
            } else {
                (
                    "correction grid source vs vote frame",
                    want,
                    (geo.src_width(), geo.src_height()),
                )
            }
        }
        None => ("vote frame vs raw frame (no correction grid)", raw, want),
    };
    if expected != got {
        return Err(Error::SizeMismatch {
            what,
            expected,
            got,
        });
    }
    Ok(())
}

/// A line of the vote frame (origin at pixel `(W >> 1, H >> 1)`, the rule
/// of [`crate::lines`]) moved to the image-centre origin `((W - 1) / 2,
/// (H - 1) / 2)` of [`crate::marking`] and [`crate::track`]: with `dx =
/// 16 (W >> 1) - 8 (W - 1)` and `dy` alike (8 for an even size, 0 for an
/// odd one, Q4) and `(sin, cos)` of [`sin_cos_q15`], `rho' = rho +
/// round_shift(dx cos + dy sin, 15)`; `theta` and the votes stay.
///
/// ```
/// use fixsight::lines::Line;
/// use fixsight::pipeline::centre_line;
/// // A vertical line 3 px left of pixel 160 is 2.5 px left of 159.5.
/// let l = Line { rho: -48, theta: 0, votes: 70 };
/// assert_eq!(centre_line(&l, 320, 240).rho_q4, -40);
/// ```
pub fn centre_line(l: &Line, width: usize, height: usize) -> Candidate {
    let half = |n: usize| -> i32 { (16 * (n >> 1)) as i32 - (8 * n.saturating_sub(1)) as i32 };
    let (s, c) = sin_cos_q15(l.theta);
    let shift = round_shift(half(width) * c + half(height) * s, 15);
    tally(Op::Mul, 2);
    tally(Op::AddSub, 3);
    tally(Op::Shift, 1);
    Candidate {
        rho_q4: l.rho.saturating_add(shift),
        theta: l.theta,
        votes: l.votes as u32,
        polarity: Polarity::Unknown,
    }
}

/// What the line stages of a frame gave ([`line_stages`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LineOutcome {
    /// Peaks found (the first `found` entries of the peak and line slices).
    pub found: usize,
    /// The marking selected from the lines.
    pub marking: Marking,
    /// The tracker's report, with the drift warning. **Not a safety
    /// function** (see [`PointJob`]).
    pub track: track::FrameReport,
}

/// Steps 3 to 6 of [`PointJob`] on an accumulator that holds a frame's
/// votes: the peaks of `acc` (`cfg.peaks`, at most `peaks.len()`) into
/// `peaks`, their lines about the image centre ([`centre_line`] in the
/// vote frame `cfg.vote`) into `lines`, the marking
/// ([`crate::marking::select`] with `cfg.marking`), and the tracker updated
/// for frame `frame` with the tape's two edges ([`tape_detections`]), or
/// with none when `complete` is false (a vote that missed edge points is
/// reported but not tracked: every track coasts). A job with another edge
/// stage composes its frame from the same steps; [`PointJob`] calls this.
///
/// Errors: `peaks` empty or `lines` shorter than `peaks` ->
/// [`Error::BufferTooShort`]; as [`crate::lines::Accumulator::peaks`] and
/// [`Tracker::update`] (a frame number not above the last one).
///
/// ```
/// use fixsight::lines::{Peak, VoteStore};
/// use fixsight::marking::Candidate;
/// use fixsight::pipeline::{line_stages, PointJobConfig, EDGES_PER_FRAME};
/// use fixsight::track::Tracker;
/// let cfg = PointJobConfig::DEMO_QVGA;
/// let mut store = VoteStore::<32, 201>::new();
/// let acc = store.accumulator(cfg.vote)?;              // no votes
/// let mut tracker = Tracker::<4, EDGES_PER_FRAME>::new(cfg.track)?;
/// let (mut peaks, mut lines) = ([Peak::default(); 8], [Candidate::default(); 8]);
/// let out = line_stages(&acc, &cfg, &mut peaks, &mut lines, &mut tracker, 0, true)?;
/// assert_eq!(out.found, 0);
/// assert!(out.marking.found().is_none());
/// assert!(line_stages(&acc, &cfg, &mut peaks, &mut lines[..2], &mut tracker, 1, true).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn line_stages<const N: usize>(
    acc: &Accumulator<'_>,
    cfg: &PointJobConfig,
    peaks: &mut [Peak],
    lines: &mut [Candidate],
    tracker: &mut Tracker<N, EDGES_PER_FRAME>,
    frame: u32,
    complete: bool,
) -> Result<LineOutcome> {
    if lines.len() < peaks.len() {
        return Err(Error::BufferTooShort {
            what: "line stages' lines (one per peak slot)",
            needed: peaks.len(),
            got: lines.len(),
        });
    }
    let found = acc.peaks(&cfg.peaks, peaks)?;
    let (vw, vh) = (cfg.vote.width, cfg.vote.height);
    for (c, pk) in lines.iter_mut().zip(&peaks[..found]) {
        *c = centre_line(&pk.line, vw, vh);
    }
    let lines = &lines[..found];
    let marking = marking::select(lines, &cfg.marking);
    let (dets, n) = tape_detections(&marking, lines);
    let n = if complete { n } else { 0 };
    let track = tracker.update(frame, &dets[..n])?;
    Ok(LineOutcome {
        found,
        marking,
        track,
    })
}

/// The tracker's detections of a frame (rule 6 of [`PointJob`]): the
/// found tape's left then right edge, `(rho, theta, votes)` of `lines`, in
/// that order; none when no tape was found. An edge with `|rho| >=`
/// [`RHO_LIMIT_Q4`] (the tracker's range; a line of points inside a frame
/// of at most 4096 px never has one) is left out. Returns the array and
/// how many of it are used.
///
/// ```
/// use fixsight::marking::{Candidate, Marking, Polarity, TapeEdges};
/// use fixsight::pipeline::tape_detections;
/// let c = |rho_q4| Candidate { rho_q4, theta: 0, votes: 50, polarity: Polarity::Unknown };
/// let t = TapeEdges { left: 1, right: 0, near_x_q4: [0, 0], far_x_q4: [0, 0], votes: 100 };
/// let (d, n) = tape_detections(&Marking::Found(t), &[c(80), c(-80)]);
/// assert_eq!((n, d[0].rho_q4, d[1].rho_q4), (2, -80, 80));
/// ```
pub fn tape_detections(m: &Marking, lines: &[Candidate]) -> ([Detection; EDGES_PER_FRAME], usize) {
    let mut dets = [Detection::default(); EDGES_PER_FRAME];
    let mut n = 0;
    if let Marking::Found(t) = m {
        for i in [t.left, t.right] {
            if let Some(c) = lines.get(i) {
                if c.rho_q4.unsigned_abs() < RHO_LIMIT_Q4 as u32 {
                    dets[n] = Detection {
                        rho_q4: c.rho_q4,
                        theta: c.theta,
                        weight: c.votes,
                    };
                    n += 1;
                }
            }
        }
    }
    (dets, n)
}

/// A peak slot of a fresh job.
const EMPTY: Peak = Peak {
    theta_bin: 0,
    rho_bin: 0,
    votes: 0,
    line: Line {
        rho: 0,
        theta: 0,
        votes: 0,
    },
};

/// A line slot of a fresh job.
/// The job's configuration before [`PointJob::configure`]: every field
/// zero (not a valid configuration, never used), so that a job in a
/// `static` is all zero bytes and takes no initial image in flash.
const UNSET_CONFIG: PointJobConfig = PointJobConfig {
    edges: super::UNSET,
    vote: VoteParams {
        width: 0,
        height: 0,
        theta_start: 0,
        theta_step_log2: 0,
        theta_bins: 0,
        rho_step_log2: 0,
        rho_bins: 0,
        trig_frac_bits: 0,
        gate: None,
        weight_shift: None,
    },
    peaks: PeakParams {
        threshold: 0,
        radius_theta: 0,
        radius_rho: 0,
    },
    marking: MarkingConfig::UNSET,
    track: TrackConfig::UNSET,
};

/// The stored report before the first finished frame (never returned:
/// [`PointJob::report`] reads `reported`). Zero bytes; the marking is
/// the zero `Found` value only because that variant has no niche to
/// spare, not because anything was found.
const NO_REPORT: JobReport = JobReport {
    frame: 0,
    edges: super::NO_FRAME,
    voted: 0,
    outside: 0,
    ungated: 0,
    peaks: 0,
    marking: Marking::Found(marking::TapeEdges {
        left: 0,
        right: 0,
        near_x_q4: [0; 2],
        far_x_q4: [0; 2],
        votes: 0,
    }),
    track: track::FrameReport {
        associated: 0,
        born: 0,
        dropped: 0,
        warning: None,
    },
};

const NO_LINE: Candidate = Candidate {
    rho_q4: 0,
    theta: 0,
    votes: 0,
    polarity: Polarity::Unknown,
};

impl<
        const W: usize,
        const MAP_WORDS: usize,
        const BINS: usize,
        const CAP: usize,
        const T: usize,
        const R: usize,
        const K: usize,
        const N: usize,
    > Default for PointJob<W, MAP_WORDS, BINS, CAP, T, R, K, N>
{
    fn default() -> Self {
        Self::new()
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
    > PointJob<W, MAP_WORDS, BINS, CAP, T, R, K, N>
{
    /// An unconfigured job with zeroed buffers (`const`, for statics).
    ///
    /// ```
    /// use fixsight::pipeline::PointJob;
    /// static _J: PointJob<16, 16, 64, 32, 8, 9, 2, 2> = PointJob::new();
    /// ```
    pub const fn new() -> Self {
        Self {
            cfg: UNSET_CONFIG,
            configured: false,
            stream: EdgeStream::new(),
            held: [[0; 2]; W],
            codes: [0; CAP],
            coded: 0,
            votes: crate::lines::VoteStore::new(),
            peaks: [EMPTY; K],
            lines: [NO_LINE; K],
            found: 0,
            tracker: Tracker::UNSET,
            frame: 0,
            report: NO_REPORT,
            reported: false,
        }
    }

    /// Back to the state [`PointJob::new`] gives (unconfigured, every
    /// buffer zeroed), written field by field in place
    /// ([`EdgeStream::clear`] for the edge stage). `*job = PointJob::new()`
    /// may build the whole new job on the stack first and copy it (tens
    /// of kilobytes for the QVGA job); this never holds more than one
    /// field's worth of temporary. For a job that lives in a `static` or
    /// in memory a C caller owns.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// job.push_row(&[0; 320])?;
    /// job.clear();
    /// assert!(job.tracker().is_none());
    /// assert!(job.push_row(&[0; 320]).is_err()); // not configured any more
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn clear(&mut self) {
        // Every field by name (no `..`): a new field must be cleared here.
        let Self {
            cfg,
            configured,
            stream,
            held,
            codes,
            coded,
            votes,
            peaks,
            lines,
            found,
            tracker,
            frame,
            report,
            reported,
        } = self;
        *cfg = UNSET_CONFIG;
        *configured = false;
        stream.clear();
        held.as_flattened_mut().fill(0);
        codes.fill(0);
        (*coded, *found, *frame) = (0, 0, 0);
        *votes = crate::lines::VoteStore::new();
        peaks.fill(EMPTY);
        lines.fill(NO_LINE);
        tracker.unset();
        *report = NO_REPORT;
        *reported = false;
    }

    /// Bytes of this type: all the working memory of the job
    /// (`core::mem::size_of::<Self>()`). The correction grid is not in it:
    /// it is read only and can stay in flash.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, DemoPointJobVga};
    /// assert!(DemoPointJobQvga::ram_bytes() <= 48 * 1024);
    /// assert_eq!(DemoPointJobQvga::ram_bytes(), 48_496);
    /// assert_eq!(DemoPointJobVga::ram_bytes(), 138_544);
    /// ```
    pub const fn ram_bytes() -> usize {
        core::mem::size_of::<Self>()
    }

    /// Sets the configuration and the raw frame size, checks that every
    /// buffer fits and starts afresh: the edge stream as
    /// [`EdgeStream::configure`], no track, frame number 0. Nothing changes
    /// when it fails.
    ///
    /// Errors: a bad configuration ([`PointJobConfig::check`]); as
    /// [`EdgeStream::configure`]; `T < vote.theta_bins`, `T * R <
    /// vote.cells()` or `K = 0` -> [`Error::BufferTooShort`]; `N` outside
    /// `1..=255` -> [`Error::BadParameter`].
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// assert!(job.configure(&PointJobConfig::DEMO_QVGA, 321, 240).is_err()); // wider than W
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn configure(&mut self, cfg: &PointJobConfig, width: usize, height: usize) -> Result<()> {
        cfg.check()?;
        for (what, needed, got) in [
            ("point job vote columns (T)", cfg.vote.theta_bins, T),
            (
                "point job vote cells (T * R)",
                cfg.vote.cells(),
                T.saturating_mul(R),
            ),
            ("point job peak slots (K)", 1, K),
        ] {
            if got < needed {
                return Err(Error::BufferTooShort { what, needed, got });
            }
        }
        Tracker::<N, EDGES_PER_FRAME>::check(&cfg.track)?;
        self.stream.configure(&cfg.edges, width, height)?;
        // The gate bytes' count is the stage's candidate budget (the
        // type's docs, *Point gradients in one byte*).
        self.stream.set_candidate_budget(cfg.candidate_budget(CAP));
        self.cfg = *cfg;
        self.configured = true;
        self.tracker.start(cfg.track);
        self.coded = 0;
        self.found = 0;
        self.frame = 0;
        self.reported = false;
        Ok(())
    }

    /// Drops the frame in progress ([`EdgeStream::reset`]) and counts it
    /// as a frame without a measurement: the next finished frame has the
    /// next frame number, so every track coasts through the dropped one
    /// (a miss, the tracker's rule for skipped frame numbers).
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// job.push_row(&[0; 320])?;
    /// job.drop_frame();
    /// for _ in 0..240 { job.push_row(&[0; 320])?; }
    /// assert_eq!(job.finish(None)?.frame, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn drop_frame(&mut self) {
        if self.configured {
            self.stream.reset();
            self.coded = 0;
            self.frame = self.frame.saturating_add(1);
        }
    }

    /// Starts over with the same configuration: the frame in progress is
    /// dropped, every track forgotten, frame numbers start again from 0.
    /// The automatic thresholds carried to the next frame stay.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// job.drop_frame();
    /// job.reset();
    /// for _ in 0..240 { job.push_row(&[0; 320])?; }
    /// assert_eq!(job.finish(None)?.frame, 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn reset(&mut self) {
        if self.configured {
            self.stream.reset();
            self.coded = 0;
            self.frame = 0;
            self.tracker.reset();
        }
    }

    /// Rows committed to the frame in progress.
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert_eq!(j.rows_pushed(), 0);
    /// ```
    pub fn rows_pushed(&self) -> usize {
        self.stream.rows_pushed()
    }

    /// Pushes one row of 8-bit luma (`width` bytes exactly).
    ///
    /// Errors: as [`EdgeStream::push_row`]; the job is unchanged.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// assert!(job.push_row(&[0; 319]).is_err());
    /// assert_eq!(job.push_row(&[0; 320])?, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row(&mut self, row: &[u8]) -> Result<usize> {
        self.stream.check_len("luma", row.len(), 1)?;
        self.stream.next_row_slot()?.copy_from_slice(row);
        tally(Op::Load, row.len() as u32);
        tally(Op::Store, row.len() as u32);
        self.commit_row()
    }

    /// The ring slot the next row goes to ([`EdgeStream::next_row_slot`]):
    /// let the camera DMA write there, then call [`PointJob::commit_row`].
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// job.next_row_slot()?.fill(7);
    /// assert_eq!(job.commit_row()?, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn next_row_slot(&mut self) -> Result<&mut [u8]> {
        self.stream.next_row_slot()
    }

    /// Takes the row in the slot as the next camera row; returns the rows
    /// committed so far. Errors: as [`EdgeStream::commit_row`].
    ///
    /// ```
    /// let mut j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.commit_row().is_err()); // not configured
    /// ```
    pub fn commit_row(&mut self) -> Result<usize> {
        self.stream.check_room()?;
        if self.stream.rows_pushed() == 0 {
            // The first row of a frame: the gate bytes start again.
            self.coded = 0;
        }
        let (held, codes, coded, vote) = (
            &mut self.held,
            &mut self.codes,
            &mut self.coded,
            &self.cfg.vote,
        );
        self.stream
            .commit_row_then(&mut |s, step| keep_gates(s, step, vote, held, codes, coded))
    }

    /// Ends a frame of the declared height and runs the rest of the job
    /// (see [`PointJob`]): lens correction through `grid` (`None`: the raw
    /// frame is the vote frame), votes, peaks, marking, tracker.
    ///
    /// Errors (the job unchanged): a grid whose output size is not the raw
    /// frame or whose source size is not the vote frame, or no grid and a
    /// vote frame of another size -> [`Error::SizeMismatch`]; as
    /// [`EdgeStream::finish`]. The tracker's errors (a frame number past
    /// `u32::MAX`) come after the frame was used.
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// // Two parallel vertical edges: lines, but no tape (a tape's edges
    /// // meet on the horizon).
    /// let row: [u8; 320] = core::array::from_fn(|x| if (150..170).contains(&x) { 220 } else { 60 });
    /// for _ in 0..240 { job.push_row(&row)?; }
    /// let r = job.finish(None)?;
    /// assert_eq!(r.peaks, 2);
    /// assert!(r.marking.found().is_none());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish(&mut self, grid: Option<&ControlGrid<'_>>) -> Result<JobReport> {
        self.end(grid, false)
    }

    /// [`PointJob::finish`] for a frame that ended early
    /// ([`EdgeStream::finish_short`]): the vote frame is still the declared
    /// one (a grid covers the declared raw frame).
    ///
    /// ```
    /// use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
    /// let mut job: Box<DemoPointJobQvga> = Box::default();
    /// job.configure(&PointJobConfig::DEMO_QVGA, 320, 240)?;
    /// for _ in 0..100 { job.push_row(&[50; 320])?; }
    /// assert_eq!(job.finish_short(None)?.edges.height, 100);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish_short(&mut self, grid: Option<&ControlGrid<'_>>) -> Result<JobReport> {
        self.end(grid, true)
    }

    fn check_grid(&self, grid: Option<&ControlGrid<'_>>) -> Result<()> {
        check_frames(
            grid,
            (self.stream.width, self.stream.height),
            &self.cfg.vote,
        )
    }

    fn end(&mut self, grid: Option<&ControlGrid<'_>>, short: bool) -> Result<JobReport> {
        self.stream.check_streaming()?;
        self.check_grid(grid)?;
        let (held, codes, coded, vote) = (
            &mut self.held,
            &mut self.codes,
            &mut self.coded,
            &self.cfg.vote,
        );
        let mut hook = |s: &EdgeStream<W, MAP_WORDS, BINS, 0>, step| {
            keep_gates(s, step, vote, held, codes, coded)
        };
        let mut edges = if short {
            self.stream.finish_short_then(&mut hook)?
        } else {
            self.stream.finish_then(&mut hook)?
        };
        let gated = self.cfg.vote.gate.is_some();
        if gated {
            edges.gradients_dropped = edges.candidates.saturating_sub(self.coded as u32);
        }
        let mut acc = self.votes.accumulator(self.cfg.vote)?;
        let (mut voted, mut ungated) = (0u32, 0u32);
        let mut points = self.stream.points()?;
        while let Some(p) = points.next() {
            // `candidate` has moved past this point's candidate.
            let k = points.candidate - 1;
            let code = if k < self.coded {
                self.codes.get(k).copied()
            } else {
                None
            };
            if gated && code.is_none() {
                ungated += 1;
                continue;
            }
            let (x, y) = (p.x as usize, p.y as usize);
            let q = match grid {
                Some(g) => acc.corrected_q4(g, x, y),
                None => Some(acc.plain_q4(x, y)),
            };
            let Some((x4, y4)) = q else { continue };
            acc.vote_coded(x4, y4, code);
            voted += 1;
        }
        let outside = acc.skipped();
        let frame = self.frame;
        self.frame = self.frame.saturating_add(1);
        if !self.configured {
            return Err(Error::StreamOrder {
                reason: "point job used before configure",
            });
        }
        // An incomplete vote (edge points without a gate byte cast no
        // vote) is reported but not tracked: the tracks coast.
        let LineOutcome {
            found,
            marking,
            track,
        } = line_stages(
            &acc,
            &self.cfg,
            &mut self.peaks,
            &mut self.lines,
            &mut self.tracker,
            frame,
            ungated == 0,
        )?;
        self.found = found;
        let report = JobReport {
            frame,
            edges,
            voted,
            outside,
            ungated,
            peaks: found as u8,
            marking,
            track,
        };
        self.report = report;
        self.reported = true;
        Ok(report)
    }

    /// The report of the last finished frame.
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.report().is_none());
    /// ```
    pub fn report(&self) -> Option<JobReport> {
        self.reported.then_some(self.report)
    }

    /// The peaks of the last finished frame (vote-frame lines, strongest
    /// first).
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.peaks().is_empty());
    /// ```
    pub fn peaks(&self) -> &[Peak] {
        &self.peaks[..self.found]
    }

    /// The peaks' lines about the image centre ([`centre_line`]), as handed
    /// to the marking selection; [`Marking`] indices point into this slice.
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.lines().is_empty());
    /// ```
    pub fn lines(&self) -> &[Candidate] {
        &self.lines[..self.found]
    }

    /// The tracker (its tracks after the last finished frame); `None`
    /// before [`PointJob::configure`].
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.tracker().is_none());
    /// ```
    pub fn tracker(&self) -> Option<&Tracker<N, EDGES_PER_FRAME>> {
        self.configured.then_some(&self.tracker)
    }

    /// The edge stage (its points and edge rows of the last finished frame).
    ///
    /// ```
    /// let j = fixsight::pipeline::PointJob::<8, 8, 8, 8, 8, 9, 2, 2>::new();
    /// assert!(j.edge_stage().report().is_none());
    /// ```
    pub fn edge_stage(&self) -> &EdgeStream<W, MAP_WORDS, BINS, 0> {
        &self.stream
    }
}

/// The step hook of the job: when a row has been classified, keep the gate
/// byte of each of its candidates (raster order, up to `CAP`), from the
/// gradient row held since that row was formed; when a row is formed, hold
/// its gradients.
fn keep_gates<const W: usize, const MW: usize, const B: usize, const CAP: usize>(
    s: &EdgeStream<W, MW, B, 0>,
    step: Stepped,
    vote: &VoteParams,
    held: &mut [[i16; 2]; W],
    codes: &mut [u8; CAP],
    coded: &mut usize,
) {
    if vote.gate.is_none() {
        return;
    }
    let w = s.width;
    let done = match step {
        Stepped::Formed(y) => y.checked_sub(1),
        Stepped::LastClassified(y) => Some(y),
    };
    if let Some(y) = done {
        let stride = w.div_ceil(16);
        let words = s.map.get(y * stride..(y + 1) * stride).unwrap_or(&[]);
        let mut n = 0u32;
        for (i, &word) in words.iter().enumerate() {
            let mut v = word;
            let mut x = 16 * i;
            while v != 0 && x < w {
                if (v & 3) as u8 != NONE {
                    if let (Some(slot), Some(g)) = (codes.get_mut(*coded), held.get(x)) {
                        *slot = vote.gate_code(gradient::angle(g[0], g[1])).unwrap_or(0);
                        *coded += 1;
                        n += 1;
                    }
                }
                v >>= 2;
                x += 1;
            }
        }
        gradient::tally_angles(n as usize);
        tally(Op::Load, words.len() as u32 + 2 * n);
        tally(Op::Store, n);
    }
    if let Stepped::Formed(_) = step {
        held[..w].copy_from_slice(&s.grad[..w]);
        tally(Op::Load, 2 * w as u32);
        tally(Op::Store, 2 * w as u32);
    }
}

#[cfg(test)]
pub(in crate::pipeline) mod tests {
    //! The job against the kernels it composes, run one after another.
    extern crate std;
    use super::*;
    use crate::lines::{EdgeRow, VoteStore};
    use crate::pipeline::{map_words, EdgeConfig, Thinning, ThresholdRule};
    use crate::warp::WarpGeometry;
    use proptest::prelude::*;
    use std::boxed::Box;
    use std::vec;
    use std::vec::Vec;

    const TW: usize = 40;
    const TH: usize = 30;
    const TBINS: usize = DEMO.bins_needed();
    const TCAP: usize = 96;
    const TT: usize = 128;
    const TR: usize = 61;
    const TK: usize = 6;
    type Job = PointJob<TW, { map_words(TW, TH) }, TBINS, TCAP, TT, TR, TK, 4>;
    /// The edge stage alone, with as many point gradients as the job keeps
    /// gate bytes.
    type Stage = EdgeStream<TW, { map_words(TW, TH) }, TBINS, TCAP>;

    /// A frame: a tape-like bright band whose edges lean, on a ramp, with
    /// noise, from a seed.
    pub(in crate::pipeline) fn frame(seed: u64, w: usize, h: usize) -> Vec<u8> {
        let mut s = seed | 1;
        let mut next = || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (s >> 33) as u32
        };
        let (x0, lean, width) = (next() % 40, next() % 9, 2 + next() % 9);
        let amp = 40 + next() % 180;
        let noise = 1 + next() % 30;
        (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as u32, (i / w) as u32);
                let left = x0 + y * lean / 8;
                let mut v = 20 + x / 2 + y;
                if (left..left + width).contains(&x) {
                    v += amp;
                }
                v += next() % noise;
                v.min(255) as u8
            })
            .collect()
    }

    /// A correction grid close to the identity over a `w x h` frame:
    /// every control point moved by up to `amp / 2^f` px, `f = 4`.
    fn grid_points(w: usize, h: usize, k: u32, seed: u64, amp: i32) -> (WarpGeometry, Vec<i32>) {
        let geom = WarpGeometry::new(w, h, w, h, 4).unwrap();
        let (cols, rows) = ControlGrid::grid_size(&geom, k).unwrap();
        let mut s = seed | 1;
        let mut pts = Vec::new();
        for j in 0..rows {
            for i in 0..cols {
                for base in [(i << k) as i32, (j << k) as i32] {
                    s = s.wrapping_mul(6364136223846793005).wrapping_add(1);
                    let d = ((s >> 40) % (2 * amp as u64 + 1)) as i32 - amp;
                    pts.push(base * 16 + d);
                }
            }
        }
        (geom, pts)
    }

    /// The composition: the edge stage, then the line kernels on the
    /// frame's edge rows and gradient rows, peaks, [`centre_line`],
    /// [`marking::select`], the tracker. Returns the report fields the job
    /// gives.
    #[allow(clippy::type_complexity)]
    fn composed(
        stage: &Stage,
        cfg: &PointJobConfig,
        grid: Option<&ControlGrid<'_>>,
        tracker: &mut Tracker<4, EDGES_PER_FRAME>,
        frame: u32,
    ) -> (
        u32,
        u32,
        u32,
        Vec<Peak>,
        Vec<Candidate>,
        Marking,
        track::FrameReport,
    ) {
        let rep = stage.report().unwrap();
        let (w, h) = (rep.width as usize, rep.height as usize);
        let (vw, vh) = (cfg.vote.width, cfg.vote.height);
        // Edge rows without the points that have no gradient (past CAP).
        let mut edges = vec![0u8; w * vh];
        let (mut gx, mut gy) = (vec![0i16; w * vh], vec![0i16; w * vh]);
        let mut ungated = 0;
        for p in stage.points().unwrap() {
            let i = p.y as usize * w + p.x as usize;
            match p.gradient {
                Some((a, b)) => {
                    edges[i] = 255;
                    gx[i] = a;
                    gy[i] = b;
                }
                None if cfg.vote.gate.is_some() => ungated += 1,
                None => edges[i] = 255,
            }
        }
        let mut store: Box<VoteStore<TT, TR>> = Box::default();
        let mut acc = store.accumulator(cfg.vote).unwrap();
        for y in 0..vh {
            let r = y * w..(y + 1) * w;
            let row = EdgeRow::with_gradient(&edges[r.clone()], &gx[r.clone()], &gy[r]);
            match grid {
                Some(g) => acc.vote_row_corrected(y, &row, g).unwrap(),
                None => acc.vote_row(y, &row).unwrap(),
            }
        }
        let _ = h;
        let mut peaks = vec![Peak::default(); TK];
        let n = acc.peaks(&cfg.peaks, &mut peaks).unwrap();
        peaks.truncate(n);
        let lines: Vec<Candidate> = peaks.iter().map(|p| centre_line(&p.line, vw, vh)).collect();
        let m = marking::select(&lines, &cfg.marking);
        let (dets, nd) = tape_detections(&m, &lines);
        let nd = if ungated > 0 { 0 } else { nd };
        let tr = tracker.update(frame, &dets[..nd]).unwrap();
        (acc.points(), acc.skipped(), ungated, peaks, lines, m, tr)
    }

    fn vote_params() -> impl Strategy<Value = VoteParams> {
        (
            0u32..(1 << 17),
            9u32..=12,
            1usize..=TT,
            2u32..=5,
            0usize..30,
            prop_oneof![Just(None), (1u16..=32767).prop_map(Some)],
        )
            .prop_map(|(start, s, t, r, rb, gate)| VoteParams {
                width: TW,
                height: TH,
                theta_start: start,
                theta_step_log2: s,
                theta_bins: t.min(65536 >> s),
                rho_step_log2: r,
                rho_bins: 2 * rb + 1,
                trig_frac_bits: 14,
                gate,
                weight_shift: None,
            })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// Frame after frame, with or without a grid, fixed or automatic
        /// thresholds: the job equals the kernels composed.
        #[test]
        fn job_equals_the_kernels_composed(
            vote in vote_params(), threshold in 1u16..400, radius in 0usize..3,
            fixed in any::<bool>(), lens in any::<bool>(), k in 2u32..=4, amp in 0i32..40,
            seeds in proptest::collection::vec(any::<u64>(), 1..4), short in 0usize..TH,
        ) {
            let edges = if fixed {
                EdgeConfig { thresholds: ThresholdRule::Fixed { low: 20, high: 60 }, ..DEMO }
            } else {
                DEMO
            };
            let cfg = PointJobConfig {
                edges,
                vote,
                peaks: PeakParams {
                    threshold,
                    radius_theta: radius.min(vote.theta_bins),
                    radius_rho: radius.min(vote.rho_bins),
                },
                ..PointJobConfig::DEMO_QVGA
            };
            let (geom, pts) = grid_points(TW, TH, k, seeds[0], amp);
            let grid = ControlGrid::new(&pts, geom, k).unwrap();
            let grid = lens.then_some(&grid);
            let mut job: Box<Job> = Box::default();
            job.configure(&cfg, TW, TH).unwrap();
            let mut stage: Box<Stage> = Box::default();
            stage.configure(&cfg.edges, TW, TH).unwrap();
            // The job's budget rule (`PointJob::configure`).
            stage.set_candidate_budget(cfg.candidate_budget(TCAP));
            let mut tracker = Tracker::<4, EDGES_PER_FRAME>::new(cfg.track).unwrap();
            for (f, &sd) in seeds.iter().enumerate() {
                let img = frame(sd, TW, TH);
                // The last frame of a case may end early.
                let rows = if f + 1 == seeds.len() && short > 0 { short } else { TH };
                for r in img.chunks_exact(TW).take(rows) {
                    job.push_row(r).unwrap();
                    stage.push_row(r).unwrap();
                }
                let got = if rows < TH {
                    stage.finish_short().unwrap();
                    job.finish_short(grid).unwrap()
                } else {
                    stage.finish().unwrap();
                    job.finish(grid).unwrap()
                };
                let (voted, outside, ungated, peaks, lines, m, tr) =
                    composed(&stage, &cfg, grid, &mut tracker, f as u32);
                let mut want = stage.report().unwrap();
                if cfg.vote.gate.is_none() {
                    want.gradients_dropped = want.candidates;
                }
                prop_assert_eq!(got.edges, want);
                prop_assert_eq!((got.voted, got.outside, got.ungated), (voted, outside, ungated));
                prop_assert_eq!(job.peaks(), &peaks[..]);
                prop_assert_eq!(job.lines(), &lines[..]);
                prop_assert_eq!(got.marking, m);
                prop_assert_eq!(got.track, tr);
                prop_assert_eq!(got.frame, f as u32);
            }
        }
    }

    /// The demo's vote parameters over the test frame, 32 x 51 cells.
    fn small_vote() -> VoteParams {
        VoteParams {
            width: TW,
            height: TH,
            rho_bins: 51,
            theta_bins: 32,
            ..VoteParams::DEMO_QVGA
        }
    }

    /// A job (and its edge stage alone) after frames that write every
    /// field, cleared: each is the one `new` makes, field for field.
    #[test]
    fn clear_gives_a_new_job() {
        use std::format;
        let cfg = PointJobConfig {
            edges: EdgeConfig {
                thinning: Thinning::AtMost(3),
                ..DEMO
            },
            vote: small_vote(),
            peaks: PeakParams {
                threshold: 4,
                ..PointJobConfig::DEMO_QVGA.peaks
            },
            ..PointJobConfig::DEMO_QVGA
        };
        let (geom, pts) = grid_points(TW, TH, 3, 5, 20);
        let grid = ControlGrid::new(&pts, geom, 3).unwrap();
        let fresh: Box<Job> = Box::default();
        let mut job: Box<Job> = Box::default();
        job.configure(&cfg, TW, TH).unwrap();
        let mut stage: Box<Stage> = Box::default();
        stage.configure(&cfg.edges, TW, TH).unwrap();
        for seed in 1..4 {
            for r in frame(seed, TW, TH).chunks_exact(TW) {
                job.push_row(r).unwrap();
                stage.push_row(r).unwrap();
            }
            job.finish(Some(&grid)).unwrap();
            stage.finish().unwrap();
        }
        // Every field differs from a new job's before the clear.
        let d = |v: &dyn core::fmt::Debug| format!("{v:?}");
        let s = &job.stream;
        for (name, got, new) in [
            ("cfg", d(&job.cfg), d(&fresh.cfg)),
            ("configured", d(&job.configured), d(&fresh.configured)),
            ("held", d(&job.held), d(&fresh.held)),
            ("codes", d(&job.codes), d(&fresh.codes)),
            ("coded", d(&job.coded), d(&fresh.coded)),
            ("votes", d(&job.votes), d(&fresh.votes)),
            ("peaks", d(&job.peaks), d(&fresh.peaks)),
            ("lines", d(&job.lines), d(&fresh.lines)),
            ("found", d(&job.found), d(&fresh.found)),
            ("tracker", d(&job.tracker), d(&fresh.tracker)),
            ("frame", d(&job.frame), d(&fresh.frame)),
            ("report", d(&job.report), d(&fresh.report)),
            ("reported", d(&job.reported), d(&fresh.reported)),
            ("stream.cfg", d(&s.cfg), d(&fresh.stream.cfg)),
            ("stream.deriv", d(&s.deriv), d(&fresh.stream.deriv)),
            ("stream.cross", d(&s.cross), d(&fresh.stream.cross)),
            ("stream.radius", d(&s.radius), d(&fresh.stream.radius)),
            ("stream.shift", d(&s.shift), d(&fresh.stream.shift)),
            ("stream.bins", d(&s.bins), d(&fresh.stream.bins)),
            ("stream.width", d(&s.width), d(&fresh.stream.width)),
            ("stream.height", d(&s.height), d(&fresh.stream.height)),
            ("stream.phase", d(&s.phase), d(&fresh.stream.phase)),
            ("stream.pushed", d(&s.pushed), d(&fresh.stream.pushed)),
            ("stream.formed", d(&s.formed), d(&fresh.stream.formed)),
            (
                "stream.classified",
                d(&s.classified),
                d(&fresh.stream.classified),
            ),
            (
                "stream.thresholds",
                d(&s.thresholds),
                d(&fresh.stream.thresholds),
            ),
            ("stream.carried", d(&s.carried), d(&fresh.stream.carried)),
            (
                "stream.candidates",
                d(&s.candidates),
                d(&fresh.stream.candidates),
            ),
            ("stream.budget", d(&s.budget), d(&fresh.stream.budget)),
            (
                "stream.done_height",
                d(&s.done_height),
                d(&fresh.stream.done_height),
            ),
            ("stream.report", d(&s.report), d(&fresh.stream.report)),
            ("stream.rows", d(&s.rows), d(&fresh.stream.rows)),
            ("stream.mag", d(&s.mag), d(&fresh.stream.mag)),
            ("stream.grad", d(&s.grad), d(&fresh.stream.grad)),
            ("stream.map", d(&s.map), d(&fresh.stream.map)),
            ("stream.hist", d(&s.hist), d(&fresh.stream.hist)),
        ] {
            assert_ne!(got, new, "{name} not written by the frames");
        }
        // The job's stage keeps no gradients (`CAP = 0`); the lone stage does.
        assert!(stage.stored > 0 && stage.grads.iter().any(|g| *g != [0, 0]));
        job.clear();
        assert_eq!(d(&job), d(&fresh));
        stage.clear();
        assert_eq!(d(&stage), d(&Stage::new()));
        // And it works as a new job.
        job.configure(&cfg, TW, TH).unwrap();
        assert_eq!(job.push_row(&[0; TW]).unwrap(), 1);
    }

    /// A 320 x 240 floor of uniform noise (+-`amp` grey levels about 80)
    /// with a tape of +100 drawn in perspective: both edges run through
    /// the vanishing point (160, 58), 18 px apart on the bottom row (the
    /// demo marking's near row and nominal width), from a seed.
    fn noisy_tape(seed: u64, amp: u32) -> Vec<u8> {
        let mut s = seed | 1;
        (0..320usize * 240)
            .map(|i| {
                s = s
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                let noise = ((s >> 33) as u32 % (2 * amp + 1)) as i32 - amp as i32;
                let (x, y) = ((i % 320) as i32, (i / 320) as i32);
                // Columns scaled by 181 (rows from the vanishing point).
                let d = y - 58;
                let (left, right) = (160 * 181 + 6 * d, 160 * 181 + 24 * d);
                let tape = if d > 0 && (left..right).contains(&(x * 181)) {
                    100
                } else {
                    0
                };
                (80 + tape + noise) as u8
            })
            .collect()
    }

    #[test]
    fn a_textured_floor_keeps_every_vote_from_the_second_frame() {
        // Without the candidate budget the automatic pair lets more noise
        // maxima through than the job has gate bytes: the bottom rows cast
        // no vote and no tape is tracked.
        let cfg = PointJobConfig::DEMO_QVGA;
        let mut job: Box<crate::pipeline::DemoPointJobQvga> = Box::default();
        job.configure(&cfg, 320, 240).unwrap();
        let mut lone: Box<crate::pipeline::DemoQvga<0>> = Box::default();
        lone.configure(&cfg.edges, 320, 240).unwrap();
        let cap = crate::pipeline::DEMO_QVGA_CAP as u32;
        for seed in 1..=3 {
            for r in noisy_tape(seed, 8).chunks_exact(320) {
                job.push_row(r).unwrap();
                lone.push_row(r).unwrap();
            }
            let r = job.finish(None).unwrap();
            let free = lone.finish().unwrap();
            if seed == 1 {
                continue; // the rule's first pair
            }
            assert!(free.candidates > cap, "no budget: {free:?}");
            assert!(r.edges.candidates <= cap, "{r:?}");
            assert_eq!(r.ungated, 0, "{r:?}");
            assert!(r.marking.found().is_some(), "{r:?}");
        }
    }

    #[test]
    fn a_bad_grid_or_size_changes_nothing() {
        let cfg = PointJobConfig {
            vote: small_vote(),
            ..PointJobConfig::DEMO_QVGA
        };
        let mut job: Box<Job> = Box::default();
        job.configure(&cfg, TW, TH).unwrap();
        for r in frame(7, TW, TH).chunks_exact(TW) {
            job.push_row(r).unwrap();
        }
        let (geom, pts) = grid_points(TW + 1, TH, 3, 1, 0);
        let wrong = ControlGrid::new(&pts, geom, 3).unwrap();
        assert!(matches!(
            job.finish(Some(&wrong)),
            Err(Error::SizeMismatch { .. })
        ));
        // The frame is still there to finish.
        assert_eq!(job.finish(None).unwrap().frame, 0);
        assert!(job.finish(None).is_err()); // already finished
        let mut other = cfg;
        other.vote.width = TW + 2;
        job.configure(&other, TW, TH).unwrap();
        for r in frame(7, TW, TH).chunks_exact(TW) {
            job.push_row(r).unwrap();
        }
        assert!(matches!(job.finish(None), Err(Error::SizeMismatch { .. })));
        // Buffers too small for the configuration.
        let mut small: Box<PointJob<TW, { map_words(TW, TH) }, TBINS, 8, 8, 9, 1, 1>> =
            Box::default();
        assert!(matches!(
            small.configure(&cfg, TW, TH),
            Err(Error::BufferTooShort { .. })
        ));
    }

    #[test]
    fn gate_codes_vote_as_the_angles() {
        // Every angle of a few parameter sets: the code's run is the angle's
        // run folded to the first half turn.
        for (start, s, g) in [
            (49152u32, 10u32, 5461u16),
            (0, 9, 1),
            (100_000, 12, 32767),
            (7, 14, 300),
        ] {
            let p = VoteParams {
                theta_start: start,
                theta_step_log2: s,
                theta_bins: 65536 >> s,
                gate: Some(g),
                ..VoteParams::DEMO_QVGA
            };
            let period = 65536u32 >> s;
            for a in 0..=u16::MAX {
                let (f, c) = p.gate_run(a, g);
                let code = p.gate_code(a).unwrap();
                assert_eq!(p.gate_of_code(code), (f % period, c), "angle {a}");
            }
        }
    }
}
