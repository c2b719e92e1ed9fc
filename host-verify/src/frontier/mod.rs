//! The accuracy/cost map (`fixsight-verify frontier`): the whole job in
//! point mode over a grid of configurations, each with its edge accuracy,
//! its line accuracy, its cost on the Cortex-M4 and its memory, and the
//! configurations no other beats on both accuracy and cost (the Pareto
//! front).
//!
//! > **Not a safety function.** The map ranks configurations of a job whose
//! > drift warning may end up steering a vehicle; it is an aid for sizing
//! > firmware, not evidence for a safety case (ISO 3691-4, IEC 61508,
//! > ISO 13849 and local rules apply).
//!
//! # The grid
//!
//! [`GRID`]: the edge stage `EdgeConfig::demo_with(smoothing, operator,
//! magnitude)` (the demo configuration with another smoothing, gradient
//! operator and magnitude kind, its fractional bits, first thresholds and
//! bin width adjusted by the rules written there), its non-maximum
//! suppression (`Suppression::Sectors`, the demo's, or
//! `Suppression::Interpolated`, names ending `-interpolated`) and the vote's theta
//! resolution (32 columns of 2.8 degrees, the demo's, or 16 of 5.6 degrees
//! over the same span); every other setting is
//! `PointJobConfig::DEMO_QVGA`'s. The on-target harness measures the same
//! list (`targets/harness/src/bench.rs`, stages `map-...`; a test checks
//! that the two lists agree).
//!
//! # What is measured, and on what
//!
//! * **Edge accuracy** (`f1`): the streamed edge stage of the
//!   configuration on the second of two identical frames (thresholds from
//!   the first, as the report's `pipeline.edge_stream` row) against the
//!   full-`f64` Canny of [`crate::chain::reference`] (Gaussian `sigma = 1`,
//!   Sobel, exact `L2`, interpolated suppression) with thresholds from the
//!   same automatic rule applied to its own suppressed magnitudes
//!   ([`crate::chain::reference::thresholds_f64`]), so one reference edge
//!   map per image serves every configuration whatever its gradient scale.
//!   The reference never sees a configuration's integer thresholds, so the
//!   half-unit correction of the chain's reference
//!   ([`crate::chain::reference::chain_threshold_f64`], `t - 1/2` for a
//!   magnitude rounded to the nearest integer) has nothing to apply to:
//!   both sides pick their thresholds by rank (the same share of nonzero
//!   suppressed magnitudes), and a rank is unchanged by rounding or any
//!   other non-decreasing map of the magnitude. For `l1` and `l2_approx`
//!   no such correction could exist anyway: those magnitudes are not a
//!   rounding of the `L2` magnitude (`l1` is up to `sqrt 2` times it on
//!   the diagonals; `l2_approx` is within 4.03 % of it, above or below
//!   depending on the angle), so an
//!   integer threshold has no fixed place on the `L2` line. What the
//!   figure does include is everything that makes a configuration differ
//!   from a `sigma = 1` Canny: its smoothing, operator, magnitude kind and
//!   its integer threshold rule (the top of the quantile's histogram bin,
//!   the low threshold rounded), which is why it is stricter than the
//!   report's `pipeline.edge_stream` row. The reference is thinned by the
//!   rule the configurations' edges go through (Zhang & Suen 1984, the
//!   host model [`crate::thinning::reference`]), as
//!   [`crate::chain::reference::reference_of_chain`] is: the Canny keeps
//!   both pixels of each step of a 4-connected staircase, and an unthinned
//!   reference would count every such second pixel as a miss in the
//!   one-to-one matching.
//!   One-to-one F1 within 1 px (Martin, Fowlkes & Malik 2004, "Learning to
//!   detect natural image boundaries using local brightness, color, and
//!   texture cues", via [`crate::metrics::matched_agreement`]). Images:
//!   the three rendered demo scenes and the eight natural photographs of
//!   [`crate::natural`]; `f1_worst` is the lowest over all of them. The
//!   figure holds for those images and images like them; it is not a bound.
//! * **Line accuracy**: the job over the demo sequence (`aisle-drift`, up to
//!   96 QVGA frames, edge points corrected through the demo lens's grid),
//!   the selected tape edges against the sequence's truth: `|d rho|` px
//!   (mean and max) and `|d theta|` degrees (mean) over the frames where the
//!   tape was found, the frames where it was not (`lost_frames`; the
//!   passing panel hides it in some), and the frames where a selected
//!   edge is a wrong line (`wrong_edge_frames`: its `|d rho|` to the true
//!   edge exceeds half the distance between the tape's two true edges,
//!   [`crate::pipeline::job::wrong_edge_frames`]).
//! * **Cost**: `instr_per_px` of the harness's `map-...` bench stage on the
//!   Cortex-M4 (`targets.json` of `fixsight-verify targets`: exact QEMU
//!   instruction count of one call of the whole job on the QVGA bench
//!   frame, which holds no tape). Without `targets.json` the cost is
//!   missing and the configuration is not placed on the front.
//! * **Memory**: `ram_bytes`, `DemoPointJobQvga::ram_bytes()`, the same for
//!   every configuration (each fits the demo types by construction);
//!   `code_bytes`, the code the `pipeline.point_job` kernel id adds on the
//!   M4 (`targets.json`), also shared: one firmware holds every
//!   configuration's code paths (the demo taps' constant loop and the
//!   generic loop), so the map cannot split code bytes per configuration.
//! * **Pareto front**: a configuration with a cost is on it when no other
//!   is at least as good on all four of cost, `f1_worst`, `lost_frames`
//!   and `wrong_edge_frames` and strictly better on one (edge accuracy
//!   alone would put a configuration that loses the tape, or takes a wrong
//!   line for it, in more frames on the front).
//! * **"More accurate"** (for the recommendation): the higher `f1_worst`;
//!   on a tie the fewer `lost_frames`, then the lower mean `|d rho|`.
//! * **Recommendation** for a part of `clock_mhz` at `fps` frames per
//!   second, QVGA: the budget is `clock_mhz * 10^6 / (fps * 320 * 240)`
//!   instructions per pixel at one instruction per cycle (instructions are
//!   not cycles: keep a margin, common practice, no source). The
//!   recommendation is the most accurate front configuration within the
//!   budget whose `f1_worst` reaches [`F1_GOAL`]; when none fits, the
//!   cheapest front configuration that reaches the goal, with the factor by
//!   which it misses the budget; when none reaches the goal, the most
//!   accurate one. Only front configurations with no wrong-edge frame are
//!   considered while there is one: a wrong line taken for the tape's edge
//!   is what a drift warning must not be built on.
//!
//! # The `f32` configurations (a core with a single-precision FPU)
//!
//! [`float::F32_GRID`], names `map-f32-<smoothing>-<operator>-<root>-t<theta
//! bins>`: the point job of the port `ports/cortex-m4f-float/`, whose edge
//! stage computes in `f32` (the same fused taps without rounding, the
//! magnitude by `micromath`'s square root, `fast`, or that root refined by
//! two Newton steps, `newton`; 4-sector or interpolating suppression,
//! names ending `-interpolated`, the rule of the integer configurations of
//! that name computed in `f32`; the automatic
//! thresholds by the same rank rule on the `f32` magnitudes; the kernel
//! crate's hysteresis and thinning on a byte class map), followed by the
//! kernel crate's line stages. Each is measured like the integer
//! configurations: the same images and references, the same sequence, the
//! cost of its bench stage `map-f32-...` (kernel id `float.point_job`) on
//! the Cortex-M4 image with the port (`cortex-m4+cortex-m4f-float`, the
//! FPU on: `thumbv7em-none-eabihf`), `ram_bytes` of `F32PointJobQvga` and
//! the code bytes of `float.point_job` in that image. They are marked
//! `float` in `frontier.json`, "(f32, FPU)" in the table and as orange
//! triangles in the plot, and take part in the front and the
//! recommendation under the same rules: a recommendation of one of them
//! holds only for a part with a single-precision FPU (on a Cortex-M0 or
//! M3 each `f32` operation is a library call).

