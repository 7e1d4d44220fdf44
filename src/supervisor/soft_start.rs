//! The soft-start ramp, moved every reading.
//!
//! From the output where it stands (a pre-biased output is not discharged)
//! to the setpoint over the configured time, the law's reference rises
//! in steps of a fraction of a code, and the current limit's cap rises
//! with it from an eighth of the limit to the limit: the inductor current
//! is held to what the ramp needs rather than to the full limit. An analog
//! comparator loop, whose reference firmware cannot move, starts under the
//! rising cap, each pulse bounded to it through the guard
//! (`start_pulses.rs`); its ramp begins as far along as the output stands
//! (a lead of `ticks · from / setpoint`), so a pre-biased output is not
//! left to the load under pulses sized for a cold start.
//!
//! The slow path works out both slopes once per start (two divisions); the
//! fast path then takes one 32-bit multiply each (a 64-bit one is a library
//! call on the Cortex-M0): the reference slope in codes × 2¹⁶ per tick, so
//! `rate · elapsed` stays below the span × 2¹⁶ < 2³² for any span of a
//! 16-bit code; the cap's in `Amps` bits × 2⁸ per tick over a span held
//! within 128 A, so its product stays below 2³¹.

use crate::estimate::Amps;
use crate::units::div_u64;

/// The ramp of one start.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct SoftStartRamp {
    /// Ramp length, ticks (≥ 1).
    ticks: u32,
    /// Ticks the ramp starts ahead (≤ `ticks`).
    lead: u32,
    from: u16,
    target: u16,
    /// Reference slope, codes × 2¹⁶ per tick.
    rate: u32,
    cap_from: Amps,
    /// Cap slope, `Amps` bits × 2⁸ per tick.
    cap_rate: u32,
}

impl SoftStartRamp {
    /// A ramp of `ticks` to the setpoint `target` (code).
    pub(super) const fn new(ticks: u32, target: u16) -> Self {
        Self {
            ticks: if ticks == 0 { 1 } else { ticks },
            lead: 0,
            from: target,
            target,
            rate: 0,
            cap_from: Amps::ZERO,
            cap_rate: 0,
        }
    }

    /// Slow path: a start from the output code `from` to the setpoint, the
    /// cap from an eighth of `limit` to `limit`; with `lead`, the ramp
    /// begins as far along as `from` is toward the setpoint.
    pub(super) fn begin(&mut self, from: u16, limit: Amps, lead: bool) {
        let span = u64::from(self.target.saturating_sub(from));
        let ticks = u64::from(self.ticks);
        self.from = from.min(self.target);
        self.lead = if lead {
            let done = div_u64(ticks * u64::from(self.from), u64::from(self.target.max(1)));
            done.min(ticks) as u32
        } else {
            0
        };
        self.rate = div_u64(span << 16, ticks).min(u64::from(u32::MAX)) as u32;
        self.cap_from = limit / 8;
        // Held within 128 A (2²³ bits): `cap_rate · elapsed` < 2³¹.
        let cap_span = (limit - self.cap_from).to_bits().clamp(0, 1 << 23) as u64;
        self.cap_rate = div_u64(cap_span << 8, ticks) as u32;
    }

    /// Fast path: the reference and cap `elapsed` ticks into the start;
    /// `None` once the ramp is over.
    #[inline(always)]
    pub(super) fn at(&self, elapsed: u32) -> Option<(u16, Amps)> {
        let elapsed = elapsed.saturating_add(self.lead);
        if elapsed >= self.ticks {
            return None;
        }
        // elapsed < ticks: both products stay within their bounds.
        let step = self.rate.wrapping_mul(elapsed) >> 16;
        let reference = (u32::from(self.from) + step).min(u32::from(self.target)) as u16;
        let rise = (self.cap_rate.wrapping_mul(elapsed) >> 8) as i32;
        Some((reference, self.cap_from.saturating_add(Amps::from_bits(rise))))
    }

    /// `elapsed` ticks into the start, twice the ramp's time has passed.
    pub(super) const fn overdue(&self, elapsed: u32) -> bool {
        elapsed.saturating_add(self.lead) / 2 >= self.ticks
    }

    /// The setpoint.
    pub(super) const fn target(&self) -> u16 {
        self.target
    }
}
