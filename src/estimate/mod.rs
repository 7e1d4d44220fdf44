//! Sensorless estimates: inductor current and efficiency.
//!
//! | module | what |
//! |---|---|
//! | [`current`] | piecewise-linear inductor current from the switching edges (fast path), phase sums (slow path) |
//! | [`observer`] | averaged-model Luenberger observer that holds the current's DC level (slow path) |
//! | [`efficiency`] | efficiency: measured, or from a loss model of the current estimate (slow path) |

pub mod current;
pub mod efficiency;
pub mod observer;

pub use current::{
    Amps, CurrentEstimator, CycleCurrents, InductorModel, Phases, SlopeScale, WindowTotals,
};
pub use efficiency::{LossBreakdown, LossConfig, LossModel, MeasuredEfficiency, Steinmetz};
pub use observer::{Observer, ObserverConfig};

/// Amperes as [`Amps`], saturating at the range's edges; NaN gives zero
/// (never panics, unlike the `fixed` crate's own saturating conversion).
pub const fn amps(a: f32) -> Amps {
    crate::units::q16(a as f64)
}
