//! The fast path's integration: the current along each segment between
//! events, and a cycle's currents taken at its edges.
//!
//! A segment runs from the last edge, reading or update
//! ([`CurrentEstimator::segment_start`]) to the next; at its end the current
//! is `current + (slope × ticks) >> 8` (current `I16F16` A, slope `I8F24`
//! A/tick, see the slopes' formats): one 32-bit multiply, no division.
//!
//! - The ticks are cut at [`CurrentEstimator::max_segment_ticks`]
//!   (`(2³¹ − 1) / cap / 2`): with |slope| ≤ 2·cap the product fits 32
//!   bits, and the step, below 2²³ bits (128 A), cannot overflow the
//!   current.
//! - The current is held within ±2 048 A (it saturates there); an
//!   off-segment stops at its floor, zero for a diode stage (reaching it
//!   marks the cycle DCM) and −2 048 A for a synchronous one.
//! - A cycle runs from a turn-on (its valley) to the next: the turn-off
//!   keeps its peak and on-ticks; the next turn-on completes it and hands
//!   it to the window's sums (additions only, wrapping) and to the caller.
//!   Nothing is counted before the first turn-on.
//! - An edge's true time, when the handler wrote the pin later than it
//!   reported the edge, moves the edge ([`CurrentEstimator::move_edge`]);
//!   a turn-off the timer made before it was reported moves back.
//! - Where the segment's kind is known (at an edge) the compiler keeps that
//!   kind's slope and floor alone; where it is known only at run time
//!   (readings, updates, moved edges) the arithmetic is inlined, except
//!   on a Cortex-M0, which keeps one copy out of line to save flash.

use super::{within, CurrentEstimator, CURRENT_LIMIT_BITS};
use crate::estimate::phases::CycleCurrents;
use crate::law::Gate;
use crate::tick::Instant;
use crate::units::Amps;

impl CurrentEstimator {
    /// Fast path: the current at `now` (the state advanced without being
    /// stored).
    #[inline]
    pub fn current_at(&self, now: Instant) -> Amps {
        Amps::from_bits(
            self.segment_end_of_either(self.gate.is_on(), now.ticks_since(self.since)).0,
        )
    }

    /// Ticks from the last edge until the current would reach `limit` while
    /// the gate is on, at the on-slope of the last slow-path update (the
    /// fast path's per-reading check covers a slope that grew since);
    /// `None` when off or not rising. One 64-bit multiply: call it at a
    /// turn-on, not per sample.
    #[inline]
    pub fn ticks_to_reach(&self, limit: Amps) -> Option<u32> {
        if !self.gate.is_on() || self.ticks_per_amp_on == 0 {
            return None;
        }
        let gap = i64::from(limit.to_bits()) - i64::from(self.current);
        if gap <= 0 {
            return Some(0);
        }
        // gap: 2⁻¹⁶ A, ticks_per_amp: 2⁻¹⁶ ticks per A.
        let ticks = (gap * i64::from(self.ticks_per_amp_on)) >> 32;
        Some(ticks.min(i64::from(self.max_segment)) as u32)
    }

    /// Fast path: the gate switched to `gate` at `at`. Returns the cycle
    /// completed by a turn-on.
    #[inline(always)]
    pub fn on_gate(&mut self, gate: Gate, at: Instant) -> Option<CycleCurrents> {
        if gate == self.gate {
            return None;
        }
        // Each arm closes the segment the gate leaves, of the other kind.
        self.gate = gate;
        match gate {
            Gate::Off => {
                self.close_segment_of(true, at);
                // The cycle began at the turn-on: so far it is all on-time.
                self.cycle.on_ticks = self.cycle.period_ticks;
                self.cycle.peak = Amps::from_bits(self.current);
                None
            }
            Gate::On => {
                self.close_segment_of(false, at);
                // Nothing to count before the first turn-on.
                let complete = self.cycle.period_ticks != 0;
                if complete {
                    self.count_cycle();
                }
                let next = CycleCurrents {
                    valley: Amps::from_bits(self.current),
                    ..CycleCurrents::default()
                };
                let done = core::mem::replace(&mut self.cycle, next);
                complete.then_some(done)
            }
        }
    }

    /// Fast path, right after a switching edge's pin write: the gate
    /// really switched at `at`, not when the [`on_gate`](Self::on_gate)
    /// call said. Later (the handler's own time to its write): the segment
    /// the gate left runs on to `at`, a late turn-on's valley and a late
    /// turn-off's peak move there, and the cycle and window sums keep the
    /// ticks in between (a late turn-on's completed cycle keeps its DCM
    /// flag). Earlier, a turn-off only (the timer ended the pulse before
    /// the handler that turned it off began), within the pulse: the
    /// on-segment is cut back to `at`. Anything else changes nothing.
    #[inline]
    pub fn move_edge(&mut self, at: Instant) {
        let late = at.ticks_since(self.since);
        if late == 0 {
            return;
        }
        if late > self.max_segment {
            self.advance_turn_off(self.since.ticks_since(at));
            return;
        }
        let on = self.gate.is_on();
        // The segment before the edge was of the other kind.
        let (current, _) = self.segment_end_of_either(!on, late);
        self.current = current;
        self.since = at;
        if on {
            self.cycle.valley = Amps::from_bits(current);
            // The cycle this turn-on completed (counted, unless it was the
            // first) was that much longer.
            if self.totals.cycles != 0 {
                self.totals.period_ticks = self.totals.period_ticks.wrapping_add(late);
            }
        } else {
            self.cycle.period_ticks = self.cycle.period_ticks.wrapping_add(late);
            self.cycle.on_ticks = self.cycle.period_ticks;
            self.cycle.peak = Amps::from_bits(current);
        }
    }

