//! `marking.*` kernel ids, as `run_vector` in
//! `host-verify/src/marking/golden.rs` computes them: `marking.select`,
//! params the limits (`near_row_q4`, `far_row_q4`, `horizon_row_q4`,
//! `max_tilt`, `near_x_min_q4`, `near_x_max_q4`, `near_sep_min_q4`,
//! `near_sep_nominal_q4`, `near_sep_max_q4`, `converge_tol_q4`,
//! `contrast`), input `lines` i32 (width 4: `rho_q4`, `theta`, `votes` as
//! `u32` bits, polarity 1 / -1 / 0), output `marking` i32 10 x 1.
//!
//! The lines are copied into a stack array of [`MAX_LINES`] candidates.

use super::{input, int, output, Arena, Buf, Fail, Img, Params};
use fixsight::marking::{
    self, Candidate, Marking, MarkingConfig, MarkingLimits, Polarity, TapeContrast,
};

/// Most lines one vector may offer.
pub const MAX_LINES: usize = 64;

/// `marking.select`: `marking::select`.
pub fn select(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let contrast = match p.str("contrast")? {
        "brighter" => TapeContrast::Brighter,
        "darker" => TapeContrast::Darker,
        "either" => TapeContrast::Either,
        _ => return Err(Fail::Param("contrast")),
    };
    let cfg = MarkingConfig::new(MarkingLimits {
        near_row_q4: int(p, "near_row_q4")?,
        far_row_q4: int(p, "far_row_q4")?,
        horizon_row_q4: int(p, "horizon_row_q4")?,
        max_tilt: int(p, "max_tilt")?,
        near_x_min_q4: int(p, "near_x_min_q4")?,
        near_x_max_q4: int(p, "near_x_max_q4")?,
        near_sep_min_q4: int(p, "near_sep_min_q4")?,
        near_sep_nominal_q4: int(p, "near_sep_nominal_q4")?,
        near_sep_max_q4: int(p, "near_sep_max_q4")?,
        converge_tol_q4: int(p, "converge_tol_q4")?,
        contrast,
    })?;
    let src = input(ins, 0)?;
    let Buf::I32(raw) = &src.buf else {
        return Err(Fail::Harness("lines must be i32"));
    };
    if src.width != 4 || src.height > MAX_LINES {
        return Err(Fail::Harness(
            "lines must be 4 wide and at most MAX_LINES high",
        ));
    }
    let mut lines = [Candidate::default(); MAX_LINES];
    for (c, r) in lines.iter_mut().zip(raw.chunks_exact(4)) {
        *c = Candidate {
            rho_q4: r[0],
            theta: u16::try_from(r[1]).map_err(|_| Fail::Harness("theta out of range"))?,
            votes: r[2] as u32,
            polarity: match r[3] {
                1 => Polarity::Rising,
                -1 => Polarity::Falling,
                0 => Polarity::Unknown,
                _ => return Err(Fail::Harness("polarity must be -1, 0 or 1")),
            },
        };
    }
    let m = marking::select(&lines[..src.height], &cfg);
    let res = match m {
        Marking::Found(t) => [
            1,
            t.left as i32,
            t.right as i32,
            t.near_x_q4[0],
            t.near_x_q4[1],
            t.far_x_q4[0],
            t.far_x_q4[1],
            t.votes as u32 as i32,
            (t.votes >> 32) as u32 as i32,
            0,
        ],
        Marking::NotFound { candidates, .. } => [0, -1, -1, 0, 0, 0, 0, 0, 0, candidates as i32],
    };
    match &mut output(outs, 0)?.buf {
        Buf::I32(o) if o.len() == res.len() => {
            o.copy_from_slice(&res);
            Ok(())
        }
        _ => Err(Fail::Harness("marking output must be i32 with 10 elements")),
    }
}
