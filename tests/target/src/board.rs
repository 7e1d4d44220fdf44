//! Stand-ins for a board's peripherals, shared by the target binaries: the
//! gate pin and the one-shot compare are words of memory, inputs are
//! volatile reads of words of memory. Volatile accesses keep the compiler
//! from folding any input into a constant or dropping any output, so an
//! image links exactly what its calls can reach.
//!
//! The words sit at fixed addresses in a block (`PERIPH`, 64 bytes) that
//! `build.rs` keeps out of the linker's RAM region, as a real part's
//! peripheral registers lie outside its RAM: an image's RAM figure is then
//! the firmware's own state alone. The emulated machines' memory is zero
//! when QEMU starts, so every register reads 0 until written.

use core::ptr::{read_volatile, write_volatile};
use embedded_hal::digital::{ErrorType, OutputPin};
use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::Instant;

/// The block's first address (the start of the emulated machine's RAM,
/// see `build.rs`).
#[cfg(target_arch = "riscv32")]
const BASE: usize = 0x8040_0000;
#[cfg(not(target_arch = "riscv32"))]
const BASE: usize = 0x2000_0000;

/// The block's size, bytes (`PERIPH`'s length in `build.rs`).
const BLOCK_BYTES: usize = 64;

/// The stand-in register at word `k` of the block.
const fn reg(k: usize) -> *mut u32 {
    assert!(4 * (k + 1) <= BLOCK_BYTES, "a stand-in register outside the reserved block");
    (BASE + 4 * k) as *mut u32
}

/// Four input words.
const INPUT: *mut u32 = reg(0);
const OUTPUT: *mut u32 = reg(4);
const PIN: *mut u32 = reg(5);
const COMPARE: *mut u32 = reg(6);
const COMPARE_MODE: *mut u32 = reg(7);
const COUNTER: *mut u32 = reg(8);

/// Input word `k` (of 4), read as a peripheral register would be.
pub fn input(k: usize) -> u32 {
    // SAFETY: in the reserved block (`k & 3`); single-threaded; volatile
    // keeps the compiler from assuming the value.
    unsafe { read_volatile(INPUT.add(k & 3)) }
}

/// A result, stored where the compiler cannot drop it.
pub fn output(x: u32) {
    // SAFETY: a word of the reserved block; single-threaded.
    unsafe { write_volatile(OUTPUT, x) }
}

/// The gate pin: its level is a word of the reserved block.
#[derive(Clone, Debug)]
pub struct Pin;

impl ErrorType for Pin {
    type Error = core::convert::Infallible;
}

impl OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe { write_volatile(PIN, 0) };
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe { write_volatile(PIN, 1) };
        Ok(())
    }
}

/// `COMPARE_MODE`: armed.
const ARMED: u32 = 1;
/// `COMPARE_MODE`: the compare ends the pulse in hardware.
const ENDS_PULSE: u32 = 2;

/// The one-shot compare: its compare register and its mode register
/// (armed, clear the output on match) are words of the reserved block.
#[derive(Clone, Debug)]
pub struct Compare;

impl OneShot for Compare {
    fn arm(&mut self, at: Instant, ends_pulse: bool) {
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe {
            write_volatile(COMPARE, at.0);
            write_volatile(COMPARE_MODE, ARMED | (ENDS_PULSE * u32::from(ends_pulse)));
        }
    }
    fn disarm(&mut self) {
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe { write_volatile(COMPARE_MODE, 0) };
    }
    fn now(&self) -> Instant {
        // SAFETY: a word of the reserved block; single-threaded.
        Instant(unsafe { read_volatile(COUNTER) })
    }
}

/// Set what the timer's counter reads (the instant a handler's pin write
/// sees).
pub fn set_counter(at: Instant) {
    // SAFETY: a word of the reserved block; single-threaded.
    unsafe { write_volatile(COUNTER, at.0) }
}

/// The deadline armed on the compare, if any.
pub fn armed_compare() -> Option<Instant> {
    // SAFETY: a word of the reserved block; single-threaded.
    let (at, mode) = unsafe { (read_volatile(COMPARE), read_volatile(COMPARE_MODE)) };
    (mode & ARMED != 0).then_some(Instant(at))
}

/// The driver on the stand-ins (active low, pulses ended by the timer).
pub fn driver() -> GateDriver<Pin, Compare> {
    let Ok(driver) = GateDriver::new(Pin, Compare, Polarity::ActiveLow, PulseEnd::Hardware);
    driver
}

/// One event as the probes and the panic check read it: which handler
/// (`input(3)`, low bits), an output and an input code (`input(0)`), the
/// timer reading (`input(1)`) and a level (`input(2)`, bit 0).
#[derive(Clone, Copy, Debug)]
pub struct Event {
    /// Which entry point to call (the probe's own numbering).
    pub which: u32,
    /// Output code.
    pub output: u16,
    /// Input code.
    pub input: u16,
    /// Timer reading.
    pub now: Instant,
    /// Comparator level or gate (true: on).
    pub level: bool,
}

/// The next event.
pub fn event() -> Event {
    let codes = input(0);
    Event {
        which: input(3),
        output: codes as u16,
        input: (codes >> 16) as u16,
        now: Instant(input(1)),
        level: input(2) & 1 != 0,
    }
}

/// The stand-in registers (pin, compare, compare mode), to restore after
/// a call that must leave no trace.
#[derive(Clone, Copy, Debug)]
pub struct Registers([u32; 3]);

impl Registers {
    /// Their present values.
    pub fn save() -> Self {
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe { Self([read_volatile(PIN), read_volatile(COMPARE), read_volatile(COMPARE_MODE)]) }
    }

    /// Put them back.
    pub fn restore(self) {
        let [pin, compare, mode] = self.0;
        // SAFETY: a word of the reserved block; single-threaded.
        unsafe {
            write_volatile(PIN, pin);
            write_volatile(COMPARE, compare);
            write_volatile(COMPARE_MODE, mode);
        }
    }
}

/// Stop here, asleep (a probe's state could not be placed).
pub fn halt() -> ! {
    loop {
        crate::arch::wait_for_interrupt();
    }
}
