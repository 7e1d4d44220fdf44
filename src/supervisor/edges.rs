//! The gate's edges as the supervisor follows them: the guarded law's
//! command followed (the estimator told, the cycle it completes judged by
//! the detectors, the current limit armed at a turn-on and acting within
//! the pulse), and an edge that switched later or earlier than the call
//! that commanded it.

use super::detect::CycleView;
use super::Supervisor;
use crate::estimate::{Amps, CycleCurrents};
use crate::law::{Command, Event, Gate, Law, Regulate};
use crate::tick::{earliest, Instant};
use crate::units::ARMV6M;

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// Follow the gate and apply the current limit.
    #[inline(always)]
    pub(super) fn finish_with(&mut self, cmd: Command, now: Instant, current_now: Amps) -> Command {
        if cmd.gate != self.gate {
            if let Some(fault) = self.follow_gate(cmd.gate, now, current_now) {
                return fault;
            }
        }
        if !self.gate.is_on() {
            return cmd;
        }
        if self.limit.reached(now, current_now) {
            return self.limit_current(now);
        }
        Command { gate: Gate::On, wake: earliest(now, cmd.wake, self.limit.deadline()) }
    }

    /// The gate switches to `gate` at `now`: tell the estimator, judge the
    /// cycle it completes, and at a turn-on arm the current limit.
    #[inline(always)]
    fn follow_gate(&mut self, gate: Gate, now: Instant, current_now: Amps) -> Option<Command> {
        self.gate = gate;
        if let Some(done) = self.estimator.on_gate(gate, now) {
            if let Some(fault) = self.end_of_cycle(&done, now) {
                return Some(fault);
            }
        }
        if gate.is_on() {
            self.limit.arm(now, current_now, &self.estimator);
        }
        None
    }

    /// Short-circuit and sensor checks on a completed cycle.
    #[inline(always)]
    fn end_of_cycle(&mut self, done: &CycleCurrents, now: Instant) -> Option<Command> {
        let view = CycleView {
            cycle: done,
            limited: self.limit.take_acted(),
            output: self.readings.last_out,
            reference: self.inner.reference_code(),
            input: self.readings.last_in,
        };
        let fault = self.detect.end_of_cycle(&view, &self.limits)?;
        Some(self.trip(fault, now))
    }

    /// The limit ended this on-time. Out of line: once per limited cycle.
    ///
    /// The law sees its own turn-off and is asked what comes next. On a
    /// Cortex-M0 through [`step`](Self::step) again, as a timer event
    /// (one level deep: the gate is now off, so the limit cannot act
    /// again, and the guard, its minimum off-time ahead, keeps it off):
    /// the guard's filter is compiled once, in `step`, not a second time
    /// here (about 400 bytes), for a few more instructions per limited
    /// cycle only. Elsewhere the guarded law directly, the faster limited
    /// cycle the other cores' counts were set with.
    #[inline(never)]
    fn limit_current(&mut self, now: Instant) -> Command {
        self.limit.note_acted();
        self.force_off(now);
        let next = if ARMV6M { self.step(Event::Timer, now) } else { self.inner.on_timer(now) };
        Command { gate: Gate::Off, wake: next.wake }
    }

    /// Fast path, right after a switching edge's pin write: the gate
    /// really switched at `at`, not at `now`, the instant of the call that
    /// switched it: later by the handler's own time to its write, or, for
    /// a turn-off, earlier when the timer had ended the pulse before the
    /// handler began. The estimate, the guard and the law time the edge
    /// from `at`; after a late turn-on the current limit's blanking and
    /// predicted crossing, and `wake`, the deadline that call returned,
    /// move by as much (every deadline armed at a turn-on counts from it;
    /// the current fell meanwhile, so the crossing comes no earlier: on
    /// the safe side). Returns the deadline to arm. Out of line: once per
    /// edge, from every handler, so one copy.
    #[inline(never)]
    pub fn switched_at(
        &mut self,
        now: Instant,
        at: Instant,
        wake: Option<Instant>,
    ) -> Option<Instant> {
        let late = at.ticks_since(now);
        if late == 0 {
            return wake;
        }
        let on = self.gate.is_on();
        if late > crate::tick::MAX_DURATION_TICKS && on {
            return wake;
        }
        self.estimator.move_edge(at);
        self.inner.edge_at(at);
        if !on {
            return wake;
        }
        self.limit.delay(late);
        wake.map(|w| w.after(late))
    }
}
