//! How far each part or condition may stray from its nominal value: the
//! `[tolerance.spread]` table.
//!
//! A spread has a **limit**, either relative to the nominal value (`rel`,
//! a fraction) or absolute (`abs`, in the parameter's unit), and a
//! distribution inside it:
//!
//! - `uniform`: every value within nominal ± limit equally likely;
//! - `normal`: σ = limit/3, draws beyond the limit drawn again (a
//!   truncated normal; reading a tolerance as 3σ is common practice).
//!
//! `--corners` ignores the distribution and takes nominal ± limit.
//! A ceramic output capacitor also loses capacitance under DC bias: give
//! `dc_bias_loss` on `c_f`, the fraction lost at the output voltage, read
//! from the maker's DC-bias curve; it scales the nominal value before the
//! spread applies.

use rand::Rng;
use rand_distr::{Distribution, Normal};
use serde::{Deserialize, Serialize};

/// The distribution inside a spread's limit.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Dist {
    /// Every value within the limit equally likely.
    #[default]
    Uniform,
    /// σ = limit/3, truncated at the limit.
    Normal,
}

/// One parameter's spread.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spread {
    /// Distribution (default uniform).
    #[serde(default)]
    pub dist: Dist,
    /// Limit as a fraction of the nominal value.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rel: Option<f64>,
    /// Limit in the parameter's own unit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub abs: Option<f64>,
    /// Capacitance lost under the DC bias, a fraction (`c_f` only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dc_bias_loss: Option<f64>,
}

impl Spread {
    /// A uniform spread of `rel` of the nominal value.
    pub const fn uniform_rel(rel: f64) -> Self {
        Self { dist: Dist::Uniform, rel: Some(rel), abs: None, dc_bias_loss: None }
    }

    /// A uniform spread of `abs` in the parameter's unit.
    pub const fn uniform_abs(abs: f64) -> Self {
        Self { dist: Dist::Uniform, rel: None, abs: Some(abs), dc_bias_loss: None }
    }

    /// No spread at all.
    pub const fn none() -> Self {
        Self { dist: Dist::Uniform, rel: None, abs: None, dc_bias_loss: None }
    }

    /// The limit around `nominal`, in the parameter's unit (≥ 0).
    pub fn limit(&self, nominal: f64) -> f64 {
        match (self.rel, self.abs) {
            (Some(rel), _) => rel * nominal.abs(),
            (None, Some(abs)) => abs,
            (None, None) => 0.0,
        }
    }

    /// A random deviation within ± `limit`.
    pub fn deviation(&self, limit: f64, rng: &mut impl Rng) -> f64 {
        if limit == 0.0 {
            return 0.0;
        }
        match self.dist {
            Dist::Uniform => limit * (2.0 * rng.random::<f64>() - 1.0),
            Dist::Normal => {
                let normal = Normal::new(0.0, limit / 3.0).unwrap_or_else(|_| unreachable!());
                loop {
                    let d: f64 = normal.sample(rng);
                    if d.abs() <= limit {
                        return d;
                    }
                }
            }
        }
    }

    /// What is wrong with this spread, if anything: `(sub-key, message)`.
    /// `positive` parameters (an inductance, a resistance) may not reach 0.
    pub fn problem(&self, positive: bool) -> Option<(&'static str, String)> {
        if self.rel.is_some() && self.abs.is_some() {
            return Some(("abs", "give rel or abs, not both".to_string()));
        }
        if let Some(rel) = self.rel {
            let top = if positive { 1.0 } else { f64::INFINITY };
            if !(rel.is_finite() && (0.0..top).contains(&rel)) {
                return Some(("rel", format!("must be in [0, {top}), got {rel}")));
            }
        }
        if let Some(abs) = self.abs {
            if !(abs.is_finite() && abs >= 0.0) {
                return Some(("abs", format!("must not be negative, got {abs}")));
            }
        }
        if let Some(loss) = self.dc_bias_loss {
            if !(0.0..1.0).contains(&loss) {
                return Some(("dc_bias_loss", format!("must be in [0, 1), got {loss}")));
            }
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_xoshiro::Xoshiro256PlusPlus;

    #[test]
    fn draws_stay_within_the_limit() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(1);
        for dist in [Dist::Uniform, Dist::Normal] {
            let s = Spread { dist, ..Spread::uniform_rel(0.2) };
            let limit = s.limit(47e-6);
            assert!((limit - 9.4e-6).abs() < 1e-18);
            let d: Vec<f64> = (0..10_000).map(|_| s.deviation(limit, &mut rng)).collect();
            assert!(d.iter().all(|x| x.abs() <= limit));
            // Uniform on [−a, a]: variance a²/3; normal with σ = a/3
            // truncated at 3σ: variance 0.973·a²/9 (Johnson, Kotz &
            // Balakrishnan, Continuous Univariate Distributions, vol. 1,
            // ch. 13, truncated normal moments).
            let var = d.iter().map(|x| x * x).sum::<f64>() / d.len() as f64 / (limit * limit);
            let expected = if dist == Dist::Uniform { 1.0 / 3.0 } else { 0.9733 / 9.0 };
            assert!((var - expected).abs() < 0.05 * expected, "{dist:?}: {var} vs {expected}");
        }
    }
}
