//! The analog side of the loop: the plant solved from event to event (up
//! to a comparator crossing inside an interval), the comparator's level,
//! the gate's edges with their losses and dead time, and the profile's
//! breakpoints and the recorder's window boundaries, which act on the
//! plant or read it.

use super::schedule::EdgeIrq;
use super::Engine;
use crate::sim::cpu::Handler;
use crate::sim::firmware::Firmware;
use crate::sim::plant::{Conduction, Stage, Stop};
use crate::sim::record::Observation;
use crate::tick::Instant;

impl<F: Firmware> Engine<F> {
    /// Bring the plant up to the microcontroller's tick.
    pub(super) fn catch_up(&mut self) {
        if self.plant_tick < self.tick {
            self.advance_plant(self.tick);
        }
    }

    fn observation(&self) -> Observation {
        Observation {
            t_s: self.t_s(),
            vo_v: self.plant.v_out(),
            il_a: self.plant.i_l(),
            il_est_a: self.firmware.estimated_current_a(self.plant_instant()).unwrap_or(f64::NAN),
            gate_on: self.gate,
        }
    }

    /// The timer's reading at the plant's time (the tick at or before it),
    /// which runs ahead of or behind the event loop's while it solves an
    /// interval.
    fn plant_instant(&self) -> Instant {
        // Most observations fall on a tick (no fraction, no division);
        // through i64: one instruction, the same count.
        let within =
            if self.frac == 0.0 { 0 } else { ((self.frac / self.tick_s) as i64).max(0) as u64 };
        Instant(self.start.wrapping_add((self.plant_tick + within) as u32))
    }

    fn observe(&mut self) {
        let o = self.observation();
        self.recorder.observe(o);
    }

    /// Set the environment for t = 0 and the comparator's initial level.
    pub(super) fn start_up(&mut self) {
        self.plant.set_environment(self.profile.environment_at(0.0));
        self.sync_comparator();
        self.schedule.edge = None;
        self.observe();
    }

    /// Recompute the comparator's level from the output (after the DAC was
    /// re-armed); a change raises an edge interrupt.
    pub(super) fn sync_comparator(&mut self) {
        let v = self.plant.v_out();
        let dac = self.peripherals.dac_code();
        if self.comparator.settle(v, dac, self.adc.output_channel()) {
            self.schedule_edge_interrupt();
        }
        self.peripherals.set_comparator(self.comparator.level);
    }

    fn schedule_edge_interrupt(&mut self) {
        let ready = ((self.t_s() + self.comparator_delay_s) / self.tick_s).ceil() as u64;
        let at = ready.max(self.plant_tick + 1) + self.latency_ticks;
        if self.schedule.edge.is_some() {
            self.cpu.merge(Handler::Comparator);
        }
        self.schedule.edge = Some(EdgeIrq { at, level: self.comparator.level });
    }

    /// Solve the plant up to `target`, or up to an earlier comparator
    /// interrupt; returns the tick reached.
    pub(super) fn advance_plant(&mut self, mut target: u64) -> u64 {
        while self.plant_tick < target {
            let dt = (target - self.plant_tick) as f64 * self.tick_s - self.frac;
            match self.plant.advance(dt, self.comparator.watch()) {
                Stop::Reached => {
                    self.plant_tick = target;
                    self.frac = 0.0;
                }
                Stop::CurrentZero(tau) | Stop::BandEdge(tau) => self.frac += tau,
                Stop::Crossing(tau) => {
                    self.frac += tau;
                    self.comparator.flip();
                    self.peripherals.set_comparator(self.comparator.level);
                    self.schedule_edge_interrupt();
                    if let Some(edge) = self.schedule.edge {
                        target = target.min(edge.at);
                    }
                }
            }
            self.observe();
        }
        target
    }

    pub(super) fn profile_breakpoints(&mut self) {
        while let Some(b) = self.schedule.take_break(self.tick) {
            self.catch_up();
            // At the breakpoint's own time when the tick rounded to before
            // it: the change must not be lost.
            self.plant.set_environment(self.profile.environment_at(self.t_s().max(b.at_s)));
            // A step moves the output at once (through the ESR): see it,
            // and let a comparator see it too (no crossing to find there).
            self.observe();
            if self.comparator.exists() {
                self.sync_comparator();
            }
        }
    }

    pub(super) fn window_edges(&mut self) {
        while let Some(w) = self.schedule.take_window_edge(self.tick) {
            self.catch_up();
            self.recorder.window_edge(w.window, w.is_start, self.plant.energy());
        }
    }

    pub(super) fn dead_time(&mut self) {
        if self.schedule.dead_time_end.is_some_and(|t| t <= self.tick) {
            self.catch_up();
            self.schedule.dead_time_end = None;
            self.plant.set_mode(if self.gate { Conduction::HighSide } else { Conduction::LowSide });
        }
    }

    /// Switch the plant when the gate pin changed.
    pub(super) fn follow_pin(&mut self) {
        let on = self.peripherals.gate();
        if on != self.gate {
            self.catch_up();
            self.switch_gate(on);
        }
    }

    fn switch_gate(&mut self, on: bool) {
        let t = self.t_s();
        let o = self.observation();
        if on {
            if let Some(cycle) = self.recorder.rise(t, o) {
                self.plant.core_cycle(cycle.il_max_a - cycle.il_min_a, cycle.period_s);
            }
            self.plant.switching_edge(self.t_rise_s);
            self.plant.gate_cycle();
        } else {
            self.recorder.fall(t);
            self.plant.switching_edge(self.t_fall_s);
        }
        self.gate = on;
        let synchronous = matches!(self.plant.params().stage, Stage::Synchronous { .. });
        let final_mode = match (on, synchronous) {
            (true, _) => Conduction::HighSide,
            (false, true) => Conduction::LowSide,
            (false, false) => Conduction::Diode,
        };
        if synchronous && self.dead_ticks > 0 {
            self.plant.set_mode(self.plant.freewheel_mode());
            self.schedule.dead_time_end = Some(self.tick + self.dead_ticks);
        } else {
            self.plant.set_mode(final_mode);
        }
    }
}
