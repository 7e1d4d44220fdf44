//! How a proposal writes its values: each choice with its reason, rounded
//! to a step, with an engineering prefix, as a percentage.

/// A value with an engineering prefix (the simulator's report format).
pub use crate::sim::notation::eng;

/// A fraction as a percentage.
pub fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

/// A factor as the percentage it adds (1.1: "10 %").
pub fn pct_over(x: f64) -> String {
    format!("{:.0} %", 100.0 * (x - 1.0))
}

/// `x` rounded up to a whole number of `step`s (a value a hair above a
/// step, from floating-point error, stays on it).
pub fn round_up(x: f64, step: f64) -> f64 {
    ((x / step) - 1e-9).ceil() * step
}

/// `x` rounded down to a whole number of `step`s (a hair below a step
/// stays on it).
pub fn round_down(x: f64, step: f64) -> f64 {
    ((x / step) + 1e-9).floor() * step
}

/// `x` rounded to the nearest whole number of `step`s.
pub fn round_to(x: f64, step: f64) -> f64 {
    (x / step).round() * step
}

/// One choice and its reason.
#[derive(Clone, Debug, PartialEq)]
pub struct Choice {
    /// What was chosen, e.g. `band`.
    pub topic: &'static str,
    /// Its value as printed.
    pub value: String,
    /// What it keeps and the rule it follows.
    pub why: String,
}

impl Choice {
    /// A choice.
    pub fn new(topic: &'static str, value: String, why: String) -> Self {
        Self { topic, value, why }
    }
}
