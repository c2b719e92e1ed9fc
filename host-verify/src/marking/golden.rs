//! Golden cases and vector recomputation of `marking.select` (format in
//! the family's module docs).

use super::check::{trials, TRIALS_PER_FRAME, TRIAL_SEED};
use super::derive::{derive, vga_dark_geometry};
use crate::family::{case, input, parse_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use crate::sequence::{TruthLine, DEMO_SEQUENCE};
use fixsight::marking::{
    self, Candidate, Marking, MarkingConfig, MarkingLimits, Polarity, TapeContrast,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// The limits as golden-vector params.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct LimitsParams {
    /// See `MarkingLimits`.
    pub near_row_q4: i32,
    /// See `MarkingLimits`.
    pub far_row_q4: i32,
    /// See `MarkingLimits`.
    pub horizon_row_q4: i32,
    /// See `MarkingLimits`.
    pub max_tilt: u16,
    /// See `MarkingLimits`.
    pub near_x_min_q4: i32,
    /// See `MarkingLimits`.
    pub near_x_max_q4: i32,
    /// See `MarkingLimits`.
    pub near_sep_min_q4: i32,
    /// See `MarkingLimits`.
    pub near_sep_nominal_q4: i32,
    /// See `MarkingLimits`.
    pub near_sep_max_q4: i32,
    /// See `MarkingLimits`.
    pub converge_tol_q4: i32,
    /// `brighter`, `darker` or `either`.
    pub contrast: String,
}

impl LimitsParams {
    /// From limits.
    pub fn of(l: &MarkingLimits) -> Self {
        Self {
            near_row_q4: l.near_row_q4,
            far_row_q4: l.far_row_q4,
            horizon_row_q4: l.horizon_row_q4,
            max_tilt: l.max_tilt,
            near_x_min_q4: l.near_x_min_q4,
            near_x_max_q4: l.near_x_max_q4,
            near_sep_min_q4: l.near_sep_min_q4,
            near_sep_nominal_q4: l.near_sep_nominal_q4,
            near_sep_max_q4: l.near_sep_max_q4,
            converge_tol_q4: l.converge_tol_q4,
            contrast: match l.contrast {
                TapeContrast::Brighter => "brighter",
                TapeContrast::Darker => "darker",
                TapeContrast::Either => "either",
            }
            .into(),
        }
    }

    /// To limits.
    pub fn limits(&self) -> Result<MarkingLimits, String> {
        Ok(MarkingLimits {
            near_row_q4: self.near_row_q4,
            far_row_q4: self.far_row_q4,
            horizon_row_q4: self.horizon_row_q4,
            max_tilt: self.max_tilt,
            near_x_min_q4: self.near_x_min_q4,
            near_x_max_q4: self.near_x_max_q4,
            near_sep_min_q4: self.near_sep_min_q4,
            near_sep_nominal_q4: self.near_sep_nominal_q4,
            near_sep_max_q4: self.near_sep_max_q4,
            converge_tol_q4: self.converge_tol_q4,
            contrast: match self.contrast.as_str() {
                "brighter" => TapeContrast::Brighter,
                "darker" => TapeContrast::Darker,
                "either" => TapeContrast::Either,
                other => {
                    return Err(format!(
                        "contrast `{other}` is not `brighter`, `darker` or `either`"
                    ))
                }
            },
        })
    }
}

/// Lines as the golden `lines` image.
pub fn lines_blob(lines: &[Candidate]) -> Blob {
    let data: Vec<i32> = lines
        .iter()
        .flat_map(|c| {
            [
                c.rho_q4,
                c.theta as i32,
                c.votes as i32,
                match c.polarity {
                    Polarity::Rising => 1,
                    Polarity::Falling => -1,
                    Polarity::Unknown => 0,
                },
            ]
        })
        .collect();
    Blob::from_i32("lines", 4, lines.len(), 1, &data)
}

/// The golden `lines` image as lines.
pub fn lines_of(b: &Blob) -> Result<Vec<Candidate>, String> {
    if b.width != 4 || b.channels != 1 {
        return Err(format!(
            "lines image is {}x{}x{}, expected width 4, one channel",
            b.width, b.height, b.channels
        ));
    }
    b.to_i32()?
        .chunks_exact(4)
        .enumerate()
        .map(|(i, r)| {
            Ok(Candidate {
                rho_q4: r[0],
                theta: u16::try_from(r[1])
                    .map_err(|_| format!("line {i}: theta {} is not 0..=65535", r[1]))?,
                votes: r[2] as u32,
                polarity: match r[3] {
                    1 => Polarity::Rising,
                    -1 => Polarity::Falling,
                    0 => Polarity::Unknown,
                    p => return Err(format!("line {i}: polarity {p} is not -1, 0 or 1")),
                },
            })
        })
        .collect()
}

/// A selection outcome as the golden `marking` image.
pub fn marking_blob(m: &Marking) -> Blob {
    let data = match m {
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
        Marking::NotFound { candidates, .. } => [0, -1, -1, 0, 0, 0, 0, 0, 0, *candidates as i32],
    };
    Blob::from_i32("marking", 10, 1, 1, &data)
}

/// Recomputes a `marking` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "marking.select" => {
            let p: LimitsParams = parse_params(kernel, params)?;
            let cfg = MarkingConfig::new(p.limits()?).map_err(|e| e.to_string())?;
            let lines = lines_of(input(inputs, "lines")?)?;
            Ok(vec![marking_blob(&marking::select(&lines, &cfg))])
        }
        _ => Err(format!("unknown marking kernel `{kernel}`")),
    }
}