pub mod float;
pub mod plot;

use crate::chain::reference::{edges_f64, suppressed_f64, thresholds_f64};
use crate::metrics::matched_agreement;
use crate::pipeline::job::{
    run_fixed_with, sequence_correction_grid, truth_line_errors, wrong_edge_frames, JobFrame,
};
use crate::pipeline::{
    magnitude_name, magnitude_of, operator_name, operator_of, run_stream, smoothing_name,
    smoothing_of, suppression_name, suppression_of,
};
use crate::scene::Scene;
use crate::sequence::{Sequence, DEMO_SEQUENCE};
use crate::targets::TargetsReport;
use fixsight::pipeline::{
    DemoPointJobQvga, EdgeConfig, Magnitude, Operator, PointJobConfig, Smoothing, Suppression,
    ThresholdRule,
};
use fixsight::warp::ControlGrid;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The edge-accuracy goal of the pipeline (one-to-one F1 against the
/// full-`f64` Canny).
pub const F1_GOAL: f64 = 0.95;

/// The kernel id whose bench stages hold the map's costs.
pub const JOB_KERNEL: &str = "pipeline.point_job";

/// The core the costs are read for.
pub const CORE: &str = "cortex-m4";

/// One configuration of the grid.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MapConfig {
    /// Smoothing fused into the gradient taps.
    pub smoothing: Smoothing,
    /// Gradient operator.
    pub operator: Operator,
    /// Magnitude kind.
    pub magnitude: Magnitude,
    /// Vote columns over the demo's theta span (32 or 16).
    pub theta_bins: usize,
    /// Non-maximum suppression of the edge stage.
    pub suppression: Suppression,
}

const fn at(s: Smoothing, o: Operator, m: Magnitude, t: usize) -> MapConfig {
    MapConfig {
        smoothing: s,
        operator: o,
        magnitude: m,
        theta_bins: t,
        suppression: Suppression::Sectors,
    }
}

/// [`at`] with the interpolating suppression.
const fn interp(s: Smoothing, o: Operator, m: Magnitude, t: usize) -> MapConfig {
    MapConfig {
        suppression: Suppression::Interpolated,
        ..at(s, o, m, t)
    }
}

