//! The whole job in point mode with the `f32` edge stage
//! ([`F32PointJob`]): the edge points of [`crate::F32EdgeStream`], then the
//! line stages of the kernel crate through its public API, in the order of
//! `fixsight::pipeline::PointJob`: each edge point (through the lens grid
//! when there is one, `fixsight::lines::correct_point`) voted with its
//! gradient angle (`Accumulator::vote_point`, unit weight), then
//! `fixsight::pipeline::line_stages`, the integer job's own steps: the
//! peaks, their lines about the image centre, the marking, the tape's two
//! edges and the tracker with its drift warning. As in the integer job, an
//! edge point whose angle was not kept (past the `CAP`-th candidate) casts
//! no gated vote, and a frame with such points gives the tracker no
//! detection.
//!
//! > **Not a safety function** (see `fixsight::pipeline::PointJob`).

use crate::edges::{F32Config, F32EdgeStream, F32FrameReport};
use fixsight::lines::{correct_point, Peak, VoteStore};
use fixsight::marking::{self, Candidate, Marking};
use fixsight::pipeline::{check_frames, line_stages, LineOutcome, PointJobConfig, EDGES_PER_FRAME};
use fixsight::track::{self, Tracker};
use fixsight::warp::ControlGrid;
use fixsight::Error;

/// The report of one frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct F32JobReport {
    /// Frame number given to the tracker.
    pub frame: u32,
    /// The edge stage's report.
    pub edges: F32FrameReport,
    /// Edge points that cast votes.
    pub voted: u32,
    /// Edge points whose corrected position fell outside the vote frame.
    pub outside: u32,
    /// Edge points without a kept angle while the votes are gated.
    pub ungated: u32,
    /// Peaks found.
    pub peaks: u8,
    /// The marking selected from the lines.
    pub marking: Marking,
    /// The tracker's report with the drift warning.
    pub track: track::FrameReport,
}

/// The point job with the `f32` edge stage. Const parameters: those of
/// [`F32EdgeStream`] (`W`, `MAP`, `BINS`, `CAP`), then vote columns `T`
/// and rows `R`, peaks `K`, tracks `N` (those of
/// `fixsight::pipeline::PointJob`).
#[derive(Debug, Clone)]
pub struct F32PointJob<
    const W: usize,
    const MAP: usize,
    const BINS: usize,
    const CAP: usize,
    const T: usize,
    const R: usize,
    const K: usize,
    const N: usize,
> {
    cfg: PointJobConfig,
    stream: F32EdgeStream<W, MAP, BINS, CAP>,
    votes: VoteStore<T, R>,
    peaks: [Peak; K],
    lines: [Candidate; K],
    found: usize,
    tracker: Option<Tracker<N, EDGES_PER_FRAME>>,
    frame: u32,
}

/// The demo job at 320 x 240 with the `f32` edge stage: the integer demo
/// job's vote, peak and track sizes (`fixsight::pipeline::DemoPointJobQvga`),
/// a byte per pixel of class map and 4096 candidates.
///
/// ```
/// use fixsight_port_cortex_m4f_float::F32PointJobQvga;
/// assert!(F32PointJobQvga::ram_bytes() > fixsight::pipeline::DemoPointJobQvga::ram_bytes());
/// ```
pub type F32PointJobQvga = F32PointJob<
    320,
    { 320 * 240 },
    { fixsight::pipeline::DEMO.bins_needed() },
    { fixsight::pipeline::DEMO_QVGA_CAP },
    32,
    201,
    8,
    4,
>;

impl<
        const W: usize,
        const MAP: usize,
        const BINS: usize,
        const CAP: usize,
        const T: usize,
        const R: usize,
        const K: usize,
        const N: usize,
    > Default for F32PointJob<W, MAP, BINS, CAP, T, R, K, N>
{
    fn default() -> Self {
        Self::new()
    }
}

