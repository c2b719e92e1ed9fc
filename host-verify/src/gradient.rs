//! `f64` references and contracts for `fixsight::gradient`.
//!
//! Inputs are the integer Sobel gradients of the demo scenes (the kernels
//! and the references see the same `i16` values), plus a sweep of the full
//! `i16` range in the tests.
//!
//! * `gradient.magnitude_l1` — reference `|gx| + |gy|` in `f64` (absolute
//!   values saturated at 32767 as documented). **Bit-exact.**
//! * `gradient.magnitude_l2` — reference `sqrt(gx^2 + gy^2)`.
//!   **Tolerance**, relative: the checked figure per pixel is
//!   `max(0, |m - t| - 1/2) / t` (the kernel's estimation error once its
//!   final half-LSB rounding is allowed for), and the analytical bound is
//!   the alpha-max-plus-beta-min worst case
//!   `sqrt(alpha^2 + beta^2) - 1 = 4.0266 %` derived in the kernel docs.
//! * `gradient.magnitude_l2_round` — reference `sqrt(gx^2 + gy^2)` in
//!   `f64` rounded to the nearest integer (`f64::round`; `sqrt` of an
//!   integer below `2^31` is never within `f64` error of a half-integer, so
//!   the rounding direction is never in doubt). **Bit-exact.**
//! * `gradient.direction` — reference `atan2(gy, gx)` in degrees, folded to
//!   `[0, 180)`, sector `round(theta / 45) mod 4`. **Bit-exact.**
//!
//! * `gradient.angles` — reference `atan2(gy, gx)` folded to `[0, 180)`
//!   degrees; **tolerance** 0.004881 degrees (derived in the kernel docs);
//!   its row is built in `crate::lines` (the lines family uses it).
//!
//! Golden kernel ids: `gradient.magnitude_l1`, `gradient.magnitude_l2`,
//! `gradient.magnitude_l2_round` (outputs `mag`, u16), `gradient.direction` (output `dir`, u8),
//! `gradient.angles` (output `angle`, u16, 65536 = 180 degrees); inputs
//! `gx`, `gy` (i16); params `{}`.

use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::families::{input, Family};
use crate::filter::run_whole;
use crate::golden::{crop, Blob, GoldenCase};
use crate::metrics::ErrorStats;
use crate::opcount::measure;
use crate::scene::Scene;
use fixsight::filter::{sobel_x, sobel_y, Border};
use fixsight::gradient;
use fixsight::{ImageView, ImageViewMut};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::json;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "gradient",
    check,
    golden_cases,
    run_vector,
};

/// Relative error bound of the L2 estimate:
/// `sqrt(123^2 + 51^2) / 128 - 1`, the maximum of
/// `(alpha + beta t)/sqrt(1 + t^2) - 1` over `t` in `[0, 1]` (end points
/// give 3.906 % and 3.878 % below, smaller in magnitude).
pub fn l2_rel_bound() -> f64 {
    let (a, b) = (123.0f64 / 128.0, 51.0f64 / 128.0);
    let peak = (a * a + b * b).sqrt() - 1.0;
    let at0 = 1.0 - a;
    let at1 = 1.0 - (a + b) / 2f64.sqrt();
    peak.max(at0).max(at1)
}

fn sat_abs(v: i16) -> f64 {
    (v as f64).abs().min(32767.0)
}

/// Reference L1 magnitude.
pub fn reference_l1(gx: i16, gy: i16) -> f64 {
    sat_abs(gx) + sat_abs(gy)
}

/// Reference Euclidean magnitude.
pub fn reference_l2(gx: i16, gy: i16) -> f64 {
    (sat_abs(gx)).hypot(sat_abs(gy))
}

/// Reference rounded Euclidean magnitude.
pub fn reference_l2_round(gx: i16, gy: i16) -> f64 {
    reference_l2(gx, gy).round()
}

/// Reference direction sector from the exact angle.
pub fn reference_sector(gx: i16, gy: i16) -> u8 {
    let sx = (gx as f64).clamp(-32767.0, 32767.0);
    let sy = (gy as f64).clamp(-32767.0, 32767.0);
    if sx == 0.0 && sy == 0.0 {
        return 0;
    }
    let mut deg = sy.atan2(sx).to_degrees();
    if deg < 0.0 {
        deg += 180.0;
    }
    if deg >= 180.0 {
        deg -= 180.0;
    }
    ((deg / 45.0).round() as u8) % 4
}