use Magnitude::{L2Approx, L2Round, L1};
use Operator::{Scharr, Sobel};
use Smoothing::{Binomial3, Binomial5, Binomial7, Gauss7};

/// The grid, in the order of the harness's bench stages.
pub const GRID: [MapConfig; 24] = [
    at(Smoothing::None, Sobel, L1, 32),
    at(Smoothing::None, Sobel, L2Approx, 32),
    at(Smoothing::None, Sobel, L2Round, 32),
    at(Binomial3, Sobel, L1, 32),
    at(Binomial3, Sobel, L2Approx, 32),
    at(Binomial3, Sobel, L2Round, 32),
    at(Binomial5, Sobel, L1, 32),
    at(Binomial5, Sobel, L2Approx, 32),
    at(Binomial5, Sobel, L2Round, 32),
    at(Binomial7, Sobel, L1, 32),
    at(Binomial7, Sobel, L2Approx, 32),
    at(Binomial7, Sobel, L2Round, 32),
    at(Gauss7, Sobel, L1, 32),
    at(Gauss7, Sobel, L2Approx, 32),
    at(Gauss7, Sobel, L2Round, 32),
    at(Binomial3, Scharr, L2Round, 32),
    at(Gauss7, Scharr, L2Round, 32),
    at(Gauss7, Sobel, L2Round, 16),
    at(Binomial3, Sobel, L1, 16),
    interp(Binomial3, Sobel, L2Approx, 32),
    interp(Binomial5, Sobel, L2Round, 32),
    interp(Gauss7, Sobel, L2Approx, 32),
    interp(Gauss7, Sobel, L2Round, 32),
    interp(Gauss7, Sobel, L2Round, 16),
];

impl MapConfig {
    /// `map-<smoothing>-<operator>-<magnitude>-t<theta bins>`, followed
    /// by `-interpolated` with the interpolating suppression: the bench
    /// stage's name on target.
    ///
    /// ```
    /// use fixsight_verify::frontier::GRID;
    /// assert_eq!(GRID[14].name(), "map-gauss7-sobel-l2_round-t32");
    /// assert_eq!(GRID[22].name(), "map-gauss7-sobel-l2_round-t32-interpolated");
    /// ```
    pub fn name(&self) -> String {
        format!(
            "map-{}-{}-{}-t{}{}",
            smoothing_name(self.smoothing),
            operator_name(self.operator),
            magnitude_name(self.magnitude),
            self.theta_bins,
            match self.suppression {
                Suppression::Sectors => String::new(),
                other => format!("-{}", suppression_name(other)),
            }
        )
    }

    /// The configuration a name (as [`MapConfig::name`] writes it) names.
    ///
    /// ```
    /// use fixsight_verify::frontier::{MapConfig, GRID};
    /// assert_eq!(MapConfig::parse("map-binomial3-sobel-l1-t16"), Ok(GRID[18]));
    /// assert!(MapConfig::parse("map-box-sobel-l1-t32").unwrap_err().contains("smoothing"));
    /// ```
    pub fn parse(name: &str) -> Result<MapConfig, String> {
        let parts: Vec<&str> = name.split('-').collect();
        let (map, s, o, m, t, suppression) = match parts[..] {
            [map, s, o, m, t] => (map, s, o, m, t, Suppression::Sectors),
            [map, s, o, m, t, x] if suppression_of(x) == Some(Suppression::Interpolated) => {
                (map, s, o, m, t, Suppression::Interpolated)
            }
            _ => {
                return Err(format!(
                    "`{name}`: a configuration is written \
                     map-<smoothing>-<operator>-<magnitude>-t<theta bins>[-interpolated]"
                ))
            }
        };
        if map != "map" {
            return Err(format!("`{name}`: a configuration name starts with `map-`"));
        }
        let bad = |what: &str, v: &str| format!("`{name}`: unknown {what} `{v}`");
        let theta_bins = match t {
            "t32" => 32,
            "t16" => 16,
            _ => return Err(bad("theta resolution (t32 or t16)", t)),
        };
        Ok(MapConfig {
            smoothing: smoothing_of(s).ok_or_else(|| bad("smoothing", s))?,
            operator: operator_of(o).ok_or_else(|| bad("operator", o))?,
            magnitude: magnitude_of(m).ok_or_else(|| bad("magnitude", m))?,
            theta_bins,
            suppression,
        })
    }

    /// The edge stage ([`EdgeConfig::demo_with`], with the
    /// configuration's suppression).
    ///
    /// ```
    /// use fixsight::pipeline::{Suppression, DEMO};
    /// use fixsight_verify::frontier::GRID;
    /// assert_eq!(GRID[14].edges(), DEMO);
    /// assert_eq!(GRID[22].edges().suppression, Suppression::Interpolated);
    /// ```
    pub fn edges(&self) -> EdgeConfig {
        EdgeConfig {
            suppression: self.suppression,
            ..EdgeConfig::demo_with(self.smoothing, self.operator, self.magnitude)
        }
    }

