//! Statistics of a study: the yield's confidence interval and each figure's
//! distribution.

use serde::Serialize;

/// z for a two-sided 95 % interval: the 0.975 quantile of the standard
/// normal distribution.
pub const Z_95: f64 = 1.959_963_984_540_054;

/// Wilson's score interval for a proportion: `passed` successes in `n`
/// trials, at the confidence that `z` gives (Wilson, "Probable inference,
/// the law of succession, and statistical inference", J. Amer. Statist.
/// Assoc. 22 (1927) 209–212; as given by Newcombe, Statistics in Medicine
/// 17 (1998) 857–872, method 3). Unlike the normal approximation it stays
/// inside [0, 1] and is not empty at 0 or n successes.
pub fn wilson(passed: u64, n: u64, z: f64) -> Option<(f64, f64)> {
    if n == 0 {
        return None;
    }
    let (n, p) = (n as f64, passed as f64 / n as f64);
    let z2 = z * z;
    let centre = (p + z2 / (2.0 * n)) / (1.0 + z2 / n);
    let half = z / (1.0 + z2 / n) * (p * (1.0 - p) / n + z2 / (4.0 * n * n)).sqrt();
    Some(((centre - half).max(0.0), (centre + half).min(1.0)))
}

/// The `q`-quantile (0 ≤ q ≤ 1) of sorted values by linear interpolation
/// between order statistics, `x[(n−1)·q]` (Hyndman & Fan, "Sample
/// quantiles in statistical packages", Amer. Statist. 50 (1996) 361–365,
/// definition 7; numpy's default).
pub fn quantile(sorted: &[f64], q: f64) -> f64 {
    let Some(last) = sorted.len().checked_sub(1) else { return f64::NAN };
    let h = last as f64 * q.clamp(0.0, 1.0);
    let (lo, frac) = (h.floor() as usize, h - h.floor());
    let hi = (lo + 1).min(last);
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

/// The distribution of one figure over a study's runs.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FigureStats {
    /// Figure key (see [`super::criteria::FIGURES`]).
    pub name: &'static str,
    /// Unit.
    pub unit: &'static str,
    /// Runs where the figure had a value.
    pub count: usize,
    /// Runs without one (no steady switching, no estimator, never back in
    /// band).
    pub missing: usize,
    /// Smallest value.
    pub min: f64,
    /// 5th percentile.
    pub p5: f64,
    /// Median.
    pub p50: f64,
    /// 95th percentile.
    pub p95: f64,
    /// Largest value.
    pub max: f64,
    /// Mean.
    pub mean: f64,
}

impl FigureStats {
    /// Statistics of `values` (non-finite ones counted as missing).
    pub fn of(name: &'static str, unit: &'static str, values: &[f64]) -> Self {
        let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
        v.sort_by(f64::total_cmp);
        let mean = if v.is_empty() { f64::NAN } else { v.iter().sum::<f64>() / v.len() as f64 };
        Self {
            name,
            unit,
            count: v.len(),
            missing: values.len() - v.len(),
            min: v.first().copied().unwrap_or(f64::NAN),
            p5: quantile(&v, 0.05),
            p50: quantile(&v, 0.50),
            p95: quantile(&v, 0.95),
            max: v.last().copied().unwrap_or(f64::NAN),
            mean,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wilson_matches_newcombes_worked_examples() {
        // Newcombe (1998), Table I, method 3 (score interval without
        // continuity correction), to 4 decimals (values from memory of
        // that table).
        for (k, n, lo, hi) in [
            (81, 263, 0.2553, 0.3662),
            (15, 148, 0.0624, 0.1605),
            (0, 20, 0.0, 0.1611),
            (1, 29, 0.0061, 0.1718),
        ] {
            let (a, b) = wilson(k, n, Z_95).unwrap();
            assert!((a - lo).abs() < 6e-5 && (b - hi).abs() < 6e-5, "{k}/{n}: {a:.4}–{b:.4}");
        }
        assert_eq!(wilson(0, 0, Z_95), None);
    }

    #[test]
    fn quantiles_follow_numpys_default() {
        // numpy.percentile's documented example: [[10, 7, 4], [3, 2, 1]]
        // has median 3.5.
        assert_eq!(quantile(&[1.0, 2.0, 3.0, 4.0, 7.0, 10.0], 0.5), 3.5);
        // numpy.percentile([0, 1, ..., 7], [25, 50, 75]) = 1.75, 3.5, 5.25
        // (programiz.com's numpy.percentile page).
        let v: Vec<f64> = (0..8).map(f64::from).collect();
        assert_eq!([quantile(&v, 0.25), quantile(&v, 0.5), quantile(&v, 0.75)], [1.75, 3.5, 5.25]);
        assert_eq!(quantile(&v, 1.0), 7.0);
        assert!(quantile(&[], 0.5).is_nan());
    }
}
