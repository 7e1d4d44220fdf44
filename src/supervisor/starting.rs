//! The soft-start as the supervisor runs it: the ramp
//! (`soft_start.rs`) moved on and applied to the law's reference and the
//! current limit's cap, or, for a law that does not follow the reference,
//! each pulse bounded (`start_pulses.rs`); its end; and the slow path's
//! settings of the start's and the light-load policy's pulses.

use super::{State, Supervisor};
use crate::estimate::Amps;
use crate::law::{Law, Regulate};
use crate::tick::Instant;
use crate::units::Fraction;

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// Slow path: the share of the setpoint the soft-start covers (from
    /// where the output stood to the setpoint, `Q16.16`, 0–1): its ramp's
    /// charging current is that share of `C·setpoint/ramp time`.
    pub fn start_span(&self) -> Fraction {
        self.ramp.span()
    }

    /// Slow path, during a soft-start: end the ramp's pulses at `ramp`, and
    /// from its last sixteenth on (regulation included, until
    /// [`set_pulse_cap`](Self::set_pulse_cap)) at `end`; the ramp's own
    /// rising cap still applies below both. A start of bounded pulses (a law
    /// that does not follow the reference) ignores them.
    pub fn size_start_pulses(&mut self, ramp: Amps, end: Amps) {
        if !self.pulses.active() {
            self.ramp.size(ramp, end);
        }
    }

    /// Slow path: end pulses at `cap` (held within the configured limit)
    /// from the next turn-on: a light-load policy's smaller pulses. The
    /// soft-start ramp sets its own cap while it runs, and ignores this.
    pub fn set_pulse_cap(&mut self, cap: Amps) {
        if self.sequence.state() != State::SoftStart {
            self.limit.set_cap(cap);
        }
    }

    /// Bound each pulse through the guard during the soft-start of a law
    /// that does not follow the reference ([`Regulate::follows_reference`]:
    /// the analog retrofit) — on by default — or, with `false`, leave its
    /// start to the current limit's rising cap alone (no lead for a
    /// pre-biased output either). From the next start.
    pub fn set_start_pulse_bound(&mut self, on: bool) {
        self.pulses.enable(on);
    }

    /// Move the soft-start ramp to `now`: the law's reference and the
    /// current limit's cap, and for a law that does not follow the
    /// reference the pulses' bound (past the ramp's end too, while
    /// [`start_unfinished`](Self::start_unfinished)); at its end, the
    /// setpoint, the full limit, and regulation. On a Cortex-M0 (Armv6-M,
    /// told by its lack of 32-bit atomics) out of line: one copy for the
    /// sample, the output reading and housekeeping, a call each while the
    /// start runs (about 550 bytes less than a copy per use); elsewhere
    /// inlined, the faster soft-start handlers the other cores' counts were
    /// set with.
    #[cfg_attr(all(target_arch = "arm", not(target_has_atomic = "32")), inline(never))]
    #[cfg_attr(not(all(target_arch = "arm", not(target_has_atomic = "32"))), inline(always))]
    pub(super) fn soft_start_step(&mut self, now: Instant) {
        let elapsed = now.ticks_since(self.sequence.since());
        match self.ramp.at(elapsed) {
            Some((reference, cap)) if !self.pulses.active() => {
                self.inner.set_reference(reference);
                self.limit.set_cap(cap);
            }
            Some((_, cap)) => self.bound_pulses(cap),
            None if self.start_unfinished(elapsed) => self.bound_pulses(self.limits.current_limit),
            None => self.end_soft_start(),
        }
    }

    /// The start of a law that does not follow the reference: pulses from
    /// zero to twice the ramp's `cap` (their mean is the cap), within the
    /// configured limit, and the current limit's cap there too. Out of
    /// line: only while such a start runs.
    #[inline(never)]
    fn bound_pulses(&mut self, cap: Amps) {
        let peak = cap.saturating_add(cap).min(self.limits.current_limit);
        self.limit.set_cap(peak);
        let limit = self.pulses.limit(peak, self.estimator.ticks_per_amp_on());
        self.inner.limit_pulses(Some(limit));
    }

    /// A bounded start whose ramp is over with the output still below half
    /// the setpoint (a heavy load on a start of bounded pulses, each back
    /// to zero current, whose mean stays under half their peak): released
    /// there, the pulses would meet the short-circuit detector at the full
    /// limit below its half-reference line, so they stay bounded, at the
    /// full limit's peak, until the output passes that line or the ramp's
    /// time has passed twice (a real short then meets the detector).
    #[cold]
    fn start_unfinished(&self, elapsed: u32) -> bool {
        self.pulses.active()
            && self.readings.last_out < self.ramp.target() / 2
            && !self.ramp.overdue(elapsed)
    }

    #[cold]
    fn end_soft_start(&mut self) {
        self.inner.set_reference(self.ramp.target());
        self.limit.set_cap(self.ramp.end_cap(self.limits.current_limit));
        self.pulses.end();
        self.inner.limit_pulses(None);
        self.sequence.regulating();
    }
}
