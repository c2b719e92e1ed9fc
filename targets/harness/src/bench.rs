//! QVGA (320 x 240) benchmark frames: the instructions-per-pixel figures.
//!
//! The stages form the front of the edge pipeline on one synthetic frame,
//! each reading what an earlier stage wrote, so every kernel sees realistic
//! data (the direction kernel's branches depend on it):
//!
//! ```text
//! frame --binomial5--> smooth --sobel_x--> gx --+--magnitude_l1--------> mag
//!                             --sobel_y--> gy --+--magnitude_l2_approx--> mag2
//!                                               +--direction-----------> dir
//! ```
//!
//! plus the other presets (binomial3/7, Scharr x) for comparison; then the
//! edge chain of `chain.edges` (`host-verify/src/chain/`) on the frame,
//! kernel by kernel, with the settings of `fixsight::pipeline::DEMO` (its
//! fused smoothed Sobel: 9 taps, the 7-tap Gaussian with Sobel, gradients
//! 4x Sobel; rounded L2 magnitude; its threshold rule):
//!
//! ```text
//! frame --chain_sobel_x/y--> gx, gy --chain_magnitude_l2_round--> mag2
//!                                   --chain_direction-----------> dir
//! (mag2, dir) --suppress--> sup --thresholds--> (low, high)
//! (sup, low, high) --classify--> codes --link--> edges --thin--> thin
//! ```
//!
//! (link and thin in place on one image); then `pipeline_edge_stream`, the
//! same chain as one streamed stage (`pipeline.edge_stream`:
//! `fixsight::pipeline::EdgeStream` with `DEMO`, 240 rows pushed, the frame
//! finished, its points read), what a firmware that streams camera rows
//! pays per frame; then `point_job_qvga`, the whole job in point mode
//! (`pipeline.point_job`: `PointJobConfig::DEMO_QVGA`, 240 rows pushed, the
//! edge points corrected through the bench grid below and voted with the
//! demo gate, peaks, marking selection, tracker update), instructions per
//! pixel of one frame (the bench frame holds no floor tape, so the marking
//! and tracker steps see whatever lines the disc and rectangle give);
//! then the stages of the accuracy/cost map, `map-<smoothing>-<operator>-
//! <magnitude>-t<theta bins>`: the same whole job with the edge stage
//! `EdgeConfig::demo_with(smoothing, operator, magnitude)` and the vote's
//! theta columns (32 of 2.8 degrees, the demo's, or 16 of 5.6 degrees over
//! the same span), read back by `fixsight-verify frontier`, and in the
//! image of the f32 port only (feature `port-cortex-m4f-float`, which runs
//! no other stage) `map-f32-<smoothing>-<operator>-<root>-t<theta bins>`,
//! the same job with the port's `f32` edge stage (`float.point_job`);
//! then `image_job_qvga`, the whole job in image mode
//! (`pipeline.image_job`: the same settings, the 240 camera rows warped
//! row by row through the bench grid as an undistortion grid, clamped
//! border, ring of `band_rows(1)` rows, each corrected row into the edge
//! stage, votes at the corrected positions); and
//! the two warp forms on the
//! frame with the integer barrel lens of [`bench_lens`]: `warp_pixel_map`
//! (a pixel map, F = 5) and `warp_control_grid` (the same lens as a control
//! grid with points every 16 pixels, as a blob, output in strips of 16
//! rows) and `warp_grid_stream` (the same grid fed one source row at a
//! time through `GridStream`, output row by row, ring of `band_rows(1)`
//! rows: image mode without a frame buffer); then line voting of the thinned edges with the chain's
//! gradients in the demo configuration (`VoteParams::DEMO_QVGA`: 32 columns
//! of 2.8 degrees, 201 rows of 2 px), `vote_gated` (+-15 degree orientation
//! gate) and `vote_ungated`, whose `px` is the number of edge points times
//! the 32 columns, so their figure is instructions per edge point per theta
//! column. Each stage is one
//! measured call (instruction window and stack painting, like a golden
//! vector). Every stage uses clamp borders.
//!
//! The frame is integer-only and deterministic: a ramp `64 + (x + 2y) / 8`,
//! plus 96 inside a disc of radius 70 centred at (110, 120) and inside the
//! rectangle x in 200..290, y in 40..200, plus noise `0..15` from the LCG
//! `s = s * 1664525 + 1013904223` (top 4 bits), clamped to 255.

