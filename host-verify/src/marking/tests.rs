//! Tests of the marking family's host side.

use super::check::{check, trials, TRIALS_PER_FRAME, TRIAL_SEED};
use super::derive::{demo_geometry, derive};
use super::reference::{sine_table, trig_bound, trig_max_err};
use crate::sequence::DEMO_SEQUENCE;
use fixsight::marking::{self, MarkingConfig};

#[test]
fn the_kernel_demo_constant_is_the_derivation_for_the_demo_camera() {
    let d = derive(&demo_geometry()).unwrap();
    println!("{d:#?}");
    assert_eq!(&d.limits, MarkingConfig::DEMO.limits());
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
fn the_kernel_sine_table_is_the_f64_one() {
    assert_eq!(sine_table(), marking::SIN_Q15.to_vec());
    let e = trig_max_err();
    assert!(e <= trig_bound() && e > 0.9, "{e}");
}