    /// The whole job: `PointJobConfig::DEMO_QVGA` with [`Self::edges`] and
    /// `theta_bins` columns over the demo's span (the step doubled for 16).
    ///
    /// ```
    /// use fixsight_verify::frontier::GRID;
    /// assert_eq!(GRID[14].job(), fixsight::pipeline::PointJobConfig::DEMO_QVGA);
    /// assert_eq!(GRID[17].job().vote.theta_step_log2, 11);
    /// ```
    pub fn job(&self) -> PointJobConfig {
        let d = PointJobConfig::DEMO_QVGA;
        let (bins, step) = if self.theta_bins == d.vote.theta_bins {
            (d.vote.theta_bins, d.vote.theta_step_log2)
        } else {
            (d.vote.theta_bins / 2, d.vote.theta_step_log2 + 1)
        };
        PointJobConfig {
            edges: self.edges(),
            vote: fixsight::lines::VoteParams {
                theta_bins: bins,
                theta_step_log2: step,
                ..d.vote
            },
            ..d
        }
    }
}

/// The figures of one configuration.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct MapPoint {
    /// [`MapConfig::name`].
    pub name: String,
    /// Smoothing, operator and magnitude names.
    pub smoothing: String,
    /// Operator name.
    pub operator: String,
    /// Magnitude name.
    pub magnitude: String,
    /// Fractional bits of the gradients.
    pub frac_bits: u8,
    /// Bin-width shift of the automatic thresholds.
    pub bin_shift: u8,
    /// Vote columns.
    pub theta_bins: usize,
    /// One-to-one F1 per image.
    pub f1: BTreeMap<String, f64>,
    /// Lowest F1 per image class.
    pub f1_worst_by_class: BTreeMap<String, f64>,
    /// Lowest F1 over every image.
    pub f1_worst: f64,
    /// Frames of the sequence run.
    pub frames: usize,
    /// Mean `|d rho|` px of the selected tape edges against the truth.
    pub line_rho_err_px_mean: f64,
    /// Largest `|d rho|` px.
    pub line_rho_err_px_max: f64,
    /// Mean `|d theta|` degrees.
    pub line_theta_err_deg_mean: f64,
    /// Frames without a marking.
    pub lost_frames: usize,
    /// Frames whose marking holds a wrong line for a tape edge
    /// ([`crate::pipeline::job::wrong_edge_frames`]: farther from the
    /// true edge than half the tape's width).
    #[serde(default)]
    pub wrong_edge_frames: usize,
    /// First frame with a drift warning.
    pub first_warning: Option<usize>,
    /// Cortex-M4 instructions per pixel of the bench stage, when measured.
    pub m4_instr_per_px: Option<f64>,
    /// Working memory of the job type, bytes.
    pub ram_bytes: usize,
    /// Code the job's kernel id adds on the M4, when measured.
    pub code_bytes: Option<u64>,
    /// On the Pareto front.
    pub pareto: bool,
    /// An `f32` configuration ([`float`]): needs a core with a
    /// single-precision FPU.
    #[serde(default)]
    pub float: bool,
}

/// The whole map (`frontier.json`).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Frontier {
    /// What the edge figures are measured against.
    pub reference: String,
    /// The images of the edge figures, with their class.
    pub images: Vec<(String, String)>,
    /// Clock of the recommendation, MHz.
    pub clock_mhz: f64,
    /// Frame rate of the recommendation.
    pub fps: f64,
    /// Instructions per pixel the part affords at one per cycle (QVGA).
    pub budget_instr_per_px: f64,
    /// The configurations.
    pub points: Vec<MapPoint>,
    /// The recommended configuration.
    pub recommended: Option<String>,
    /// The recommendation in words.
    pub verdict: String,
    /// Where the costs come from (`targets.json`), or why they are missing.
    pub costs_from: String,
}

/// One image's reference: the full-`f64` Canny edges with its own
/// thresholds, thinned (module docs).
pub struct Reference {
    /// Image name.
    pub name: String,
    /// Image class name.
    pub class: String,
    /// The image.
    pub scene: Scene,
    /// Reference edge map, 0/255.
    pub edges: Vec<u8>,
}

/// The references of `scenes`, with the demo rule's share and ratio.
pub fn references(scenes: &[Scene]) -> Vec<Reference> {
    let (permille, ratio) = match fixsight::pipeline::DEMO.thresholds {
        ThresholdRule::Auto {
            high_permille,
            low_ratio_u0f16,
            ..
        } => (high_permille, low_ratio_u0f16 as f64 / 65536.0),
        ThresholdRule::Fixed { .. } => (900, 0.5),
    };
    scenes
        .iter()
        .map(|s| {
            let sup = suppressed_f64(&s.gray, s.width, s.height);
            let (low, high) = thresholds_f64(&sup, permille, ratio);
            let canny = edges_f64(&sup, s.width, s.height, low, high);
            Reference {
                name: s.name.to_string(),
                class: s.class.name().to_string(),
                scene: s.clone(),
                // Thinned by the rule the configurations' edges go through.
                edges: crate::thinning::reference::reference(&canny, s.width, s.height).0,
            }
        })
        .collect()
}

/// One-to-one F1 of the configuration's edge stage on each reference.
pub fn edge_f1(cfg: &EdgeConfig, refs: &[Reference]) -> Result<Vec<f64>, String> {
    refs.iter()
        .map(|r| {
            let s = &r.scene;
            let two: Vec<u8> = s.gray.iter().chain(&s.gray).copied().collect();
            let out = run_stream(cfg, &two, s.width, s.height, 2, s.height)
                .map_err(|e| format!("{}: {e}", r.name))?;
            Ok(matched_agreement(&out.edges, &r.edges, s.width, s.height, 1).f1)
        })
        .collect()
}

