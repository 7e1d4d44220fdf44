//! Sequencing: the supervisor's states, soft-start, hiccup and retries.
//!
//! ```text
//!   Off ──input OK──▶ SoftStart ──ramp done──▶ Regulating
//!    ▲                    │  ▲                      │
//!    │ input lost         │  └──── Restart ◀────────┤ short circuit, over-voltage
//!    └────────────────────┴─────────(hiccup)────────┤
//!                                   Fault (latched) ◀┘ sensor faults
//! ```
//!
//! - **Soft-start**: the reference ramps from the present output to the
//!   setpoint over the configured time, every reading (`soft_start.rs`).
//! - **Hiccup**: after a short or an over-voltage the stage stays off for
//!   the hiccup time, then soft-starts again.
//! - **Retries**: after that many hiccups in a row without reaching
//!   regulation, latch off.

use super::{FaultKind, Limits};
use crate::tick::Instant;

/// Supervisor state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum State {
    /// Not switching: waiting for the input.
    Off,
    /// Ramping the reference up.
    SoftStart,
    /// Normal operation.
    Regulating,
    /// Waiting out the hiccup time before a soft-start.
    Restart,
    /// Latched off until [`Supervisor::clear_faults`](super::Supervisor::clear_faults).
    Fault,
}

/// What a housekeeping step asks of the supervisor.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Step {
    /// Nothing changes.
    Hold,
    /// A soft-start begins from this output code: restart the estimator,
    /// ramp from there.
    Begin(u16),
}

/// The state machine and its timing.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct Sequencer {
    state: State,
    // `state` is SoftStart or Regulating (kept with it by `enter`).
    switching: bool,
    // When the present state began.
    since: Instant,
    retries: u16,
}

impl Sequencer {
    pub(super) const fn new() -> Self {
        Self { state: State::Off, switching: false, since: Instant(0), retries: 0 }
    }

    /// When the present state began.
    #[inline(always)]
    pub(super) const fn since(&self) -> Instant {
        self.since
    }

    /// The soft-start ramp is over: regulating.
    pub(super) fn regulating(&mut self) {
        self.state = State::Regulating;
    }

    /// The output reached regulation: the retries are forgotten (a ramp
    /// that ran its time without the output following does not count).
    pub(super) fn reached_regulation(&mut self) {
        if self.state == State::Regulating {
            self.retries = 0;
        }
    }

    pub(super) const fn state(&self) -> State {
        self.state
    }

    /// Soft-starting or regulating.
    #[inline(always)]
    pub(super) const fn is_switching(&self) -> bool {
        self.switching
    }

    fn enter(&mut self, state: State, now: Instant) {
        self.state = state;
        self.since = now;
        self.switching = matches!(state, State::SoftStart | State::Regulating);
    }

    /// Stop for `kind` at `now`: latched, hiccup, or back to `Off`. Returns
    /// true when the hiccup would exceed the retries, and the supervisor
    /// latched instead.
    pub(super) fn trip(&mut self, kind: FaultKind, now: Instant, limits: &Limits) -> bool {
        let (next, exhausted) = match kind {
            k if k.is_latched() => (State::Fault, false),
            FaultKind::InputUndervoltage | FaultKind::InputOvervoltage => (State::Off, false),
            _ => {
                self.retries = self.retries.saturating_add(1);
                if self.retries > limits.max_retries {
                    (State::Fault, true)
                } else {
                    (State::Restart, false)
                }
            }
        };
        self.enter(next, now);
        exhausted
    }

    /// Leave a latched fault for `Off`, retries forgotten.
    pub(super) fn clear(&mut self, now: Instant) {
        self.retries = 0;
        if self.state == State::Fault {
            self.enter(State::Off, now);
        }
    }

    /// One housekeeping step: start when `input_ok`, restart after the
    /// hiccup; `output` the last output reading.
    pub(super) fn step(
        &mut self,
        input_ok: bool,
        output: u16,
        now: Instant,
        limits: &Limits,
    ) -> Step {
        let elapsed = now.ticks_since(self.since);
        match self.state {
            State::Off if input_ok => self.begin(output, now),
            State::Restart if elapsed >= limits.hiccup => self.begin(output, now),
            _ => Step::Hold,
        }
    }

    fn begin(&mut self, output: u16, now: Instant) -> Step {
        self.enter(State::SoftStart, now);
        Step::Begin(output)
    }
}
