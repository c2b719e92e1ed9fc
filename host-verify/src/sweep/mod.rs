//! `fixsight-verify sweep --kernel ID --param P`: a format parameter of a
//! kernel swept over a set of values, each value's output compared with the
//! kernel's `f64` reference on a set of inputs.
//!
//! # Parameters ([`PARAMS`])
//!
//! Only parameters the kernel crate lets the caller choose:
//!
//! | kernel | param | kernel field | values | other settings |
//! |---|---|---|---|---|
//! | `warp.pixel_map` | `frac_bits` | `WarpGeometry::new(.., frac_bits)` | 2..=10 | border fill 0 |
//! | `warp.control_grid` | `frac_bits` | `WarpGeometry::new(.., frac_bits)` | 2..=10 | points every 8 px (`grid_log2` 3), border fill 0 |
//! | `warp.control_grid` | `grid_log2` | `ControlGrid::new(.., grid_log2)` | 2..=6 | `frac_bits` 7, border fill 0 |
//!
//! The control grid's fixed settings are the report's `warp.*` rows'
//! (`warp::check::CHECK_GRID_LOG2`, `CHECK_FRAC_BITS`).
//! | `filter.separable` | `coeff_bits` | `Taps::new(coef, shift)`, both axes | 0..=16 (the shift range; the kernel refuses tap sets whose accumulator can overflow `i32`, from 12 bits here) | 7-tap Gaussian, sigma 1 px, border clamp, `u8` output |
//! | `lines.cos_sin` | `frac_bits` | `cos_sin(a, frac_bits)` | 8..=14 | every binary angle |
//! | `lines.accumulator` | `trig_frac_bits` | `VoteParams::trig_frac_bits` | 8..=14 | `VoteParams::DEMO_QVGA` at the image's size, rho rows to its half diagonal |
//!
//! The defaults (no `--values`) are the whole range, except `coeff_bits`
//! (2..=11: from the first value that keeps the Gaussian's outer taps in
//! view to the last the kernel takes with these taps).
//!
//! # References and error units
//!
//! * `warp.*`: the `f64` bilinear ([`crate::warp::reference::bilinear_f64`])
//!   at the exact lens coordinate of every output pixel; error in grey
//!   levels (LSB of the `u8` output). Bound, as in the `warp` contract:
//!   `0.5 + Dx ex + Dy ey` with `Dx`, `Dy` the source's largest neighbour
//!   differences (border included) and `ex`, `ey` the largest coordinate
//!   error per axis: `2^-(F+1)` for the pixel map (rounding of the exact
//!   coordinate); for the control grid the grid's own largest error
//!   against the exact map, measured at every output pixel, since the
//!   sweep's reference is the lens, not the grid's interpolation. (Half an
//!   LSB of output rounding, plus the bilinear surface's slope, at most
//!   `Dx` along x and `Dy` along y, times the coordinate error.)
//! * `filter.separable`: the direct 2-D correlation with the real Gaussian
//!   taps ([`crate::filter::reference::reference_real`]), unrounded; error
//!   in grey levels. The kernel's taps are the Gaussian rounded to
//!   `coeff_bits` fractional bits ([`gaussian_taps`]). Bound (derived here):
//!   output rounding `0.5` plus `127.5 * sum_ij |q_i q_j - g_i g_j|`: both
//!   2-D tap sets sum to 1, so the difference `d_ij` sums to 0 and
//!   `|sum d_ij p_ij| = |sum d_ij (p_ij - 127.5)| <= 127.5 sum |d_ij|` for
//!   pixels in `0..=255`; saturation only moves the output towards a
//!   reference that lies in `0..=255`.
//! * `lines.cos_sin`: `f64` `cos`, `sin` times `2^q` at all 131072 binary
//!   angles; error in LSB of Q`q`; bound `0.5 + 2^(q-22)` (kernel docs,
//!   checked in the `lines` contract).
//! * `lines.accumulator`: [`crate::lines::hough_f64`] (exact `cos`/`sin`
//!   and `rho`, the vote split linearly between the two rows around it) on
//!   the thinned edge points of the demo edge chain; the gate of both takes
//!   the kernel's integer gradient angle, so both vote in the same columns
//!   and the difference is the table and the split's rounding to 1/16 row.
//!   Error in cell units (a whole vote is 16); no analytical bound (the
//!   contract is bit-exact to the integer model).
//!
//! Per value and input: largest `|error|`, mean `|error|`, RMS and the
//! share of samples with `|error| <= 1` unit (exactly, not rounded).

