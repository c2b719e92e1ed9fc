//! `fxs_marking_select`: pick the two edges of a floor tape from the lines
//! of the corrected view (kernel id `marking.select`), over
//! `fixsight::marking`.
//!
//! Not a safety function (see the header): the selection may steer a
//! vehicle; that needs safety-rated sensing and control.
//!
//! The kernel takes a slice of its own `Candidate` type (not `repr(C)`),
//! so the C lines are copied into a stack array of at most
//! [`FXS_MARKING_MAX_LINES`] candidates (768 bytes).

use crate::boundary::{buf, disjoint, size, Checked, Span};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER};
use fixsight::marking::{
    self, Candidate, Marking, MarkingConfig, MarkingLimits, Polarity, TapeContrast,
};

/// `FXS_MARKING_MAX_LINES`: most lines one call takes.
pub const FXS_MARKING_MAX_LINES: usize = 64;

/// `FXS_CONTRAST_BRIGHTER`: light tape on a darker floor.
pub const FXS_CONTRAST_BRIGHTER: i32 = 0;
/// `FXS_CONTRAST_DARKER`: dark tape on a lighter floor.
pub const FXS_CONTRAST_DARKER: i32 = 1;
/// `FXS_CONTRAST_EITHER`: the contrast rule is off.
pub const FXS_CONTRAST_EITHER: i32 = 2;

/// `fxs_marking_line`: a line offered to the selection.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsMarkingLine {
    /// `rho`, Q4 pixels from the image centre.
    pub rho_q4: i32,
    /// `theta`, binary angle (65536 = 180 degrees).
    pub theta: u16,
    /// 1 rising (brighter along the normal), -1 falling, 0 unknown.
    pub polarity: i16,
    /// Votes or another non-negative strength.
    pub votes: u32,
}

/// `fxs_marking_limits`: the limits of the rules (`MarkingLimits`), Q4
/// rows and columns about the image centre.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsMarkingLimits {
    /// Near row.
    pub near_row_q4: i32,
    /// Far row.
    pub far_row_q4: i32,
    /// Horizon row.
    pub horizon_row_q4: i32,
    /// Largest tilt from the vertical, binary units, 0..=21845.
    pub max_tilt: i32,
    /// Smallest near-row column.
    pub near_x_min_q4: i32,
    /// Largest near-row column.
    pub near_x_max_q4: i32,
    /// Smallest near-row separation.
    pub near_sep_min_q4: i32,
    /// Expected near-row separation.
    pub near_sep_nominal_q4: i32,
    /// Largest near-row separation.
    pub near_sep_max_q4: i32,
    /// Convergence tolerance.
    pub converge_tol_q4: i32,
    /// `FXS_CONTRAST_*`.
    pub contrast: i32,
}

/// `fxs_marking_result`: the outcome, word for word the kernel's record.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsMarkingResult {
    /// 1 found, 0 not.
    pub found: i32,
    /// Index of the left edge in the input, -1 when not found.
    pub left: i32,
    /// Index of the right edge, -1 when not found.
    pub right: i32,
    /// Near-row column of the left edge, Q4 (0 when not found).
    pub near_left_q4: i32,
    /// Near-row column of the right edge.
    pub near_right_q4: i32,
    /// Far-row column of the left edge.
    pub far_left_q4: i32,
    /// Far-row column of the right edge.
    pub far_right_q4: i32,
    /// Vote sum, low 32 bits.
    pub votes_lo: u32,
    /// Vote sum, high 32 bits.
    pub votes_hi: u32,
    /// When not found: lines that passed the single-line rules, else 0.
    pub candidates: i32,
}

