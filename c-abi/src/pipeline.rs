//! `fxs_edge_stream_*`: the streamed edge stage (kernel id
//! `pipeline.edge_stream`) over `fixsight::pipeline::EdgeStream`, at one
//! fixed set of capacities: rows up to [`FXS_EDGE_STREAM_MAX_WIDTH`]
//! pixels, a class map of [`FXS_EDGE_STREAM_MAP_WORDS`] words (every frame
//! with `ceil(width / 16) * height` at most that: 320 x 240 and smaller),
//! [`FXS_EDGE_STREAM_BINS`] histogram bins and
//! [`FXS_EDGE_STREAM_POINT_GRADIENTS`] stored point gradients. The whole
//! stream lives by value in caller storage (`fxs_edge_stream`); nothing is
//! borrowed.
//!
//! Camera rows are pushed as 8-bit luma; the other pixel formats of the
//! kernel (YUYV, UYVY, RGB565, raw) are not wrapped yet.

use core::num::NonZeroU32;

use crate::boundary::{
    buf, disjoint, load, load_mut, optional, size, storage, store_cleared, Checked, Span,
};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER};
use fixsight::pipeline::{
    self, map_words, EdgeConfig, EdgeStream, FrameReport, Magnitude, Operator, Smoothing,
    Suppression, Thinning, ThresholdRule,
};

/// `FXS_EDGE_STREAM_MAX_WIDTH`: widest frame.
pub const FXS_EDGE_STREAM_MAX_WIDTH: usize = 320;
/// `FXS_EDGE_STREAM_MAP_WORDS`: class-map words, `ceil(width / 16) *
/// height` at most this (`map_words(320, 240)`).
pub const FXS_EDGE_STREAM_MAP_WORDS: usize = 4800;
/// `FXS_EDGE_STREAM_BINS`: histogram bins (every configuration with
/// `bins_needed` at most this).
pub const FXS_EDGE_STREAM_BINS: usize = 1024;
/// `FXS_EDGE_STREAM_POINT_GRADIENTS`: candidates whose gradient is stored
/// per frame.
pub const FXS_EDGE_STREAM_POINT_GRADIENTS: usize = 4096;

const _: () = assert!(FXS_EDGE_STREAM_MAP_WORDS == map_words(320, 240));

/// The stream kept in `fxs_edge_stream`.
pub(crate) type StreamObj = EdgeStream<
    FXS_EDGE_STREAM_MAX_WIDTH,
    FXS_EDGE_STREAM_MAP_WORDS,
    FXS_EDGE_STREAM_BINS,
    FXS_EDGE_STREAM_POINT_GRADIENTS,
>;

crate::boundary::object_storage!(
    /// `fxs_edge_stream`: storage for an edge stream.
    FxsEdgeStream for StreamObj, tag 0x4658_5031,
    FXS_EDGE_STREAM_SIZE = (FXS_EDGE_STREAM_SIZE_32: 45976, FXS_EDGE_STREAM_SIZE_64: 46016)
);
crate::boundary::zero_valid!(StreamObj);