pub mod eval;
pub mod plot;

use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use thiserror::Error;

/// A sweepable format parameter of a kernel.
///
/// ```
/// let p = fixsight_verify::sweep::find("lines.accumulator", None).unwrap();
/// assert_eq!((p.param, p.range, p.bound), ("trig_frac_bits", (8, 14), None));
/// ```
#[derive(Debug, Clone, Copy)]
pub struct SweepParam {
    /// Kernel id.
    pub kernel: &'static str,
    /// Parameter name.
    pub param: &'static str,
    /// Values the sweep accepts (the kernel's range of the field).
    pub range: (u32, u32),
    /// Values swept when `--values` is not given.
    pub default: (u32, u32),
    /// The kernel's other settings during the sweep.
    pub fixed: &'static str,
    /// Unit of the errors.
    pub unit: &'static str,
    /// The reference the errors are measured against.
    pub reference: &'static str,
    /// The bound's rule, if the kernel has one.
    pub bound: Option<&'static str>,
    /// Whether the kernel runs on images (`--input`, demo scenes).
    pub images: bool,
    /// Whether the kernel takes a lens (`--lens`).
    pub lens: bool,
}

/// Unit of the warp and filter errors.
const GREY: &str = "grey levels (LSB of the u8 output)";

/// The warp kernels' common fields (kernel, parameter and settings set
/// per entry).
const WARP: SweepParam = SweepParam {
    kernel: "warp.pixel_map",
    param: "frac_bits",
    range: (fixsight::warp::MIN_FRAC_BITS, fixsight::warp::MAX_FRAC_BITS),
    default: (fixsight::warp::MIN_FRAC_BITS, fixsight::warp::MAX_FRAC_BITS),
    fixed: "border fill 0",
    unit: GREY,
    reference: "f64 bilinear at the exact lens coordinate of every output pixel",
    bound: Some(
        "0.5 + Dx ex + Dy ey (Dx, Dy: largest neighbour differences of the source; ex, ey: \
         largest coordinate error per axis against the lens map)",
    ),
    images: true,
    lens: true,
};

/// Every sweepable parameter (module docs).
///
/// ```
/// use fixsight_verify::sweep::PARAMS;
/// assert_eq!(PARAMS.iter().filter(|p| p.kernel == "warp.control_grid").count(), 2);
/// assert!(PARAMS.iter().all(|p| p.range.0 <= p.default.0 && p.default.1 <= p.range.1));
/// ```
pub const PARAMS: [SweepParam; 6] = [
    WARP,
    SweepParam {
        kernel: "warp.control_grid",
        fixed: "control points every 8 px (grid_log2 3, as the report's rows), border fill 0",
        ..WARP
    },
    SweepParam {
        kernel: "warp.control_grid",
        param: "grid_log2",
        range: (fixsight::warp::MIN_GRID_LOG2, fixsight::warp::MAX_GRID_LOG2),
        default: (fixsight::warp::MIN_GRID_LOG2, fixsight::warp::MAX_GRID_LOG2),
        fixed: "frac_bits 7 (as the report's rows), border fill 0",
        ..WARP
    },
    SweepParam {
        kernel: "filter.separable",
        param: "coeff_bits",
        range: (0, fixsight::filter::MAX_TAP_SHIFT),
        default: (2, 11),
        fixed: "7-tap Gaussian, sigma 1 px, on both axes; border clamp; u8 output",
        reference: "direct 2-D f64 correlation with the real Gaussian taps, unrounded",
        bound: Some(
            "0.5 + 127.5 sum_ij |q_i q_j - g_i g_j| (q: the kernel's taps, g: the Gaussian)",
        ),
        lens: false,
        ..WARP
    },
    SweepParam {
        kernel: "lines.cos_sin",
        param: "frac_bits",
        range: (8, 14),
        default: (8, 14),
        fixed: "all 131072 binary angles (2^17 per turn)",
        unit: "LSB of Q(frac_bits)",
        reference: "f64 cos and sin times 2^frac_bits",
        bound: Some("0.5 + 2^(q-22) (kernel docs)"),
        images: false,
        lens: false,
    },
    SweepParam {
        kernel: "lines.accumulator",
        param: "trig_frac_bits",
        range: (8, 14),
        default: (8, 14),
        fixed: "VoteParams::DEMO_QVGA (gate +-15 degrees, 2 px rows) at the image's size, rows \
                to its half diagonal; thinned edges of the demo edge chain",
        unit: "cell units (a whole vote is 16)",
        reference: "f64 Hough transform with the kernel's bins and gate decisions (exact cos, \
                    sin and rho, linear vote split)",
        bound: None,
        images: true,
        lens: false,
    },
];

