//! The supervisor's stops and its fault log: the gate forced off, a trip
//! for a fault (logged, then latched, hiccup or back to
//! [`State::Off`](super::State::Off), as the sequencer decides), and the
//! log read and cleared.

use super::{FaultKind, FaultLog, FaultRecord, Supervisor};
use crate::law::{Command, Gate, Law, Regulate};
use crate::tick::Instant;

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// Gate off now, telling the law and the estimator. Out of line: off
    /// the regulating path (a stop, the current limit), called from several.
    #[inline(never)]
    pub(super) fn force_off(&mut self, now: Instant) {
        if self.gate.is_on() {
            self.gate = Gate::Off;
            self.estimator.on_gate(Gate::Off, now);
            self.inner.on_gate(Gate::Off, now);
        }
    }

    /// Stop for `kind`: latched, hiccup, or back to `Off`. A hiccup that
    /// follows too many restarts without regulation latches instead.
    #[cold]
    #[inline(never)]
    pub(super) fn trip(&mut self, kind: FaultKind, now: Instant) -> Command {
        self.force_off(now);
        self.log.push(kind, now);
        if self.sequence.trip(kind, now, &self.limits) {
            self.log.push(FaultKind::RetriesExhausted, now);
        }
        self.detect.reset();
        Command::hold(Gate::Off)
    }

    /// The fault log, oldest first.
    pub fn faults(&self) -> impl Iterator<Item = &FaultRecord> {
        self.log.iter()
    }

    /// The fault log.
    pub const fn fault_log(&self) -> &FaultLog<LOG> {
        &self.log
    }

    /// Slow path: empty the log, and leave a latched fault for
    /// [`State::Off`](super::State::Off) (a restart follows when the input is good).
    pub fn clear_faults(&mut self, now: Instant) {
        self.log.clear();
        self.sequence.clear(now);
    }
}
