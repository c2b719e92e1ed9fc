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

pub mod check;
pub mod golden;
pub mod reference;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "nms",
    kernels: &["nms.suppress"],
    composed_on_host: false,
    check: check::check,
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