/// A frame-level gradient kernel.
type PairKernel<T> =
    fn(&ImageView<'_, i16>, &ImageView<'_, i16>, &mut ImageViewMut<'_, T>) -> fixsight::Result<()>;

/// Runs a frame-level gradient kernel on `(gx, gy)`.
fn run_pair<T: Copy + Default>(
    gx: &[i16],
    gy: &[i16],
    w: usize,
    h: usize,
    k: PairKernel<T>,
) -> Result<Vec<T>, String> {
    let mut out = vec![T::default(); w * h];
    let e = |e: fixsight::Error| e.to_string();
    k(
        &ImageView::new(gx, w, h, w).map_err(e)?,
        &ImageView::new(gy, w, h, w).map_err(e)?,
        &mut ImageViewMut::new(&mut out, w, h, w).map_err(e)?,
    )
    .map_err(e)?;
    Ok(out)
}

/// Sobel gradients of a scene.
pub fn sobel_pair(s: &Scene) -> (Vec<i16>, Vec<i16>) {
    let gx = run_whole::<i16>(&sobel_x(Border::Replicate), &s.gray, s.width, s.height)
        .expect("scene sizes are valid");
    let gy = run_whole::<i16>(&sobel_y(Border::Replicate), &s.gray, s.width, s.height)
        .expect("scene sizes are valid");
    (gx, gy)
}

/// A scene with its Sobel gradients `(gx, gy)`.
type ScenePair<'a> = (&'a Scene, (Vec<i16>, Vec<i16>));

/// A bit-exact row: runs `kernel` on every scene's gradients and compares
/// with `reference` pixel by pixel.
fn bit_exact_row<T: Copy + Default + Into<f64>>(
    name: &str,
    pairs: &[ScenePair<'_>],
    kernel: PairKernel<T>,
    reference: impl Fn(i16, i16) -> f64,
    peak: f64,
) -> KernelReport {
    let (mut a, mut r, mut ops) = (Vec::new(), Vec::new(), None);
    let mut err = None;
    for (s, (gx, gy)) in pairs {
        let (res, o) = measure(s.width * s.height, || {
            run_pair(gx, gy, s.width, s.height, kernel)
        });
        ops.get_or_insert(o);
        match res {
            Ok(m) => {
                a.extend(m.into_iter().map(Into::into));
                r.extend(gx.iter().zip(gy).map(|(&x, &y)| reference(x, y)));
            }
            Err(e) => err = Some(e),
        }
    }
    let stats = ErrorStats::compare(&a, &r, peak);
    let mut row = KernelReport::from_stats(
        name,
        KernelFamily::Gradient,
        Contract::BitExact,
        0.0,
        &stats,
        ops.unwrap_or_default(),
    );
    if let Some(e) = err {
        row.fail(e);
    }
    row
}

/// Contract checks on the scenes' Sobel gradients.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let pairs: Vec<_> = scenes.iter().map(|s| (s, sobel_pair(s))).collect();
    let mut rows = Vec::new();

    rows.push(bit_exact_row(
        "gradient.magnitude_l1",
        &pairs,
        gradient::magnitude_l1,
        reference_l1,
        65534.0,
    ));

    // L2 estimate: relative tolerance.
    {
        let bound = l2_rel_bound();
        let (mut worst, mut worst_raw, mut n, mut exact) = (0f64, 0f64, 0usize, 0usize);
        let (mut a, mut r) = (Vec::new(), Vec::new());
        let mut ops = None;
        let mut err = None;
        for (s, (gx, gy)) in &pairs {
            let (res, o) = measure(s.width * s.height, || {
                run_pair(gx, gy, s.width, s.height, gradient::magnitude_l2_approx)
            });
            ops.get_or_insert(o);
            let m = match res {
                Ok(m) => m,
                Err(e) => {
                    err = Some(e);
                    continue;
                }
            };
            for ((&x, &y), &mv) in gx.iter().zip(gy).zip(&m) {
                let t = reference_l2(x, y);
                let mv = mv as f64;
                n += 1;
                if mv == t.round() {
                    exact += 1;
                }
                a.push(mv);
                r.push(t);
                if t > 0.0 {
                    worst = worst.max(((mv - t).abs() - 0.5).max(0.0) / t);
                    worst_raw = worst_raw.max((mv - t).abs() / t);
                } else if mv != 0.0 {
                    worst = f64::INFINITY;
                }
            }
        }
        let stats = ErrorStats::compare(&a, &r, 65534.0);
        let mut row = KernelReport::from_stats(
            "gradient.magnitude_l2",
            KernelFamily::Gradient,
            Contract::Tolerance,
            bound,
            &stats,
            ops.unwrap_or_default(),
        );
        // The contract figure for this kernel is relative (see module docs).
        row.max_abs_err = worst;
        row.bound = bound;
        row.bit_exact_share = exact as f64 / n.max(1) as f64;
        row.pass = worst <= bound && err.is_none();
        row.notes.clear();
        row.metrics.insert("max_abs_err_lsb".into(), stats.max_abs);
        row.metrics
            .insert("max_rel_err_incl_rounding".into(), worst_raw);
        row.notes.push(
            "error is relative: max(0, |m - t| - 0.5) / t against t = sqrt(gx^2 + gy^2)".into(),
        );
        if worst > bound {
            row.notes
                .push(format!("relative error {worst} exceeds the bound {bound}"));
        }
        if let Some(e) = err {
            row.notes.push(e);
        }
        rows.push(row);
    }

    rows.push(bit_exact_row(
        "gradient.magnitude_l2_round",
        &pairs,
        gradient::magnitude_l2_round,
        reference_l2_round,
        65534.0,
    ));

    rows.push(bit_exact_row(
        "gradient.direction",
        &pairs,
        gradient::direction,
        |x, y| reference_sector(x, y) as f64,
        3.0,
    ));
    rows
}

