//! Tests of the marking family's host side.

use super::check::{check, trials, TRIALS_PER_FRAME, TRIAL_SEED};
use super::derive::{demo_geometry, derive, vga_dark_geometry, DeriveError, MarkingGeometry};
use super::golden::{lines_blob, lines_of, marking_blob, run_vector, LimitsParams};
use super::reference::{select_f64, sine_table, trig_bound, trig_max_err};
use crate::sequence::DEMO_SEQUENCE;
use fixsight::marking::{self, Candidate, MarkingConfig, Polarity, TapeContrast};
use proptest::prelude::*;

#[test]
fn the_kernel_demo_constant_is_the_derivation_for_the_demo_camera() {
    let d = derive(&demo_geometry()).unwrap();
    println!("{d:#?}");
    assert_eq!(&d.limits, MarkingConfig::DEMO.limits());
}

/// The ground-plane geometry on a case worked by hand with the pinhole
/// projection `x = f X / Z` (Hartley & Zisserman 2004, "Multiple View
/// Geometry in Computer Vision", 2nd ed., the central projection of
/// chapter 6; from memory): a camera 1 m up, pitched 45 degrees, f = 100
/// px. Its optical axis meets the floor at depth `Z = 1 / sin 45 = 1.4142`
/// m, so on the centre row a 0.1 m tape spans `100 * 0.1 / 1.4142 = 7.071`
/// px; the horizon lies `f tan 45 = 100` px above the centre, so the far
/// row halfway to it is y = -50, where the tape spans half as much.
#[test]
fn derivation_matches_a_hand_worked_ground_plane() {
    let g = MarkingGeometry {
        focal_px: 100.0,
        near_row_px: 0.0,
        camera_height_m: 1.0,
        camera_height_tol_m: 0.0,
        pitch_deg: 45.0,
        pitch_tol_deg: 0.0,
        tape_width_m: 0.1,
        tape_width_tol_m: 0.0,
        max_heading_deg: 0.0,
        max_lateral_m: 0.0,
        line_rho_tol_px: 0.0,
        line_theta_tol_deg: 0.0,
        contrast: TapeContrast::Either,
    };
    let d = derive(&g).unwrap();
    let (lo, nominal, hi) = d.near_tape_px;
    for v in [lo, nominal, hi] {
        assert!((v - 7.0711).abs() < 1e-4, "{v}");
    }
    assert_eq!(d.rows_px, (0.0, -50.0, -100.0));
    assert_eq!(d.ratio.0, 0.5);
    // The tape's edges cross the centre row at +-3.54 px, through the
    // vanishing point straight ahead: tilt atan(3.54 / 100).
    assert!((d.tilt_deg - (3.5355f64 / 100.0).atan().to_degrees()).abs() < 1e-3);
    // No tolerance at all: the convergence tolerance is 0 and the limits
    // are the tape's width rounded outwards to Q4.
    assert!(d.converge_tol_px.abs() < 1e-12);
    assert_eq!(
        (d.limits.near_sep_min_q4, d.limits.near_sep_max_q4),
        (113, 114)
    );
}

#[test]
fn derivation_refuses_what_it_cannot_hold() {
    let g = demo_geometry();
    let input = |e: DeriveError| match e {
        DeriveError::Input { name, .. } => name,
        other => panic!("{other}"),
    };
    assert_eq!(
        input(
            derive(&MarkingGeometry {
                focal_px: -1.0,
                ..g
            })
            .unwrap_err()
        ),
        "focal_px"
    );
    assert_eq!(
        input(
            derive(&MarkingGeometry {
                pitch_deg: 0.5,
                ..g
            })
            .unwrap_err()
        ),
        "pitch_deg"
    );
    assert_eq!(
        input(
            derive(&MarkingGeometry {
                tape_width_m: f64::NAN,
                ..g
            })
            .unwrap_err()
        ),
        "tape_width_m"
    );
    assert!(matches!(
        derive(&MarkingGeometry {
            near_row_px: -80.0,
            ..g
        }),
        Err(DeriveError::AboveHorizon { row: "near", .. })
    ));
    assert!(matches!(
        derive(&MarkingGeometry {
            max_lateral_m: 2.0,
            ..g
        }),
        Err(DeriveError::TooSteep { .. })
    ));
    assert!(matches!(
        derive(&MarkingGeometry {
            line_rho_tol_px: 9.0,
            ..g
        }),
        Err(DeriveError::TooLoose { .. })
    ));
    let e = derive(&MarkingGeometry {
        line_rho_tol_px: 9.0,
        ..g
    })
    .unwrap_err();
    assert!(e.to_string().contains("doubled edge"), "{e}");
    assert!(derive(&vga_dark_geometry()).is_ok());
}

#[test]
fn the_contract_holds_on_the_demo_sequence() {
    let rows = check(&[]);
    let r = &rows[0];
    println!(
        "max err {} px (bound {}) {:#?} {:?}",
        r.max_abs_err, r.bound, r.metrics, r.notes
    );
    assert!(r.pass, "{:?}", r.notes);
    // Regression guard on what the rules achieve on the demo truth.
    assert_eq!(r.metrics["unexplained_disagreements"], 0.0);
    assert!(r.metrics["truth_share_fixed"] >= 0.99);
    assert!(r.metrics["trials_without_tape"] >= 16.0);
    assert!(r.metrics["not_found_without_tape"] >= r.metrics["trials_without_tape"] - 2.0);
}

