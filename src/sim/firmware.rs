//! The firmware under test, as the simulator runs it: any type with
//! interrupt handlers ([`Firmware`]), acting on the converter through the
//! simulated peripherals ([`super::peripherals`]).
//!
//! [`StackFirmware`] is the crate's own: a [`Stack`] wired to a
//! [`GateDriver`] by [`Handlers`], the same code a board runs. A firmware of
//! your own implements [`Firmware`] and runs with
//! [`run_firmware`](super::run_firmware); `examples/own_law.rs` shows one.

use super::cores::Core;
use super::cpu::Handler;
use super::peripherals::{Peripherals, SimComparator, SimDac, SimPin, SimTimer};
use crate::drive::{GateDriver, Polarity, PulseEnd};
use crate::guard::ClampCounts;
use crate::law::{Law, Regulate};
use crate::stack::{Handlers, Sensing, Stack};
use crate::supervisor::FaultRecord;
use crate::tick::Instant;
use crate::units::Amps;
use embedded_hal::digital::InputPin;

/// A firmware the simulator can run: the bodies of its interrupt handlers,
/// called when the simulated microcontroller would enter them, with the
/// timer's reading `now`. It acts only through the peripherals it was given.
pub trait Firmware {
    /// ADC conversion complete: the output and input codes of one scan.
    fn adc_done(&mut self, output: u16, input: u16, now: Instant);

    /// The comparator's output changed to `level` (edge and retrofit
    /// wirings).
    fn comparator_edge(&mut self, level: bool, now: Instant);

    /// The one-shot compare fired.
    fn timer_compare(&mut self, now: Instant);

    /// The housekeeping tick (a SysTick at the scenario's rate).
    fn housekeeping(&mut self, now: Instant);

    /// For the record: the firmware's estimate of the inductor current at
    /// `now`, A. Default: none.
    ///
    /// It must be a function of `now` and of the state the handlers above
    /// leave: the simulator reads it once at a tick and reuses that reading
    /// until a handler runs there.
    fn estimated_current_a(&self, now: Instant) -> Option<f64> {
        let _ = now;
        None
    }

    /// For the record, after each housekeeping: the firmware's estimate of
    /// output and input power over the window, W. Default: none.
    fn power_estimate(&self) -> Option<(f64, f64)> {
        None
    }

    /// At the end: how often the frequency window acted. Default: zeros.
    fn clamps(&self) -> ClampCounts {
        ClampCounts::default()
    }

    /// At the end: the faults the firmware logged. Default: none.
    fn faults(&self) -> Vec<FaultRecord> {
        Vec::new()
    }

    /// Instructions one call of `handler` takes on `core`, entry and exit
    /// excluded, when the scenario names a core. Default: the crate's
    /// stack's count for the scenario's wiring, from the target proof's
    /// table ([`super::cpu`]). A firmware of your own can give its own
    /// (count it with `tests/target/run.sh`'s method).
    fn instructions(&self, handler: Handler, core: Core) -> Option<u32> {
        let _ = (handler, core);
        None
    }
}

/// Who ends a pulse at a deadline armed while the gate is on, in the
/// simulator: the timer's compare, in hardware (see [`PulseEnd`]).
/// [`StackFirmware`] builds its driver with it, and `ripplectl design`
/// writes it into the firmware's configuration it proposes, so the board
/// ends its pulses as the check that passed the proposal did.
pub const PULSE_END: PulseEnd = PulseEnd::Hardware;

/// The crate's stack on the simulated peripherals.
#[derive(Debug)]
pub struct StackFirmware<L> {
    handlers: Handlers<L, SimPin, SimTimer>,
    dac: SimDac,
    comparator: SimComparator,
}

impl<L: Law + Regulate> StackFirmware<L> {
    /// Wire `stack` to the simulated gate pin and compare, the timer ending
    /// pulses in hardware ([`PULSE_END`]).
    pub fn new(stack: Stack<L>, peripherals: &Peripherals) -> Self {
        Self::with_pulse_end(stack, peripherals, PULSE_END)
    }

    /// [`new`](Self::new) with the driver's pulse end of a firmware's own
    /// configuration (the `PULSE_END` item `ripplectl design` writes).
    pub fn with_pulse_end(stack: Stack<L>, peripherals: &Peripherals, pulse_end: PulseEnd) -> Self {
        let Ok(driver) = GateDriver::new(
            peripherals.gate_pin(),
            peripherals.compare_timer(),
            Polarity::ActiveHigh,
            pulse_end,
        );
        let mut firmware = Self {
            handlers: Handlers::new(stack, driver),
            dac: peripherals.dac(),
            comparator: peripherals.comparator(),
        };
        firmware.arm_comparator();
        firmware
    }

    /// The stack.
    pub fn stack(&self) -> &Stack<L> {
        self.handlers.stack()
    }

    /// Edge wiring: arm the DAC where the law wants it.
    fn arm_comparator(&mut self) {
        if self.handlers.stack().sensing() == Sensing::Edge {
            if let Some(code) = self.handlers.comparator_code() {
                self.dac.write(code);
            }
        }
    }
}

/// An [`Amps`] (I16F16) as f64, exactly: its 32 bits fit the 53-bit
/// significand and the scaling is a power of two, so this is the value
/// `to_num::<f64>()` gives, in two instructions where the generic
/// conversion takes a few dozen (the record reads the estimate at every
/// event).
fn amps_f64(a: Amps) -> f64 {
    f64::from(a.to_bits()) * (1.0 / f64::from(1u32 << Amps::FRAC_NBITS))
}

impl<L: Law + Regulate> Firmware for StackFirmware<L> {
    fn adc_done(&mut self, output: u16, input: u16, now: Instant) {
        let Ok(()) = self.handlers.conversion_done(output, input, now);
        self.arm_comparator();
    }

    fn comparator_edge(&mut self, level: bool, now: Instant) {
        let Ok(()) = self.handlers.comparator_edge(level, now);
        self.arm_comparator();
    }

    fn timer_compare(&mut self, now: Instant) {
        let Ok(()) = self.handlers.compare_fired(now);
        self.arm_comparator();
    }

    fn housekeeping(&mut self, now: Instant) {
        let Ok(level) = self.comparator.is_high();
        let Ok(()) = self.handlers.housekeeping(now, Some(level));
        self.arm_comparator();
    }

    fn estimated_current_a(&self, now: Instant) -> Option<f64> {
        // While a handler runs, a turn-on it made is timed at its end: the
        // estimate holds its value until then.
        let now = self.stack().not_before_last_event(now);
        Some(amps_f64(self.stack().current_at(now)))
    }

    fn power_estimate(&self) -> Option<(f64, f64)> {
        let losses = self.stack().slow_report().losses;
        Some((losses.output.to_num::<f64>(), losses.input().to_num::<f64>()))
    }

    fn clamps(&self) -> ClampCounts {
        self.stack().telemetry().clamps
    }

    fn faults(&self) -> Vec<FaultRecord> {
        self.stack().faults().copied().collect()
    }
}
