//! Integer reference model of `fixsight::nms`, written from the kernel's
//! documented model and nothing else.
//!
//! The neighbour offsets are derived here from the sector's angle
//! (`45 * sector` degrees, x right, y down): the *after* neighbour is
//! `(round(cos a), round(sin a))`, the *before* neighbour its opposite.
//! A pixel keeps its magnitude when it is strictly greater than the before
//! neighbour and not smaller than the after neighbour; neighbours outside
//! the image read as 0.
//!
//! Kernel id `nms.suppress` (contract **bit-exact**, checked on the
//! suppression inputs of the edge chain on the demo scenes, see
//! [`crate::edge_chain`]): inputs `mag` u16, `dir` u8, params `{}`, output `nms`
//! u16.
//!
//! Kernel id `nms.suppress_interpolated` (contract **bit-exact**, on the
//! same intermediates): inputs `mag` u16, `gx` i16, `gy` i16, params `{}`,
//! output `nms` u16. Reference: [`reference::suppress_interpolated`], the
//! `f64` suppression along the exact gradient angle (interpolated samples
//! `(1 - t) M1 + t M2` with `t = min/max` of the gradient's components,
//! ties within a relative `1e-12` settled by the raster rule), the same
//! function as step 3 of the chain's full-`f64` Canny. It shares no code
//! with the kernel's exact integer comparisons; on integer inputs the two
//! agree (see [`reference::TIE_TOLERANCE`]).

pub mod check;
pub mod golden;
pub mod reference;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "nms",
    kernels: &["nms.suppress", "nms.suppress_interpolated"],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