    /// The last turn-off happened `early` ticks before it was reported.
    #[cold]
    fn advance_turn_off(&mut self, early: u32) {
        if self.gate.is_on() || early > self.cycle.on_ticks || early > self.max_segment {
            return;
        }
        // |slope| ≤ 2·cap and early ≤ max_segment: the product fits.
        let slope = self.on_base - self.vout_term;
        let back = (slope * early as i32) >> 8;
        self.current = within(self.current - back, CURRENT_LIMIT_BITS);
        self.since = Instant(self.since.0.wrapping_sub(early));
        self.cycle.period_ticks = self.cycle.period_ticks.wrapping_sub(early);
        self.cycle.on_ticks = self.cycle.period_ticks;
        self.cycle.peak = Amps::from_bits(self.current);
    }

    #[inline(always)]
    fn count_cycle(&mut self) {
        let (t, c) = (&mut self.totals, &self.cycle);
        t.cycles = t.cycles.wrapping_add(1);
        t.dcm_cycles = t.dcm_cycles.wrapping_add(u32::from(c.dcm));
        t.on_ticks = t.on_ticks.wrapping_add(c.on_ticks);
        t.period_ticks = t.period_ticks.wrapping_add(c.period_ticks);
        t.peak_sum = t.peak_sum.wrapping_add(i64::from(c.peak.to_bits()));
        t.valley_sum = t.valley_sum.wrapping_add(i64::from(c.valley.to_bits()));
    }

    /// Fast path: bring the stored state up to `now` (for instance before a
    /// slow-path read).
    #[inline]
    pub fn update(&mut self, now: Instant) {
        self.close_segment(now);
    }

    /// The current after `ticks` more of the present segment (an on-segment
    /// if `on`), and whether it reached an off-segment's floor (zero for a
    /// diode stage), without storing anything. Inlined where the kind is
    /// known (at an edge, [`close_segment_of`](Self::close_segment_of)):
    /// the compiler keeps that kind's slope and floor alone.
    #[inline(always)]
    fn segment_end(&self, on: bool, ticks: u32) -> (i32, bool) {
        let slope = if on { self.on_base } else { self.off_base } - self.vout_term;
        let n = ticks.min(self.max_segment) as i32;
        // |slope| ≤ 2·cap and n ≤ i32::MAX / (2·cap): the product fits; and
        // |current| ≤ 2²⁷ plus |delta| ≤ 2²³ cannot overflow.
        let sum = self.current + ((slope * n) >> 8);
        let floor = if on { -CURRENT_LIMIT_BITS } else { self.off_floor };
        (sum.min(CURRENT_LIMIT_BITS).max(floor), !on & (sum < floor))
    }

    /// [`segment_end`](Self::segment_end) where the kind is known only at
    /// run time (a reading, a timer or comparator event, a moved edge). On
    /// a Cortex-M0 (Armv6-M, told by its lack of 32-bit atomics) out of
    /// line: one copy for all of them, a call each (about 500 bytes less
    /// than a copy per use; the edges keep their own); elsewhere inlined,
    /// the faster handlers the other cores' budgets were set with.
    #[cfg_attr(all(target_arch = "arm", not(target_has_atomic = "32")), inline(never))]
    #[cfg_attr(not(all(target_arch = "arm", not(target_has_atomic = "32"))), inline(always))]
    fn segment_end_of_either(&self, on: bool, ticks: u32) -> (i32, bool) {
        self.segment_end(on, ticks)
    }

    /// Close the present segment at `now`, whichever kind it is (a reading,
    /// an update). Out of line on a Cortex-M0, for the same reason.
    #[cfg_attr(all(target_arch = "arm", not(target_has_atomic = "32")), inline(never))]
    #[cfg_attr(not(all(target_arch = "arm", not(target_has_atomic = "32"))), inline(always))]
    pub(super) fn close_segment(&mut self, now: Instant) {
        let ticks = now.ticks_since(self.since);
        let end = self.segment_end_of_either(self.gate.is_on(), ticks);
        self.store_segment(end, ticks, now);
    }

    /// [`close_segment`](Self::close_segment) where the segment's kind is
    /// known (at an edge: the one the gate leaves), so the compiler keeps
    /// only that kind's slope and floor.
    #[inline(always)]
    fn close_segment_of(&mut self, on: bool, now: Instant) {
        let ticks = now.ticks_since(self.since);
        let end = self.segment_end(on, ticks);
        self.store_segment(end, ticks, now);
    }

    /// Keep a closed segment's `end` (current, floor reached) after `ticks`
    /// more, up to `now`.
    #[inline(always)]
    fn store_segment(&mut self, (current, clamped): (i32, bool), ticks: u32, now: Instant) {
        self.cycle.dcm |= clamped;
        self.cycle.period_ticks = self.cycle.period_ticks.wrapping_add(ticks);
        self.current = current;
        self.since = now;
    }
}
