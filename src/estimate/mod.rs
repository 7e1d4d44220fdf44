//! Sensorless estimates: inductor current and efficiency.
//!
//! | module | what |
//! |---|---|
//! | [`model`] | what the estimator assumes about the power stage (configuration) |
//! | [`current`] | piecewise-linear inductor current from the switching edges: the estimator and its read-out; its files `slopes.rs` (slope and code scales: voltages, readings and drops to slopes), `segments.rs` (segments integrated between events, fast path), `window.rs` (a window's sums to phases, slow path) |
//! | [`phases`] | a cycle's currents, a window's sums and phases (slow path) |
//! | [`observer`] | averaged-model Luenberger observer that holds the current's DC level (slow path) |
//! | [`efficiency`] | efficiency: measured, or from a loss model of the current estimate (slow path) |

pub mod current;
pub mod efficiency;
pub mod model;
pub mod observer;
pub mod phases;

pub use current::{Amps, CurrentEstimator, SlopeScale};
pub use efficiency::{LossBreakdown, LossConfig, LossModel, MeasuredEfficiency, Steinmetz};
pub use model::InductorModel;
pub use observer::{Observer, ObserverConfig};
pub use phases::{CycleCurrents, Phases, WindowTotals};

/// Amperes as [`Amps`], saturating at the range's edges; NaN gives zero
/// (never panics, unlike the `fixed` crate's own saturating conversion).
pub const fn amps(a: f32) -> Amps {
    crate::units::q16(a as f64)
}
