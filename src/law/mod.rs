//! Switching laws: what the gate should do next.
//!
//! A law turns fast-path events into a [`Command`]. Three events reach it,
//! each from its own interrupt:
//!
//! - [`Law::on_sample`]: an ADC conversion of the sensed output finished;
//! - [`Law::on_edge`]: an analog comparator's output changed level;
//! - [`Law::on_timer`]: the one-shot timer armed from an earlier
//!   [`Command::wake`] expired.
//!
//! [`Law::on_gate`] tells the law when the gate really switched (a guard or a
//! supervisor may delay or veto what it asked for), so a law that times its
//! on-time from the turn-on starts counting at the right tick.
//!
//! All methods are fast-path code: integer compares and adds only, no
//! division, no float, no panic, bounded time. The one exception is
//! [`Regulate::retune`], called from the slow path once per housekeeping
//! window: it may divide (integers only).
//!
//! # For law authors
//!
//! A law of your own is any type implementing [`Law`] (the fast path) and
//! [`Regulate`] (the reference the slow path moves: soft-start, DC
//! correction). Wrap it in a [`FrequencyGuard`](crate::FrequencyGuard) and
//! hand it to a [`Stack`](crate::stack::Stack); `examples/own_law.rs` runs
//! one in the simulator. Three things to know:
//!
//! - [`Law::on_timer`] is also called as a *query*: after a gate edge the
//!   guard asks the law for its next deadline through it, so it must be
//!   harmless to call at any time (answer with the present demand).
//! - Report deadlines through [`Command::wake`]; the timer calls back at or
//!   after them. A deadline already passed when armed fires at once.
//! - [`Regulate::retune`] gets the window's measured [`Conditions`]; use it
//!   for slow adaptation (feed-forward, frequency lock), not for decisions.

pub mod dc_correction;
pub mod dither;
pub mod emulated_ripple;
pub mod feed_forward;
pub mod hysteretic;
pub mod on_time;
pub mod passthrough;
pub mod trim;

pub use dc_correction::DcCorrection;
pub use dither::Dither;
pub use emulated_ripple::EmulatedRipple;
pub use feed_forward::OnTimeFeedForward;
pub use hysteretic::{Hysteretic, HystereticConfig, Threshold};
pub use on_time::{OnTime, OnTimeConfig};
pub use passthrough::ComparatorPassThrough;
pub use trim::FrequencyTrim;

use crate::tick::Instant;
use crate::units::Volts;

/// State of the power switch's gate drive.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Gate {
    /// High-side switch off (freewheeling through the diode or low side).
    Off,
    /// High-side switch on.
    On,
}

impl Gate {
    /// `On` when `on` is true.
    #[inline(always)]
    pub const fn from_bool(on: bool) -> Self {
        if on {
            Gate::On
        } else {
            Gate::Off
        }
    }

    /// True for [`Gate::On`].
    #[inline(always)]
    pub const fn is_on(self) -> bool {
        matches!(self, Gate::On)
    }
}

/// What a law or guard asks of the firmware after an event.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Command {
    /// Drive the gate to this state now.
    pub gate: Gate,
    /// Call [`Law::on_timer`] at this instant, even if no other event comes
    /// first (arm a one-shot compare). `None`: no deadline.
    pub wake: Option<Instant>,
}

impl Command {
    /// A command without a deadline.
    #[inline(always)]
    pub const fn hold(gate: Gate) -> Self {
        Self { gate, wake: None }
    }

    /// A command with a deadline.
    #[inline(always)]
    pub const fn until(gate: Gate, wake: Instant) -> Self {
        Self { gate, wake: Some(wake) }
    }
}

/// One fast-path event, as [`Law::on_event`] takes it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Event {
    /// An output conversion finished with this code ([`Law::on_sample`]).
    Sample(u16),
    /// The comparator's output is now this level ([`Law::on_edge`]).
    Edge(bool),
    /// A deadline was reached ([`Law::on_timer`]).
    Timer,
}

/// A switching law, or anything wrapping one (guard, supervisor).
pub trait Law {
    /// An ADC conversion of the sensed output finished.
    ///
    /// `code`: raw ADC result (format of the configured
    /// [`AdcChannel`](crate::scale::AdcChannel)); `now`: timer reading of the
    /// sampling instant.
    fn on_sample(&mut self, code: u16, now: Instant) -> Command;

    /// The analog comparator's output is now `level` (true: sensed signal
    /// above the armed threshold). Level-based: calling it twice with the
    /// same level is harmless, so firmware may also call it after arming a
    /// threshold to report the current level.
    fn on_edge(&mut self, level: bool, now: Instant) -> Command;

    /// The deadline of an earlier [`Command::wake`] was reached.
    fn on_timer(&mut self, now: Instant) -> Command;

    /// Any of the three events above, one entry point: an outer stage that
    /// handles every event alike after the law's answer (the supervisor)
    /// compiles that handling once, not once per event. Default: the
    /// event's own method; a wrapper (the guard) overrides it to apply its
    /// own filter once after the inner law's `on_event`.
    #[inline(always)]
    fn on_event(&mut self, event: Event, now: Instant) -> Command {
        match event {
            Event::Sample(code) => self.on_sample(code, now),
            Event::Edge(level) => self.on_edge(level, now),
            Event::Timer => self.on_timer(now),
        }
    }

