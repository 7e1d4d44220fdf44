//! The core and its interrupt sources: the handlers by priority while the
//! core is free, each handler's outputs at its end, the housekeeping tick,
//! the compare's hardware action and the ADC's sampling instants.

use super::schedule::{Conversion, EdgeIrq};
use super::Engine;
use crate::sim::cpu::Handler;
use crate::sim::firmware::Firmware;
use crate::tick::Instant;

impl<F: Firmware> Engine<F> {
    /// The interrupts due now, by priority, while the core is free: the
    /// compare first (it ends pulses; and a compare that fired while
    /// another interrupt was being entered is taken first, as a
    /// higher-priority late arrival is on a Cortex-M), then the
    /// comparator, then the conversion. Each runs to its end before the
    /// next starts (see `cpu`).
    ///
    /// Most passes of the loop have none due: that is found here, inline,
    /// before the handlers' code is entered.
    #[inline]
    pub(super) fn interrupts(&mut self) {
        if self.cpu.free_at(self.tick) && self.interrupt_due() {
            self.take_interrupts();
        }
    }

    /// Whether an interrupt is due at the tick (the core aside).
    #[inline]
    fn interrupt_due(&self) -> bool {
        let due = |t: Option<u64>| t.is_some_and(|t| t <= self.tick);
        due(self.schedule.conversion.map(|c| c.irq_at))
            || due(self.schedule.edge.map(|e| e.at))
            || due(self.schedule.compare_irq)
    }

    /// Whether the comparator's interrupt can be taken at the tick: due,
    /// the core free.
    #[inline]
    pub(super) fn edge_interrupt_due(&self) -> bool {
        self.cpu.free_at(self.tick) && self.schedule.edge.is_some_and(|e| e.at <= self.tick)
    }

    /// [`interrupts`](Self::interrupts), one or more being due and the
    /// core free.
    #[inline(never)]
    fn take_interrupts(&mut self) {
        loop {
            // One is entered: a compare pending is taken first.
            if self.schedule.compare_irq.is_some() {
                self.schedule.compare_irq = Some(self.tick);
            }
            let ran =
                self.compare_interrupt() || self.edge_interrupt() || self.conversion_interrupt();
            debug_assert!(ran, "one was due");
            if !(self.cpu.free_at(self.tick) && self.interrupt_due()) {
                return;
            }
        }
    }

    /// A fast handler starts now: the core is busy until it ends, and the
    /// timer read at its pin write reads that end (its outputs take effect
    /// then). Returns the end, for [`handler_ran`](Self::handler_ran).
    fn start_handler(&mut self, handler: Handler) -> u64 {
        self.knot_before_handler();
        let end = self.cpu.run_fast(handler, self.tick);
        self.set_handler_clock(end);
        self.peripherals.stage();
        end
    }

    /// What the timer reads while a handler ending at tick `end` runs.
    fn set_handler_clock(&mut self, end: u64) {
        self.peripherals.set_clock(Instant(self.start.wrapping_add(end as u32)));
    }

    /// A fast handler ending at `end` just ran: its outputs take effect
    /// then.
    ///
    /// When they change nothing (most conversions rewrite the DAC's code),
    /// the loop need not stop at the end, nor follow them there: the gate,
    /// the armed compare and the DAC are those
    /// [`after_handler`](Self::after_handler) last followed (only handlers
    /// write them and each write is followed; the compare's own pulse end,
    /// which could undo a rewrite of the gate, does not fall before the
    /// end), so there the pin would be unchanged, the comparator synced,
    /// and the compare armed for the same tick (the same instant, counted
    /// from a later tick). Interrupts waiting for the core wake the loop at
    /// the end anyway
    /// ([`next_but_sample`](super::schedule::Schedule::next_but_sample)).
    /// A handler that takes no time, its end the tick, is done with the
    /// same way.
    fn handler_ran(&mut self, end: u64) {
        if self.outputs_followed
            && self.peripherals.staged_no_change()
            && self.schedule.compare.is_none_or(|t| t > end)
        {
            self.peripherals.commit();
        } else if end <= self.tick {
            self.peripherals.commit();
            self.after_handler();
        } else {
            self.effects_at = Some(end);
        }
    }

    /// Outputs of handlers that have ended by now.
    pub(super) fn handler_outputs(&mut self) {
        if self.effects_at.is_some_and(|t| t <= self.tick) {
            self.effects_at = None;
            self.peripherals.commit();
            self.after_handler();
        }
    }