/// `FXS_SMOOTHING_NONE` .. `FXS_SMOOTHING_GAUSS7`: `fxs_edge_config.smoothing`.
pub const FXS_SMOOTHING_NONE: i32 = 0;
/// `[1 2 1] / 4`.
pub const FXS_SMOOTHING_BINOMIAL3: i32 = 1;
/// `[1 4 6 4 1] / 16`.
pub const FXS_SMOOTHING_BINOMIAL5: i32 = 2;
/// `[1 6 15 20 15 6 1] / 64`.
pub const FXS_SMOOTHING_BINOMIAL7: i32 = 3;
/// `[1 14 62 102 62 14 1] / 256`.
pub const FXS_SMOOTHING_GAUSS7: i32 = 4;
/// `fxs_edge_config.operator`: Sobel.
pub const FXS_OPERATOR_SOBEL: i32 = 0;
/// Scharr.
pub const FXS_OPERATOR_SCHARR: i32 = 1;
/// `fxs_edge_config.magnitude`: `|gx| + |gy|`.
pub const FXS_MAGNITUDE_L1: i32 = 0;
/// The 4 % L2 estimate.
pub const FXS_MAGNITUDE_L2_APPROX: i32 = 1;
/// The nearest integer to the L2 norm.
pub const FXS_MAGNITUDE_L2_ROUND: i32 = 2;
/// `fxs_edge_config.threshold_rule`: `low`, `high` for every frame.
pub const FXS_THRESHOLDS_FIXED: i32 = 0;
/// Automatic thresholds from each frame's histogram, for the next frame.
pub const FXS_THRESHOLDS_AUTO: i32 = 1;
/// `fxs_edge_config.thinning`: off.
pub const FXS_THINNING_OFF: i32 = 0;
/// Until nothing changes.
pub const FXS_THINNING_UNTIL_STABLE: i32 = 1;
/// At most `thinning_cap` iterations.
pub const FXS_THINNING_AT_MOST: i32 = 2;
/// Suppression along the nearest of four directions (`Suppression::Sectors`).
pub const FXS_SUPPRESSION_SECTORS: i32 = 0;
/// Suppression against the magnitudes interpolated along the gradient
/// (`Suppression::Interpolated`).
pub const FXS_SUPPRESSION_INTERPOLATED: i32 = 1;

/// `fxs_edge_config`: every setting of the edge chain (`EdgeConfig`).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsEdgeConfig {
    /// `FXS_SMOOTHING_*`.
    pub smoothing: i32,
    /// `FXS_OPERATOR_*`.
    pub gradient_operator: i32,
    /// Fractional bits of `gx`, `gy`, at most twice the smoothing shift.
    pub frac_bits: i32,
    /// `FXS_MAGNITUDE_*`.
    pub magnitude: i32,
    /// `FXS_THRESHOLDS_*`.
    pub threshold_rule: i32,
    /// Low threshold (fixed), or of the first frame (auto), 1..=65535.
    pub low: i32,
    /// High threshold (fixed), or of the first frame (auto), low..=65535.
    pub high: i32,
    /// Auto: bin width `2^shift`, 0..=15.
    pub shift: i32,
    /// Auto: share below `high`, permille, 1..=999.
    pub high_permille: i32,
    /// Auto: `low / high` as U0F16 bits, 1..=65535.
    pub low_ratio_u0f16: i32,
    /// `FXS_THINNING_*`.
    pub thinning: i32,
    /// At-most cap, 1..=65535 (ignored otherwise).
    pub thinning_cap: i32,
    /// `FXS_SUPPRESSION_*`.
    pub suppression: i32,
}

/// `fxs_edge_report`: what a finished frame gave (`FrameReport`).
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsEdgeReport {
    /// Frame width.
    pub width: u32,
    /// Rows in the frame.
    pub height: u32,
    /// Low threshold used.
    pub low: u16,
    /// High threshold used.
    pub high: u16,
    /// Low threshold carried to the next frame.
    pub next_low: u16,
    /// High threshold carried to the next frame.
    pub next_high: u16,
    /// 1 when the automatic rule hit a limit.
    pub threshold_at_limit: u32,
    /// Suppressed magnitudes at or above low.
    pub candidates: u32,
    /// Edge points after hysteresis and thinning.
    pub edge_points: u32,
    /// Candidates whose gradient was not stored.
    pub gradients_dropped: u32,
    /// Hysteresis: edge pixels.
    pub link_edges: u32,
    /// Hysteresis: raster passes.
    pub link_passes: u32,
    /// Hysteresis: deferred neighbours.
    pub link_deferred: u32,
    /// Hysteresis: most stack entries in use.
    pub link_peak_stack: u32,
    /// Thinning: iterations.
    pub thin_iterations: u32,
    /// Thinning: pixels deleted.
    pub thin_deleted: u32,
    /// Thinning: 1 when the cap stopped it.
    pub thin_capped: u32,
}

/// `fxs_edge_point`: an edge point and, when stored, its gradient.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsEdgePoint {
    /// Column.
    pub x: u16,
    /// Row.
    pub y: u16,
    /// `gx` (0 when not stored).
    pub gx: i16,
    /// `gy` (0 when not stored).
    pub gy: i16,
    /// 1 when `gx`, `gy` were stored, else 0.
    pub has_gradient: u32,
}

