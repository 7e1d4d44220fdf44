//! The analog side of the loop: the plant, scanned ahead between events
//! for a comparator crossing, a DCM zero or a band edge, and moved only
//! where one falls or where something changes it; the comparator's level;
//! the gate's edges with their losses and dead time; the profile's
//! breakpoints and the recorder's window boundaries.
//!
//! Every move of the plant goes to the recorder panel by panel, and every
//! event gives it the firmware's current estimate before and after the
//! event's handlers (a knot), so the record does not depend on where the
//! plant was moved.

use super::schedule::EdgeIrq;
use super::Engine;
use crate::sim::cpu::Handler;
use crate::sim::firmware::Firmware;
use crate::sim::linear::Vec2;
use crate::sim::plant::{Ahead, Conduction, Stage, Stop};
use crate::sim::record::Observation;
use crate::tick::Instant;

impl<F: Firmware> Engine<F> {
    /// Move the plant to the microcontroller's tick (events on the way
    /// taken), to change it or take its energies.
    pub(super) fn catch_up(&mut self) {
        if self.plant_tick < self.tick {
            self.watch_until(self.tick);
            self.knot_before();
            self.move_plant(self.ahead_to(self.tick));
            self.plant_tick = self.tick;
            self.frac = 0.0;
        }
    }

    /// Seconds from the plant's time to `tick`.
    fn ahead_to(&self, tick: u64) -> f64 {
        self.seconds(tick - self.plant_tick) - self.frac
    }

    /// Look ahead of the plant up to `target` for a comparator crossing, a
    /// DCM zero or a band edge, moving the plant to each DCM zero or band
    /// edge found (a crossing changes the comparator, not the plant); returns
    /// the tick the loop may go to (earlier than `target` when a crossing's
    /// interrupt comes first). One scan looks at least
    /// [`Plant::lookahead_s`](crate::sim::plant::Plant::lookahead_s) ahead,
    /// at most [`SCAN_OF_FASTEST`](crate::sim::plant::SCAN_OF_FASTEST) of
    /// the fastest time constant, and keeps what it found, so the events
    /// before it cost no scan.
    #[inline]
    pub(super) fn watch_until(&mut self, target: u64) -> u64 {
        if self.seen_clear_to(target) {
            target
        } else {
            self.scan_until(target)
        }
    }

    /// Whether nothing is left to look for before `target`: the plant is
    /// there, or what was scanned already reaches it with no event before
    /// it (most calls: the loop's events fall inside one scan).
    #[inline]
    fn seen_clear_to(&self, target: u64) -> bool {
        self.plant_tick >= target || {
            let to = self.ahead_to(target);
            match self.found {
                Some(found) => found.t > to,
                None => to <= self.scanned.t,
            }
        }
    }

    /// [`watch_until`](Self::watch_until) past its quick answer: scan, and
    /// take the events found.
    #[inline(never)]
    fn scan_until(&mut self, mut target: u64) -> u64 {
        while self.plant_tick < target {
            let to = self.ahead_to(target);
            let found = match self.found {
                Some(found) if found.t > to => break,
                Some(found) => found,
                None if to <= self.scanned.t => break,
                None => {
                    let scan = self.plant.scan(self.scanned, to, self.comparator.watch());
                    match scan.event {
                        None => self.scanned = scan.end,
                        found => self.found = found,
                    }
                    continue;
                }
            };
            self.found = None;
            let t = found.t;
            if let Stop::Crossing(_) = found.stop {
                // Nothing changes in the plant: look on from the crossing
                // for the level the comparator watches now (the same level
                // the other way, past which the scan may have seen the
                // interval clear).
                let crossed = self.comparator.watch().map(|w| w.level_v);
                self.comparator.flip();
                let same_level = self.comparator.watch().map(|w| w.level_v) == crossed;
                self.scanned = match found.clear_to {
                    Some(end) if same_level => end,
                    _ => self.plant.ahead(t),
                };
                self.peripherals.set_comparator(self.comparator.level());
                self.schedule_edge_interrupt(self.t_s() + t, self.plant_tick);
                if let Some(edge) = self.schedule.edge {
                    target = target.min(edge.at);
                }
                continue;
            }
            // A DCM zero or a band edge changes the plant there. The record
            // takes the firmware's estimate up to it (its state holds since
            // the last knot, unless the plant lags the handlers, when the
            // knot is not needed and the record drops it).
            let e = self.estimate_at(self.plant_instant_ahead(t));
            self.recorder.estimate_knot(self.t_s() + t, e, e);
            self.move_plant(t);
            self.frac += t;
            self.plant.take_event(found.stop);
            self.forget_ahead();
        }
        target
    }

