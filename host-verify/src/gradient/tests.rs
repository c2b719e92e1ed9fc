use super::reference::*;
use fixsight::gradient;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

#[test]
fn l2_bound_is_the_derived_figure() {
    // sqrt(123^2 + 51^2)/128 - 1 = sqrt(17730)/128 - 1
    assert!((l2_rel_bound() - (17730f64.sqrt() / 128.0 - 1.0)).abs() < 1e-15);
    assert!((l2_rel_bound() * 1e6).ceil() as u32 <= gradient::L2_APPROX_REL_ERR_PPM);
}

#[test]
fn kernels_match_references_over_a_full_range_sample() {
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    let bound = l2_rel_bound();
    for i in 0..200_000 {
        let (x, y): (i16, i16) = if i < 4 {
            [(i16::MIN, i16::MIN), (i16::MIN, 0), (0, i16::MAX), (-1, 1)][i]
        } else {
            (rng.random(), rng.random())
        };
        assert_eq!(gradient::l1(x, y) as f64, reference_l1(x, y));
        assert_eq!(
            gradient::direction_sector(x, y),
            reference_sector(x, y),
            "({x},{y})"
        );
        assert_eq!(
            gradient::l2_round(x, y) as f64,
            reference_l2_round(x, y),
            "({x},{y})"
        );
        let t = reference_l2(x, y);
        let m = gradient::l2_approx(x, y) as f64;
        assert!(
            ((m - t).abs() - 0.5).max(0.0) <= bound * t + 1e-9,
            "({x},{y}) {m} vs {t}"
        );
    }
}
