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

#[cfg(test)]
mod tests {
    use super::*;

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