impl<
        const W: usize,
        const MAP: usize,
        const BINS: usize,
        const CAP: usize,
        const T: usize,
        const R: usize,
        const K: usize,
        const N: usize,
    > F32PointJob<W, MAP, BINS, CAP, T, R, K, N>
{
    /// An unconfigured job.
    pub const fn new() -> Self {
        Self {
            cfg: PointJobConfig::DEMO_QVGA,
            stream: F32EdgeStream::new(),
            votes: VoteStore::new(),
            peaks: [Peak {
                theta_bin: 0,
                rho_bin: 0,
                votes: 0,
                line: fixsight::lines::Line {
                    rho: 0,
                    theta: 0,
                    votes: 0,
                },
            }; K],
            lines: [Candidate {
                rho_q4: 0,
                theta: 0,
                votes: 0,
                polarity: marking::Polarity::Unknown,
            }; K],
            found: 0,
            tracker: None,
            frame: 0,
        }
    }

    /// Bytes of the job: `size_of::<Self>()`.
    pub const fn ram_bytes() -> usize {
        core::mem::size_of::<Self>()
    }

    /// Sets the configuration: `cfg` for every stage but the edges' square
    /// root, which is `root` of [`F32Config`].
    ///
    /// Errors: `cfg.check()`, the edge stream's (`F32EdgeStream::configure`),
    /// vote storage smaller than
    /// `cfg.vote` needs, `K` of 0 -> the kernel crate's typed errors.
    pub fn configure(
        &mut self,
        cfg: &PointJobConfig,
        root: crate::Root,
        width: usize,
        height: usize,
    ) -> Result<(), Error> {
        cfg.check()?;
        if K == 0 {
            return Err(Error::BadParameter {
                name: "peak capacity K",
                expected: "at least 1",
                got: 0,
            });
        }
        // Vote storage large enough (the accumulator checks it).
        self.votes.accumulator(cfg.vote)?;
        let tracker = Tracker::<N, EDGES_PER_FRAME>::new(cfg.track)?;
        self.stream.configure(
            &F32Config {
                edges: cfg.edges,
                root,
            },
            width,
            height,
        )?;
        // The integer job's budget: as many candidates as angles are kept.
        self.stream.set_candidate_budget(cfg.candidate_budget(CAP));
        self.cfg = *cfg;
        self.tracker = Some(tracker);
        self.found = 0;
        self.frame = 0;
        Ok(())
    }

    /// Pushes one camera row (errors: [`F32EdgeStream::push_row`]).
    pub fn push_row(&mut self, row: &[u8]) -> Result<(), Error> {
        if self.tracker.is_none() {
            return Err(Error::StreamOrder {
                reason: "f32 point job used before configure",
            });
        }
        self.stream.push_row(row)
    }

    /// Ends the frame: edges, votes (through `grid` when given), peaks,
    /// marking, tracker.
    ///
    /// Errors: a grid whose output is not the raw frame or whose source is
    /// not the vote frame, or no grid while the two frames differ ->
    /// [`Error::SizeMismatch`]; [`F32EdgeStream::finish`].
    pub fn finish(&mut self, grid: Option<&ControlGrid<'_>>) -> Result<F32JobReport, Error> {
        if self.tracker.is_none() {
            return Err(Error::StreamOrder {
                reason: "f32 point job used before configure",
            });
        }
        self.check_grid(grid)?;
        let edges = self.stream.finish()?;
        let vote = self.cfg.vote;
        let gated = vote.gate.is_some();
        let mut acc = self.votes.accumulator(vote)?;
        let (xm, ym) = ((vote.width as i32 - 1) * 16, (vote.height as i32 - 1) * 16);
        let (mut voted, mut outside, mut ungated) = (0u32, 0u32, 0u32);
        for p in self.stream.points() {
            if gated && p.angle.is_none() {
                ungated += 1;
                continue;
            }
            let (x, y) = (p.x as usize, p.y as usize);
            let q = match grid {
                Some(g) => correct_point(g, x, y),
                None => Some((16 * x as i32, 16 * y as i32)),
            };
            let Some((x4, y4)) = q else { continue };
            if !(0..=xm).contains(&x4) || !(0..=ym).contains(&y4) {
                outside += 1;
                continue;
            }
            acc.vote_point(x4, y4, p.angle, 1)?;
            voted += 1;
        }
        let frame = self.frame;
        self.frame = self.frame.saturating_add(1);
        let tracker = self.tracker.as_mut().ok_or(Error::StreamOrder {
            reason: "f32 point job used before configure",
        })?;
        let LineOutcome {
            found,
            marking,
            track,
        } = line_stages(
            &acc,
            &self.cfg,
            &mut self.peaks,
            &mut self.lines,
            tracker,
            frame,
            ungated == 0,
        )?;
        self.found = found;
        Ok(F32JobReport {
            frame,
            edges,
            voted,
            outside,
            ungated,
            peaks: found as u8,
            marking,
            track,
        })
    }

    /// The grid's output must be the raw frame and its source the vote
    /// frame; without a grid the two frames are one
    /// ([`fixsight::pipeline::check_frames`]).
    fn check_grid(&self, grid: Option<&ControlGrid<'_>>) -> Result<(), Error> {
        let raw = (self.stream.width(), self.stream.height());
        check_frames(grid, raw, &self.cfg.vote)
    }

    /// The peaks of the last finished frame.
    pub fn peaks(&self) -> &[Peak] {
        &self.peaks[..self.found]
    }

    /// The peaks' lines about the image centre; [`Marking`] indices point
    /// into this slice.
    pub fn lines(&self) -> &[Candidate] {
        &self.lines[..self.found]
    }

    /// The tracker; `None` before [`F32PointJob::configure`].
    pub fn tracker(&self) -> Option<&Tracker<N, EDGES_PER_FRAME>> {
        self.tracker.as_ref()
    }

    /// The edge stage.
    pub fn stream(&self) -> &F32EdgeStream<W, MAP, BINS, CAP> {
        &self.stream
    }
}