/// The demo sequence's first `frames` frames, the truth and the correction
/// grid's points.
pub struct SequenceRun {
    frames: Vec<Vec<u8>>,
    truth: Vec<crate::sequence::FrameTruth>,
    grid: crate::lines::CorrectionGrid,
}

impl SequenceRun {
    /// Renders the first `frames` frames (at most the sequence's).
    pub fn new(frames: usize) -> Result<SequenceRun, String> {
        let seq = Sequence::new(&DEMO_SEQUENCE)?;
        let spec = seq.spec();
        let n = frames.min(spec.frames);
        let origin = (
            (spec.width as f64 - 1.0) / 2.0,
            (spec.height as f64 - 1.0) / 2.0,
        );
        let truth = (0..n).map(|k| seq.truth(k, origin)).collect();
        let frames = (0..n).map(|k| seq.render(k)).collect();
        let grid = sequence_correction_grid(&seq)?;
        Ok(SequenceRun {
            frames,
            truth,
            grid,
        })
    }

    /// Frames rendered.
    pub fn len(&self) -> usize {
        self.frames.len()
    }

    /// No frame.
    pub fn is_empty(&self) -> bool {
        self.frames.is_empty()
    }
}

/// Line figures of a job configuration over the sequence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineFigures {
    /// Mean `|d rho|` px.
    pub rho_mean: f64,
    /// Largest `|d rho|` px.
    pub rho_max: f64,
    /// Mean `|d theta|` degrees.
    pub theta_mean: f64,
    /// Frames without a marking.
    pub lost: usize,
    /// Frames with a wrong line for a tape edge.
    pub wrong: usize,
    /// First frame with a drift warning.
    pub first_warning: Option<usize>,
}

/// Line figures of a job configuration over the sequence.
pub fn line_figures(job: &PointJobConfig, run: &SequenceRun) -> Result<LineFigures, String> {
    let g = &run.grid;
    let grid = ControlGrid::new(&g.points, g.geom, g.k).map_err(|e| e.to_string())?;
    let fixed = run_fixed_with(job, &run.frames, Some(&grid))?;
    Ok(line_figures_of(&run.truth, &fixed.frames))
}

/// Line figures of a run's frames against the truth.
pub fn line_figures_of(truth: &[crate::sequence::FrameTruth], frames: &[JobFrame]) -> LineFigures {
    let (rho, theta) = truth_line_errors(truth, frames);
    let mean = |v: &[f64]| {
        if v.is_empty() {
            0.0
        } else {
            v.iter().sum::<f64>() / v.len() as f64
        }
    };
    LineFigures {
        rho_mean: mean(&rho),
        rho_max: rho.iter().copied().fold(0.0, f64::max),
        theta_mean: mean(&theta),
        lost: frames.iter().filter(|f| f.tape.is_none()).count(),
        wrong: wrong_edge_frames(truth, frames),
        first_warning: frames.iter().position(|f| f.warning.is_some()),
    }
}

/// The M4 figures of a bench stage: `(instr/px, code bytes)`.
pub fn m4_cost(t: &TargetsReport, stage: &str) -> Option<(f64, u64)> {
    m4_cost_of(t, None, JOB_KERNEL, stage)
}

/// The M4 figures of a bench stage of `kernel` on the plain image (`port`
/// `None`) or a port's image: `(instr/px, code bytes)`.
pub fn m4_cost_of(
    t: &TargetsReport,
    port: Option<&str>,
    kernel: &str,
    stage: &str,
) -> Option<(f64, u64)> {
    let want = format!("{kernel}/{stage}");
    t.targets
        .iter()
        .filter(|c| c.name == CORE && c.lang == "rust" && c.port.as_deref() == port)
        .flat_map(|c| &c.kernels)
        .find(|k| k.name == want)
        .map(|k| (k.instr_per_px, k.code_bytes))
}

/// Evaluates one configuration.
pub fn evaluate(
    c: &MapConfig,
    refs: &[Reference],
    run: &SequenceRun,
    targets: Option<&TargetsReport>,
) -> Result<MapPoint, String> {
    let edges = c.edges();
    edges.check().map_err(|e| format!("{}: {e}", c.name()))?;
    let f1s = edge_f1(&edges, refs)?;
    let lines = line_figures(&c.job(), run)?;
    let cost = targets.and_then(|t| m4_cost(t, &c.name()));
    let what = Described {
        name: c.name(),
        smoothing: smoothing_name(c.smoothing).into(),
        operator: operator_name(c.operator).into(),
        magnitude: magnitude_name(c.magnitude).into(),
        edges,
        theta_bins: c.theta_bins,
        ram_bytes: DemoPointJobQvga::ram_bytes(),
        float: false,
    };
    Ok(map_point(what, refs, &f1s, run.len(), &lines, cost))
}