/// Why a sweep request is refused.
///
/// ```
/// use fixsight_verify::sweep::{find, SweepError};
/// let e = find("lines.cos_sin", Some("bits")).unwrap_err();
/// assert_eq!(e.to_string(), "lines.cos_sin has no sweepable parameter `bits`; its parameters: frac_bits");
/// ```
#[derive(Debug, Error, PartialEq)]
pub enum SweepError {
    /// The kernel has no sweepable parameter.
    #[error("{given}: sweep takes the kernels {valid}")]
    UnknownKernel {
        /// What was given.
        given: String,
        /// The kernels with a parameter.
        valid: String,
    },
    /// The kernel has no such parameter.
    #[error("{kernel} has no sweepable parameter {given}; its parameters: {valid}")]
    UnknownParam {
        /// The kernel.
        kernel: String,
        /// What was given.
        given: String,
        /// Its parameters.
        valid: String,
    },
    /// The kernel has several parameters and none was chosen.
    #[error("{kernel} has several parameters; choose one with --param: {valid}")]
    NoParam {
        /// The kernel.
        kernel: String,
        /// Its parameters.
        valid: String,
    },
    /// `--values` could not be read.
    #[error("--values {given}: {why}")]
    BadValues {
        /// What was given.
        given: String,
        /// What is wrong.
        why: String,
    },
    /// A value is outside the parameter's range.
    #[error("--values: {param} of {kernel} takes {lo}..={hi}, not {value}")]
    OutOfRange {
        /// The kernel.
        kernel: &'static str,
        /// The parameter.
        param: &'static str,
        /// The value.
        value: u32,
        /// Lowest accepted.
        lo: u32,
        /// Highest accepted.
        hi: u32,
    },
    /// An option that the kernel does not use.
    #[error("{option} does not apply to {kernel} ({why})")]
    NotApplicable {
        /// The option.
        option: &'static str,
        /// The kernel.
        kernel: &'static str,
        /// Why.
        why: &'static str,
    },
}

/// Most values one sweep takes.
///
/// ```
/// let p = fixsight_verify::sweep::find("lines.cos_sin", None).unwrap();
/// assert!(fixsight_verify::sweep::values(p, Some("0..=64")).is_err()); // 65 values
/// ```
pub const MAX_VALUES: usize = 64;

/// The parameter `param` of `kernel` (`None`: the kernel's only one).
///
/// ```
/// use fixsight_verify::sweep::{find, SweepError};
/// assert_eq!(find("filter.separable", None).unwrap().param, "coeff_bits");
/// assert!(matches!(find("warp.control_grid", None), Err(SweepError::NoParam { .. })));
/// assert!(matches!(find("filter.sobel_x", None), Err(SweepError::UnknownKernel { .. })));
/// assert!(matches!(find("warp.pixel_map", Some("grid_log2")), Err(SweepError::UnknownParam { .. })));
/// ```
pub fn find(kernel: &str, param: Option<&str>) -> Result<&'static SweepParam, SweepError> {
    let of: Vec<&'static SweepParam> = PARAMS.iter().filter(|p| p.kernel == kernel).collect();
    let names = || of.iter().map(|p| p.param).collect::<Vec<_>>().join(", ");
    if of.is_empty() {
        let mut valid: Vec<&str> = PARAMS.iter().map(|p| p.kernel).collect();
        valid.dedup();
        return Err(SweepError::UnknownKernel {
            given: crate::files::shown(kernel),
            valid: valid.join(", "),
        });
    }
    match param {
        Some(name) => {
            of.iter()
                .find(|p| p.param == name)
                .copied()
                .ok_or_else(|| SweepError::UnknownParam {
                    kernel: kernel.into(),
                    given: crate::files::shown(name),
                    valid: names(),
                })
        }
        None if of.len() == 1 => Ok(of[0]),
        None => Err(SweepError::NoParam {
            kernel: kernel.into(),
            valid: names(),
        }),
    }
}