/// The checked kernel configuration of C limits.
pub(crate) fn config(l: &FxsMarkingLimits) -> Checked<MarkingConfig> {
    let contrast = match l.contrast {
        FXS_CONTRAST_BRIGHTER => TapeContrast::Brighter,
        FXS_CONTRAST_DARKER => TapeContrast::Darker,
        FXS_CONTRAST_EITHER => TapeContrast::Either,
        _ => return Err(FXS_E_BAD_PARAMETER),
    };
    let max_tilt = u16::try_from(size(l.max_tilt)?).map_err(|_| FXS_E_BAD_PARAMETER)?;
    kernel(MarkingConfig::new(MarkingLimits {
        near_row_q4: l.near_row_q4,
        far_row_q4: l.far_row_q4,
        horizon_row_q4: l.horizon_row_q4,
        max_tilt,
        near_x_min_q4: l.near_x_min_q4,
        near_x_max_q4: l.near_x_max_q4,
        near_sep_min_q4: l.near_sep_min_q4,
        near_sep_nominal_q4: l.near_sep_nominal_q4,
        near_sep_max_q4: l.near_sep_max_q4,
        converge_tol_q4: l.converge_tol_q4,
        contrast,
    }))
}

/// `fxs_marking_select`: the tape's two edges among `lines[count]`
/// (`count` 0..=FXS_MARKING_MAX_LINES; `lines` may be NULL when `count` is
/// 0), under `limits`, into `*result`.
///
/// # Safety
/// `lines` holds `count` readable `fxs_marking_line`; `limits` readable;
/// `result` one writable `fxs_marking_result`.
#[no_mangle]
pub unsafe extern "C" fn fxs_marking_select(
    lines: *const FxsMarkingLine,
    count: usize,
    limits: *const FxsMarkingLimits,
    result: *mut FxsMarkingResult,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; every pointer is checked first.
    finish(unsafe {
        (|| {
            let l = buf(limits, 1, false)?;
            let r = buf(result, 1, true)?;
            let src = if count == 0 && lines.is_null() {
                None
            } else {
                Some(buf(lines, count, false)?)
            };
            disjoint(&[l.span(), r.span(), src.map_or(Span::EMPTY, |b| b.span())])?;
            if count > FXS_MARKING_MAX_LINES {
                return Err(FXS_E_BAD_PARAMETER);
            }
            let cfg = config(&l.slice()[0])?;
            let mut cand = [Candidate::default(); FXS_MARKING_MAX_LINES];
            for (c, s) in cand.iter_mut().zip(src.map_or(&[][..], |b| b.slice())) {
                *c = Candidate {
                    rho_q4: s.rho_q4,
                    theta: s.theta,
                    votes: s.votes,
                    polarity: match s.polarity {
                        1 => Polarity::Rising,
                        -1 => Polarity::Falling,
                        0 => Polarity::Unknown,
                        _ => return Err(FXS_E_BAD_PARAMETER),
                    },
                };
            }
            r.slice_mut()[0] = result_of(&marking::select(&cand[..count], &cfg));
            Ok(())
        })()
    })
}

/// The C result of a selection: the kernel's record word for word.
pub(crate) fn result_of(m: &Marking) -> FxsMarkingResult {
    let w = m.record();
    FxsMarkingResult {
        found: w[0],
        left: w[1],
        right: w[2],
        near_left_q4: w[3],
        near_right_q4: w[4],
        far_left_q4: w[5],
        far_right_q4: w[6],
        votes_lo: w[7] as u32,
        votes_hi: w[8] as u32,
        candidates: w[9],
    }
}

/// The C form of kernel limits.
pub(crate) fn limits_c(l: &MarkingLimits) -> FxsMarkingLimits {
    FxsMarkingLimits {
        near_row_q4: l.near_row_q4,
        far_row_q4: l.far_row_q4,
        horizon_row_q4: l.horizon_row_q4,
        max_tilt: l.max_tilt as i32,
        near_x_min_q4: l.near_x_min_q4,
        near_x_max_q4: l.near_x_max_q4,
        near_sep_min_q4: l.near_sep_min_q4,
        near_sep_nominal_q4: l.near_sep_nominal_q4,
        near_sep_max_q4: l.near_sep_max_q4,
        converge_tol_q4: l.converge_tol_q4,
        contrast: match l.contrast {
            TapeContrast::Brighter => FXS_CONTRAST_BRIGHTER,
            TapeContrast::Darker => FXS_CONTRAST_DARKER,
            TapeContrast::Either => FXS_CONTRAST_EITHER,
        },
    }
}
