//! Error metrics between a kernel's output and a reference.

use serde::Serialize;
use std::collections::BTreeMap;

/// Statistics of `actual - reference` over a set of samples.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ErrorStats {
    /// Number of samples.
    pub samples: usize,
    /// Largest `|actual - reference|`.
    pub max_abs: f64,
    /// Mean of `actual - reference` (the bias).
    pub mean: f64,
    /// Root mean square error.
    pub rmse: f64,
    /// Peak signal-to-noise ratio in dB for the given peak; `None` (infinite)
    /// when the RMSE is zero.
    pub psnr_db: Option<f64>,
    /// Share of samples where `actual == reference` exactly.
    pub exact_share: f64,
    /// Histogram of the error rounded to the nearest integer (ties away
    /// from zero), as `(error, count)` in increasing error order.
    pub histogram: Vec<(i64, u64)>,
}

impl ErrorStats {
    /// Compares two equally long sample sets; `peak` is the signal peak for
    /// PSNR (255 for 8-bit images).
    ///
    /// Panics if the lengths differ (a bug in the caller, not bad input).
    pub fn compare(actual: &[f64], reference: &[f64], peak: f64) -> Self {
        assert_eq!(
            actual.len(),
            reference.len(),
            "sample sets differ in length"
        );
        let n = actual.len();
        let mut max_abs = 0f64;
        let mut sum = 0f64;
        let mut sum_sq = 0f64;
        let mut exact = 0usize;
        let mut hist: BTreeMap<i64, u64> = BTreeMap::new();
        for (&a, &r) in actual.iter().zip(reference) {
            let e = a - r;
            max_abs = max_abs.max(e.abs());
            sum += e;
            sum_sq += e * e;
            if a == r {
                exact += 1;
            }
            *hist.entry(e.round() as i64).or_insert(0) += 1;
        }
        let nf = n.max(1) as f64;
        let rmse = (sum_sq / nf).sqrt();
        Self {
            samples: n,
            max_abs,
            mean: sum / nf,
            rmse,
            psnr_db: if rmse > 0.0 {
                Some(20.0 * (peak / rmse).log10())
            } else {
                None
            },
            exact_share: if n == 0 { 1.0 } else { exact as f64 / nf },
            histogram: hist.into_iter().collect(),
        }
    }

    /// Compares integer samples.
    pub fn compare_int<A: Copy + Into<f64>, B: Copy + Into<f64>>(
        actual: &[A],
        reference: &[B],
        peak: f64,
    ) -> Self {
        let a: Vec<f64> = actual.iter().map(|&v| v.into()).collect();
        let r: Vec<f64> = reference.iter().map(|&v| v.into()).collect();
        Self::compare(&a, &r, peak)
    }

    /// Share of samples with `|error| <= tol` (from the histogram, so only
    /// meaningful for integer errors).
    pub fn share_within(&self, tol: i64) -> f64 {
        let within: u64 = self
            .histogram
            .iter()
            .filter(|(e, _)| e.abs() <= tol)
            .map(|(_, c)| c)
            .sum();
        within as f64 / self.samples.max(1) as f64
    }

    /// Adds the standard figures to a metrics map under `prefix`.
    pub fn add_to(&self, metrics: &mut BTreeMap<String, f64>, prefix: &str) {
        metrics.insert(format!("{prefix}mean_err"), self.mean);
        metrics.insert(format!("{prefix}rmse"), self.rmse);
        if let Some(p) = self.psnr_db {
            metrics.insert(format!("{prefix}psnr_db"), p);
        }
        metrics.insert(format!("{prefix}exact_share"), self.exact_share);
    }
}

