//! Worst-case thinning work per frame size: a frame whose every pixel is
//! foreground (the thickest stroke the frame can hold) thinned without a
//! cap, and the same frame under a cap. Prints iterations, the operation
//! tally per pixel and iteration (with `--features count-ops`) and host
//! time. The figures in the `fixsight::thinning` module docs come from
//!
//! ```text
//! cargo run --release -p fixsight --features count-ops --example thin_worst
//! ```
use fixsight::{ops, thinning, ImageViewMut};
use std::time::Instant;

fn main() {
    for &(w, h) in &[
        (64usize, 64usize),
        (160, 120),
        (320, 240),
        (640, 480),
        (1024, 1024),
    ] {
        let mut map = vec![1u8; w * h];
        let mut scratch = vec![0u8; 3 * w];
        let _ = ops::take();
        let t = Instant::now();
        let st = thinning::thin(
            &mut ImageViewMut::new(&mut map, w, h, w).expect("valid frame"),
            &mut scratch,
        )
        .expect("valid scratch");
        let secs = t.elapsed().as_secs_f64();
        let total = ops::take().total() as f64;
        // The first iteration sees every pixel as foreground: the most one
        // iteration can cost on this frame size.
        let mut map1 = vec![1u8; w * h];
        let _ = ops::take();
        let t1 = Instant::now();
        let st1 = thinning::thin_at_most(
            &mut ImageViewMut::new(&mut map1, w, h, w).expect("valid frame"),
            &mut scratch,
            1,
        )
        .expect("valid scratch");
        let secs1 = t1.elapsed().as_secs_f64();
        let first = ops::take().total() as f64;
        println!(
            "{w}x{h}: solid frame needs {} iterations ({} deleted), {:.1} ops/px/iteration on average, \
             {:.3} s; first iteration (capped = {}) {:.1} ops/px, {:.2} ms",
            st.iterations,
            st.deleted,
            total / (w * h) as f64 / st.iterations as f64,
            secs,
            st1.capped,
            first / (w * h) as f64,
            secs1 * 1e3
        );
    }
}
