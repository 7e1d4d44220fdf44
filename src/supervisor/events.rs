//! The supervisor's fast path, event by event: samples, comparator edges
//! and timer events through one out-of-line `step` (the [`Law`] entry
//! points), an output reading checked against the rails and the
//! over-voltage threshold, and the readings of firmware whose law runs on
//! comparator edges. What follows the law's answer is in `edges.rs`.

use super::{FaultKind, State, Supervisor};
use crate::law::{Command, Event, Gate, Law, Regulate};
use crate::tick::Instant;

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// Every fast-path event, compiled once for all of them (one copy of
    /// the guard, the law, the limit and the estimator's edges, whichever
    /// interrupt calls): the checks of the event's kind, the guarded law's
    /// answer, then the current limit and the gate's edge.
    #[inline(never)]
    pub(super) fn step(&mut self, event: Event, now: Instant) -> Command {
        if !self.sequence.is_switching() {
            if let Event::Sample(code) = event {
                self.readings.note_output(code);
            }
            self.force_off(now);
            return Command::hold(Gate::Off);
        }
        let current_now = match event {
            Event::Sample(code) => {
                if self.sequence.state() == State::SoftStart {
                    self.soft_start_step(now);
                }
                if let Some(stop) = self.check_output(code, now) {
                    return stop;
                }
                // The reading closed the estimator's segment at `now`: its
                // stored current is the current now.
                self.estimator.current()
            }
            Event::Edge(_) | Event::Timer => self.estimator.current_at(now),
        };
        let cmd = self.inner.on_event(event, now);
        self.finish_with(cmd, now, current_now)
    }

    /// Check a reading against the rails and the over-voltage threshold.
    #[inline(always)]
    fn check_output(&mut self, out: u16, now: Instant) -> Option<Command> {
        self.readings.note_output(out);
        self.estimator.on_output_code(out, now);
        if out < self.out_stop {
            return None;
        }
        let kind = if out >= self.limits.out_rail {
            FaultKind::SensorRange
        } else {
            FaultKind::OutputOvervoltage
        };
        Some(self.trip(kind, now))
    }

    /// Fast path, for firmware whose law runs on comparator edges: an output
    /// reading taken for protection only (over-voltage, rails, soft-start
    /// origin). Returns a command only when it acted (the gate must go off);
    /// otherwise the law's last command and deadline stand.
    #[inline]
    pub fn on_output_reading(&mut self, code: u16, now: Instant) -> Option<Command> {
        match self.sequence.state() {
            State::Regulating => {}
            State::SoftStart => self.soft_start_step(now),
            _ => {
                self.readings.note_output(code);
                return None;
            }
        }
        self.check_output(code, now)
    }

    /// Fast path: an input reading (scanned with the output); the current
    /// estimator's on-slope follows it. Input limits stay on the slow path.
    #[inline]
    pub fn on_input_reading(&mut self, code: u16, now: Instant) {
        self.readings.note_input(code);
        self.estimator.on_input_code(code, now);
    }
}

impl<L: Law + Regulate, const LOG: usize> Law for Supervisor<L, LOG> {
    #[inline]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        self.step(Event::Sample(code), now)
    }

    #[inline]
    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.step(Event::Edge(level), now)
    }

    #[inline]
    fn on_timer(&mut self, now: Instant) -> Command {
        self.step(Event::Timer, now)
    }

    /// The wrapped stage's.
    fn min_on_ticks(&self) -> u32 {
        self.limit.blanking()
    }

    fn comparator_code(&self) -> Option<u16> {
        self.inner.comparator_code()
    }
}