use crate::kernels::{Arena, Buf, Img, Param, Params};
use crate::vectors::Elem;
use crate::Console;
use core::fmt::Write;
use fixsight::pipeline::{GradientTaps, ThresholdRule, DEMO};
use fixsight::warp::{ControlGrid, WarpGeometry};

/// Frame width.
pub const WIDTH: usize = 320;
/// Frame height.
pub const HEIGHT: usize = 240;

/// Image slots shared by the stages: element type, width, height, channels.
const SLOTS: [(Elem, usize, usize, usize); 18] = [
    (Elem::U8, WIDTH, HEIGHT, 1),         // 0 frame
    (Elem::U8, WIDTH, HEIGHT, 1),         // 1 smooth
    (Elem::I16, WIDTH, HEIGHT, 1),        // 2 gx
    (Elem::I16, WIDTH, HEIGHT, 1),        // 3 gy
    (Elem::U16, WIDTH, HEIGHT, 1),        // 4 mag (L1)
    (Elem::U16, WIDTH, HEIGHT, 1),        // 5 mag2 (approx L2)
    (Elem::U8, WIDTH, HEIGHT, 1),         // 6 dir
    (Elem::U8, WIDTH, HEIGHT, 1),         // 7 scratch u8
    (Elem::I16, WIDTH, HEIGHT, 1),        // 8 scratch i16
    (Elem::U16, WIDTH, HEIGHT, 1),        // 9 suppressed magnitude
    (Elem::U16, 2, 1, 1),                 // 10 thresholds (low, high)
    (Elem::U8, WIDTH, HEIGHT, 1),         // 11 edge codes, then edges, then thinned
    (Elem::I32, WIDTH, HEIGHT, 2),        // 12 pixel map, raw (x, y) per pixel
    (Elem::U8, GRID_BLOB_LEN, 1, 1),      // 13 grid blob
    (Elem::U16, 4, 1, 1),                 // 14 pipeline thresholds
    (Elem::U16, 201, 32, 1),              // 15 line accumulator (demo: 32 columns x 201 rows)
    (Elem::I32, GRID_COLS, GRID_ROWS, 2), // 16 bench grid points
    (Elem::I32, JOB_WORDS, 1, 1),         // 17 whole-job record of one frame
];

/// One measured stage.
pub struct Stage {
    /// Report name.
    pub name: &'static str,
    /// Kernel id (dispatched through the table in `src/kernels/mod.rs`).
    pub kernel: &'static str,
    /// Parameters, in the golden-manifest form.
    pub params: &'static [(&'static str, Param)],
    /// Input slots.
    pub inputs: &'static [usize],
    /// Output slots.
    pub outputs: &'static [usize],
}

