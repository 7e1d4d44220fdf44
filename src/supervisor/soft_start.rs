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
//! Under smaller pulses at light load the slow path may size the ramp's
//! pulses below that cap, and those of its last sixteenth for the load
//! alone (`stack/light_load.rs`); regulation then begins at that size.
//!
//! The slow path works out both slopes once per start (two divisions); the
//! fast path then takes one 32-bit multiply each (a 64-bit one is a library
//! call on the Cortex-M0): the reference slope in codes × 2¹⁶ per tick, so
//! `rate · elapsed` stays below the span × 2¹⁶ < 2³² for any span of a
//! 16-bit code; the cap's in `Amps` bits × 2⁸ per tick over a span held
//! within 128 A, so its product stays below 2³¹.

use crate::estimate::Amps;
use crate::part::{self, Part};
use crate::units::{div_u64, ratio, Fraction};

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
    /// The light-load sizer's caps for this start, if it sized them
    /// (nothing at all without the `light-load` feature).
    sized: Part<StartSize, { part::LIGHT_LOAD }>,
}

/// The caps the light-load sizer gave a start's pulses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct StartSize {
    /// Through the ramp, below its own rising cap.
    ramp: Amps,
    /// From the ramp's last sixteenth on, and for regulation after it.
    end: Amps,
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
            sized: Part::none(),
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
        self.sized = Part::none();
    }

    /// Slow path: cap the ramp's pulses at `ramp`, and from its last
    /// sixteenth on at `end` (the light-load sizer's caps; without the
    /// `light-load` feature there is no sizer and this keeps nothing).
    pub(super) fn size(&mut self, ramp: Amps, end: Amps) {
        self.sized = Part::some(StartSize { ramp, end });
    }

    /// The cap regulation begins with: the sizer's for the ramp's end, or
    /// `limit`.
    pub(super) fn end_cap(&self, limit: Amps) -> Amps {
        self.sized.get().map_or(limit, |s| s.end)
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
        let mut cap = self.cap_from.saturating_add(Amps::from_bits(rise));
        if let Some(s) = self.sized.get() {
            cap = cap.min(if elapsed >= self.ticks - self.ticks / 16 { s.end } else { s.ramp });
        }
        Some((reference, cap))
    }

    /// `elapsed` ticks into the start, twice the ramp's time has passed.
    pub(super) const fn overdue(&self, elapsed: u32) -> bool {
        elapsed.saturating_add(self.lead) / 2 >= self.ticks
    }

    /// The share of the setpoint this start covers, `(setpoint − start
    /// level)/setpoint` (`Q16.16`, 0–1). Slow path: one division.
    pub(super) fn span(&self) -> Fraction {
        ratio(u64::from(self.target.saturating_sub(self.from)), u64::from(self.target.max(1)))
    }

    /// The setpoint.
    pub(super) const fn target(&self) -> u16 {
        self.target
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A start of 160 ticks to code 1 000 under a 4 A limit: the cap rises
    /// from 0.5 A; sized, it is held at the ramp's size, from the last
    /// sixteenth (tick 150) at the end's, which regulation then begins
    /// with; a new start forgets both.
    #[test]
    fn a_sized_start_caps_the_ramp_and_its_end() {
        let limit = Amps::from_num(4);
        let mut ramp = SoftStartRamp::new(160, 1_000);
        ramp.begin(0, limit, false);
        let cap = |r: &SoftStartRamp, t| r.at(t).unwrap().1;
        assert_eq!(cap(&ramp, 0), Amps::from_num(0.5));
        assert!(cap(&ramp, 80) > Amps::from_num(2.2), "{}", cap(&ramp, 80));
        assert_eq!(ramp.end_cap(limit), limit);

        ramp.size(Amps::from_num(1), Amps::from_num(0.25));
        assert_eq!(cap(&ramp, 0), Amps::from_num(0.5), "below the size, the ramp's own cap");
        assert_eq!(cap(&ramp, 80), Amps::from_num(1));
        assert_eq!(cap(&ramp, 149), Amps::from_num(1));
        assert_eq!(cap(&ramp, 150), Amps::from_num(0.25));
        assert_eq!(ramp.at(160), None);
        assert_eq!(ramp.end_cap(limit), Amps::from_num(0.25));

        ramp.begin(0, limit, false);
        assert_eq!(ramp.end_cap(limit), limit);
        assert!(cap(&ramp, 150) > Amps::from_num(3.7));
    }
}