    fn conversion_interrupt(&mut self) -> bool {
        let Some(Conversion { irq_at, output, input }) = self.schedule.conversion else {
            return false;
        };
        if irq_at > self.tick {
            return false;
        }
        self.schedule.conversion = None;
        let now = self.now();
        let end = self.start_handler(Handler::Conversion);
        self.firmware.adc_done(output, input, now);
        self.handler_ran(end);
        true
    }

    fn edge_interrupt(&mut self) -> bool {
        let Some(EdgeIrq { at, level }) = self.schedule.edge else { return false };
        if at > self.tick {
            return false;
        }
        self.schedule.edge = None;
        let now = self.now();
        let end = self.start_handler(Handler::Comparator);
        self.firmware.comparator_edge(level, now);
        self.handler_ran(end);
        true
    }

    /// The compare fires: the timer ends a pulse armed to end here, and
    /// raises its interrupt.
    pub(super) fn compare(&mut self) {
        if self.schedule.compare.is_none_or(|t| t > self.tick) {
            return;
        }
        self.schedule.compare = None;
        if let Some(c) = self.peripherals.compare_taken() {
            if c.ends_pulse {
                self.edge_unseen = true;
                self.peripherals.clear_gate_in_hardware();
                self.follow_pin();
            }
        }
        if self.schedule.compare_irq.is_some() {
            self.cpu.merge(Handler::Compare);
        }
        self.schedule.compare_irq = Some(self.tick + self.latency_ticks);
    }

    fn compare_interrupt(&mut self) -> bool {
        if self.schedule.compare_irq.is_none_or(|t| t > self.tick) {
            return false;
        }
        self.schedule.compare_irq = None;
        self.edge_unseen = false;
        let now = self.now();
        let end = self.start_handler(Handler::Compare);
        self.firmware.timer_compare(now);
        self.handler_ran(end);
        true
    }

    /// The housekeeping tick: the lowest priority, preempted by the other
    /// handlers; a tick while the last one still runs is merged with it.
    pub(super) fn housekeeping(&mut self) {
        if self.schedule.next_housekeeping > self.tick || !self.cpu.free_at(self.tick) {
            return;
        }
        // A compare that has fired is served first (its priority is higher,
        // and its pulse end has happened: the firmware must learn of it
        // before the slow path reads the estimate).
        if self.schedule.compare_irq.is_some() {
            self.schedule.compare_irq = Some(self.tick);
            self.interrupts();
            if !self.cpu.free_at(self.tick) {
                return;
            }
        }
        self.schedule.next_housekeeping += self.housekeeping_period;
        if self.cpu.housekeeping_running(self.tick) {
            self.cpu.merge(Handler::Housekeeping);
            return;
        }
        self.knot_before_handler();
        let now = self.now();
        // The core is the tick's until it ends, preempted by the fast
        // handlers; its pin writes (a stop, a start on the comparator's
        // level) act at once: a firmware makes them first, in a critical
        // section, as the stack's state they follow is shared with the
        // fast handlers.
        self.cpu.run_housekeeping(self.tick);
        self.set_handler_clock(self.tick);
        self.firmware.housekeeping(now);
        self.after_handler();
        if let Some((output_w, input_w)) = self.firmware.power_estimate() {
            self.recorder.estimate(self.seconds(self.tick), output_w, input_w);
        }
    }

    /// An ADC sampling instant: both channels now, the interrupt after the
    /// conversion and the latency.
    pub(super) fn sample(&mut self) {
        if self.schedule.next_sample > self.tick {
            return;
        }
        self.schedule.next_sample += self.sample_period;
        let (v_out, v_in) = self.voltages_at_tick();
        let output = self.adc.convert_output(v_out, self.tick);
        // The input is scanned in the same sequence.
        let input = self.adc.convert_input(v_in);
        let done = self.tick + self.conversion_ticks + self.latency_ticks;
        if self.schedule.conversion.is_some() {
            // The last result was never read: overwritten.
            self.cpu.merge(Handler::Conversion);
        }
        self.schedule.conversion = Some(Conversion { irq_at: done, output, input });
    }

    /// After a handler: the gate pin, the armed compare, the comparator's
    /// DAC.
    fn after_handler(&mut self) {
        self.outputs_followed = true;
        self.follow_pin();
        self.schedule.compare = self.peripherals.compare().map(|c| {
            // A deadline already due fires at once (next tick).
            let ahead = c.at.ticks_since(self.now());
            let ahead = if ahead > crate::tick::MAX_DURATION_TICKS { 0 } else { ahead };
            (self.tick + u64::from(ahead)).max(self.tick + 1)
        });
        if self.comparator.exists() {
            self.sync_comparator();
        }
    }
}