    /// Forget what was seen ahead of the plant (it was moved or changed).
    fn forget_ahead(&mut self) {
        self.scanned = self.plant.ahead(0.0);
        self.found = None;
    }

    /// Move the plant `dt` on (no event inside), the panels to the
    /// recorder.
    fn move_plant(&mut self, dt: f64) {
        let mut t = self.t_s();
        let (recorder, gate) = (&mut self.recorder, self.gate);
        self.plant.advance_to(dt, &mut |panel| {
            recorder.panel(t, panel, gate);
            t += panel.h;
        });
        self.forget_ahead();
    }

    /// The plant's state at the microcontroller's tick, events before it
    /// taken, and how far ahead of the plant the tick is.
    fn state_at_tick(&mut self) -> (Vec2, f64) {
        self.watch_until(self.tick);
        let to = self.ahead_to(self.tick);
        if to == 0.0 {
            (self.plant.ahead(0.0).x, 0.0)
        } else if to == self.scanned.t {
            (self.scanned.x, to)
        } else {
            (self.plant.state_ahead(to), to)
        }
    }

    /// Output and input voltage at the tick, V (an ADC sample).
    pub(super) fn voltages_at_tick(&mut self) -> (f64, f64) {
        let (x, ahead) = self.state_at_tick();
        (self.plant.v_out_of(&x, ahead), self.plant.vin_ahead(ahead))
    }

    /// The plant and the firmware's estimate at the plant's time, for the
    /// record. Inline: most are taken at a gate edge, where the estimate is
    /// the tick's, already read; a call would cost what that saves.
    #[inline]
    fn observation(&self) -> Observation {
        Observation {
            t_s: self.t_s(),
            vo_v: self.plant.v_out(),
            il_a: self.plant.i_l(),
            il_est_a: self.estimate_at_plant(),
            gate_on: self.gate,
        }
    }

    /// The firmware's estimate at the plant's time: the tick's, when the
    /// plant is there.
    #[inline]
    fn estimate_at_plant(&self) -> f64 {
        if self.plant_tick == self.tick && self.frac == 0.0 {
            self.estimate_now()
        } else {
            self.estimate_at(self.plant_instant_ahead(0.0))
        }
    }

    /// The timer's reading `t` after the plant's time (the tick at or
    /// before it).
    fn plant_instant_ahead(&self, t: f64) -> Instant {
        let frac = self.frac + t;
        // Through i64: one instruction, the same count.
        let within = if frac == 0.0 { 0 } else { ((frac / self.tick_s) as i64).max(0) as u64 };
        Instant(self.start.wrapping_add((self.plant_tick + within) as u32))
    }

    /// Set the environment for t = 0 and the comparator's initial level.
    pub(super) fn start_up(&mut self) {
        self.plant.set_environment(self.profile.environment_at(0.0));
        self.forget_ahead();
        self.sync_comparator();
        self.schedule.edge = None;
        let o = self.observation();
        self.recorder.estimate_knot(0.0, o.il_est_a, o.il_est_a);
        self.recorder.point(o);
    }

