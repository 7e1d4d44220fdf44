//! The cycle-by-cycle current limit, with leading-edge blanking.
//!
//! At each turn-on the limit predicts when the estimated current will reach
//! it (a timer deadline, held for the whole on-time, that ends the pulse
//! when it comes) and every call while on checks the estimate itself
//! (covering a slope that grew since). Both
//! act no earlier than the wrapped stage's minimum on-time after the
//! turn-on (blanking), so the limit never makes a pulse shorter than the
//! guard allows; a turn-on with the estimate already at the limit gets no
//! blanking and is ended in the same call (valley hold-off). A pulse begun
//! just below the limit can so pass it by up to the on-slope times the
//! minimum on-time.
//!
//! The level it acts at is the *cap*: the configured limit, or lower while
//! the soft-start ramps it up (`soft_start.rs`) or while the light-load
//! policy makes pulses smaller (`stack::light_load`). Only a cycle ended at
//! the configured limit counts toward a short circuit.

use crate::estimate::{Amps, CurrentEstimator};
use crate::tick::Instant;

/// The limit's state through one on-time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct CurrentLimit {
    // The configured limit, and the level the limit acts at (≤ limit).
    limit: Amps,
    cap: Amps,
    // The wrapped stage's minimum on-time, ticks.
    blanking: u32,
    // End of the present pulse's blanking: the limit acts from then on.
    blank_end: Instant,
    // Predicted crossing, set at each turn-on.
    deadline: Option<Instant>,
    // The configured limit ended the present cycle's on-time.
    acted: bool,
}

impl CurrentLimit {
    pub(super) const fn new(limit: Amps, blanking: u32) -> Self {
        Self { limit, cap: limit, blanking, blank_end: Instant(0), deadline: None, acted: false }
    }

    /// The level the limit acts at now.
    pub(super) const fn cap(&self) -> Amps {
        self.cap
    }

    /// Act at `cap` from the next turn-on (held within the configured
    /// limit, not below zero).
    #[inline(always)]
    pub(super) fn set_cap(&mut self, cap: Amps) {
        self.cap = cap.min(self.limit).max(Amps::ZERO);
    }

    /// The blanking time, ticks.
    pub(super) const fn blanking(&self) -> u32 {
        self.blanking
    }

    /// A turn-on at `now` with the estimate at `current_now`: set the
    /// blanking and predict the crossing.
    #[inline(always)]
    pub(super) fn arm(&mut self, now: Instant, current_now: Amps, estimator: &CurrentEstimator) {
        let blanking = if current_now >= self.cap { 0 } else { self.blanking };
        self.blank_end = now.after(blanking);
        self.deadline = estimator.ticks_to_reach(self.cap).map(|t| now.after(t.max(blanking)));
    }

    /// Whether the limit ends the pulse now: the estimate reached it, or
    /// the predicted crossing came (a prediction made with a slope that
    /// fell since still ends the pulse there, as a timer ending it in
    /// hardware would), either after the blanking.
    #[inline(always)]
    pub(super) fn reached(&self, now: Instant, current_now: Amps) -> bool {
        let predicted = self.deadline.is_some_and(|d| now.has_reached(d));
        (current_now >= self.cap || predicted) && now.has_reached(self.blank_end)
    }

    /// The pulse really began `late` ticks after it was armed: blanking
    /// and predicted crossing move with it (the current fell meanwhile, so
    /// the crossing comes no earlier than that: on the safe side).
    #[inline(always)]
    pub(super) fn delay(&mut self, late: u32) {
        self.blank_end = self.blank_end.after(late);
        self.deadline = self.deadline.map(|d| d.after(late));
    }

    /// The predicted crossing, for the timer.
    #[inline(always)]
    pub(super) const fn deadline(&self) -> Option<Instant> {
        self.deadline
    }

    /// Note that the limit ended this cycle's on-time (at the configured
    /// limit: a reduced cap's pulses are no sign of a short).
    #[inline(always)]
    pub(super) fn note_acted(&mut self) {
        self.acted = self.cap >= self.limit;
    }

    /// Whether the limit ended the cycle just completed; forgets it.
    #[inline(always)]
    pub(super) fn take_acted(&mut self) -> bool {
        core::mem::replace(&mut self.acted, false)
    }
}