/// A C `int32_t` setting as a narrower unsigned type.
fn narrow<T: TryFrom<usize>>(v: i32) -> Checked<T> {
    T::try_from(size(v)?).map_err(|_| FXS_E_BAD_PARAMETER)
}

/// The kernel configuration of a C one (ranges of the kernel's types here,
/// the rest by `EdgeConfig::check` in `configure`).
pub(crate) fn config(c: &FxsEdgeConfig) -> Checked<EdgeConfig> {
    let smoothing = match c.smoothing {
        FXS_SMOOTHING_NONE => Smoothing::None,
        FXS_SMOOTHING_BINOMIAL3 => Smoothing::Binomial3,
        FXS_SMOOTHING_BINOMIAL5 => Smoothing::Binomial5,
        FXS_SMOOTHING_BINOMIAL7 => Smoothing::Binomial7,
        FXS_SMOOTHING_GAUSS7 => Smoothing::Gauss7,
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let operator = match c.gradient_operator {
        FXS_OPERATOR_SOBEL => Operator::Sobel,
        FXS_OPERATOR_SCHARR => Operator::Scharr,
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let magnitude = match c.magnitude {
        FXS_MAGNITUDE_L1 => Magnitude::L1,
        FXS_MAGNITUDE_L2_APPROX => Magnitude::L2Approx,
        FXS_MAGNITUDE_L2_ROUND => Magnitude::L2Round,
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let (low, high) = (narrow(c.low)?, narrow(c.high)?);
    let thresholds = match c.threshold_rule {
        FXS_THRESHOLDS_FIXED => ThresholdRule::Fixed { low, high },
        FXS_THRESHOLDS_AUTO => ThresholdRule::Auto {
            shift: narrow(c.shift)?,
            high_permille: narrow(c.high_permille)?,
            low_ratio_u0f16: narrow(c.low_ratio_u0f16)?,
            first_low: low,
            first_high: high,
        },
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let thinning = match c.thinning {
        FXS_THINNING_OFF => Thinning::Off,
        FXS_THINNING_UNTIL_STABLE => Thinning::UntilStable,
        FXS_THINNING_AT_MOST => Thinning::AtMost(narrow(c.thinning_cap)?),
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let suppression = match c.suppression {
        FXS_SUPPRESSION_SECTORS => Suppression::Sectors,
        FXS_SUPPRESSION_INTERPOLATED => Suppression::Interpolated,
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    Ok(EdgeConfig {
        smoothing,
        operator,
        frac_bits: narrow(c.frac_bits)?,
        magnitude,
        thresholds,
        thinning,
        suppression,
    })
}

/// `fxs_edge_stream_init`: a stream for `width x height` frames under
/// `config`, checked (configuration, sizes against the capacities).
///
/// # Safety
/// `stream` writable storage used by no one else; `config` readable.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_init(
    stream: *mut FxsEdgeStream,
    config: *const FxsEdgeConfig,
    width: i32,
    height: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let own = storage::<StreamObj>(stream)?;
            let c = buf(config, 1, false)?;
            disjoint(&[own, c.span()])?;
            let cfg = self::config(&c.slice()[0])?;
            let (w, h) = (size(width)?, size(height)?);
            // A fresh stream, configured in place: a failed init leaves
            // the storage not initialised.
            store_cleared(stream, StreamObj::clear, |s| {
                kernel(s.configure(&cfg, w, h))
            })
        })()
    })
}

/// `fxs_edge_stream_demo_config`: the demo configuration
/// (`fixsight::pipeline::DEMO`).
///
/// # Safety
/// `config` one writable `fxs_edge_config`.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_demo_config(config: *mut FxsEdgeConfig) -> FxsStatus {
    // SAFETY: forwarded to the caller; the pointer is checked first.
    finish(unsafe { buf(config, 1, true).map(|b| b.slice_mut()[0] = config_of(&pipeline::DEMO)) })
}

