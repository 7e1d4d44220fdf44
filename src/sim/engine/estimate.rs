//! The firmware's current estimate, handed to the record.
//!
//! Between two ticks where a handler runs (or the plant is brought to the
//! tick), the firmware's state does not change, so its estimate there is a
//! fixed function of time: a straight line, bent at most where it reaches a
//! clamp (a floor in DCM, the longest segment) or where a held value starts
//! to ramp. The engine gives the record the estimate just before and just
//! after each such tick's handlers (a knot), and the bend between two
//! knots, found from the line's slopes at both ends; the record takes the
//! estimate as straight between the knots it is given.
//!
//! The value before a tick's handlers is kept until one runs: the knot
//! after them, and the record's observations at a gate edge, are the same
//! reading (the firmware's state has not moved), taken without asking
//! again.

use super::Engine;
use crate::sim::firmware::Firmware;
use crate::tick::Instant;

/// How far off the chord the estimate may lie at the middle of an interval
/// and still count as straight, A: four steps of its 2⁻¹⁶ A format (each
/// reading rounds once).
const STRAIGHT_WITHIN_A: f64 = 4.0 / 65_536.0;

/// The firmware's estimate at the tick being dispatched, as the recorder
/// has it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum TickEstimate {
    /// Not given at this tick yet.
    NotGiven,
    /// Given before the tick's handlers, none run since: the estimate at
    /// the tick still, A (the firmware's estimate depends on its handlers'
    /// state and the time alone: see `Firmware::estimated_current_a`).
    Holds(f64),
    /// Given, and a handler has run since.
    Moved,
}

impl<F: Firmware> Engine<F> {
    /// The firmware's current estimate at `at`, A (NaN: none).
    pub(super) fn estimate_at(&self, at: Instant) -> f64 {
        self.firmware.estimated_current_a(at).unwrap_or(f64::NAN)
    }

    /// The firmware's estimate at the tick: the value held since
    /// [`knot_before`](Self::knot_before) while no handler has run there,
    /// else asked of the firmware.
    pub(super) fn estimate_now(&self) -> f64 {
        match self.tick_estimate {
            TickEstimate::Holds(e) => e,
            TickEstimate::NotGiven | TickEstimate::Moved => self.estimate_at(self.now()),
        }
    }

    /// The timer's reading at tick `k` (ticks since t = 0).
    fn instant_at(&self, k: u64) -> Instant {
        Instant(self.start.wrapping_add(k as u32))
    }

    /// The estimate at the tick before its handlers, once per tick, where
    /// a handler runs or the plant is brought to the tick, with the bend
    /// since the last knot; the value after the handlers follows in
    /// [`knot_after`](Self::knot_after).
    pub(super) fn knot_before(&mut self) {
        if self.tick_estimate != TickEstimate::NotGiven {
            return;
        }
        let e = self.estimate_now();
        self.tick_estimate = TickEstimate::Holds(e);
        if let Some((t_s, bend)) = self.last_knot.and_then(|(a, e_a)| self.bend_since(a, e_a, e)) {
            self.recorder.estimate_knot(t_s, bend, bend);
        }
        self.recorder.estimate_knot(self.seconds(self.tick), e, e);
    }

    /// [`knot_before`](Self::knot_before) a handler, which moves the
    /// firmware's state.
    pub(super) fn knot_before_handler(&mut self) {
        self.knot_before();
        self.tick_estimate = TickEstimate::Moved;
    }

    /// The estimate after the tick's handlers; `corrected`: they learned of
    /// a pulse's end that came before the tick, and corrected the estimate
    /// back to it (the line runs to the corrected value, not to what the
    /// firmware held before it knew).
    pub(super) fn knot_after(&mut self, corrected: bool) {
        let e = self.estimate_now();
        self.recorder.estimate_after(self.seconds(self.tick), e, corrected);
        self.last_knot = Some((self.tick, e));
    }

    /// Where the estimate bends between tick `a` (value `e_a`) and the
    /// present tick (value `e_b`), if it does: time, s, and value, A. A
    /// middle reading off the chord shows a bend; it lies where the lines
    /// through each end, at their one-tick slopes, meet.
    fn bend_since(&self, a: u64, e_a: f64, e_b: f64) -> Option<(f64, f64)> {
        let b = self.tick;
        if b < a + 4 || !e_a.is_finite() || !e_b.is_finite() {
            return None;
        }
        let at = |k: u64| self.estimate_at(self.instant_at(k));
        // Tick counts through i64: one instruction where u64 takes several,
        // the same value (a run's ticks stay far below 2⁵³).
        let float = |ticks: u64| ticks as i64 as f64;
        let span = float(b - a);
        let m = a + (b - a) / 2;
        let chord = e_a + (e_b - e_a) * (float(m - a) / span);
        if (at(m) - chord).abs() <= STRAIGHT_WITHIN_A {
            return None;
        }
        let (s_a, s_b) = (at(a + 1) - e_a, e_b - at(b - 1));
        if s_a == s_b {
            return None;
        }
        // e_a + s_a·k = e_b + s_b·(k − span), k ticks after a.
        let k = (e_b - e_a - s_b * span) / (s_a - s_b);
        (k > 0.0 && k < span).then_some(((float(a) + k) * self.tick_s, e_a + s_a * k))
    }
}
