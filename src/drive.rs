//! Carrying out commands on the hardware: the gate pin and the one-shot
//! compare timer.
//!
//! A [`Command`] says what the gate should do now and when the law wants to
//! be called again. [`GateDriver`] turns it into pin writes through
//! [`embedded_hal::digital::OutputPin`] and into one arm (or disarm) of a
//! [`OneShot`] compare on the free-running timer. Firmware calls
//! [`GateDriver::apply`] after every fast-path call, and
//! [`GateDriver::compare_fired`] first thing in the compare interrupt:
//!
//! ```text
//!   ADC done ──▶ stack.on_sample(code, now) ──┐
//!   compare  ──▶ at = driver.compare_fired(now) ├──▶ driver.apply(command)
//!                stack.on_timer(at or now) ──┘       ├─ pin: set_high / set_low (on change)
//!                                                     └─ timer: arm(wake) / disarm
//! ```
//!
//! **Ending a pulse in hardware.** An on-time ended from an interrupt
//! handler is longer by the handler's entry latency, and by a varying amount
//! when an ADC interrupt that saw the deadline pass sometimes ends it first:
//! that shows as period jitter. Timers with an output-compare "clear on
//! match" (or one-pulse) mode can end the pulse at the compare tick
//! themselves. Build the driver with [`PulseEnd::Hardware`] when every
//! deadline armed while the gate is on ends the pulse. Inside a
//! [`FrequencyGuard`](crate::FrequencyGuard) and a
//! [`Supervisor`](crate::supervisor::Supervisor) that holds for the crate's
//! laws: while on, the guard arms the maximum on-time (the law asks for
//! "on") or the minimum on-time's end (the law already asked for "off"),
//! the on-time law its on-time's end, the supervisor the predicted current
//! limit (a slope that fell since the turn-on ends such a pulse early: on
//! the safe side). A law of your own that arms deadlines while on which
//! must not end the pulse needs [`PulseEnd::Software`].
//!
//! All methods are fast-path code: no division, no float, no panic, bounded
//! time. Pin errors are returned after the gate was driven to its safe
//! level where possible.

use crate::law::{Command, Gate};
use crate::tick::Instant;
use embedded_hal::digital::OutputPin;

/// A one-shot compare on the free-running timer whose readings are the
/// [`Instant`]s the laws use.
///
/// Implement it on the board's timer: `arm` writes the compare register and
/// enables its interrupt; the interrupt handler calls
/// [`GateDriver::compare_fired`] and then [`Law::on_timer`](crate::Law::on_timer).
/// A deadline that is already due when armed (the compare register is
/// behind the counter) must still fire at once: check the counter after
/// writing the compare and pend the interrupt if it passed.
pub trait OneShot {
    /// Fire at `at`, replacing any armed deadline. `ends_pulse`: the gate
    /// is on and this compare ends the pulse; a timer in output-compare
    /// "clear on match" mode clears the gate output at the compare tick
    /// (only asked for by a driver built with [`PulseEnd::Hardware`]).
    fn arm(&mut self, at: Instant, ends_pulse: bool);

    /// Cancel any armed deadline.
    fn disarm(&mut self);

    /// The timer's reading now (the counter register). Read right after a
    /// turn-on's pin write, it tells when the gate really switched; see
    /// [`Handlers`](crate::stack::Handlers).
    fn now(&self) -> Instant;
}

/// The gate driver's input level that turns the switch on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Polarity {
    /// Pin high: switch on.
    ActiveHigh,
    /// Pin low: switch on (inverting drivers, some isolated drivers).
    ActiveLow,
}

/// Who ends a pulse at a deadline armed while the gate is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PulseEnd {
    /// The compare interrupt's handler, through the pin (its entry latency
    /// adds to the on-time).
    Software,
    /// The timer's output-compare hardware at the compare tick (see the
    /// module notes for when that is right).
    Hardware,
}

/// Drives the gate pin and the one-shot timer from [`Command`]s.
///
/// Starts with the gate off: [`GateDriver::new`] drives the pin to the off
/// level and disarms the timer.
#[derive(Clone, Debug)]
pub struct GateDriver<P, T> {
    pin: P,
    timer: T,
    polarity: Polarity,
    pulse_end: PulseEnd,
    gate: Gate,
    // The compare armed to end the pulse in hardware, if any.
    armed_end: Option<Instant>,
}

impl<P: OutputPin, T: OneShot> GateDriver<P, T> {
    /// Take the pin and the timer, drive the gate off and disarm.
    ///
    /// Errors: the pin's error, when it could not be driven off (the
    /// board's gate pull-down must then hold the switch off).
    pub fn new(
        pin: P,
        mut timer: T,
        polarity: Polarity,
        pulse_end: PulseEnd,
    ) -> Result<Self, P::Error> {
        timer.disarm();
        let mut driver = Self { pin, timer, polarity, pulse_end, gate: Gate::Off, armed_end: None };
        driver.write(Gate::Off)?;
        Ok(driver)
    }