/// The C form of a kernel configuration.
pub(crate) fn config_of(d: &EdgeConfig) -> FxsEdgeConfig {
    let smoothing = match d.smoothing {
        Smoothing::None => FXS_SMOOTHING_NONE,
        Smoothing::Binomial3 => FXS_SMOOTHING_BINOMIAL3,
        Smoothing::Binomial5 => FXS_SMOOTHING_BINOMIAL5,
        Smoothing::Binomial7 => FXS_SMOOTHING_BINOMIAL7,
        Smoothing::Gauss7 => FXS_SMOOTHING_GAUSS7,
    };
    let operator = match d.operator {
        Operator::Sobel => FXS_OPERATOR_SOBEL,
        Operator::Scharr => FXS_OPERATOR_SCHARR,
    };
    let magnitude = match d.magnitude {
        Magnitude::L1 => FXS_MAGNITUDE_L1,
        Magnitude::L2Approx => FXS_MAGNITUDE_L2_APPROX,
        Magnitude::L2Round => FXS_MAGNITUDE_L2_ROUND,
    };
    let (rule, low, high, shift, permille, ratio) = match d.thresholds {
        ThresholdRule::Fixed { low, high } => (FXS_THRESHOLDS_FIXED, low, high, 0, 0, 0),
        ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            first_low,
            first_high,
        } => (
            FXS_THRESHOLDS_AUTO,
            first_low,
            first_high,
            shift,
            high_permille,
            low_ratio_u0f16,
        ),
    };
    let (thinning, cap) = match d.thinning {
        Thinning::Off => (FXS_THINNING_OFF, 0),
        Thinning::UntilStable => (FXS_THINNING_UNTIL_STABLE, 0),
        Thinning::AtMost(n) => (FXS_THINNING_AT_MOST, n),
    };
    FxsEdgeConfig {
        smoothing,
        gradient_operator: operator,
        frac_bits: d.frac_bits as i32,
        magnitude,
        threshold_rule: rule,
        low: low as i32,
        high: high as i32,
        shift: shift as i32,
        high_permille: permille as i32,
        low_ratio_u0f16: ratio as i32,
        thinning,
        thinning_cap: cap as i32,
        suppression: match d.suppression {
            Suppression::Sectors => FXS_SUPPRESSION_SECTORS,
            Suppression::Interpolated => FXS_SUPPRESSION_INTERPOLATED,
        },
    }
}

/// `fxs_edge_stream_reset`: drops the frame in progress (the thresholds
/// carried from the last finished frame stay).
///
/// # Safety
/// `stream` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_reset(stream: *mut FxsEdgeStream) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<StreamObj>(stream).map(|s| s.reset()) })
}

/// `fxs_edge_stream_set_candidate_budget`: the candidate budget of the
/// automatic thresholds (`EdgeStream::set_candidate_budget`; `budget` 0:
/// none, the state after init). From the end of the frame in progress on,
/// the pair carried to the next frame is raised when needed so that the
/// finished frame would have had at most `budget` candidates
/// (`Thresholds::within_budget`). `FXS_EDGE_STREAM_POINT_GRADIENTS` is the
/// budget that keeps every candidate's gradient.
///
/// # Safety
/// `stream` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_set_candidate_budget(
    stream: *mut FxsEdgeStream,
    budget: u32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        load_mut::<StreamObj>(stream).map(|s| s.set_candidate_budget(NonZeroU32::new(budget)))
    })
}

/// `fxs_edge_stream_push_row`: the next camera row (`row_len == width`
/// bytes of luma); `*rows_pushed` (may be NULL) the rows of the frame so
/// far.
///
/// # Safety
/// `stream` initialised and used by no one else; `row` `row_len` readable
/// bytes; `rows_pushed` NULL or one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_push_row(
    stream: *mut FxsEdgeStream,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        crate::boundary::push_row(
            stream,
            row,
            row_len,
            rows_pushed,
            |_: &StreamObj| [Span::EMPTY; 2],
            |s, r| kernel(s.push_row(r)),
        )
    })
}

