//! The supervisor's slow path: housekeeping at a steady rate (the input's
//! checks, the sequence's step and the soft-start's, the output's window
//! average, the estimator's voltages) and the input readings' window it
//! ends. Integer only; it divides.

use super::sequence::Step;
use super::{FaultKind, State, Supervisor};
use crate::law::{Command, Law, Regulate};
use crate::tick::Instant;

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// Slow path, at a steady rate (1–20 kHz): input checks, soft-start
    /// ramp, hiccup timing, and the estimator's voltages; ends the input
    /// readings' window (read [`input_average`](Self::input_average) before
    /// it). `vin` is the input channel's code (the
    /// window's average, or the last reading) for the checks.
    ///
    /// The estimator's input share keeps the last input reading (a
    /// window's average lags a moving bus by half a window, and the fast
    /// path's reading sets it until the next one); `vin` sets it only when
    /// no input reading came in the window. The output share takes the
    /// window's average output (a single reading carries the ripple).
    /// Returns a command when it stopped the stage (the gate must go off).
    pub fn housekeeping(&mut self, vin: u16, now: Instant) -> Option<Command> {
        if !self.readings.end_input_window() {
            // No input reading came: the caller's code is the latest.
            self.readings.last_in = vin;
        }
        if let Some(kind) = self.input_fault(vin) {
            return Some(self.trip(kind, now));
        }
        if !self.readings.has_output() {
            // Nothing to start from (nor to set the estimator's slopes
            // with) before the first output reading.
            return None;
        }
        let l = &self.limits;
        let input_ok = vin >= l.uvlo_on && vin <= l.vin_resume;
        match self.sequence.step(input_ok, self.readings.last_out, now, &self.limits) {
            Step::Begin(output) => {
                self.estimator.restart_at(now);
                self.pulses.begin(self.inner.follows_reference());
                self.ramp.begin(output, self.limits.current_limit, self.pulses.active());

                self.pulses.retune(&self.estimator);
                self.soft_start_step(now);
            }
            Step::Hold if self.sequence.state() == State::SoftStart => self.soft_start_step(now),
            Step::Hold => {}
        }
        self.out_average = self.readings.take_output_average();
        // Within an eighth of the setpoint: regulation reached.
        let target = u32::from(self.ramp.target()) << 16;
        if self.out_average >= target - target / 8 {
            self.sequence.reached_regulation();
        }
        let out = ((self.out_average + (1 << 15)) >> 16).min(u32::from(u16::MAX)) as u16;
        self.estimator.set_voltage_codes(self.readings.last_in, out);
        if self.pulses.active() {
            self.pulses.retune(&self.estimator);
        }
        None
    }

    /// The input fault `vin` shows, if any: a reading at the rail always;
    /// UVLO and over-voltage while switching or waiting to restart.
    fn input_fault(&self, vin: u16) -> Option<FaultKind> {
        let state = self.sequence.state();
        if vin >= self.limits.in_rail && state != State::Fault {
            return Some(FaultKind::SensorRange);
        }
        if !(self.sequence.is_switching() || state == State::Restart) {
            return None;
        }
        if vin < self.limits.uvlo_off {
            Some(FaultKind::InputUndervoltage)
        } else if vin > self.limits.vin_max {
            Some(FaultKind::InputOvervoltage)
        } else {
            None
        }
    }

    /// Slow path: the input readings' average over the housekeeping window
    /// so far (since the last [`housekeeping`](Self::housekeeping), which
    /// ends the window: read it before that call), code × 2¹⁶, or `None`
    /// without fast-path input readings.
    pub fn input_average(&self) -> Option<u32> {
        self.readings.input_average()
    }
}
