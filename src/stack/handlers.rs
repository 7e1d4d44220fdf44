//! The stack wired to its gate driver: the bodies of a firmware's interrupt
//! handlers, written once for the target, the simulator and the examples.
//!
//! A board's interrupt handlers each make one call here, with the timer's
//! reading and what the peripheral delivered:
//!
//! | interrupt | call |
//! |---|---|
//! | ADC conversion complete (output and input scanned) | [`Handlers::conversion_done`] |
//! | comparator output changed (edge wiring) | [`Handlers::comparator_edge`] |
//! | one-shot compare | [`Handlers::compare_fired`] |
//! | housekeeping tick (SysTick) | [`Handlers::housekeeping`] |
//!
//! With an edge-driven law, arm the comparator's DAC at
//! [`Handlers::comparator_code`] after each call.
//!
//! **An edge is timed at its pin write.** A handler decides at the
//! instant it was given (the event's, or its entry's timer reading) but
//! drives the pin later, after its own work. Each switching edge reads the
//! timer right after the write ([`OneShot::now`]) and moves the estimate's
//! edge there; a turn-on moves the current limit and the deadline armed
//! with the pulse (maximum on-time, on-time end, predicted limit) too: a
//! pulse keeps its length however long the handler took, and the estimate
//! does not count the wait as the wrong phase.

use super::{Sensing, Stack};
use crate::drive::{GateDriver, OneShot};
use crate::law::{Command, Law, Regulate};
use crate::supervisor::FAULT_LOG_LEN;
use crate::tick::Instant;
use embedded_hal::digital::OutputPin;

/// The stack and the driver that carries out its commands (`LOG`: the
/// fault log's length, see [`Stack`]).
#[derive(Clone, Debug)]
pub struct Handlers<L, P, T, const LOG: usize = FAULT_LOG_LEN> {
    stack: Stack<L, LOG>,
    driver: GateDriver<P, T>,
}

impl<L: Law + Regulate, P: OutputPin, T: OneShot, const LOG: usize> Handlers<L, P, T, LOG> {
    /// Wire `stack` to `driver` (whose gate starts off; a `const fn`, for
    /// a `static` the compiler initialises, see [`Stack::with_reference`]).
    pub const fn new(stack: Stack<L, LOG>, driver: GateDriver<P, T>) -> Self {
        Self { stack, driver }
    }

    /// Conversion complete: the output and input codes of one scan, the
    /// timer reading `now`.
    ///
    /// Errors: the gate pin's (see [`GateDriver::apply`]).
    #[inline]
    pub fn conversion_done(
        &mut self,
        output: u16,
        input: u16,
        now: Instant,
    ) -> Result<(), P::Error> {
        match self.stack.on_conversion(output, input, now) {
            Some(command) => self.carry_out(command, now),
            None => Ok(()),
        }
    }

    /// The comparator's output is now `level`.
    ///
    /// Errors: the gate pin's.
    #[inline]
    pub fn comparator_edge(&mut self, level: bool, now: Instant) -> Result<(), P::Error> {
        let command = self.stack.on_edge(level, now);
        self.carry_out(command, now)
    }

    /// The one-shot compare fired; `now` is the timer's reading in the
    /// handler. A pulse the timer ended in hardware is reported to the
    /// stack at the compare's own instant, or at the stack's last event if
    /// another handler ran in between (give the compare the highest
    /// priority, so none does: the estimate then times the edge exactly).
    ///
    /// Errors: the gate pin's.
    #[inline]
    pub fn compare_fired(&mut self, now: Instant) -> Result<(), P::Error> {
        let at = match self.driver.compare_fired(now) {
            Some(at) => self.stack.not_before_last_event(at),
            None => now,
        };
        let command = self.stack.on_timer(at);
        self.carry_out(command, at)
    }

    /// The housekeeping tick. `comparator_level`: the comparator's output
    /// read now, for an edge-driven law (a start after the soft-start sees
    /// no fresh edge); `None` otherwise.
    ///
    /// Errors: the gate pin's.
    pub fn housekeeping(
        &mut self,
        now: Instant,
        comparator_level: Option<bool>,
    ) -> Result<(), P::Error> {
        if let Some(stop) = self.stack.housekeeping(now) {
            self.driver.apply(stop)?;
        }
        match (self.stack.sensing(), comparator_level) {
            (Sensing::Edge, Some(level)) => self.comparator_edge(level, now),
            _ => Ok(()),
        }
    }

    /// Drive the pin for `command`, decided at `now`; an edge is timed at
    /// the timer's reading after the write; then arm the deadline.
    #[inline(always)]
    fn carry_out(&mut self, command: Command, now: Instant) -> Result<(), P::Error> {
        let switches = command.gate != self.driver.gate();
        let hardware_end = self.driver.hardware_end().filter(|_| !command.gate.is_on());
        self.driver.set_gate(command.gate)?;
        let wake = if switches {
            let mut at = self.driver.timer().now();
            // A turn-off the timer made before the write (its compare
            // passed before or while this handler ran) happened at the
            // compare (the estimate keeps it within the pulse).
            if let Some(end) = hardware_end.filter(|&end| at.has_reached(end)) {
                at = end;
            }
            self.stack.switched_at(now, at, command.wake)
        } else {
            command.wake
        };
        self.driver.schedule(wake);
        Ok(())
    }

    /// The DAC code an edge-driven law wants its comparator armed at.
    pub fn comparator_code(&self) -> Option<u16> {
        self.stack.comparator_code()
    }

    /// The stack.
    pub const fn stack(&self) -> &Stack<L, LOG> {
        &self.stack
    }

    /// The stack, mutable (slow path: clear faults, retune).
    pub fn stack_mut(&mut self) -> &mut Stack<L, LOG> {
        &mut self.stack
    }

    /// The driver.
    pub const fn driver(&self) -> &GateDriver<P, T> {
        &self.driver
    }

    /// Gate off now and timer disarmed (a fault input, a watchdog warning).
    ///
    /// Errors: the gate pin's.
    pub fn shut_down(&mut self) -> Result<(), P::Error> {
        self.driver.shut_down()
    }

    /// Apply a command directly (tests, bring-up).
    ///
    /// Errors: the gate pin's.
    pub fn apply(&mut self, command: Command) -> Result<(), P::Error> {
        self.driver.apply(command)
    }
}
