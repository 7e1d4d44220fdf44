//! `f64` reference models in SI units (volts, seconds): the oracle for the
//! property tests.
//!
//! Each model restates what its fixed-point twin must do, written for
//! clarity, with absolute times in seconds that never wrap and thresholds in
//! volts that are never rounded. Tests drive both with the same inputs and
//! bound the difference.

pub mod guard;
pub mod hysteretic;
pub mod on_time;

pub use guard::GuardModel;
pub use hysteretic::{HystereticModel, LockModel};
pub use on_time::OnTimeModel;