/// What a configuration is, for its [`MapPoint`].
pub(crate) struct Described {
    pub(crate) name: String,
    pub(crate) smoothing: String,
    pub(crate) operator: String,
    pub(crate) magnitude: String,
    /// Its integer edge settings (fractional bits, threshold rule).
    pub(crate) edges: EdgeConfig,
    pub(crate) theta_bins: usize,
    pub(crate) ram_bytes: usize,
    pub(crate) float: bool,
}

/// The [`MapPoint`] of a configuration from its figures: F1 per image
/// (in the order of `refs`), line figures over `frames` frames, and the
/// bench stage's `(instr/px, code bytes)` when measured.
pub(crate) fn map_point(
    d: Described,
    refs: &[Reference],
    f1s: &[f64],
    frames: usize,
    lines: &LineFigures,
    cost: Option<(f64, u64)>,
) -> MapPoint {
    let mut f1 = BTreeMap::new();
    let mut by_class: BTreeMap<String, f64> = BTreeMap::new();
    for (r, &v) in refs.iter().zip(f1s) {
        f1.insert(r.name.clone(), v);
        let e = by_class.entry(r.class.clone()).or_insert(1.0);
        *e = e.min(v);
    }
    let bin_shift = match d.edges.thresholds {
        ThresholdRule::Auto { shift, .. } => shift,
        ThresholdRule::Fixed { .. } => 0,
    };
    MapPoint {
        name: d.name,
        smoothing: d.smoothing,
        operator: d.operator,
        magnitude: d.magnitude,
        frac_bits: d.edges.frac_bits,
        bin_shift,
        theta_bins: d.theta_bins,
        f1_worst: f1s.iter().copied().fold(1.0, f64::min),
        f1,
        f1_worst_by_class: by_class,
        frames,
        line_rho_err_px_mean: lines.rho_mean,
        line_rho_err_px_max: lines.rho_max,
        line_theta_err_deg_mean: lines.theta_mean,
        lost_frames: lines.lost,
        wrong_edge_frames: lines.wrong,
        first_warning: lines.first_warning,
        m4_instr_per_px: cost.map(|c| c.0),
        ram_bytes: d.ram_bytes,
        code_bytes: cost.map(|c| c.1),
        pareto: false,
        float: d.float,
    }
}

/// Marks the Pareto front (module docs) among the points with a cost.
///
/// ```
/// use fixsight_verify::frontier::{mark_front, MapPoint};
/// # fn p(name: &str, cost: f64, f1: f64) -> MapPoint {
/// #     MapPoint { name: name.into(), smoothing: String::new(), operator: String::new(),
/// #         magnitude: String::new(), frac_bits: 0, bin_shift: 0, theta_bins: 32,
/// #         f1: Default::default(), f1_worst_by_class: Default::default(), f1_worst: f1,
/// #         frames: 0, line_rho_err_px_mean: 0.0, line_rho_err_px_max: 0.0,
/// #         line_theta_err_deg_mean: 0.0, lost_frames: 0, wrong_edge_frames: 0, first_warning: None,
/// #         m4_instr_per_px: Some(cost), ram_bytes: 0, code_bytes: None, pareto: false,
/// #         float: false }
/// # }
/// let mut v = vec![p("a", 100.0, 0.90), p("b", 200.0, 0.96), p("c", 250.0, 0.95)];
/// mark_front(&mut v);
/// assert_eq!(v.iter().map(|p| p.pareto).collect::<Vec<_>>(), [true, true, false]);
/// // As accurate at the edges but cheaper: on the front only while it
/// // loses no more frames.
/// let mut w = vec![p("d", 200.0, 0.96), p("e", 190.0, 0.96)];
/// w[1].lost_frames = 3;
/// mark_front(&mut w);
/// assert!(w[0].pareto && w[1].pareto);
/// w[1].lost_frames = 0;
/// mark_front(&mut w);
/// assert!(!w[0].pareto && w[1].pareto);
/// ```
pub fn mark_front(points: &mut [MapPoint]) {
    let figs: Vec<Option<(f64, f64, usize, usize)>> = points
        .iter()
        .map(|p| {
            p.m4_instr_per_px
                .map(|c| (c, p.f1_worst, p.lost_frames, p.wrong_edge_frames))
        })
        .collect();
    for (i, p) in points.iter_mut().enumerate() {
        let Some((c, f, l, w)) = figs[i] else {
            continue;
        };
        p.pareto = !figs.iter().enumerate().any(|(j, o)| {
            o.is_some_and(|(oc, of, ol, ow)| {
                j != i
                    && oc <= c
                    && of >= f
                    && ol <= l
                    && ow <= w
                    && (oc < c || of > f || ol < l || ow < w)
            })
        });
    }
}

/// The order of "more accurate" (module docs): `Greater` when `a` is.
fn accuracy(a: &MapPoint, b: &MapPoint) -> std::cmp::Ordering {
    a.f1_worst
        .total_cmp(&b.f1_worst)
        .then(b.lost_frames.cmp(&a.lost_frames))
        .then(b.line_rho_err_px_mean.total_cmp(&a.line_rho_err_px_mean))
}

