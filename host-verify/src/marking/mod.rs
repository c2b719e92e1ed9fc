//! Host side of `fixsight::marking`: the derivation of the selection's
//! limits from the camera geometry, the `f64` reference of the selection,
//! its contract on lines derived from the demo sequence's truth, and its
//! golden vectors.
//!
//! > **Not a safety function.** The selection may end up steering a
//! > vehicle; it is not a safety function. A vehicle that can hurt people
//! > needs safety-rated sensing and control under the applicable standards
//! > (for example ISO 3691-4, IEC 61508, ISO 13849) and local rules.
//!
//! # Deriving the limits ([`derive`])
//!
//! Inputs ([`MarkingGeometry`]): the corrected view's focal length `f`
//! (px) and near row `y_n` (px below the image centre), the camera height
//! `h +- dh`, pitch `phi +- dphi`, tape width `w +- dw`, the largest
//! heading `psi_m` of the vehicle against the tape, the largest lateral
//! offset `L` of the tape's centre from the camera axis on the near row's
//! ground line, and the accuracy of the lines offered: `e_r` px in `rho`,
//! `e_t` in `theta`.
//!
//! Geometry (pinhole, flat floor, no roll; see the kernel's module docs):
//! horizon row `y_h(phi) = -f tan(phi)`; a floor length `d` across row `y`
//! spans `d k(y)` pixels with `k(y) = (y cos(phi) + f sin(phi)) / h`.
//! `k_min(y)`, `k_max(y)` are the extremes of `k` over `h - dh, h + dh`
//! and 21 pitches evenly spaced over `phi - dphi ..= phi + dphi` (`k` is
//! smooth in `phi`, so the sampling finds its extremes on such a small
//! interval; the derivation refuses a near row at or above the horizon of
//! any of these pitches).
//!
//! 1. Rows: near row `y_n` as given, horizon row `y_h(phi)` at the
//!    nominal pitch, far row halfway between them,
//!    `y_f = (y_n + y_h(phi)) / 2`; all rounded to Q4, and everything below
//!    is computed at the rounded rows. `rho = (y_f - y_h) / (y_n - y_h)`
//!    is the ratio of far to near separation that rule 4 expects.
//! 2. Lateral window: the tape's outer edges lie within
//!    `x_lim = (L + (w + dw) / (2 cos psi_m)) k_max(y_n)` of the centre
//!    on the near row.
//! 3. Tilt: a tape edge runs from the vanishing point
//!    `(f tan(psi) / cos(phi), y_h)` to its near-row column, so its tilt
//!    from the vertical is at most
//!    `t_max = atan((x_lim + f tan(psi_m) / cos(phi + dphi)) / min(y_n - y_h)) + e_t`.
//! 4. Column error of an offered line at row `y` (first order in the
//!    line's errors): `e(y) = e_r / cos(t_max) + e_t (|y| + X(y) tan(t_max))`
//!    with `X(y_n) = x_lim`, `X(y_f) = x_lim + (y_n - y_f) tan(t_max)` the
//!    largest column magnitude there.
//! 5. Limits: near window `+-(x_lim + e(y_n))`; near separation from
//!    `(w - dw) k_min(y_n) - 2 e(y_n)` to
//!    `(w + dw) k_max(y_n) / cos(psi_m) + 2 e(y_n)` (a tape seen at
//!    heading `psi` is `1/cos(psi)` wider across a row); nominal
//!    `w k(y_n)` at the nominal height and pitch.
//! 6. Convergence tolerance: the far-row residual `s_f - rho s_n` of a
//!    true tape is `s_n (rho* - rho)` with `rho*` the ratio at the true
//!    pitch (the horizon moves with it), at most
//!    `s_max max|rho* - rho|`, `s_max` the largest near separation of the
//!    tape itself. A line's errors move it by
//!    `dx(y_f) - rho dx(y_n)`; to first order, for a line through the
//!    vanishing point (`x(y_f) - rho* x(y_n) = u_vp (1 - rho*)`,
//!    `y_f - rho* y_n = y_h (1 - rho*)`), at most
//!    `(1 - rho) (e_r / cos(t_max) + e_t (max|y_h| + max|u_vp| tan(t_max)))`
//!    plus `e_t max|rho* - rho| (x_lim tan(t_max) + |y_n|)`. The tolerance
//!    is the tape's own residual plus twice the line term (two lines).
//! 7. Quantisation: minima rounded down and maxima up to Q4, the nominal
//!    to nearest, the tilt up to binary units (65536 = 180 degrees).
//!
//! The limits hold (every tape within the stated inputs passes rules 1 to
//! 4) for a flat floor, a camera without roll, a straight tape and
//! offered lines within `e_r`, `e_t` of the truth. A derivation whose
//! near-separation minimum would fall to 0 (the rules could not tell a
//! tape from a doubled edge) or whose tilt exceeds 60 degrees is refused
//! with a [`DeriveError`].
//!
//! [`demo_geometry`] holds the demo camera's inputs. The mounting
//! tolerances (`dh` 2 cm, `dphi` 1 degree), the tape tolerance (5 mm, for
//! worn or cut edges), the 15 degree heading and 0.15 m lateral range
//! are design assumptions (common practice, no source); the line accuracy
//! (1 px, 1 degree) is the lines stage's stated goal (issue 8 of the
//! project: recovered lines within 1 px and 1 degree).
//!
//! # The `f64` reference ([`select_f64`])
//!
//! The rules of the kernel's module docs with exact `f64` trigonometry:
//! column `x = (rho - y sin(theta)) / cos(theta)` (Q4 units, no rounding).
//! It also flags a **borderline** input, one where the fixed selection
//! may differ: a pair is *uncertain* when one of its tests (a line's
//! near column against the window, the order of the two columns, the
//! near separation against its limits, the convergence residual against
//! its tolerance) lies within the fixed-point error bound of the test's
//! threshold; the input is borderline when the `f64` pick is uncertain,
//! when an uncertain pair has at least the pick's votes (or there is no
//! pick), or when another valid or uncertain pair has the pick's votes and
//! a deviation from the nominal separation within the two bounds of the
//! pick's. The fixed-point column error bound (Q4 units) is
//! `beta = (|x| + |y|) E / (32768 |cos(theta)| - E) + 1/2`, `E` the table's
//! error bound in Q15 LSB (`fixsight::marking::SIN_COS_MAX_ERR_MILLI_LSB`):
//! the kernel divides `rho 2^15 - y (s + ds)` by `c + dc` with
//! `|ds|, |dc| <= E`, which is `x - (x dc + y ds) / (c + dc)`, then rounds.
//!
//! # Contract (`marking.select`, tolerance)
//!
//! On lines derived from the demo sequence's truth ([`trials`]): both
//! selections pick the same pair in every trial that is not borderline,
//! and the columns of a shared pick differ by at most the bound `beta`
//! (reported in pixels: `max_abs_err` against `bound`, the bound's largest
//! value over the configured rows, window and tilt). The row's metrics
//! also give how often each selection found the true edges.
//!
//! # Golden vectors (`marking.select`)
//!
//! Params: the limits, `{near_row_q4, far_row_q4, horizon_row_q4,
//! max_tilt, near_x_min_q4, near_x_max_q4, near_sep_min_q4,
//! near_sep_nominal_q4, near_sep_max_q4, converge_tol_q4, contrast}` with
//! `contrast` one of `"brighter"`, `"darker"`, `"either"`. Input `lines`:
//! `i32`, width 4, one row per line: `rho_q4`, `theta` (0..=65535),
//! `votes` (the `u32` bits), polarity (`1` rising, `-1` falling, `0`
//! unknown). Output `marking`: `i32`, 10 x 1: `found` (1/0), `left`,
//! `right` (indices, -1 when not found), near-row columns left and right,
//! far-row columns left and right (Q4; 0 when not found), the vote sum's
//! low and high 32 bits, and (when not found) the number of lines that
//! passed the single-line rules, else 0.

pub mod check;
pub mod derive;
pub mod golden;
pub mod reference;
#[cfg(test)]
mod tests;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "marking",
    kernels: &["marking.select"],
    composed_on_host: false,
    check: |scenes, lens| {
        crate::family::kept_on_demo_lens(
            check::check(scenes),
            lens,
            "the selection is checked on the demo sequence's truth lines in the demo lens's \
             corrected view, for which the limits of MarkingConfig::DEMO were derived",
        )
    },
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