    /// [`new`](Self::new) in a `const` context, for a driver held in a
    /// `static` initialised by the compiler: touches no hardware, so the
    /// firmware calls [`shut_down`](Self::shut_down) once at start-up,
    /// before the first interrupt, to drive the gate off and disarm the
    /// timer (until then the board's gate pull-down must hold the switch
    /// off, as it does through reset).
    pub const fn before_start(pin: P, timer: T, polarity: Polarity, pulse_end: PulseEnd) -> Self {
        Self { pin, timer, polarity, pulse_end, gate: Gate::Off, armed_end: None }
    }

    /// The gate as last driven.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// The timer (its state, for telemetry and tests).
    pub const fn timer(&self) -> &T {
        &self.timer
    }

    /// Fast path: carry out `command`: drive the pin if the gate changes,
    /// then arm the timer at its deadline or disarm it.
    ///
    /// Errors: the pin's error. A failed turn-on is followed by an attempt
    /// to drive the gate off, and the timer is disarmed.
    #[inline]
    pub fn apply(&mut self, command: Command) -> Result<(), P::Error> {
        self.set_gate(command.gate)?;
        self.schedule(command.wake);
        Ok(())
    }

    /// Fast path, the first half of [`apply`](Self::apply): drive the pin
    /// if the gate changes.
    ///
    /// Errors: the pin's error. A failed turn-on is followed by an attempt
    /// to drive the gate off, and the timer is disarmed.
    #[inline]
    pub fn set_gate(&mut self, gate: Gate) -> Result<(), P::Error> {
        if gate != self.gate {
            if let Err(e) = self.write(gate) {
                self.disarm();
                // Best effort: the error being reported is the first one.
                let _ = self.write(Gate::Off);
                return Err(e);
            }
        }
        Ok(())
    }

    /// Fast path, the second half of [`apply`](Self::apply): arm the timer
    /// at `wake` (a pulse end in hardware while on, when so built), or
    /// disarm it.
    #[inline]
    pub fn schedule(&mut self, wake: Option<Instant>) {
        match wake {
            Some(at) => {
                let ends = self.gate.is_on() && self.pulse_end == PulseEnd::Hardware;
                self.timer.arm(at, ends);
                self.armed_end = ends.then_some(at);
            }
            None => self.disarm(),
        }
    }

    /// Fast path, first in the compare interrupt (`now`: the timer's
    /// reading in the handler): when the compare ended the pulse in
    /// hardware, the gate is now off, and this returns the compare's
    /// instant, when the edge really happened: hand that, not `now`, to
    /// [`Law::on_timer`](crate::Law::on_timer), so the estimator and the
    /// guard time the turn-off right despite the interrupt's latency. The
    /// next [`apply`](Self::apply) drives the gate on again if the law
    /// still asks. `None`: no hardware pulse end was due (use `now`).
    #[inline]
    pub fn compare_fired(&mut self, now: Instant) -> Option<Instant> {
        let at = self.armed_end.filter(|&at| now.has_reached(at))?;
        self.gate = Gate::Off;
        self.armed_end = None;
        Some(at)
    }

    /// The compare armed to end the present pulse in hardware, if any: a
    /// turn-off written after it has passed happened there, not at the
    /// write.
    pub const fn hardware_end(&self) -> Option<Instant> {
        self.armed_end
    }

    /// Fast path: gate off now and timer disarmed, whatever the law says
    /// (a fault input, a watchdog warning).
    ///
    /// Errors: the pin's error.
    pub fn shut_down(&mut self) -> Result<(), P::Error> {
        self.disarm();
        self.write(Gate::Off)
    }

    /// Give back the pin and the timer (gate left as it is: call
    /// [`shut_down`](Self::shut_down) first).
    pub fn release(self) -> (P, T) {
        (self.pin, self.timer)
    }

    /// Cancel the compare, and with it any hardware pulse end.
    #[inline(always)]
    fn disarm(&mut self) {
        self.timer.disarm();
        self.armed_end = None;
    }

    /// Drive the pin's level for `gate`; the gate counts as changed only
    /// once the pin took it.
    #[inline(always)]
    fn write(&mut self, gate: Gate) -> Result<(), P::Error> {
        let high = gate.is_on() == (self.polarity == Polarity::ActiveHigh);
        if high {
            self.pin.set_high()?;
        } else {
            self.pin.set_low()?;
        }
        self.gate = gate;
        Ok(())
    }
}