/// Reads `--values`: `A..=B` or a comma-separated list, sorted, each once,
/// each within the parameter's range; `None` gives its default values.
///
/// ```
/// use fixsight_verify::sweep::{find, values};
/// let p = find("warp.pixel_map", None).unwrap();
/// assert_eq!(values(p, Some("4..=6")).unwrap(), [4, 5, 6]);
/// assert_eq!(values(p, Some("9,3,9")).unwrap(), [3, 9]);
/// assert_eq!(values(p, None).unwrap(), (2..=10).collect::<Vec<u32>>());
/// assert!(values(p, Some("1..=4")).is_err());   // 1 is below the range
/// assert!(values(p, Some("x")).is_err());
/// ```
pub fn values(p: &'static SweepParam, spec: Option<&str>) -> Result<Vec<u32>, SweepError> {
    let Some(spec) = spec else {
        return Ok((p.default.0..=p.default.1).collect());
    };
    let bad = |why: &str| SweepError::BadValues {
        given: crate::files::shown(spec),
        why: why.into(),
    };
    let num = |s: &str| -> Result<u32, SweepError> {
        s.trim()
            .parse::<u32>()
            .map_err(|_| bad("give A..=B or a list such as 4,6,8 (whole numbers)"))
    };
    let mut v: Vec<u32> = if let Some((a, b)) = spec.split_once("..=") {
        let (a, b) = (num(a)?, num(b)?);
        if a > b {
            return Err(bad("the range is empty (A is above B)"));
        }
        if (b - a) as usize >= MAX_VALUES {
            return Err(bad("more than 64 values"));
        }
        (a..=b).collect()
    } else {
        spec.split(',').map(num).collect::<Result<_, _>>()?
    };
    v.sort_unstable();
    v.dedup();
    if v.len() > MAX_VALUES {
        return Err(bad("more than 64 values"));
    }
    if let Some(&value) = v.iter().find(|&&x| x < p.range.0 || x > p.range.1) {
        return Err(SweepError::OutOfRange {
            kernel: p.kernel,
            param: p.param,
            value,
            lo: p.range.0,
            hi: p.range.1,
        });
    }
    Ok(v)
}

/// One value of the parameter on one input.
///
/// ```
/// let r = fixsight_verify::sweep::Row::from_errors("a", 4, [0.0, 2.0], None);
/// assert_eq!((r.max_abs, r.within_1, r.bound), (2.0, 0.5, None));
/// ```
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Row {
    /// Input name (scene, file stem, or `binary angles`).
    pub input: String,
    /// Parameter value.
    pub value: u32,
    /// Compared samples.
    pub samples: usize,
    /// Largest `|fixed - f64|`.
    pub max_abs: f64,
    /// Mean `|fixed - f64|`.
    pub mean_abs: f64,
    /// Root mean square error.
    pub rms: f64,
    /// Share of samples with `|fixed - f64| <= 1`.
    pub within_1: f64,
    /// The analytical bound on `|fixed - f64|`, if the kernel has one.
    pub bound: Option<f64>,
    /// Kernel-specific figures (`geo_max_px`, `table_bytes`, ...).
    pub extra: BTreeMap<String, f64>,
}

