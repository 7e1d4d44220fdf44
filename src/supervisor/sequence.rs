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
//!   setpoint over the configured time, at every housekeeping tick.
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
    /// A soft-start begins: restart the estimator, set this reference.
    Begin(u16),
    /// Set this reference (the ramp, or the setpoint at its end).
    Reference(u16),
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
    // The setpoint and where the ramp started, output codes.
    target: u16,
    ramp_from: u16,
    retries: u16,
}

impl Sequencer {
    pub(super) const fn new(target: u16) -> Self {
        Self {
            state: State::Off,
            switching: false,
            since: Instant(0),
            target,
            ramp_from: 0,
            retries: 0,
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
    /// hiccup, ramp the reference; `output` the last output reading.
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
            State::SoftStart => Step::Reference(self.ramp(elapsed, limits.soft_start)),
            _ => Step::Hold,
        }
    }

    fn begin(&mut self, output: u16, now: Instant) -> Step {
        self.enter(State::SoftStart, now);
        self.ramp_from = output.min(self.target);
        Step::Begin(self.ramp_from)
    }

    /// The ramp's reference `elapsed` ticks into a soft-start of
    /// `soft_start` ticks; at its end, the setpoint and `Regulating`.
    fn ramp(&mut self, elapsed: u32, soft_start: u32) -> u16 {
        if elapsed >= soft_start {
            self.state = State::Regulating;
            self.retries = 0;
            return self.target;
        }
        let span = u64::from(self.target - self.ramp_from);
        let step = crate::units::div_u64(span * u64::from(elapsed), u64::from(soft_start));
        self.ramp_from + step as u16
    }
}