const fn sep(
    h: &'static [i64],
    hs: i64,
    v: &'static [i64],
    vs: i64,
    out: &'static str,
) -> [(&'static str, Param); 6] {
    [
        ("h", Param::Ints(h)),
        ("h_shift", Param::Int(hs)),
        ("v", Param::Ints(v)),
        ("v_shift", Param::Int(vs)),
        ("border", Param::Str("clamp")),
        ("output", Param::Str(out)),
    ]
}

/// Params of the preset stages (`filter.binomial5`, `filter.sobel_x`, ...):
/// the border rule; taps and output type are the preset's.
const CLAMP: [(&str, Param); 1] = [("border", Param::Str("clamp"))];
/// The fused gradient taps of `fixsight::pipeline::DEMO` (the edge chain's
/// smoothed Sobel, `smoothed_sobel` in `host-verify/src/edge_chain.rs`,
/// custom taps, so `filter.separable`: the 7-tap Gaussian
/// `[1 14 62 102 62 14 1]/256` convolved with Sobel's taps, one rounding,
/// gradients 4x Sobel).
const DEMO_TAPS: GradientTaps = DEMO.gradient_taps();
const DEMO_LEN: usize = DEMO_TAPS.deriv().len();

/// `i16` taps widened to the manifest's integers (zero past the end).
const fn widen(t: &[i16]) -> [i64; 9] {
    let mut out = [0i64; 9];
    let mut i = 0;
    while i < t.len() {
        out[i] = t[i] as i64;
        i += 1;
    }
    out
}

const DEMO_DERIV: [i64; 9] = widen(DEMO_TAPS.deriv());
const DEMO_CROSS: [i64; 9] = widen(DEMO_TAPS.cross());
const CHAIN_SOBEL_X: [(&str, Param); 6] = sep(
    DEMO_DERIV.split_at(DEMO_LEN).0,
    DEMO_TAPS.h_shift as i64,
    DEMO_CROSS.split_at(DEMO_LEN).0,
    DEMO_TAPS.v_shift as i64,
    "i16",
);
const CHAIN_SOBEL_Y: [(&str, Param); 6] = sep(
    DEMO_CROSS.split_at(DEMO_LEN).0,
    DEMO_TAPS.h_shift as i64,
    DEMO_DERIV.split_at(DEMO_LEN).0,
    DEMO_TAPS.v_shift as i64,
    "i16",
);
/// The threshold rule of `fixsight::pipeline::DEMO`: bins covering its
/// largest magnitude, its bin width, share and ratio.
const DEMO_RULE: (i64, i64, i64) = match DEMO.thresholds {
    ThresholdRule::Auto {
        shift,
        high_permille,
        low_ratio_u0f16,
        ..
    } => (shift as i64, high_permille as i64, low_ratio_u0f16 as i64),
    ThresholdRule::Fixed { .. } => (0, 1, 1),
};
const THRESHOLDS: [(&str, Param); 4] = [
    ("bins", Param::Int(DEMO.bins_needed() as i64)),
    ("shift", Param::Int(DEMO_RULE.0)),
    ("high_permille", Param::Int(DEMO_RULE.1)),
    ("low_ratio_u0f16", Param::Int(DEMO_RULE.2)),
];
/// The streamed edge stage on one frame with `fixsight::pipeline::DEMO`.
const PIPELINE: [(&str, Param); 3] = [
    ("frames", Param::Int(1)),
    ("height", Param::Int(HEIGHT as i64)),
    ("last_rows", Param::Int(HEIGHT as i64)),
];
/// The whole job in point mode (`pipeline.point_job`) with
/// `PointJobConfig::DEMO_QVGA` on one frame, edge points corrected through
/// the bench grid (the warp stages' lens), the demo gate; the fields are
/// those the dispatcher reads (`targets/harness/src/kernels/pipeline.rs`).
const JOB: fixsight::pipeline::PointJobConfig = fixsight::pipeline::PointJobConfig::DEMO_QVGA;
const JOB_LIMITS: &fixsight::marking::MarkingLimits = JOB.marking.limits();
const JOB_MARKING: [i64; 10] = [
    JOB_LIMITS.near_row_q4 as i64,
    JOB_LIMITS.far_row_q4 as i64,
    JOB_LIMITS.horizon_row_q4 as i64,
    JOB_LIMITS.max_tilt as i64,
    JOB_LIMITS.near_x_min_q4 as i64,
    JOB_LIMITS.near_x_max_q4 as i64,
    JOB_LIMITS.near_sep_min_q4 as i64,
    JOB_LIMITS.near_sep_nominal_q4 as i64,
    JOB_LIMITS.near_sep_max_q4 as i64,
    JOB_LIMITS.converge_tol_q4 as i64,
];
const JOB_REFERENCE: [i64; 2] = [
    JOB.track.reference_q4.0 as i64,
    JOB.track.reference_q4.1 as i64,
];
/// Words of one frame's record (the dispatcher's layout).
const JOB_WORDS: usize = crate::kernels::pipeline::WORDS;
const POINT_JOB: [(&str, Param); 15] = [
    ("frames", Param::Int(1)),
    ("height", Param::Int(HEIGHT as i64)),
    ("theta_start", Param::Int(JOB.vote.theta_start as i64)),
    (
        "theta_step_log2",
        Param::Int(JOB.vote.theta_step_log2 as i64),
    ),
    ("theta_bins", Param::Int(JOB.vote.theta_bins as i64)),
    ("rho_step_log2", Param::Int(JOB.vote.rho_step_log2 as i64)),
    ("rho_bins", Param::Int(JOB.vote.rho_bins as i64)),
    (
        "gate",
        Param::Int(match JOB.vote.gate {
            Some(g) => g as i64,
            None => 0,
        }),
    ),
    ("peak_threshold", Param::Int(JOB.peaks.threshold as i64)),
    ("peak_radius", Param::Int(JOB.peaks.radius_theta as i64)),
    ("marking", Param::Ints(&JOB_MARKING)),
    ("reference", Param::Ints(&JOB_REFERENCE)),
    ("rho_meas_var", Param::Int(JOB.track.rho.meas_var as i64)),
    ("grid_log2", Param::Int(BENCH_GRID_LOG2 as i64)),
    ("grid_frac_bits", Param::Int(WARP_FRAC_BITS as i64)),
];

/// A whole-job stage of the accuracy/cost map (`fixsight-verify
/// frontier`, `host-verify/src/frontier/`): [`POINT_JOB`] with the edge
/// stage `EdgeConfig::demo_with(smoothing, operator, magnitude)` with
/// `suppression` (`sectors` or `interpolated`) and
/// `theta_bins` vote columns of `2^theta_step_log2` over the demo's
/// span.
const fn map_job(
    smoothing: &'static str,
    operator: &'static str,
    magnitude: &'static str,
    theta_bins: i64,
    theta_step_log2: i64,
    suppression: &'static str,
) -> [(&'static str, Param); 19] {
    let mut out = [("", Param::Null); 19];
    let mut i = 0;
    while i < POINT_JOB.len() {
        out[i] = POINT_JOB[i];
        i += 1;
    }
    out[3] = ("theta_step_log2", Param::Int(theta_step_log2));
    out[4] = ("theta_bins", Param::Int(theta_bins));
    out[15] = ("smoothing", Param::Str(smoothing));
    out[16] = ("operator", Param::Str(operator));
    out[17] = ("magnitude", Param::Str(magnitude));
    out[18] = ("suppression", Param::Str(suppression));
    out
}

/// A [`Stage`] of the accuracy/cost map named
/// `map-<smoothing>-<operator>-<magnitude>-t<theta bins>` (and
/// `-interpolated` with the interpolating suppression), the name
/// `fixsight-verify frontier` reads back from `targets.json`.
macro_rules! map_stage {
    ($s:literal, $o:literal, $m:literal, $t:literal, $step:literal) => {
        map_stage_of!($s, $o, $m, $t, $step, "sectors", "")
    };
    ($s:literal, $o:literal, $m:literal, $t:literal, $step:literal, "interpolated") => {
        map_stage_of!($s, $o, $m, $t, $step, "interpolated", "-interpolated")
    };
}

/// The [`Stage`] of [`map_stage!`] with the suppression's parameter value
/// and name suffix.
macro_rules! map_stage_of {
    ($s:literal, $o:literal, $m:literal, $t:literal, $step:literal, $sup:literal, $suffix:literal) => {
        Stage {
            name: concat!("map-", $s, "-", $o, "-", $m, "-t", $t, $suffix),
            kernel: "pipeline.point_job",
            params: &map_job($s, $o, $m, $t, $step, $sup),
            inputs: &[0, 16],
            outputs: &[17],
        }
    };
}

/// A whole-job stage of the `f32` port (`float.point_job`, feature
/// `port-cortex-m4f-float`): [`map_job`] with the magnitude `l2_round`
/// (whose first thresholds and bin width the `f32` stage takes, on the
/// same gradient scale) and `suppression`, plus the square root `root`.
const fn f32_job(
    smoothing: &'static str,
    operator: &'static str,
    theta_bins: i64,
    theta_step_log2: i64,
    root: &'static str,
    suppression: &'static str,
) -> [(&'static str, Param); 20] {
    let m = map_job(
        smoothing,
        operator,
        "l2_round",
        theta_bins,
        theta_step_log2,
        suppression,
    );
    let mut out = [("", Param::Null); 20];
    let mut i = 0;
    while i < m.len() {
        out[i] = m[i];
        i += 1;
    }
    out[19] = ("root", Param::Str(root));
    out
}

/// A [`Stage`] of the `f32` port in the accuracy/cost map, named
/// `map-f32-<smoothing>-<operator>-<root>-t<theta bins>` (and
/// `-interpolated` with the interpolating suppression), read back by
/// `fixsight-verify frontier` (its list `F32_GRID` is checked against
/// these lines by a test there). Other images skip it (no dispatch).
macro_rules! f32_stage {
    ($s:literal, $o:literal, $root:literal, $t:literal, $step:literal) => {
        f32_stage_of!($s, $o, $root, $t, $step, "sectors", "")
    };
    ($s:literal, $o:literal, $root:literal, $t:literal, $step:literal, "interpolated") => {
        f32_stage_of!($s, $o, $root, $t, $step, "interpolated", "-interpolated")
    };
}

/// The [`Stage`] of [`f32_stage!`] with the suppression's parameter value
/// and name suffix.
macro_rules! f32_stage_of {
    ($s:literal, $o:literal, $root:literal, $t:literal, $step:literal, $sup:literal, $suffix:literal) => {
        Stage {
            name: concat!("map-f32-", $s, "-", $o, "-", $root, "-t", $t, $suffix),
            kernel: "float.point_job",
            params: &f32_job($s, $o, $t, $step, $root, $sup),
            inputs: &[0, 16],
            outputs: &[17],
        }
    };
}

/// The demo 1024-entry hysteresis stack.
const STACK: [(&str, Param); 1] = [("stack", Param::Int(1024))];

/// Fractional bits of the bench warp coordinates.
const WARP_FRAC_BITS: u32 = 5;
/// Grid step of the bench grid, log2 (16 output pixels).
const BENCH_GRID_LOG2: u32 = 4;
/// Grid points along `n` output pixels (the rule in the kernel's `warp`
/// docs: `max(2, ceil((n - 1) / S) + 1)`).
const fn grid_points(n: usize) -> usize {
    let s = 1 << BENCH_GRID_LOG2;
    let c = (n - 1).div_ceil(s) + 1;
    if c < 2 {
        2
    } else {
        c
    }
}
/// Control points of the bench grid across and down.
const GRID_COLS: usize = grid_points(WIDTH);
const GRID_ROWS: usize = grid_points(HEIGHT);
/// Blob bytes of the bench grid: header and 8 bytes per point.
const GRID_BLOB_LEN: usize =
    fixsight::warp::BLOB_HEADER_LEN + 8 * grid_points(WIDTH) * grid_points(HEIGHT);
const PIXEL_MAP: [(&str, Param); 2] = [
    ("border", Param::Str("clamp")),
    ("frac_bits", Param::Int(WARP_FRAC_BITS as i64)),
];
const CONTROL_GRID: [(&str, Param); 2] = [
    ("border", Param::Str("clamp")),
    ("strip_rows", Param::Int(16)),
];
const GRID_STREAM: [(&str, Param); 2] = [
    ("border", Param::Str("clamp")),
    ("strip_rows", Param::Int(1)),
];

/// The demo line-voting configuration (`VoteParams::DEMO_QVGA`), gated
/// (+-15 degrees) or not.
const fn vote(gate: i64) -> [(&'static str, Param); 10] {
    let d = fixsight::lines::VoteParams::DEMO_QVGA;
    [
        ("width", Param::Int(d.width as i64)),
        ("height", Param::Int(d.height as i64)),
        ("theta_start", Param::Int(d.theta_start as i64)),
        ("theta_step_log2", Param::Int(d.theta_step_log2 as i64)),
        ("theta_bins", Param::Int(d.theta_bins as i64)),
        ("rho_step_log2", Param::Int(d.rho_step_log2 as i64)),
        ("rho_bins", Param::Int(d.rho_bins as i64)),
        ("trig_frac_bits", Param::Int(d.trig_frac_bits as i64)),
        ("gate", Param::Int(gate)),
        ("weight_shift", Param::Int(-1)),
    ]
}
const VOTE_GATED: [(&str, Param); 10] = vote(5461);
const VOTE_UNGATED: [(&str, Param); 10] = vote(0);

/// The stages in run order.
pub static STAGES: &[Stage] = &[
    Stage {
        name: "binomial5",
        kernel: "filter.binomial5",
        params: &CLAMP,
        inputs: &[0],
        outputs: &[1],
    },
    Stage {
        name: "sobel_x",
        kernel: "filter.sobel_x",
        params: &CLAMP,
        inputs: &[1],
        outputs: &[2],
    },
    Stage {
        name: "sobel_y",
        kernel: "filter.sobel_y",
        params: &CLAMP,
        inputs: &[1],
        outputs: &[3],
    },
    Stage {
        name: "magnitude_l1",
        kernel: "gradient.magnitude_l1",
        params: &[],
        inputs: &[2, 3],
        outputs: &[4],
    },
    Stage {
        name: "magnitude_l2_approx",
        kernel: "gradient.magnitude_l2_approx",
        params: &[],
        inputs: &[2, 3],
        outputs: &[5],
    },
    Stage {
        name: "direction",
        kernel: "gradient.direction",
        params: &[],
        inputs: &[2, 3],
        outputs: &[6],
    },
    Stage {
        name: "binomial3",
        kernel: "filter.binomial3",
        params: &CLAMP,
        inputs: &[0],
        outputs: &[7],
    },
    Stage {
        name: "binomial7",
        kernel: "filter.binomial7",
        params: &CLAMP,
        inputs: &[0],
        outputs: &[7],
    },
    Stage {
        name: "scharr_x",
        kernel: "filter.scharr_x",
        params: &CLAMP,
        inputs: &[1],
        outputs: &[8],
    },
    Stage {
        name: "chain_sobel_x",
        kernel: "filter.separable",
        params: &CHAIN_SOBEL_X,
        inputs: &[0],
        outputs: &[2],
    },
    Stage {
        name: "chain_sobel_y",
        kernel: "filter.separable",
        params: &CHAIN_SOBEL_Y,
        inputs: &[0],
        outputs: &[3],
    },
    Stage {
        name: "chain_magnitude_l2_round",
        kernel: "gradient.magnitude_l2_round",
        params: &[],
        inputs: &[2, 3],
        outputs: &[5],
    },
    Stage {
        name: "chain_direction",
        kernel: "gradient.direction",
        params: &[],
        inputs: &[2, 3],
        outputs: &[6],
    },
    Stage {
        name: "suppress",
        kernel: "nms.suppress",
        params: &[],
        inputs: &[5, 6],
        outputs: &[9],
    },
    Stage {
        name: "thresholds",
        kernel: "hysteresis.thresholds",
        params: &THRESHOLDS,
        inputs: &[9],
        outputs: &[10],
    },
    Stage {
        name: "classify",
        kernel: "hysteresis.classify",
        params: &[],
        inputs: &[9, 10],
        outputs: &[11],
    },
    Stage {
        name: "link",
        kernel: "hysteresis.link",
        params: &STACK,
        inputs: &[],
        outputs: &[11],
    },
    Stage {
        name: "thin",
        kernel: "thinning.thin",
        params: &[],
        inputs: &[],
        outputs: &[11],
    },
    Stage {
        name: "pipeline_edge_stream",
        kernel: "pipeline.edge_stream",
        params: &PIPELINE,
        inputs: &[0],
        outputs: &[14],
    },
    Stage {
        name: "point_job_qvga",
        kernel: "pipeline.point_job",
        params: &POINT_JOB,
        inputs: &[0, 16],
        outputs: &[17],
    },
    // The accuracy/cost map (`fixsight-verify frontier`): the whole job
    // in point mode with each edge configuration of its grid (the host's
    // list in `host-verify/src/frontier/mod.rs`, checked against this one
    // by a test there).
    map_stage!("none", "sobel", "l1", 32, 10),
    map_stage!("none", "sobel", "l2_approx", 32, 10),
    map_stage!("none", "sobel", "l2_round", 32, 10),
    map_stage!("binomial3", "sobel", "l1", 32, 10),
    map_stage!("binomial3", "sobel", "l2_approx", 32, 10),
    map_stage!("binomial3", "sobel", "l2_round", 32, 10),
    map_stage!("binomial5", "sobel", "l1", 32, 10),
    map_stage!("binomial5", "sobel", "l2_approx", 32, 10),
    map_stage!("binomial5", "sobel", "l2_round", 32, 10),
    map_stage!("binomial7", "sobel", "l1", 32, 10),
    map_stage!("binomial7", "sobel", "l2_approx", 32, 10),
    map_stage!("binomial7", "sobel", "l2_round", 32, 10),
    map_stage!("gauss7", "sobel", "l1", 32, 10),
    map_stage!("gauss7", "sobel", "l2_approx", 32, 10),
    map_stage!("gauss7", "sobel", "l2_round", 32, 10),
    map_stage!("binomial3", "scharr", "l2_round", 32, 10),
    map_stage!("gauss7", "scharr", "l2_round", 32, 10),
    map_stage!("gauss7", "sobel", "l2_round", 16, 11),
    map_stage!("binomial3", "sobel", "l1", 16, 11),
    map_stage!("binomial3", "sobel", "l2_approx", 32, 10, "interpolated"),
    map_stage!("binomial5", "sobel", "l2_round", 32, 10, "interpolated"),
    map_stage!("gauss7", "sobel", "l2_approx", 32, 10, "interpolated"),
    map_stage!("gauss7", "sobel", "l2_round", 32, 10, "interpolated"),
    map_stage!("gauss7", "sobel", "l2_round", 16, 11, "interpolated"),
    // The f32 edge stage of `ports/cortex-m4f-float` with the kernel
    // crate's line stages (the port's image only).
    f32_stage!("gauss7", "sobel", "fast", 32, 10),
    f32_stage!("gauss7", "sobel", "newton", 32, 10),
    f32_stage!("gauss7", "sobel", "fast", 32, 10, "interpolated"),
    f32_stage!("gauss7", "sobel", "newton", 32, 10, "interpolated"),
    Stage {
        name: "image_job_qvga",
        kernel: "pipeline.image_job",
        params: &POINT_JOB,
        inputs: &[0, 16],
        outputs: &[17],
    },
    Stage {
        name: "warp_pixel_map",
        kernel: "warp.pixel_map",
        params: &PIXEL_MAP,
        inputs: &[0, 12],
        outputs: &[7],
    },
    Stage {
        name: "warp_control_grid",
        kernel: "warp.control_grid",
        params: &CONTROL_GRID,
        inputs: &[0, 13],
        outputs: &[7],
    },
    Stage {
        name: "warp_grid_stream",
        kernel: "warp.grid_stream",
        params: &GRID_STREAM,
        inputs: &[0, 13],
        outputs: &[7],
    },
    Stage {
        name: "vote_gated",
        kernel: "lines.accumulator",
        params: &VOTE_GATED,
        inputs: &[11, 2, 3, 4],
        outputs: &[15],
    },
    Stage {
        name: "vote_ungated",
        kernel: "lines.accumulator",
        params: &VOTE_UNGATED,
        inputs: &[11, 2, 3, 4],
        outputs: &[15],
    },
];

/// Fills the synthetic frame (see the module docs).
fn fill_frame(frame: &mut [u8]) {
    let mut s: u32 = 0x1234_5678;
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            let (xi, yi) = (x as i32, y as i32);
            let mut v = 64 + (xi + 2 * yi) / 8 + (s >> 28) as i32;
            let (dx, dy) = (xi - 110, yi - 120);
            if dx * dx + dy * dy < 70 * 70 {
                v += 96;
            }
            if (200..290).contains(&xi) && (40..200).contains(&yi) {
                v += 96;
            }
            frame[y * WIDTH + x] = v.min(255) as u8;
        }
    }
}

/// Raw source coordinate of output position `(x, y)` (may lie past the
/// frame: grid points do) under the bench lens, a barrel undistortion
/// `src = c + d * (1 - r^2 / 2^21)` with `d` the offset from the frame
/// centre `c = (159.5, 119.5)` and `r^2 = |2d|^2` in half-pixel units
/// (factor 0.924 in the corners, so every sample stays inside the frame).
/// Integer only, floor of the raw value at `F` = [`WARP_FRAC_BITS`].
fn bench_lens(x: i64, y: i64) -> (i32, i32) {
    let (dx2, dy2) = (2 * x - (WIDTH as i64 - 1), 2 * y - (HEIGHT as i64 - 1));
    let r2 = dx2 * dx2 + dy2 * dy2;
    let f = WARP_FRAC_BITS;
    // d * 2^F = d2 * 2^(F-1); times (2^21 - r^2) / 2^21.
    let scale = (1i64 << 21) - r2;
    let raw = |d2: i64, n: usize| -> i32 {
        let centre = ((n as i64 - 1) << f) / 2;
        (centre + ((d2 * scale) >> (22 - f))) as i32
    };
    (raw(dx2, WIDTH), raw(dy2, HEIGHT))
}

/// Fills the pixel map slot with [`bench_lens`] at every output pixel.
fn fill_map(map: &mut [i32]) {
    for (i, p) in map.chunks_exact_mut(2).enumerate() {
        let (x, y) = bench_lens((i % WIDTH) as i64, (i / WIDTH) as i64);
        p[0] = x;
        p[1] = y;
    }
}

/// Writes the grid blob of [`bench_lens`] at step 16 into `blob`, using
/// `points` for the control points.
fn fill_grid(points: &mut [i32], blob: &mut [u8]) -> Result<(), fixsight::Error> {
    let g = WarpGeometry::new(WIDTH, HEIGHT, WIDTH, HEIGHT, WARP_FRAC_BITS)?;
    let (cols, _) = ControlGrid::grid_size(&g, BENCH_GRID_LOG2)?;
    for (i, p) in points.chunks_exact_mut(2).enumerate() {
        let (x, y) = bench_lens(
            ((i % cols) << BENCH_GRID_LOG2) as i64,
            ((i / cols) << BENCH_GRID_LOG2) as i64,
        );
        p[0] = x;
        p[1] = y;
    }
    ControlGrid::new(points, g, BENCH_GRID_LOG2)?.write_blob(blob)?;
    Ok(())
}

/// Runs every stage whose kernel this build serves and prints one `bench`
/// line per stage.
pub fn run(con: &mut Console, words: &mut [u32]) {
    let mut arena = Arena::new(words);
    let mut slots: [Img<'_>; SLOTS.len()] = Default::default();
    for (slot, &(elem, w, h, c)) in slots.iter_mut().zip(SLOTS.iter()) {
        match arena.image_filled(elem, w, h, c, 0) {
            Some(img) => *slot = img,
            None => {
                let _ = writeln!(con, "bench - - ERROR win - px 0 stack 0 arena full");
                return;
            }
        }
    }
    if let Buf::U8(f) = &mut slots[0].buf {
        fill_frame(f);
    }
    if let Buf::I32(m) = &mut slots[12].buf {
        fill_map(m);
    }
    let Some(points) = arena.i32s((GRID_BLOB_LEN - fixsight::warp::BLOB_HEADER_LEN) / 4) else {
        let _ = writeln!(con, "bench - - ERROR win - px 0 stack 0 arena full");
        return;
    };
    if let Buf::U8(blob) = &mut slots[13].buf {
        if let Err(e) = fill_grid(points, blob) {
            let _ = writeln!(con, "bench - - ERROR win - px 0 stack 0 bench grid: {e}");
            return;
        }
    }
    if let Buf::I32(p) = &mut slots[16].buf {
        p.copy_from_slice(points);
    }
    for st in STAGES {
        if crate::BENCH_ONLY && st.kernel != "float.point_job" {
            continue;
        }
        let Some(run) = crate::kernels::dispatch(st.kernel) else {
            continue;
        };
        let mut ins: [Img<'_>; 4] = Default::default();
        let mut outs: [Img<'_>; 1] = Default::default();
        for (d, &s) in ins.iter_mut().zip(st.inputs) {
            *d = core::mem::take(&mut slots[s]);
        }
        for (d, &s) in outs.iter_mut().zip(st.outputs) {
            *d = core::mem::take(&mut slots[s]);
        }
        let m = crate::measure(
            run,
            &Params::new(st.params),
            &ins[..st.inputs.len()],
            &mut outs[..st.outputs.len()],
            &mut arena,
        );
        for (d, &s) in ins.iter_mut().zip(st.inputs) {
            slots[s] = core::mem::take(d);
        }
        for (d, &s) in outs.iter_mut().zip(st.outputs) {
            slots[s] = core::mem::take(d);
        }
        // Line voting is figured per edge point per theta column (the
        // edge points of the input map times the demo's 64 columns).
        let px = if st.kernel.starts_with("lines.") {
            let edges = match &slots[st.inputs[0]].buf {
                Buf::U8(e) => e.iter().filter(|&&v| v != 0).count(),
                _ => 0,
            };
            edges * fixsight::lines::VoteParams::DEMO_QVGA.theta_bins
        } else {
            WIDTH * HEIGHT
        };
        let _ = write!(
            con,
            "bench {} {} {} win {} px {} stack {}",
            st.name,
            st.kernel,
            if m.result.is_ok() { "pass" } else { "ERROR" },
            m.window,
            px,
            m.stack
        );
        match m.result {
            Ok(()) => {
                let _ = writeln!(con);
            }
            Err(e) => {
                let _ = writeln!(con, " {e}");
            }
        }
    }
}