#[test]
fn trials_offer_the_visible_edges_with_their_truth() {
    let ts = trials(&DEMO_SEQUENCE, TRIAL_SEED, TRIALS_PER_FRAME).unwrap();
    assert_eq!(ts.len(), DEMO_SEQUENCE.frames * TRIALS_PER_FRAME);
    for t in &ts {
        assert_eq!(t.kinds.len(), t.lines.len());
        let occluded = (34..=38).contains(&t.frame);
        assert_eq!(t.truth.is_none(), occluded, "frame {}", t.frame);
        if let Some((l, r)) = t.truth {
            assert_eq!((t.kinds[l], t.kinds[r]), ("tape-left", "tape-right"));
        }
        let known = t.lines.iter().any(|c| c.polarity != Polarity::Unknown);
        assert_eq!(known, t.polarity);
    }
}

#[test]
fn the_kernel_sine_table_is_the_f64_one() {
    assert_eq!(sine_table(), marking::SIN_Q15.to_vec());
    let e = trig_max_err();
    assert!(e <= trig_bound() && e > 0.9, "{e}");
}

#[test]
fn golden_encoding_round_trips() {
    let lines = [
        Candidate {
            rho_q4: i32::MIN,
            theta: 65535,
            votes: u32::MAX,
            polarity: Polarity::Falling,
        },
        Candidate {
            rho_q4: 7,
            theta: 0,
            votes: 3,
            polarity: Polarity::Unknown,
        },
    ];
    assert_eq!(lines_of(&lines_blob(&lines)).unwrap(), lines);
    let mut bad = lines_blob(&lines);
    bad.bytes[12] = 5; // polarity 5
    assert!(lines_of(&bad).unwrap_err().contains("polarity"));
    let p = serde_json::to_value(LimitsParams::of(MarkingConfig::DEMO.limits())).unwrap();
    let out = run_vector("marking.select", &p, &[lines_blob(&lines)]).unwrap();
    assert_eq!(
        out[0],
        marking_blob(&marking::select(&lines, &MarkingConfig::DEMO))
    );
    let mut q = p.clone();
    q["contrast"] = "sideways".into();
    assert!(run_vector("marking.select", &q, &[lines_blob(&lines)])
        .unwrap_err()
        .contains("contrast"));
    let mut q = p;
    q["near_sep_min_q4"] = 0.into();
    assert!(run_vector("marking.select", &q, &[lines_blob(&lines)]).is_err());
}

thread_local! {
    static FOUND: std::cell::RefCell<u32> = const { std::cell::RefCell::new(0) };
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// On random near-vertical lines around the demo tape's geometry (many
    /// near a threshold), the fixed selection picks what the `f64`
    /// reference picks unless the reference calls the input borderline,
    /// and shared picks' columns stay within their bounds.
    #[test]
    fn fixed_agrees_with_f64_unless_borderline(
        raw in prop::collection::vec(
            (-2500i32..2500, prop_oneof![0u16..6000, 59536u16..=65535], 1u32..300, 0u8..3),
            0..16,
        ),
        tapes in prop::collection::vec(
            (-75.0f64..75.0, 3.0f64..16.0, -3.0f64..3.0, 1u32..300, 0u8..3, 0usize..16),
            1..4,
        ),
    ) {
        let pol = |p: u8| [Polarity::Unknown, Polarity::Rising, Polarity::Falling][p as usize];
        let mut lines: Vec<Candidate> = raw
            .iter()
            .map(|&(rho_q4, theta, votes, p)| Candidate { rho_q4, theta, votes, polarity: pol(p) })
            .collect();
        // Tape-like pairs through the demo horizon, of widths and
        // convergence errors on both sides of the limits.
        for &(centre, half, skew, votes, p, at) in &tapes {
            for (d, dx_far) in [(-half, 0.0), (half, skew)] {
                let (x0, y0) = (centre + d, 119.5);
                let (x1, y1) = (0.2 * centre + d * 0.5 + dx_far, 28.8125);
                let th = (x1 - x0).atan2(y0 - y1).rem_euclid(std::f64::consts::PI);
                let rho = x0 * th.cos() + y0 * th.sin();
                let t = ((th / std::f64::consts::PI * 65536.0).round() as u32 % 65536) as u16;
                let c = Candidate { rho_q4: (rho * 16.0).round() as i32, theta: t, votes, polarity: pol(p) };
                lines.insert(at.min(lines.len()), c);
            }
        }
        let cfg = MarkingConfig::DEMO;
        let m = marking::select(&lines, &cfg);
        let r = select_f64(&lines, cfg.limits());
        let fixed = m.found().map(|t| (t.left, t.right));
        prop_assert!(fixed == r.pick || r.borderline, "fixed {:?} f64 {:?}", fixed, r.pick);
        FOUND.with(|f| *f.borrow_mut() += fixed.is_some() as u32);
        if let (Some(t), true) = (m.found(), fixed == r.pick) {
            let got = [t.near_x_q4[0], t.near_x_q4[1], t.far_x_q4[0], t.far_x_q4[1]];
            let want = [r.near_x_q4[0], r.near_x_q4[1], r.far_x_q4[0], r.far_x_q4[1]];
            for i in 0..4 {
                prop_assert!((got[i] as f64 - want[i]).abs() <= r.beta_q4[i]);
            }
        }
    }
}

#[test]
fn the_agreement_property_sees_found_tapes() {
    // The property above must exercise shared picks, not only `NotFound`.
    fixed_agrees_with_f64_unless_borderline();
    FOUND.with(|f| assert!(*f.borrow() > 50, "only {} cases with a tape", f.borrow()));
}
