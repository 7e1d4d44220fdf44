//! The board's gate pin and compare timer, as the C firmware provides
//! them: four callbacks and a context pointer, behind the crate's
//! [`OutputPin`] and [`OneShot`] so that [`Handlers`](ripplectl::stack::Handlers)
//! drives them as it drives any board's.

use crate::error::{ConfigErrorInfo, Error};
use core::ffi::c_void;
use embedded_hal::digital::{ErrorKind, ErrorType, OutputPin};
use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::Instant;

// The callbacks' types (written out in `Board`'s fields, where the header
// generator turns `Option<fn>` into a nullable C function pointer).
type SetGate = unsafe extern "C" fn(context: *mut c_void, high: bool) -> bool;
type Arm = unsafe extern "C" fn(context: *mut c_void, at: u32, ends_pulse: bool);
type Disarm = unsafe extern "C" fn(context: *mut c_void);
type Now = unsafe extern "C" fn(context: *mut c_void) -> u32;

/// The board's gate pin and one-shot compare, for `ripplectl_init`.
///
/// The library calls these from inside the entry points, in the caller's
/// interrupt: keep them short (a register write or read each). Every
/// callback must be set; `context` is passed to each unchanged (NULL is
/// fine when they need none).
///
/// - `set_gate(context, high)`: drive the gate pin's output high or low
///   (the library applies `active_low`); return false if the pin refused.
///   Called only when the level changes, and once at start to drive the
///   gate off.
/// - `arm(context, at, ends_pulse)`: write the compare register with timer
///   reading `at` and enable its interrupt, replacing any armed deadline.
///   A deadline already passed must still fire: check the counter after
///   the write and pend the interrupt if it passed. With
///   `hardware_pulse_end`, `ends_pulse` true asks the timer to clear the
///   gate output itself at `at` (output compare "clear on match").
/// - `disarm(context)`: cancel the compare and its interrupt.
/// - `now(context)`: the timer's counter, the same free-running timer
///   whose readings the entry points get; read right after a pin write, it
///   times the switching edge.
#[repr(C)]
#[derive(Clone, Copy, Debug)]
pub struct Board {
    /// Passed to every callback unchanged.
    pub context: *mut c_void,
    /// Drive the gate pin; true when it took the level.
    pub set_gate: Option<unsafe extern "C" fn(context: *mut c_void, high: bool) -> bool>,
    /// Arm the compare.
    pub arm: Option<unsafe extern "C" fn(context: *mut c_void, at: u32, ends_pulse: bool)>,
    /// Cancel the compare.
    pub disarm: Option<unsafe extern "C" fn(context: *mut c_void)>,
    /// Read the timer.
    pub now: Option<unsafe extern "C" fn(context: *mut c_void) -> u32>,
    /// The gate driver turns the switch on with the pin low (an inverting
    /// driver); false: pin high is on.
    pub active_low: bool,
    /// Every compare armed while the gate is on ends the pulse in the
    /// timer's hardware (output compare "clear on match"); false: the
    /// compare interrupt ends it through `set_gate`.
    pub hardware_pulse_end: bool,
}

/// The gate pin: `set_gate` and its context.
#[derive(Clone, Copy, Debug)]
pub struct Pin {
    context: *mut c_void,
    set_gate: SetGate,
}

/// The compare timer: `arm`, `disarm`, `now` and their context.
#[derive(Clone, Copy, Debug)]
pub struct Timer {
    context: *mut c_void,
    arm: Arm,
    disarm: Disarm,
    now: Now,
}

/// `set_gate` returned false.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct PinRefused;

impl embedded_hal::digital::Error for PinRefused {
    fn kind(&self) -> ErrorKind {
        ErrorKind::Other
    }
}

impl ErrorType for Pin {
    type Error = PinRefused;
}

impl Pin {
    #[inline(always)]
    fn drive(&mut self, high: bool) -> Result<(), PinRefused> {
        // SAFETY: `ripplectl_init`'s contract: the callback is a valid C
        // function taking this context.
        if unsafe { (self.set_gate)(self.context, high) } {
            Ok(())
        } else {
            Err(PinRefused)
        }
    }
}

impl OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), PinRefused> {
        self.drive(false)
    }

    fn set_high(&mut self) -> Result<(), PinRefused> {
        self.drive(true)
    }
}

impl OneShot for Timer {
    fn arm(&mut self, at: Instant, ends_pulse: bool) {
        // SAFETY: as for `Pin::drive`.
        unsafe { (self.arm)(self.context, at.0, ends_pulse) }
    }

    fn disarm(&mut self) {
        // SAFETY: as for `Pin::drive`.
        unsafe { (self.disarm)(self.context) }
    }

    fn now(&self) -> Instant {
        // SAFETY: as for `Pin::drive`.
        Instant(unsafe { (self.now)(self.context) })
    }
}

impl Board {
    /// The gate driver on this board's pin and timer: the pin driven off,
    /// the compare disarmed.
    ///
    /// Errors: `MISSING` naming a NULL callback; `PIN_FAILED` when the pin
    /// refused the off level (the board's gate pull-down must then hold
    /// the switch off).
    pub fn driver(&self) -> Result<GateDriver<Pin, Timer>, ConfigErrorInfo> {
        let (Some(set_gate), Some(arm), Some(disarm), Some(now)) =
            (self.set_gate, self.arm, self.disarm, self.now)
        else {
            return Err(ConfigErrorInfo::new(Error::Missing, self.missing()));
        };
        let pin = Pin { context: self.context, set_gate };
        let timer = Timer { context: self.context, arm, disarm, now };
        let polarity = if self.active_low { Polarity::ActiveLow } else { Polarity::ActiveHigh };
        let end = if self.hardware_pulse_end { PulseEnd::Hardware } else { PulseEnd::Software };
        GateDriver::new(pin, timer, polarity, end)
            .map_err(|PinRefused| ConfigErrorInfo::new(Error::PinFailed, "board.set_gate"))
    }

    /// The name of the first NULL callback.
    fn missing(&self) -> &'static str {
        if self.set_gate.is_none() {
            "board.set_gate"
        } else if self.arm.is_none() {
            "board.arm"
        } else if self.disarm.is_none() {
            "board.disarm"
        } else {
            "board.now"
        }
    }
}