    /// The gate actually switched to `gate` at `at`. Default: ignored.
    #[inline(always)]
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        let _ = (gate, at);
    }

    /// Right after a turn-off ([`on_gate`](Self::on_gate) with
    /// [`Gate::Off`]): whether the law already asks for the next pulse (an
    /// on-time law on a comparator whose output is still below the
    /// reference, which no new edge will report). Default: no.
    #[inline(always)]
    fn asks_on_after_off(&self) -> bool {
        false
    }

    /// The last switching edge really happened at `at`, not at the instant
    /// the call that made it was given (later by the interrupt handler's
    /// own time to its pin write, or, for a turn-off, earlier when the
    /// timer ended the pulse first; see
    /// [`stack::Handlers`](crate::stack::Handlers)): time from `at` what
    /// was timed from that edge. Default: ignored, right for a law that
    /// times nothing from its edges.
    #[inline(always)]
    fn edge_at(&mut self, at: Instant) {
        let _ = at;
    }

    /// The shortest pulse this stage makes, timer ticks (`u32`): an outer
    /// stage that ends pulses itself (the supervisor's current limit) keeps
    /// each pulse at least this long. Default: 0, no minimum.
    fn min_on_ticks(&self) -> u32 {
        0
    }

    /// The threshold an edge-driven law wants its comparator's DAC armed
    /// at, in the sensed output's ADC codes (scale it if the DAC's
    /// resolution differs); `None` for a law without one. Firmware reads it
    /// after each call in edge mode. Default: `None`.
    fn comparator_code(&self) -> Option<u16> {
        None
    }
}

/// What the slow path measured over one housekeeping window, for a law
/// that retunes itself ([`Regulate::retune`]).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Conditions {
    /// Mean input voltage over the window.
    pub vin: Volts,
    /// Mean sensed output over the window.
    pub vout: Volts,
    /// Switching cycles completed in the window.
    pub cycles: u32,
    /// Their periods summed, timer ticks (the mean period is
    /// `period_ticks / cycles`).
    pub period_ticks: u32,
    /// The frequency window's limits acted during the window (a
    /// minimum-period or maximum-on-time clamp): an integrator that adapts
    /// the frequency should hold.
    pub window_binding: bool,
    /// A switching period ran past the window's longest (`1/f_min`)
    /// during the window: the frequency is too low whatever its mean says
    /// (a light-load burst averages high).
    pub long_period: bool,
}

/// Where a law's mean-frequency lock stands ([`Regulate::frequency_lock`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LockState {
    /// The locked mean frequency, Hz.
    pub target_hz: u32,
    /// The lock's factor sits at its lower bound: it cannot raise the
    /// frequency any further.
    pub at_min: bool,
    /// The lock's factor sits at its upper bound: it cannot lower the
    /// frequency any further.
    pub at_max: bool,
    /// Pulses ended before the law asked during the last window (the
    /// light-load cap or the current limit ended them): the lock did not
    /// set the frequency and held; the pulses' size did.
    pub pulses_cut: bool,
    /// The law reports [`pulses_cut`](Self::pulses_cut) and its pulses end
    /// at a threshold, so a cap below their own peak sets their size (the
    /// light-load sizer may then size a soft-start's pulses too); false
    /// for a law whose pulses are timed.
    pub cut_reported: bool,
}

/// A law whose regulation reference can be moved on the slow path
/// (soft-start, DC-error correction).
pub trait Regulate {
    /// The reference, in the law's raw units (ADC codes of the sensed
    /// output).
    fn reference_code(&self) -> u16;

    /// Move the reference (saturating within the law's range).
    fn set_reference(&mut self, code: u16);

    /// Slow path, once per housekeeping window while regulating: adapt to
    /// the window's measured `conditions` (input feed-forward, frequency
    /// lock). Integer arithmetic only. Default: nothing.
    fn retune(&mut self, conditions: &Conditions) {
        let _ = conditions;
    }

    /// The mean-frequency lock [`retune`](Self::retune) runs, if the law
    /// has one: its target and whether it has run out of range (the
    /// light-load pulse sizer then takes over, see
    /// [`stack`](crate::stack)). Default: `None`.
    fn frequency_lock(&self) -> Option<LockState> {
        None
    }

    /// Whether [`set_reference`](Self::set_reference) moves what the law
    /// regulates to. Default: true. A law whose reference lies outside
    /// firmware (a board's own comparator loop, passed through) answers
    /// false: the supervisor's soft-start then limits each pulse instead
    /// ([`limit_pulses`](Self::limit_pulses)).
    fn follows_reference(&self) -> bool {
        true
    }

    /// Fast path, during the soft-start of a law that does not follow the
    /// reference: bound each pulse from the next turn-on (`None`: no bound
    /// beyond the window's). Only the frequency guard acts on it
    /// ([`FrequencyGuard`](crate::FrequencyGuard)); default: nothing.
    fn limit_pulses(&mut self, limit: Option<PulseLimit>) {
        let _ = limit;
    }
}

/// A start-up bound on each pulse ([`Regulate::limit_pulses`]): an on-time
/// short enough that the inductor current, rising from zero, stays under
/// the soft-start's cap, and an off-time long enough for it to fall back
/// to zero after such a pulse (see `supervisor/start_pulses.rs`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PulseLimit {
    /// Longest on-time, timer ticks (`u32`; the window's maximum on-time
    /// still applies when it is shorter, its minimum on-time when longer).
    pub max_on: u32,
    /// Least off-time per tick of `max_on`, × 2⁸ (`u16`,
    /// 0…255.996: 0 asks for nothing beyond the window's minimum off-time;
    /// at the top it saturates, on the long side).
    pub off_per_on: u16,
}
