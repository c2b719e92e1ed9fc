//! The benchmark frame shared by the examples.

/// Rectangles, a disc and a ramp with LCG noise (sigma about 3 DN), laid
/// out on a 640x480 canvas and sampled at `w x h`.
pub fn frame(w: usize, h: usize) -> Vec<u8> {
    let mut s = 0x1234_5678u64;
    let mut img = vec![0u8; w * h];
    for y in 0..h {
        for x in 0..w {
            let (fx, fy) = (x * 640 / w, y * 480 / h);
            let mut v = 60.0 + 0.1 * fx as f64;
            if (100..300).contains(&fx) && (80..220).contains(&fy) {
                v += 80.0;
            }
            if (400..560).contains(&fx) && (260..420).contains(&fy) {
                v -= 40.0;
            }
            let (dx, dy) = (fx as f64 - 220.0, fy as f64 - 340.0);
            if dx * dx + dy * dy < 90.0 * 90.0 {
                v += 60.0;
            }
            let mut n = 0.0;
            for _ in 0..4 {
                s = s
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                n += ((s >> 40) as f64 / (1u64 << 24) as f64) - 0.5;
            }
            img[y * w + x] = (v + n * 3.0 * 1.732).clamp(0.0, 255.0) as u8;
        }
    }
    img
}