/// The recommendation for a QVGA part (module docs): `(name, words)`.
pub fn recommend(points: &[MapPoint], budget: f64) -> (Option<String>, String) {
    let all_front: Vec<&MapPoint> = points.iter().filter(|p| p.pareto).collect();
    // A configuration that selects a wrong line for a tape edge in some
    // frame is recommended only when every one on the front does.
    let sound: Vec<&MapPoint> = all_front
        .iter()
        .copied()
        .filter(|p| p.wrong_edge_frames == 0)
        .collect();
    let front = if sound.is_empty() { all_front } else { sound };
    let cost = |p: &MapPoint| p.m4_instr_per_px.unwrap_or(f64::INFINITY);
    if front.is_empty() {
        return (
            None,
            "no configuration has an on-target cost (run `fixsight-verify targets` first)".into(),
        );
    }
    let good: Vec<&&MapPoint> = front.iter().filter(|p| p.f1_worst >= F1_GOAL).collect();
    if let Some(p) = good
        .iter()
        .filter(|p| cost(p) <= budget)
        .max_by(|a, b| accuracy(a, b))
    {
        return (
            Some(p.name.clone()),
            format!(
                "{} fits: {:.1} instructions per pixel against a budget of {:.1}, worst F1 {:.4}",
                p.name,
                cost(p),
                budget,
                p.f1_worst
            ),
        );
    }
    if let Some(p) = good.iter().min_by(|a, b| cost(a).total_cmp(&cost(b))) {
        return (
            Some(p.name.clone()),
            format!(
                "no configuration that reaches worst F1 {F1_GOAL} fits the budget of {budget:.1} \
                 instructions per pixel; the cheapest that does is {} at {:.1} ({:.2} times the \
                 budget, worst F1 {:.4})",
                p.name,
                cost(p),
                cost(p) / budget,
                p.f1_worst
            ),
        );
    }
    let best = front
        .iter()
        .max_by(|a, b| accuracy(a, b))
        .expect("front is not empty");
    (
        Some(best.name.clone()),
        format!(
            "no configuration reaches worst F1 {F1_GOAL}; the most accurate is {} (worst F1 \
             {:.4}, {:.1} instructions per pixel, {:.2} times the budget of {budget:.1})",
            best.name,
            best.f1_worst,
            cost(best),
            cost(best) / budget
        ),
    )
}