    /// Recompute the comparator's level from the output at the tick (after
    /// the DAC was re-armed); a change raises an edge interrupt. Nothing to
    /// do while the DAC holds its code (the scans keep the level).
    pub(super) fn sync_comparator(&mut self) {
        let dac = self.peripherals.dac_code();
        if self.synced_dac == Some(dac) {
            return;
        }
        self.synced_dac = Some(dac);
        let (x, ahead) = self.state_at_tick();
        let v = self.plant.v_out_of(&x, ahead);
        let watched = self.comparator.watch();
        if self.comparator.settle(v, dac, &self.adc) {
            self.schedule_edge_interrupt(self.seconds(self.tick), self.tick);
        }
        if self.comparator.watch() != watched {
            // A new level to watch from the tick on.
            self.scanned = Ahead { t: ahead, x };
            self.found = None;
        }
        self.peripherals.set_comparator(self.comparator.level());
    }

    /// The comparator's output changed at `at_s` (in the tick `tick`): its
    /// interrupt after the propagation delay, on the next tick, and the
    /// latency.
    fn schedule_edge_interrupt(&mut self, at_s: f64, tick: u64) {
        let ready = ceil_to_u64((at_s + self.comparator_delay_s) / self.tick_s);
        let at = ready.max(tick + 1) + self.latency_ticks;
        if self.schedule.edge.is_some() {
            self.cpu.merge(Handler::Comparator);
        }
        self.schedule.edge = Some(EdgeIrq { at, level: self.comparator.level() });
    }

    pub(super) fn profile_breakpoints(&mut self) {
        while let Some(b) = self.schedule.take_break(self.tick) {
            self.catch_up();
            // At the breakpoint's own time when the tick rounded to before
            // it: the change must not be lost.
            self.plant.set_environment(self.profile.environment_at(self.t_s().max(b.at_s)));
            self.forget_ahead();
            // A step moves the output at once (through the ESR): see it,
            // and let a comparator see it too (no crossing to find there).
            let o = self.observation();
            self.recorder.point(o);
            if self.comparator.exists() {
                self.synced_dac = None;
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
            self.forget_ahead();
        }
    }

    /// Switch the plant when the gate pin changed. Inline: a handler often
    /// leaves the pin as it was, and the check alone costs less than a
    /// call.
    #[inline]
    pub(super) fn follow_pin(&mut self) {
        let on = self.peripherals.gate();
        if on != self.gate {
            self.switch_gate(on);
        }
    }

    /// The gate's edge: the plant caught up to the tick and switched.
    #[inline(never)]
    fn switch_gate(&mut self, on: bool) {
        self.catch_up();
        let t = self.t_s();
        let o = self.observation();
        if on {
            if let Some(cycle) = self.recorder.rise(t, o) {
                self.plant.core_cycle(cycle.il_max_a - cycle.il_min_a, cycle.period_s);
            }
            self.plant.switching_edge(self.t_rise_s);
            self.plant.gate_cycle();
        } else {
            self.recorder.fall(t, o.il_a);
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
        self.forget_ahead();
    }
}

/// `x.ceil() as u64` without `ceil`, a library call on the baseline
/// x86-64 target: a comparator edge's tick, one per crossing taken. The
/// same for every `x` below 2⁶³ (a tick count is far below; NaN and
/// negatives give zero): the truncation toward zero is exact in `f64`
/// where it cut a fraction (`x` below 2⁵²), and one is added where it
/// cut a positive one. Through `i64`: one instruction each way, where
/// `u64` takes several.
fn ceil_to_u64(x: f64) -> u64 {
    let below = x as i64;
    below.saturating_add(i64::from((below as f64) < x)).max(0) as u64
}

#[cfg(test)]
mod tests {
    use super::ceil_to_u64;

    #[test]
    fn ceil_to_u64_matches_the_library_ceil_below_two_to_the_63() {
        let cases = [
            0.0,
            -0.0,
            f64::MIN_POSITIVE,
            0.5,
            1.0,
            2.5,
            1e9 + 0.25,
            4503599627370495.5,
            4503599627370497.0,
            9007199254740993.0,
            9.2e18,
            -0.5,
            -1.0,
            -7.25,
            -1e300,
            f64::NEG_INFINITY,
            f64::NAN,
        ];
        for x in cases {
            for x in [x, x.next_up(), x.next_down()] {
                assert_eq!(ceil_to_u64(x), x.ceil() as u64, "{x}");
            }
        }
    }
}