impl Row {
    /// A row from the errors `fixed - f64` of one run.
    ///
    /// ```
    /// let r = fixsight_verify::sweep::Row::from_errors("a", 3, [0.5, -1.5, 1.0], Some(2.0));
    /// assert_eq!((r.samples, r.max_abs, r.mean_abs), (3, 1.5, 1.0));
    /// assert!((r.within_1 - 2.0 / 3.0).abs() < 1e-12);
    /// ```
    pub fn from_errors(
        input: &str,
        value: u32,
        errors: impl IntoIterator<Item = f64>,
        bound: Option<f64>,
    ) -> Self {
        let (mut n, mut max, mut sum, mut sum2, mut within) = (0usize, 0f64, 0f64, 0f64, 0usize);
        for e in errors {
            let a = e.abs();
            n += 1;
            max = max.max(a);
            sum += a;
            sum2 += a * a;
            within += (a <= 1.0) as usize;
        }
        let nf = n.max(1) as f64;
        Self {
            input: input.into(),
            value,
            samples: n,
            max_abs: max,
            mean_abs: sum / nf,
            rms: (sum2 / nf).sqrt(),
            within_1: if n == 0 { 1.0 } else { within as f64 / nf },
            bound,
            extra: BTreeMap::new(),
        }
    }
}

/// The rows as a Markdown table: one row per input and value, inputs in
/// the order given, with the kernel-specific columns of the first row.
///
/// ```
/// use fixsight_verify::sweep::{find, table, Row};
/// let p = find("lines.cos_sin", None).unwrap();
/// let t = table(p, &[Row::from_errors("binary angles", 8, [0.25], Some(0.5))]);
/// assert!(t.contains("| binary angles | 8 | 1 | 0.2500 |"));
/// ```
pub fn table(p: &SweepParam, rows: &[Row]) -> String {
    let extra: Vec<String> = rows
        .first()
        .map(|r| r.extra.keys().cloned().collect())
        .unwrap_or_default();
    let mut s = format!(
        "| input | {} | samples | max err | mean err | RMS err | within 1 | bound |",
        p.param
    );
    for k in &extra {
        let _ = write!(s, " {k} |");
    }
    s.push_str("\n|---|---:|---:|---:|---:|---:|---:|---:|");
    s.push_str(&"---:|".repeat(extra.len()));
    s.push('\n');
    for r in rows {
        let _ = write!(
            s,
            "| {} | {} | {} | {:.4} | {:.4} | {:.4} | {:.3} % | {} |",
            r.input,
            r.value,
            r.samples,
            r.max_abs,
            r.mean_abs,
            r.rms,
            100.0 * r.within_1,
            r.bound.map_or("-".to_string(), |b| format!("{b:.4}"))
        );
        for k in &extra {
            let v = r.extra.get(k).copied().unwrap_or(f64::NAN);
            if v.fract() == 0.0 && v.abs() < 1e15 {
                let _ = write!(s, " {v:.0} |");
            } else if v != 0.0 && v.abs() < 0.01 {
                let _ = write!(s, " {v:.3e} |");
            } else {
                let _ = write!(s, " {v:.4} |");
            }
        }
        s.push('\n');
    }
    s
}

/// For every input, the smallest swept value from which on (that value and
/// every larger one swept) the largest error stays within `tol` units;
/// `None` when even the largest value does not. Derived from the rows only.
///
/// ```
/// use fixsight_verify::sweep::{smallest_within, Row};
/// let rows: Vec<Row> = [(4, 2.0), (5, 0.9), (6, 1.2), (7, 0.8)]
///     .iter()
///     .map(|&(v, e)| Row::from_errors("a", v, [e], None))
///     .collect();
/// assert_eq!(smallest_within(&rows, 1.0), vec![("a".to_string(), Some(7))]);
/// ```
pub fn smallest_within(rows: &[Row], tol: f64) -> Vec<(String, Option<u32>)> {
    let mut inputs: Vec<&str> = Vec::new();
    for r in rows {
        if !inputs.contains(&r.input.as_str()) {
            inputs.push(&r.input);
        }
    }
    inputs
        .iter()
        .map(|&i| {
            let mut of: Vec<&Row> = rows.iter().filter(|r| r.input == i).collect();
            of.sort_by_key(|r| r.value);
            let mut best = None;
            for r in of.iter().rev() {
                if r.max_abs <= tol {
                    best = Some(r.value);
                } else {
                    break;
                }
            }
            (i.to_string(), best)
        })
        .collect()
}