fn marking_case(
    id: &str,
    comment: &str,
    limits: &MarkingLimits,
    lines: &[Candidate],
) -> GoldenCase {
    let params = serde_json::to_value(LimitsParams::of(limits)).expect("params serialise");
    case(
        run_vector,
        id,
        comment.into(),
        "marking.select",
        params,
        vec![lines_blob(lines)],
    )
}

/// Golden cases: trials of the demo sequence (tape present with and
/// without polarities, occluded), tie-breaks, extreme values, and a second
/// derived configuration.
pub fn golden_cases(_scenes: &[Scene]) -> Vec<GoldenCase> {
    let demo = *MarkingConfig::DEMO.limits();
    let ts = trials(&DEMO_SEQUENCE, TRIAL_SEED, TRIALS_PER_FRAME)
        .expect("the demo sequence has a corrected view");
    let pick = |frame: usize, polarity: bool| {
        ts.iter()
            .find(|t| t.frame == frame && t.polarity == polarity)
            .expect("every frame has trials with and without polarity")
    };
    let mut v = vec![
        marking_case(
            "marking.select.aisle-drift.f010",
            "demo sequence frame 10: tape edges among racking, joints and random lines, polarities given",
            &demo,
            &pick(10, true).lines,
        ),
        marking_case(
            "marking.select.aisle-drift.f036",
            "demo sequence frame 36: the tape hidden by the passing object, clutter only: not found",
            &demo,
            &pick(36, true).lines,
        ),
        marking_case(
            "marking.select.aisle-drift.f058",
            "demo sequence frame 58, just before the crossing, no polarities",
            &demo,
            &pick(58, false).lines,
        ),
    ];
    // Ties: the same tape twice (first pair wins), and two tapes of equal
    // votes (the width nearer the nominal wins).
    // A tape's edges through a vanishing point on horizon row `vp_y`,
    // `half` px either side of `centre` on row `near_y`.
    let tape = |centre: f64, half: f64, votes: u32, vp_y: f64, near_y: f64| -> [Candidate; 2] {
        let vp = (centre * 0.2, vp_y);
        [-half, half].map(|d| {
            let (x1, y1) = (centre + d, near_y);
            let th = (vp.0 - x1).atan2(y1 - vp.1).rem_euclid(PI);
            let rho = x1 * th.cos() + y1 * th.sin();
            let (rho_q4, theta) = TruthLine {
                rho,
                theta: th,
                brighter_along_normal: true,
            }
            .quantised();
            Candidate {
                rho_q4,
                theta,
                votes,
                polarity: Polarity::Unknown,
            }
        })
    };
    let [a, b] = tape(-30.0, 8.7, 100, -61.87, 119.5);
    let [c, d] = tape(30.0, 9.5, 100, -61.87, 119.5);
    v.push(marking_case(
        "marking.select.ties",
        "equal vote sums: the width nearer the nominal wins, then the first pair in input order",
        &demo,
        &[c, d, a, b, a, b, d, c],
    ));
    let ext = [
        Candidate {
            rho_q4: i32::MIN,
            theta: 0,
            votes: u32::MAX,
            polarity: Polarity::Rising,
        },
        Candidate {
            rho_q4: i32::MAX,
            theta: 65535,
            votes: u32::MAX,
            polarity: Polarity::Falling,
        },
        Candidate {
            rho_q4: 0,
            theta: 32768,
            votes: u32::MAX,
            polarity: Polarity::Unknown,
        },
        Candidate {
            rho_q4: -139,
            theta: demo.max_tilt,
            votes: u32::MAX,
            polarity: Polarity::Unknown,
        },
        Candidate {
            rho_q4: 139,
            theta: (65536 - demo.max_tilt as u32) as u16,
            votes: u32::MAX,
            polarity: Polarity::Unknown,
        },
        Candidate {
            rho_q4: -140,
            theta: 65535,
            votes: u32::MAX,
            polarity: Polarity::Unknown,
        },
        Candidate {
            rho_q4: 140,
            theta: 1,
            votes: u32::MAX,
            polarity: Polarity::Unknown,
        },
    ];
    // A tape whose vote sum needs 33 bits, among the extremes.
    let [mut e1, mut e2] = tape(5.0, 8.7, u32::MAX, -61.87, 119.5);
    e2.votes = u32::MAX - 1;
    e1.polarity = Polarity::Rising;
    e2.polarity = Polarity::Rising;
    let mut ext = ext.to_vec();
    ext.insert(2, e1);
    ext.push(e2);
    v.push(marking_case(
        "marking.select.extremes",
        "extreme rho, theta at the tilt limit and at 90 degrees, votes u32::MAX: the tape's vote sum needs 33 bits",
        &demo,
        &ext,
    ));
    let vga_d = derive(&vga_dark_geometry()).expect("the VGA geometry derives");
    let vga = vga_d.limits;
    let mut rng = ChaCha8Rng::seed_from_u64(0x5EED_0201);
    let mut lines: Vec<Candidate> = (0..24)
        .map(|_| Candidate {
            rho_q4: rng.random_range(-4000..4000),
            theta: rng.random_range(0..8000u16).wrapping_sub(4000),
            votes: rng.random_range(10..300),
            polarity: [Polarity::Rising, Polarity::Falling, Polarity::Unknown]
                [rng.random_range(0..3)],
        })
        .collect();
    // A dark tape: its left edge darker on its right, the right edge darker on its left.
    let [mut l, mut r] = tape(
        12.0,
        vga_d.near_tape_px.1 / 2.0,
        250,
        vga_d.rows_px.2,
        vga_d.rows_px.0,
    );
    l.polarity = Polarity::Falling;
    r.polarity = Polarity::Falling;
    lines.insert(5, l);
    lines.insert(17, r);
    v.push(marking_case(
        "marking.select.vga-dark",
        "limits derived for a VGA view of a 19 mm dark tape; random near-vertical lines",
        &vga,
        &lines,
    ));
    v
}