/// The table of the map in Markdown.
pub fn table(f: &Frontier) -> String {
    let mut s = String::new();
    s.push_str(&format!(
        "Accuracy/cost map of the whole job in point mode (QVGA). Edge F1: one to one within 1 px against {}. \
         Lines: the demo sequence, {} frames, selected tape edges against the truth. Cost: {}.\n\n",
        f.reference,
        f.points.first().map_or(0, |p| p.frames),
        f.costs_from
    ));
    let classes: Vec<&str> = crate::scene::SceneClass::ALL
        .iter()
        .map(|c| c.name())
        .filter(|c| f.images.iter().any(|(_, ic)| ic == c))
        .collect();
    s.push_str("| configuration | frac bits | bin shift | worst F1 |");
    for c in &classes {
        s.push_str(&format!(" worst F1 {c} |"));
    }
    s.push_str(" rho err px mean / max | theta err deg mean | lost frames | wrong-edge frames | first warning | M4 instr/px | RAM B | front |\n|---|---:|---:|---:|");
    for _ in &classes {
        s.push_str("---:|");
    }
    s.push_str("---:|---:|---:|---:|---:|---:|---:|:---:|\n");
    for p in &f.points {
        let rec = f.recommended.as_deref() == Some(p.name.as_str());
        s.push_str(&format!(
            "| {}{}{} | {} | {} | {:.4} |",
            p.name,
            if p.float { " (f32, FPU)" } else { "" },
            if rec { " (recommended)" } else { "" },
            p.frac_bits,
            p.bin_shift,
            p.f1_worst
        ));
        for c in &classes {
            s.push_str(&format!(
                " {:.4} |",
                p.f1_worst_by_class.get(*c).unwrap_or(&f64::NAN)
            ));
        }
        s.push_str(&format!(
            " {:.2} / {:.2} | {:.2} | {} | {} | {} | {} | {} | {} |\n",
            p.line_rho_err_px_mean,
            p.line_rho_err_px_max,
            p.line_theta_err_deg_mean,
            p.lost_frames,
            p.wrong_edge_frames,
            p.first_warning.map_or("none".into(), |k| k.to_string()),
            p.m4_instr_per_px
                .map_or("not measured".into(), |c| format!("{c:.2}")),
            p.ram_bytes,
            if p.pareto { "yes" } else { "" }
        ));
    }
    if f.points.iter().any(|p| p.float) {
        s.push_str(
            "\nConfigurations marked (f32, FPU) run the f32 edge stage of `ports/cortex-m4f-float` \
             with the kernel crate's line stages; they need a core with a single-precision FPU \
             (Cortex-M4F), and their cost is that of the image `cortex-m4+cortex-m4f-float`.\n",
        );
    }
    s.push_str(&format!(
        "\nBudget at {} MHz and {} frames/s, QVGA, one instruction per cycle: {:.1} instructions per pixel. {}.\n",
        f.clock_mhz, f.fps, f.budget_instr_per_px, f.verdict
    ));
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_are_unique() {
        let names: Vec<String> = GRID.iter().map(MapConfig::name).collect();
        for (c, n) in GRID.iter().zip(&names) {
            assert_eq!(MapConfig::parse(n).as_ref(), Ok(c));
            assert!(c.edges().check().is_ok(), "{n}");
            assert!(c.edges().bins_needed() <= fixsight::pipeline::DEMO.bins_needed());
        }
        let mut u = names.clone();
        u.sort();
        u.dedup();
        assert_eq!(u.len(), names.len());
    }

    /// The stage names of the harness's `<mac>!(s, o, m, t, step[,
    /// "interpolated"])` lines in `targets/harness/src/bench.rs`, written
    /// `<prefix><s>-<o>-<m>-t<t>[-interpolated]`.
    pub(crate) fn harness_stage_names(mac: &str, prefix: &str) -> Vec<String> {
        let src = include_str!("../../../targets/harness/src/bench.rs");
        let open = format!("{mac}!(");
        src.lines()
            .filter_map(|l| l.trim().strip_prefix(open.as_str()))
            .map(|l| {
                let f: Vec<&str> = l
                    .trim_end_matches("),")
                    .split(',')
                    .map(|p| p.trim().trim_matches('"'))
                    .collect();
                let suffix = match f.get(5) {
                    Some(&"interpolated") => "-interpolated",
                    _ => "",
                };
                format!("{prefix}{}-{}-{}-t{}{suffix}", f[0], f[1], f[2], f[3])
            })
            .collect()
    }

    /// The harness measures the same list, in the same order (its
    /// `map_stage!` lines in `targets/harness/src/bench.rs`).
    #[test]
    fn the_harness_measures_the_same_grid() {
        let ours: Vec<String> = GRID.iter().map(MapConfig::name).collect();
        assert_eq!(harness_stage_names("map_stage", "map-"), ours);
    }

    #[test]
    fn bad_names_say_what_is_wrong() {
        for (n, want) in [
            ("gauss7-sobel-l1-t32", "map-<smoothing>"),
            ("xyz-gauss7-sobel-l1-t32", "starts with"),
            ("map-gauss7-prewitt-l1-t32", "operator"),
            ("map-gauss7-sobel-l3-t32", "magnitude"),
            ("map-gauss7-sobel-l1-t64", "theta"),
            ("map-gauss7-sobel-l1-t32-nearest", "[-interpolated]"),
        ] {
            let e = MapConfig::parse(n).unwrap_err();
            assert!(e.contains(want), "{n}: {e}");
        }
    }

    #[test]
    fn recommendation_follows_the_rules() {
        let p = |name: &str, cost: f64, f1: f64| MapPoint {
            name: name.into(),
            smoothing: String::new(),
            operator: String::new(),
            magnitude: String::new(),
            frac_bits: 0,
            bin_shift: 0,
            theta_bins: 32,
            f1: BTreeMap::new(),
            f1_worst_by_class: BTreeMap::new(),
            f1_worst: f1,
            frames: 0,
            line_rho_err_px_mean: 0.0,
            line_rho_err_px_max: 0.0,
            line_theta_err_deg_mean: 0.0,
            lost_frames: 0,
            wrong_edge_frames: 0,
            first_warning: None,
            m4_instr_per_px: Some(cost),
            ram_bytes: 0,
            code_bytes: None,
            pareto: false,
            float: false,
        };
        let mut v = vec![p("a", 60.0, 0.90), p("b", 200.0, 0.96), p("c", 300.0, 0.97)];
        mark_front(&mut v);
        // Within 72.9 only `a`, below the goal: the cheapest good one.
        let (r, words) = recommend(&v, 72.9);
        assert_eq!(r.as_deref(), Some("b"));
        assert!(words.contains("2.74 times"), "{words}");
        // A budget that fits both good ones: the more accurate.
        assert_eq!(recommend(&v, 400.0).0.as_deref(), Some("c"));
        // Nothing reaches the goal: the most accurate.
        let mut w = vec![p("a", 60.0, 0.90), p("b", 200.0, 0.93)];
        mark_front(&mut w);
        assert_eq!(recommend(&w, 72.9).0.as_deref(), Some("b"));
        // Equal edge figures: the one that loses fewer frames, though dearer.
        let mut t = vec![p("fine", 260.0, 0.93), p("coarse", 250.0, 0.93)];
        t[1].lost_frames = 22;
        mark_front(&mut t);
        assert!(t[0].pareto && t[1].pareto);
        assert_eq!(recommend(&t, 72.9).0.as_deref(), Some("fine"));
        // A wrong line for a tape edge in one frame: still on the front
        // when it is cheaper or more accurate, but not recommended while a
        // front configuration without one exists.
        let mut u = vec![p("sure", 260.0, 0.92), p("sharper", 300.0, 0.94)];
        u[1].wrong_edge_frames = 1;
        mark_front(&mut u);
        assert!(u[0].pareto && u[1].pareto);
        assert_eq!(recommend(&u, 72.9).0.as_deref(), Some("sure"));
        u[0].wrong_edge_frames = 2;
        mark_front(&mut u);
        assert_eq!(recommend(&u, 72.9).0.as_deref(), Some("sharper"));
    }
}