/// Golden cases: the three kernels on the Sobel gradients of a scene crop,
/// and on random full-range `i16` pairs including the extremes.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let s = &scenes[1 % scenes.len()];
    let (w, h) = (33usize, 21usize);
    let img = crop(s, 150, 140, w, h);
    let gx = run_whole::<i16>(&sobel_x(Border::Replicate), &img, w, h).expect("valid size");
    let gy = run_whole::<i16>(&sobel_y(Border::Replicate), &img, w, h).expect("valid size");
    let mut rng = ChaCha8Rng::seed_from_u64(0x6AD1);
    let (rw, rh) = (24usize, 16usize);
    let mut rx: Vec<i16> = (0..rw * rh).map(|_| rng.random()).collect();
    let mut ry: Vec<i16> = (0..rw * rh).map(|_| rng.random()).collect();
    // Extremes and boundary cases at the start.
    let special: [(i16, i16); 12] = [
        (0, 0),
        (-32768, -32768),
        (-32768, 32767),
        (32767, -32768),
        (100, 41),
        (100, 42),
        (41, 100),
        (42, 100),
        (-100, 242),
        (-100, 241),
        (1, 0),
        (0, -1),
    ];
    for (i, &(a, b)) in special.iter().enumerate() {
        rx[i] = a;
        ry[i] = b;
    }
    let mut v = Vec::new();
    for (tag, comment, gx, gy, w, h) in [
        (
            "floor",
            format!("Sobel gradients of a {w}x{h} crop of scene {}", s.name),
            &gx,
            &gy,
            w,
            h,
        ),
        (
            "random",
            "random full-range i16 pairs, extremes and sector boundaries first".to_string(),
            &rx,
            &ry,
            rw,
            rh,
        ),
    ] {
        let inputs = vec![
            Blob::from_i16("gx", w, h, 1, gx),
            Blob::from_i16("gy", w, h, 1, gy),
        ];
        for kernel in [
            "gradient.magnitude_l1",
            "gradient.magnitude_l2",
            "gradient.magnitude_l2_round",
            "gradient.direction",
            "gradient.angles",
        ] {
            let expected =
                run_vector(kernel, &json!({}), &inputs).expect("golden inputs are valid");
            v.push(GoldenCase {
                id: format!("{kernel}.{tag}"),
                comment: format!("{kernel} on {comment}"),
                kernel: kernel.into(),
                params: json!({}),
                inputs: inputs.clone(),
                expected,
            });
        }
    }
    v
}

/// Recomputes a gradient vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    if !params.as_object().is_some_and(|o| o.is_empty()) {
        return Err(format!("params of `{kernel}` must be an empty object"));
    }
    let bx = input(inputs, "gx")?;
    let by = input(inputs, "gy")?;
    let (gx, gy) = (bx.to_i16()?, by.to_i16()?);
    if (bx.width, bx.height) != (by.width, by.height) {
        return Err("gx and gy differ in size".into());
    }
    let (w, h) = (bx.width, bx.height);
    Ok(vec![match kernel {
        "gradient.magnitude_l1" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l1)?,
        ),
        "gradient.magnitude_l2" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l2_approx)?,
        ),
        "gradient.magnitude_l2_round" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l2_round)?,
        ),
        "gradient.direction" => Blob::from_u8(
            "dir",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::direction)?,
        ),
        "gradient.angles" => Blob::from_u16(
            "angle",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::angles)?,
        ),
        _ => return Err(format!("unknown gradient kernel `{kernel}`")),
    }])
}

#[cfg(test)]
mod tests {
    use super::*;

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
}
