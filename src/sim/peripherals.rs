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
        self.shared.gate.set(false);
        Ok(())
    }

    fn set_high(&mut self) -> Result<(), Infallible> {
        self.shared.gate.set(true);
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
        self.shared.compare.set(Some(Compare { at, ends_pulse }));
    }

    fn disarm(&mut self) {
        self.shared.compare.set(None);
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
        self.shared.dac.set(code);
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
