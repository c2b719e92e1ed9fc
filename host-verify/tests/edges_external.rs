//! The edge chain against the general-purpose `imageproc` crate's Canny
//! detector on the demo scenes (an outside implementation, used only here
//! as a dev-dependency).
//!
//! Settings: `imageproc::edges::canny(image, low, high)` with the chain's
//! own automatic thresholds divided by the chain's gradient scale (4), so
//! both detectors threshold the same Sobel magnitude; imageproc smooths
//! with its own Gaussian (sigma 1.4 in its source, from memory), the chain
//! with a 7-tap Gaussian of sigma 1 (taps `[1 14 62 102 62 14 1]/256`), so
//! the figure measures agreement between two reasonable Canny set-ups, not
//! an error.

use fixsight_verify::chain::reference::agreement;
use fixsight_verify::edge_chain::{run_chain, DEMO, GRAD_SCALE};
use fixsight_verify::scene::demo_scenes;
use image::GrayImage;

#[test]
fn chain_agrees_with_imageproc_canny_on_the_demo_scenes() {
    // Canny 1986, "A Computational Approach to Edge Detection", IEEE PAMI
    // 8(6): the detector both implementations follow.
    let mut worst = 1f64;
    for s in demo_scenes() {
        let (w, h) = (s.width, s.height);
        let c = run_chain(&s.gray, w, h, &DEMO).unwrap();
        let img = GrayImage::from_raw(w as u32, h as u32, s.gray.clone()).unwrap();
        let low = (c.thresholds.low() as f64 / GRAD_SCALE) as f32;
        let high = (c.thresholds.high() as f64 / GRAD_SCALE) as f32;
        let theirs = imageproc::edges::canny(&img, low, high).into_raw();
        let ag = agreement(&c.thin, &theirs, w, h);
        println!(
            "{}: imageproc canny(low {low}, high {high}) vs chain: precision {:.4} recall {:.4} F1 {:.4} ({} vs {} px)",
            s.name, ag.precision, ag.recall, ag.f1, ag.kernel_px, ag.reference_px
        );
        worst = worst.min(ag.f1);
    }
    // Measured: F1 0.81 / 0.89 / 0.63 with recall >= 0.96 on every scene
    // (the chain finds nearly every imageproc edge; imageproc's wider
    // Gaussian drops more noise edges). The floor sits below the measured
    // worst; a drop under it means the chain no longer finds the same edges.
    assert!(worst >= 0.60, "worst F1 against imageproc {worst}");
}
