//! The `f64` references of `fixsight::gradient` (see the family docs).

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
