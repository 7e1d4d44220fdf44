//! Pass-through law for boards that keep their analog comparator loop.
//!
//! The existing comparator (Schmitt trigger, Zener reference) still decides
//! when to switch; its output is routed to a capture or pin-change interrupt
//! instead of straight to the gate driver. Each edge becomes the law's demand,
//! and a [`FrequencyGuard`](crate::guard::FrequencyGuard) wrapped around this
//! law clamps the timing before the gate is driven.

use super::{Command, Gate, Law, Regulate};
use crate::tick::Instant;

/// Forwards the comparator's level as the gate demand.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ComparatorPassThrough {
    active_high: bool,
    demand: Gate,
    setpoint: u16,
}

impl ComparatorPassThrough {
    /// `active_high`: true when a high comparator output means "gate on"
    /// (false for an inverting stage driving an active-low enable).
    pub const fn new(active_high: bool) -> Self {
        Self { active_high, demand: Gate::Off, setpoint: 0 }
    }

    /// The output code the board's comparator regulates to (the middle of
    /// its thresholds), for the supervisor's checks that compare with the
    /// reference (a short: the output below half of it).
    pub const fn with_setpoint(mut self, code: u16) -> Self {
        self.setpoint = code;
        self
    }

    /// What the comparator asks for now.
    pub const fn demand(&self) -> Gate {
        self.demand
    }
}

impl Law for ComparatorPassThrough {
    /// ADC samples do not steer this law; the demand is held.
    #[inline]
    fn on_sample(&mut self, _code: u16, _now: Instant) -> Command {
        Command::hold(self.demand)
    }

    #[inline]
    fn on_edge(&mut self, level: bool, _now: Instant) -> Command {
        self.demand = Gate::from_bool(level == self.active_high);
        Command::hold(self.demand)
    }

    #[inline]
    fn on_timer(&mut self, _now: Instant) -> Command {
        Command::hold(self.demand)
    }
}

/// The reference is the board's own comparator: firmware cannot move it,
/// so DC correction leaves it where it is, and the soft-start bounds each
/// pulse through the guard instead of ramping it.
impl Regulate for ComparatorPassThrough {
    fn reference_code(&self) -> u16 {
        self.setpoint
    }

    fn set_reference(&mut self, _code: u16) {}

    fn follows_reference(&self) -> bool {
        false
    }
}
