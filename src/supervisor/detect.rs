//! Detectors run on each completed switching cycle: a short circuit and a
//! stuck output sensor.
//!
//! - **Short circuit**: that many consecutive cycles ended by the current
//!   limit while the output reads below half the present reference.
//!   (Charging the output capacitor at the limit during soft-start keeps
//!   the output near the ramp, so it is not taken for a short.)
//! - **Stuck sensor**: the output reads near zero while the firmware's own
//!   timing says the switch node averages well above it (`D·V_in`: an open
//!   feedback divider; a real short instead averages only about a diode
//!   drop), for that many consecutive cycles.

use super::{FaultKind, Limits};
use crate::estimate::CycleCurrents;

/// What a completed cycle is judged on.
#[derive(Clone, Copy, Debug)]
pub(super) struct CycleView<'a> {
    pub(super) cycle: &'a CycleCurrents,
    /// The current limit ended its on-time.
    pub(super) limited: bool,
    /// The last output reading and the present reference, output codes.
    pub(super) output: u16,
    pub(super) reference: u16,
    /// The last input reading, input code.
    pub(super) input: u16,
}

/// Consecutive-cycle counts of both detectors.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct Detectors {
    limited_streak: u16,
    stuck_streak: u16,
}

impl Detectors {
    pub(super) const fn new() -> Self {
        Self { limited_streak: 0, stuck_streak: 0 }
    }

    /// Judge a completed cycle; the fault it completes, if any.
    #[inline(always)]
    pub(super) fn end_of_cycle(&mut self, v: &CycleView<'_>, limits: &Limits) -> Option<FaultKind> {
        let collapsed = v.output < v.reference / 2;
        let short = v.limited && collapsed;
        self.limited_streak = if short { self.limited_streak.saturating_add(1) } else { 0 };
        if self.limited_streak >= limits.short_cycles {
            return Some(FaultKind::ShortCircuit);
        }
        let implied = duty_input_at_least(v.cycle, v.input, limits.stuck_implied);
        let stuck = v.output <= limits.stuck_low && implied;
        self.stuck_streak = if stuck { self.stuck_streak.saturating_add(1) } else { 0 };
        if self.stuck_streak >= limits.stuck_cycles {
            return Some(FaultKind::SensorStuck);
        }
        None
    }

    /// Start counting afresh (after a stop).
    pub(super) fn reset(&mut self) {
        *self = Self::new();
    }
}

/// Whether a cycle's `D·V_in` (input code `vin`) reaches the input code
/// `implied`: `on·vin ≥ period·implied`, with no division and only 32-bit
/// products (a 64-bit multiply is a library call on the Cortex-M0). The tick
/// counts are cut to 16 bits first (shifted alike: the ratio keeps 15 bits
/// or more), so each product of a count and a 16-bit code fits.
#[inline(always)]
fn duty_input_at_least(cycle: &CycleCurrents, vin: u16, implied: u16) -> bool {
    let (mut on, mut period) = (cycle.on_ticks, cycle.period_ticks);
    if period > 0xffff {
        let shift = if period > 0xff_ffff { 16 } else { 8 };
        on >>= shift;
        period >>= shift;
    }
    // on ≤ period < 2¹⁶: each product is below 2³².
    on.min(0xffff) * u32::from(vin) >= period.min(0xffff) * u32::from(implied)
}