/// A kernel report as a C one.
pub(crate) fn report_of(r: &FrameReport) -> FxsEdgeReport {
    FxsEdgeReport {
        width: r.width as u32,
        height: r.height as u32,
        low: r.thresholds.0,
        high: r.thresholds.1,
        next_low: r.next_thresholds.0,
        next_high: r.next_thresholds.1,
        threshold_at_limit: r.threshold_at_limit as u32,
        candidates: r.candidates,
        edge_points: r.edge_points,
        gradients_dropped: r.gradients_dropped,
        link_edges: r.hysteresis.edges,
        link_passes: r.hysteresis.passes,
        link_deferred: r.hysteresis.deferred,
        link_peak_stack: r.hysteresis.peak_stack,
        thin_iterations: r.thinning.iterations,
        thin_deleted: r.thinning.deleted,
        thin_capped: r.thinning.capped as u32,
    }
}

/// Finishes a frame (`short`: with fewer rows than declared).
///
/// # Safety
/// As `fxs_edge_stream_finish`.
unsafe fn end(stream: *mut FxsEdgeStream, report: *mut FxsEdgeReport, short: bool) -> Checked<()> {
    let r = optional(report)?;
    disjoint(&[
        Span::object(stream, true),
        r.map_or(Span::EMPTY, |b| b.span()),
    ])?;
    // SAFETY: initialised and exclusively used by the caller's guarantee.
    let s = unsafe { load_mut::<StreamObj>(stream)? };
    let rep = kernel(if short { s.finish_short() } else { s.finish() })?;
    if let Some(r) = r {
        // SAFETY: checked, writable, disjoint from the stream.
        unsafe { r.slice_mut()[0] = report_of(&rep) };
    }
    Ok(())
}

/// `fxs_edge_stream_finish`: ends a frame of the declared height;
/// `report` may be NULL. Points and edge rows can then be read until the
/// next push.
///
/// # Safety
/// `stream` initialised and used by no one else; `report` NULL or one
/// writable `fxs_edge_report`.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_finish(
    stream: *mut FxsEdgeStream,
    report: *mut FxsEdgeReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { end(stream, report, false) })
}

/// `fxs_edge_stream_finish_short`: ends a frame after fewer rows than
/// declared (at least one).
///
/// # Safety
/// As `fxs_edge_stream_finish`.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_finish_short(
    stream: *mut FxsEdgeStream,
    report: *mut FxsEdgeReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { end(stream, report, true) })
}

/// `fxs_edge_stream_points`: the edge points of the finished frame in
/// raster order, skipping the first `first`, up to `out_len` into `out`;
/// `*written` how many.
///
/// # Safety
/// `stream` initialised, not written during the call; `out` `out_len`
/// writable `fxs_edge_point`; `written` one writable `uintptr_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_points(
    stream: *const FxsEdgeStream,
    first: usize,
    out: *mut FxsEdgePoint,
    out_len: usize,
    written: *mut usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let s = load::<StreamObj>(stream)?;
            let o = buf(out, out_len, true)?;
            let n = buf(written, 1, true)?;
            disjoint(&[Span::object(stream, false), o.span(), n.span()])?;
            let pts = kernel(s.points())?;
            let mut k = 0;
            for (d, p) in o.slice_mut().iter_mut().zip(pts.skip(first)) {
                let (gx, gy) = p.gradient.unwrap_or((0, 0));
                *d = FxsEdgePoint {
                    x: p.x,
                    y: p.y,
                    gx,
                    gy,
                    has_gradient: p.gradient.is_some() as u32,
                };
                k += 1;
            }
            n.slice_mut()[0] = k;
            Ok(())
        })()
    })
}

/// `fxs_edge_stream_edge_row`: row `y` of the finished frame's edge map
/// (255 edge, 0 not) into `out` (`out_len >= width`).
///
/// # Safety
/// `stream` initialised, not written during the call; `out` `out_len`
/// writable bytes.
#[no_mangle]
pub unsafe extern "C" fn fxs_edge_stream_edge_row(
    stream: *const FxsEdgeStream,
    y: i32,
    out: *mut u8,
    out_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let s = load::<StreamObj>(stream)?;
            let o = buf(out, out_len, true)?;
            disjoint(&[Span::object(stream, false), o.span()])?;
            kernel(s.edge_row(size(y)?, o.slice_mut()))
        })()
    })
}
