//! Simulated peripherals: what a firmware drives and reads, shared with the
//! simulator.
//!
//! A firmware run by the simulator acts on the converter only through
//! these, exactly as on a board:
//!
//! | handle | trait | what |
//! |---|---|---|
//! | [`SimPin`] | `embedded_hal::digital::OutputPin` | the gate pin |
//! | [`SimTimer`] | [`OneShot`] | the one-shot compare on the free-running timer, with the hardware pulse end |
//! | [`SimDac`] | — | the comparator's threshold (edge wiring), in output ADC codes |
//! | [`SimComparator`] | `embedded_hal::digital::InputPin` | the comparator's output level |
//!
//! So a firmware written against [`GateDriver`](crate::drive::GateDriver)
//! runs unchanged on the host. The simulator reads the pin and the compare
//! after each handler and writes the comparator's level.

use crate::drive::OneShot;
use crate::tick::Instant;
use core::convert::Infallible;
use embedded_hal::digital::{ErrorType, InputPin, OutputPin};
use std::cell::Cell;
use std::rc::Rc;

/// A compare armed on the timer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Compare {
    /// When it fires.
    pub at: Instant,
    /// The timer clears the gate at `at` ("clear on match").
    pub ends_pulse: bool,
}

#[derive(Debug, Default)]
struct Shared {
    gate: Cell<bool>,
    compare: Cell<Option<Compare>>,
    dac: Cell<u16>,
    comparator: Cell<bool>,
    // The timer's reading a handler's pin write sees.
    clock: Cell<Instant>,
    // While a handler runs on a named core, its writes wait here for its
    // end (`Peripherals::stage`, `Peripherals::commit`).
    staging: Cell<bool>,
    pending: Cell<Pending>,
}

/// A running handler's writes, not yet seen by the hardware.
#[derive(Clone, Copy, Debug, Default)]
struct Pending {
    gate: Option<bool>,
    compare: Option<Option<Compare>>,
    dac: Option<u16>,
}

impl Shared {
    fn write_gate(&self, on: bool) {
        if self.staging.get() {
            self.pending.set(Pending { gate: Some(on), ..self.pending.get() });
        } else {
            self.gate.set(on);
        }
    }

    fn write_compare(&self, compare: Option<Compare>) {
        if self.staging.get() {
            self.pending.set(Pending { compare: Some(compare), ..self.pending.get() });
        } else {
            self.compare.set(compare);
        }
    }

    fn write_dac(&self, code: u16) {
        if self.staging.get() {
            self.pending.set(Pending { dac: Some(code), ..self.pending.get() });
        } else {
            self.dac.set(code);
        }
    }
}

/// The microcontroller's peripherals as the simulator sees them; hand out
/// the firmware's handles with [`gate_pin`](Self::gate_pin) and the others.
#[derive(Clone, Debug, Default)]
pub struct Peripherals {
    shared: Rc<Shared>,
}

impl Peripherals {
    /// Peripherals at reset: gate low, no compare, DAC at 0, comparator low.
    pub fn new() -> Self {
        Self::default()
    }

    /// The gate pin (active high: high turns the switch on).
    pub fn gate_pin(&self) -> SimPin {
        SimPin { shared: Rc::clone(&self.shared) }
    }

    /// The one-shot compare.
    pub fn compare_timer(&self) -> SimTimer {
        SimTimer { shared: Rc::clone(&self.shared) }
    }

    /// The comparator's DAC.
    pub fn dac(&self) -> SimDac {
        SimDac { shared: Rc::clone(&self.shared) }
    }

    /// The comparator's output.
    pub fn comparator(&self) -> SimComparator {
        SimComparator { shared: Rc::clone(&self.shared) }
    }

    /// The gate pin's level now.
    pub fn gate(&self) -> bool {
        self.shared.gate.get()
    }

    /// The timer clearing the gate at a compare (simulator side).
    pub(crate) fn clear_gate_in_hardware(&self) {
        self.shared.gate.set(false);
    }

    /// Set what the timer reads during the next handler: the instant its
    /// pin write takes effect (simulator side).
    pub(crate) fn set_clock(&self, at: Instant) {
        self.shared.clock.set(at);
    }

    /// A handler that takes time starts: its writes (pin, compare, DAC)
    /// wait for [`commit`](Self::commit), and the hardware meanwhile keeps
    /// what it had (a compare armed before still fires).
    pub(crate) fn stage(&self) {
        self.shared.staging.set(true);
    }

    /// The handler ended: its writes reach the hardware.
    pub(crate) fn commit(&self) {
        let s = &self.shared;
        s.staging.set(false);
        let p = s.pending.take();
        if let Some(on) = p.gate {
            s.gate.set(on);
        }
        if let Some(compare) = p.compare {
            s.compare.set(compare);
        }
        if let Some(code) = p.dac {
            s.dac.set(code);
        }
    }

    /// Whether the running handler's writes so far leave every output as
    /// it is now (none, or each the value already there): its
    /// [`commit`](Self::commit) now would change nothing.
    pub(crate) fn staged_no_change(&self) -> bool {
        let s = &self.shared;
        let p = s.pending.get();
        p.gate.is_none_or(|on| on == s.gate.get())
            && p.compare.is_none_or(|c| c == s.compare.get())
            && p.dac.is_none_or(|code| code == s.dac.get())
    }

    /// The armed compare, if any.
    pub fn compare(&self) -> Option<Compare> {
        self.shared.compare.get()
    }

    /// The compare fired: it is no longer armed (simulator side).
    pub(crate) fn compare_taken(&self) -> Option<Compare> {
        self.shared.compare.take()
    }

    /// The DAC's code now.
    pub fn dac_code(&self) -> u16 {
        self.shared.dac.get()
    }

    /// Set the comparator's output level (simulator side).
    pub(crate) fn set_comparator(&self, level: bool) {
        self.shared.comparator.set(level);
    }
}

/// The gate pin.
#[derive(Debug)]
pub struct SimPin {
    shared: Rc<Shared>,
}

impl ErrorType for SimPin {
    type Error = Infallible;
}

impl OutputPin for SimPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.shared.write_gate(false);
        Ok(())
    }

    fn set_high(&mut self) -> Result<(), Infallible> {
        self.shared.write_gate(true);
        Ok(())
    }
}

/// The one-shot compare.
#[derive(Debug)]
pub struct SimTimer {
    shared: Rc<Shared>,
}

impl OneShot for SimTimer {
    fn arm(&mut self, at: Instant, ends_pulse: bool) {
        self.shared.write_compare(Some(Compare { at, ends_pulse }));
    }

    fn disarm(&mut self) {
        self.shared.write_compare(None);
    }

    /// The instant the running handler's outputs take effect: its own
    /// instant when handlers take no time, its end on a named core.
    fn now(&self) -> Instant {
        self.shared.clock.get()
    }
}

/// The comparator's DAC.
#[derive(Debug)]
pub struct SimDac {
    shared: Rc<Shared>,
}

impl SimDac {
    /// Set the threshold, output ADC codes.
    pub fn write(&mut self, code: u16) {
        self.shared.write_dac(code);
    }
}

/// The comparator's output.
#[derive(Debug)]
pub struct SimComparator {
    shared: Rc<Shared>,
}

impl ErrorType for SimComparator {
    type Error = Infallible;
}

impl InputPin for SimComparator {
    fn is_high(&mut self) -> Result<bool, Infallible> {
        Ok(self.shared.comparator.get())
    }

    fn is_low(&mut self) -> Result<bool, Infallible> {
        Ok(!self.shared.comparator.get())
    }
}