/// Agreement of two binary edge maps under a one-to-one correspondence:
/// every detected pixel is matched to at most one reference pixel and
/// every reference pixel to at most one detected pixel, only within the
/// tolerance, and as many pairs as possible are formed
/// ([`max_bipartite_matching`]). A doubled or thickened edge therefore
/// leaves its extra pixels unmatched and they count as false positives.
///
/// This is the correspondence of the boundary benchmark of Martin,
/// Fowlkes & Malik 2004 ("Learning to detect natural image boundaries
/// using local brightness, color, and texture cues", IEEE TPAMI 26(5)),
/// which solves it as a minimum-cost assignment; the cost there only
/// chooses among the largest matchings, so the counts (and precision,
/// recall, F1) are those of a maximum-cardinality matching. Their
/// tolerance is a Euclidean distance relative to the image diagonal; here
/// it is a Chebyshev distance in pixels (`tol = 1`: the 8 neighbours), the
/// same neighbourhood as the many-to-one figure kept beside it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MatchedAgreement {
    /// Matched pairs / detected pixels (1 when nothing was detected).
    pub precision: f64,
    /// Matched pairs / reference pixels (1 when the reference is empty).
    pub recall: f64,
    /// Harmonic mean of precision and recall (0 when both are 0).
    pub f1: f64,
    /// Matched pairs.
    pub matched: usize,
    /// Detected edge pixels.
    pub detected_px: usize,
    /// Reference edge pixels.
    pub reference_px: usize,
}

/// One-to-one agreement of the nonzero pixels of `detected` with those of
/// `reference` (both `w x h`, row-major) within Chebyshev distance `tol`
/// (see [`MatchedAgreement`]).
///
/// Panics if a map is not `w * h` long (a bug in the caller).
///
/// ```
/// use fixsight_verify::metrics::matched_agreement;
/// // Reference: one column. Detected: the same column doubled.
/// let (w, h) = (4, 3);
/// let r: Vec<u8> = (0..w * h).map(|i| if i % w == 1 { 255 } else { 0 }).collect();
/// let d: Vec<u8> = (0..w * h).map(|i| if i % w == 1 || i % w == 2 { 255 } else { 0 }).collect();
/// let a = matched_agreement(&d, &r, w, h, 1);
/// assert_eq!((a.matched, a.detected_px, a.reference_px), (3, 6, 3));
/// assert_eq!((a.precision, a.recall), (0.5, 1.0));
/// ```
pub fn matched_agreement(
    detected: &[u8],
    reference: &[u8],
    w: usize,
    h: usize,
    tol: usize,
) -> MatchedAgreement {
    assert!(
        detected.len() == w * h && reference.len() == w * h,
        "map sizes"
    );
    let d: Vec<usize> = (0..w * h).filter(|&i| detected[i] != 0).collect();
    // Reference pixel index -> its number among the reference pixels.
    let mut r_id = vec![usize::MAX; w * h];
    let mut r_count = 0usize;
    for (i, &v) in reference.iter().enumerate() {
        if v != 0 {
            r_id[i] = r_count;
            r_count += 1;
        }
    }
    let t = tol as i64;
    let adj: Vec<Vec<usize>> = d
        .iter()
        .map(|&i| {
            let (x, y) = ((i % w) as i64, (i / w) as i64);
            let mut n = Vec::new();
            for ny in (y - t).max(0)..=(y + t).min(h as i64 - 1) {
                for nx in (x - t).max(0)..=(x + t).min(w as i64 - 1) {
                    let id = r_id[ny as usize * w + nx as usize];
                    if id != usize::MAX {
                        n.push(id);
                    }
                }
            }
            n
        })
        .collect();
    let matched = max_bipartite_matching(&adj, r_count)
        .iter()
        .filter(|m| m.is_some())
        .count();
    let (precision, recall, f1) = precision_recall_f1(matched, d.len(), matched, r_count);
    MatchedAgreement {
        precision,
        recall,
        f1,
        matched,
        detected_px: d.len(),
        reference_px: r_count,
    }
}

