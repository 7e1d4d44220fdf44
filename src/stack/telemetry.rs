//! What the stack tells the rest of the system: a snapshot of its state and
//! estimates, read on the slow path or from a telemetry task.

use crate::estimate::Amps;
#[cfg(feature = "loss-model")]
use crate::estimate::LossBreakdown;
use crate::guard::ClampCounts;
use crate::supervisor::State;
#[cfg(feature = "loss-model")]
use crate::units::Fraction;
use crate::units::Volts;

/// A snapshot of the stack (integer formats, no float).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Telemetry {
    /// The supervisor's state.
    pub state: State,
    /// Faults in the log (read them with [`Stack::faults`](super::Stack::faults)).
    pub faults: usize,
    /// The estimated inductor current at the last event.
    pub current: Amps,
    /// The averaged-model observer's current, when it runs.
    pub observer_current: Option<Amps>,
    /// Mean input over the last housekeeping window.
    pub vin: Volts,
    /// Mean output over the last housekeeping window.
    pub vout: Volts,
    /// Switching frequency over the last window, Hz.
    pub f_sw_hz: u32,
    /// Model-based loss breakdown over the last window (feature
    /// `loss-model`).
    #[cfg(feature = "loss-model")]
    pub losses: LossBreakdown,
    /// Estimated efficiency over the last window ([`Fraction`], 2¹⁶ = 1;
    /// feature `loss-model`).
    #[cfg(feature = "loss-model")]
    pub efficiency: Fraction,
    /// How often each limit of the frequency window acted since start.
    pub clamps: ClampCounts,
}
