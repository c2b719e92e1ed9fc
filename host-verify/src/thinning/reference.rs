//! The reference model of `fixsight::thinning` (see the family docs).

/// Thins a `w x h` map (nonzero = foreground; outside = background) and
/// returns the result and the number of full iterations run.
pub fn reference(map: &[u8], w: usize, h: usize) -> (Vec<u8>, u32) {
    let mut cur = map.to_vec();
    let mut iterations = 0;
    loop {
        iterations += 1;
        let mut changed = false;
        for sub in [1, 2] {
            let snap = cur.clone();
            let f = |x: i64, y: i64| -> bool {
                x >= 0
                    && y >= 0
                    && x < w as i64
                    && y < h as i64
                    && snap[y as usize * w + x as usize] != 0
            };
            for y in 0..h as i64 {
                for x in 0..w as i64 {
                    if !f(x, y) {
                        continue;
                    }
                    // P2..P9: N, NE, E, SE, S, SW, W, NW.
                    let p = [
                        f(x, y - 1),
                        f(x + 1, y - 1),
                        f(x + 1, y),
                        f(x + 1, y + 1),
                        f(x, y + 1),
                        f(x - 1, y + 1),
                        f(x - 1, y),
                        f(x - 1, y - 1),
                    ];
                    let b = p.iter().filter(|&&v| v).count();
                    let a = (0..8).filter(|&i| !p[i] && p[(i + 1) % 8]).count();
                    let (p2, p4, p6, p8) = (p[0], p[2], p[4], p[6]);
                    let (c, d) = if sub == 1 {
                        (!(p2 && p4 && p6), !(p4 && p6 && p8))
                    } else {
                        (!(p2 && p4 && p8), !(p2 && p6 && p8))
                    };
                    if (2..=6).contains(&b) && a == 1 && c && d {
                        cur[y as usize * w + x as usize] = 0;
                        changed = true;
                    }
                }
            }
        }
        if !changed {
            return (cur, iterations);
        }
    }
}

/// Number of 8-connected foreground components.
pub fn components(map: &[u8], w: usize, h: usize) -> usize {
    crate::hysteresis::reference::components8(map, w, h).len()
}