/// `(precision, recall, F1)` from `hit_d` of `n_d` detected pixels and
/// `hit_r` of `n_r` reference pixels that found a partner: an empty set
/// counts as fully precise (or fully recalled), and F1 is 0 when precision
/// and recall are both 0.
///
/// ```
/// let (p, r, f1) = fixsight_verify::metrics::precision_recall_f1(3, 4, 3, 3);
/// assert_eq!((p, r), (0.75, 1.0));
/// assert!((f1 - 6.0 / 7.0).abs() < 1e-12);
/// ```
pub fn precision_recall_f1(hit_d: usize, n_d: usize, hit_r: usize, n_r: usize) -> (f64, f64, f64) {
    let share = |hit: usize, n: usize| if n == 0 { 1.0 } else { hit as f64 / n as f64 };
    let (precision, recall) = (share(hit_d, n_d), share(hit_r, n_r));
    let f1 = if precision + recall > 0.0 {
        2.0 * precision * recall / (precision + recall)
    } else {
        0.0
    };
    (precision, recall, f1)
}

/// A maximum-cardinality matching of a bipartite graph by Hopcroft & Karp
/// (1973, "An n^5/2 algorithm for maximum matchings in bipartite graphs",
/// SIAM J. Computing 2(4)): a greedy first matching (each left vertex, in
/// order, takes its first free neighbour), then phases that find a
/// maximal set of shortest vertex-disjoint augmenting paths by one
/// breadth-first layering and depth-first searches (iterative, so long
/// paths need no deep recursion) until none is left. `adj[u]` lists the
/// right vertices (`< right`) next to left vertex `u`; the result gives
/// each left vertex its partner.
///
/// Panics if `adj` names a right vertex `>= right` (a bug in the caller).
///
/// ```
/// use fixsight_verify::metrics::max_bipartite_matching;
/// // The greedy pass pairs 0-0 and leaves 1 alone; one augmenting path fixes it.
/// let m = max_bipartite_matching(&[vec![0, 1], vec![0]], 2);
/// assert_eq!(m, vec![Some(1), Some(0)]);
/// ```
pub fn max_bipartite_matching(adj: &[Vec<usize>], right: usize) -> Vec<Option<usize>> {
    const FREE: usize = usize::MAX;
    let n = adj.len();
    let mut pair_l = vec![FREE; n];
    let mut pair_r = vec![FREE; right];
    for (u, nb) in adj.iter().enumerate() {
        if let Some(&v) = nb.iter().find(|&&v| pair_r[v] == FREE) {
            pair_l[u] = v;
            pair_r[v] = u;
        }
    }
    let mut dist = vec![usize::MAX; n];
    let mut next = vec![0usize; n];
    let mut queue = Vec::with_capacity(n);
    let mut stack = Vec::new();
    loop {
        // Layering from every free left vertex.
        queue.clear();
        for u in 0..n {
            if pair_l[u] == FREE {
                dist[u] = 0;
                queue.push(u);
            } else {
                dist[u] = usize::MAX;
            }
        }
        let mut found = false;
        let mut head = 0;
        while head < queue.len() {
            let u = queue[head];
            head += 1;
            for &v in &adj[u] {
                let w = pair_r[v];
                if w == FREE {
                    found = true;
                } else if dist[w] == usize::MAX {
                    dist[w] = dist[u] + 1;
                    queue.push(w);
                }
            }
        }
        if !found {
            break;
        }
        next.fill(0);
        for start in 0..n {
            if pair_l[start] != FREE {
                continue;
            }
            stack.clear();
            stack.push(start);
            while let Some(&u) = stack.last() {
                if next[u] == adj[u].len() {
                    // Dead end: never enter u again in this phase.
                    dist[u] = usize::MAX;
                    stack.pop();
                    continue;
                }
                let v = adj[u][next[u]];
                next[u] += 1;
                let w = pair_r[v];
                if w == FREE {
                    // Augment along the stack: each vertex takes the edge
                    // it last tried.
                    for &x in &stack {
                        let vx = adj[x][next[x] - 1];
                        pair_l[x] = vx;
                        pair_r[vx] = x;
                    }
                    break;
                } else if dist[w] != usize::MAX && dist[w] == dist[u] + 1 {
                    stack.push(w);
                }
            }
        }
    }
    pair_l
        .into_iter()
        .map(|v| if v == FREE { None } else { Some(v) })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Largest matching by trying every assignment (small graphs only).
    fn brute_force(adj: &[Vec<usize>], used: &mut Vec<bool>, u: usize) -> usize {
        if u == adj.len() {
            return 0;
        }
        let mut best = brute_force(adj, used, u + 1);
        for &v in &adj[u] {
            if !used[v] {
                used[v] = true;
                best = best.max(1 + brute_force(adj, used, u + 1));
                used[v] = false;
            }
        }
        best
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(128))]
        #[test]
        fn matching_is_valid_and_as_large_as_exhaustive_search(
            edges in proptest::collection::vec((0usize..7, 0usize..7), 0..20)
        ) {
            let mut adj = vec![Vec::new(); 7];
            for (u, v) in edges {
                if !adj[u].contains(&v) {
                    adj[u].push(v);
                }
            }
            let m = max_bipartite_matching(&adj, 7);
            let mut seen = [false; 7];
            for (u, p) in m.iter().enumerate() {
                if let Some(v) = *p {
                    prop_assert!(adj[u].contains(&v));
                    prop_assert!(!seen[v]);
                    seen[v] = true;
                }
            }
            let size = m.iter().filter(|p| p.is_some()).count();
            prop_assert_eq!(size, brute_force(&adj, &mut vec![false; 7], 0));
        }
    }

    #[test]
    fn long_augmenting_chain_needs_no_recursion() {
        // Left u is next to right u and u + 1; the greedy pass pairs u-u and
        // leaves the last left vertex, whose only neighbour is right 0,
        // free: the one augmenting path runs through every vertex.
        let n = 200_000;
        let mut adj: Vec<Vec<usize>> = (0..n).map(|u| vec![u, u + 1]).collect();
        adj.push(vec![0]);
        let m = max_bipartite_matching(&adj, n + 1);
        assert_eq!(m.iter().filter(|p| p.is_some()).count(), n + 1);
    }

    #[test]
    fn doubled_and_shifted_edges() {
        let (w, h) = (8usize, 6usize);
        let col = |c: &[usize]| -> Vec<u8> {
            (0..w * h)
                .map(|i| if c.contains(&(i % w)) { 255 } else { 0 })
                .collect()
        };
        let r = col(&[3]);
        // One px off: every pixel still matches.
        assert_eq!(matched_agreement(&col(&[4]), &r, w, h, 1).f1, 1.0);
        // Two px off: nothing matches.
        assert_eq!(matched_agreement(&col(&[5]), &r, w, h, 1).matched, 0);
        // Tripled: a third of the detections are matched.
        let a = matched_agreement(&col(&[2, 3, 4]), &r, w, h, 1);
        assert_eq!((a.matched, a.detected_px), (h, 3 * h));
        assert!((a.f1 - 0.5).abs() < 1e-12);
        // Empty maps.
        let z = vec![0u8; w * h];
        assert_eq!(matched_agreement(&z, &z, w, h, 1).f1, 1.0);
        assert_eq!(matched_agreement(&z, &r, w, h, 1).f1, 0.0);
    }

    #[test]
    fn figures_on_a_small_hand_worked_case() {
        // errors: 0, 1, -1, 2 -> max 2, mean 0.5, rmse sqrt(6/4)
        let s = ErrorStats::compare(&[10.0, 11.0, 9.0, 12.0], &[10.0, 10.0, 10.0, 10.0], 255.0);
        assert_eq!(s.max_abs, 2.0);
        assert_eq!(s.mean, 0.5);
        assert!((s.rmse - 1.5f64.sqrt()).abs() < 1e-12);
        assert_eq!(s.exact_share, 0.25);
        assert_eq!(s.histogram, vec![(-1, 1), (0, 1), (1, 1), (2, 1)]);
        assert_eq!(s.share_within(1), 0.75);
        let p = s.psnr_db.unwrap();
        assert!((p - 20.0 * (255.0 / 1.5f64.sqrt()).log10()).abs() < 1e-12);
    }

    #[test]
    fn identical_sets_have_no_psnr_and_full_exact_share() {
        let s = ErrorStats::compare_int(&[1u8, 2], &[1u8, 2], 255.0);
        assert_eq!(s.psnr_db, None);
        assert_eq!(s.exact_share, 1.0);
    }
}
