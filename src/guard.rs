//! Frequency-window guard: timing limits wrapped around any [`Law`].
//!
//! The guard sits between a law and the gate driver and enforces, in timer
//! ticks:
//!
//! - minimum on-time (the switch must fully turn on; blanking of the sensed
//!   signal after the edge);
//! - minimum off-time (bootstrap refresh; diode recovery);
//! - maximum on-time (dropout at low input, a stuck sensor that always asks
//!   for "on");
//! - minimum period `1/f_max` (switching losses, the EMI band above);
//! - maximum period `1/f_min` (the audible band below), with a
//!   [`LightLoad`] policy for what to do when the law stops switching.
//!
//! It only ever *delays* a turn-on or *delays/forces* a turn-off; it never
//! inverts the law's demand except for the forced pulse of
//! [`LightLoad::ForcedPulse`] and the forced turn-off at maximum on-time.
//! Each limit that acts is counted in [`ClampCounts`] (once per switching
//! cycle and reason), for telemetry.
//!
//! During the soft-start of a law whose reference firmware cannot move
//! (the analog retrofit), the supervisor may bound each pulse further
//! ([`Regulate::limit_pulses`]): a shorter maximum on-time, and a longer
//! minimum off-time, in proportion to that maximum on-time. Those turn-offs
//! count as maximum-on-time clamps, those waits as minimum-off-time ones.
//!
//! Timing is wrap-safe: each edge sets the deadlines of the state it
//! enters (the ends of the minimum and maximum on-time at a turn-on; the
//! earliest next turn-on at a turn-off), each call compares `now` with them
//! through wrapping differences, and "limit already met" facts are latched,
//! so the guard stays correct as long as it is called at least once every
//! 2³¹ ticks. It asks to be woken
//! ([`Command::wake`]) at every deadline it depends on, which keeps that true
//! even in edge mode on an idle converter.

use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::law::{Command, Conditions, Event, Gate, Law, LockState, PulseLimit, Regulate};
use crate::scale::TimerClock;
use crate::tick::{earliest, Instant};
use core::ops::ControlFlow;

/// What the guard does when the law has not switched for longer than
/// `1/f_min`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(rename_all = "kebab-case"))]
pub enum LightLoad {
    /// Count the long period in [`ClampCounts::slow_periods`] and leave the
    /// gate alone. Right for a non-synchronous buck, whose light-load pulse
    /// skipping cannot be avoided without pushing the output up.
    ReportOnly,
    /// Also issue a pulse of minimum on-time when a period would exceed
    /// `1/f_min`. The pulse delivers energy the load must absorb: the
    /// output needs a minimum load (a bleeder), or a synchronous stage that
    /// can return the energy. Without one the output rises until the
    /// over-voltage protection acts.
    ForcedPulse,
    /// Make each pulse smaller as the load falls, so the loop must switch
    /// more often: the stack's slow path lowers the current limit's cap
    /// while periods run long ([`crate::stack::light_load`]), and turns on
    /// forced pulses only once the cap has reached its floor. The guard
    /// itself reports long periods, as [`LightLoad::ReportOnly`] does.
    SmallerPulses,
}

/// Guard limits in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct WindowConfig {
    /// Lowest switching frequency, Hz (> 0); sets the maximum period.
    pub f_min_hz: f32,
    /// Highest switching frequency, Hz (> `f_min_hz`); sets the minimum
    /// period.
    pub f_max_hz: f32,
    /// Minimum on-time, seconds (at least one tick: a forced pulse must
    /// last).
    pub min_on_s: f32,
    /// Minimum off-time, seconds (at least one tick: a turn-off forced at the
    /// maximum on-time must leave the gate off for a while).
    pub min_off_s: f32,
    /// Maximum on-time, seconds (≥ `min_on_s`, at least one tick).
    pub max_on_s: f32,
    /// What to do below `f_min_hz`.
    pub light_load: LightLoad,
}

impl WindowConfig {
    /// The window of the crate's demo: 20 kHz to 140 kHz.
    ///
    /// - 20 kHz: above the audible band, whose upper end is commonly taken
    ///   as 20 kHz (common practice).
    /// - 140 kHz: keeps the switching fundamental below 150 kHz, where the
    ///   conducted-emission limits of CISPR 32 (and CISPR 11/22 before it)
    ///   begin; the margin covers timer and clock tolerance.
    /// - 150 ns minimum on-time, 300 ns minimum off-time and 40 µs maximum
    ///   on-time are demo values for a small MOSFET with a bootstrap driver.
    /// - Light load: [`LightLoad::SmallerPulses`].
    pub const fn demo() -> Self {
        Self {
            f_min_hz: 20_000.0,
            f_max_hz: 140_000.0,
            min_on_s: 150e-9,
            min_off_s: 300e-9,
            max_on_s: 40e-6,
            light_load: LightLoad::SmallerPulses,
        }
    }
}

/// Guard limits in timer ticks (`u32`, scaling `ticks = round(s · f_clock)`,
/// each at most 2³¹ − 1).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Window {
    /// Minimum on-time, ticks (≥ 1).
    pub min_on: u32,
    /// Minimum off-time, ticks (≥ 1).
    pub min_off: u32,
    /// Maximum on-time, ticks (≥ 1, ≥ `min_on`).
    pub max_on: u32,
    /// Minimum period (`1/f_max`), ticks (≥ 1).
    pub min_period: u32,
    /// Maximum period (`1/f_min`), ticks (> `min_period`, > `min_on + min_off`).
    pub max_period: u32,
    /// Light-load policy.
    pub light_load: LightLoad,
}

impl Window {
    /// Convert and check a [`WindowConfig`] for a timer clock.
    ///
    /// Errors name the field: not finite or not positive; `f_min_hz` not
    /// below `f_max_hz` ([`ErrorKind::NotBelow`], also when both round to
    /// the same period); a time that rounds to zero ticks
    /// ([`ErrorKind::BelowResolution`]) or exceeds 2³¹ − 1 ticks;
    /// `min_on_s` above `max_on_s`; `min_on_s` + `min_off_s` not below the
    /// longest period `1/f_min_hz` (reported on `min_off_s`).
    pub const fn new(config: &WindowConfig, clock: &TimerClock) -> Result<Self, ConfigError> {
        let f_min = attempt!(positive("f_min_hz", config.f_min_hz as f64));
        let f_max = attempt!(positive("f_max_hz", config.f_max_hz as f64));
        if f_min >= f_max {
            return Err(ConfigError::new("f_min_hz", ErrorKind::NotBelow("f_max_hz")));
        }
        let min_on = attempt!(clock.ticks_nonzero_for("min_on_s", config.min_on_s as f64)).raw;
        let min_off = attempt!(clock.ticks_nonzero_for("min_off_s", config.min_off_s as f64)).raw;
        let max_on = attempt!(clock.ticks_nonzero_for("max_on_s", config.max_on_s as f64)).raw;
        if min_on > max_on {
            return Err(ConfigError::new("min_on_s", ErrorKind::NotBelow("max_on_s")));
        }
        let min_period = attempt!(clock.period_ticks_for("f_max_hz", f_max)).raw;
        let max_period = attempt!(clock.period_ticks_for("f_min_hz", f_min)).raw;
        if max_period <= min_period {
            return Err(ConfigError::new("f_min_hz", ErrorKind::NotBelow("f_max_hz")));
        }
        if min_on as u64 + min_off as u64 >= max_period as u64 {
            return Err(ConfigError::new(
                "min_off_s",
                ErrorKind::NotBelow("1/f_min_hz - min_on_s"),
            ));
        }
        Ok(Self { min_on, min_off, max_on, min_period, max_period, light_load: config.light_load })
    }
}

/// How often each limit acted, counted once per switching cycle and reason.
/// Counters wrap at 2³².
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize))]
pub struct ClampCounts {
    /// Turn-offs delayed to the minimum on-time.
    pub min_on: u32,
    /// Turn-ons delayed by the minimum off-time.
    pub min_off: u32,
    /// Turn-offs forced at the maximum on-time.
    pub max_on: u32,
    /// Turn-ons delayed by the minimum period (frequency capped at f_max).
    pub min_period: u32,
    /// Periods that ran past the maximum period (frequency below f_min).
    pub slow_periods: u32,
    /// Pulses issued by [`LightLoad::ForcedPulse`].
    pub forced_pulses: u32,
}

/// A [`Law`] wrapped in the frequency window.
#[derive(Clone, Debug)]
pub struct FrequencyGuard<L> {
    inner: L,
    window: Window,
    gate: Gate,
    rise: Instant,
    fall: Instant,
    // Set at each turn-on: the ends of the minimum and maximum on-time and
    // of the maximum period.
    min_on_end: Instant,
    max_on_end: Instant,
    max_period_end: Instant,
    // Set at each turn-off: the earliest turn-on, with both the minimum
    // off-time and the minimum period met.
    turn_on_at: Instant,
    // `turn_on_at` reached (latched).
    may_turn_on: bool,
    slow_noted: bool,
    pulse_due: bool,
    // Forced pulses on: `LightLoad::ForcedPulse`, or the slow path's last
    // resort under `SmallerPulses`.
    forced_pulses: bool,
    on_clamp_noted: bool,
    off_clamp_noted: bool,
    // The maximum on-time and minimum off-time in force, ticks: the
    // window's, or a start-up pulse limit's (each ≥ 1).
    max_on: u32,
    min_off: u32,
    counts: ClampCounts,
}

impl<L: Law> FrequencyGuard<L> {
    /// Wrap `inner`. The gate starts off, with every "since the last edge"
    /// limit already met, so the first turn-on is not delayed.
    pub const fn new(inner: L, window: Window) -> Self {
        Self {
            inner,
            window,
            gate: Gate::Off,
            rise: Instant(0),
            fall: Instant(0),
            min_on_end: Instant(0),
            max_on_end: Instant(0),
            max_period_end: Instant(0),
            turn_on_at: Instant(0),
            may_turn_on: true,
            slow_noted: true,
            pulse_due: false,
            forced_pulses: matches!(window.light_load, LightLoad::ForcedPulse),
            on_clamp_noted: false,
            off_clamp_noted: false,
            max_on: window.max_on,
            min_off: window.min_off,
            counts: ClampCounts {
                min_on: 0,
                min_off: 0,
                max_on: 0,
                min_period: 0,
                slow_periods: 0,
                forced_pulses: 0,
            },
        }
    }

    /// The wrapped law.
    pub const fn inner(&self) -> &L {
        &self.inner
    }

    /// The wrapped law, mutable (slow-path retuning).
    pub fn inner_mut(&mut self) -> &mut L {
        &mut self.inner
    }

    /// The limits in force.
    pub const fn window(&self) -> &Window {
        &self.window
    }

    /// Gate state the guard last commanded.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// Clamp counters since construction or the last [`take_counts`](Self::take_counts).
    pub const fn counts(&self) -> &ClampCounts {
        &self.counts
    }

    /// Slow path: issue forced pulses below `f_min` or not (the last resort
    /// of [`LightLoad::SmallerPulses`]; [`LightLoad::ForcedPulse`] starts
    /// with them on).
    pub fn set_forced_pulses(&mut self, on: bool) {
        self.forced_pulses = on;
    }

    /// Read and zero the clamp counters (slow path, telemetry).
    pub fn take_counts(&mut self) -> ClampCounts {
        core::mem::take(&mut self.counts)
    }

    #[inline(always)]
    fn switch_on(&mut self, now: Instant) {
        self.gate = Gate::On;
        self.time_rise(now);
        self.slow_noted = false;
        self.pulse_due = false;
        self.on_clamp_noted = false;
        self.inner.on_gate(Gate::On, now);
    }

    #[inline(never)]
    fn switch_off(&mut self, now: Instant) {
        self.gate = Gate::Off;
        self.time_fall(now);
        self.may_turn_on = false;
        self.off_clamp_noted = false;
        self.inner.on_gate(Gate::Off, now);
    }

    /// The turn-on's deadlines, from the rise at `at`.
    #[inline(always)]
    fn time_rise(&mut self, at: Instant) {
        self.rise = at;
        self.min_on_end = at.after(self.window.min_on);
        self.max_on_end = at.after(self.max_on);
        self.max_period_end = at.after(self.window.max_period);
    }

    /// The earliest next turn-on, from the fall at `at`: the later of the
    /// minimum off-time's end and the minimum period's.
    #[inline(always)]
    fn time_fall(&mut self, at: Instant) {
        self.fall = at;
        let period_left = self.window.min_period.saturating_sub(at.ticks_since(self.rise));
        self.turn_on_at = at.after(self.min_off.max(period_left));
    }

    /// The gate is on: a command, or `Continue(demand)` after a turn-off
    /// here, for [`while_off`](Self::while_off) to judge at once (one
    /// inlined copy of it for every path that reaches it).
    #[inline(always)]
    fn while_on(&mut self, demand: Gate, now: Instant) -> ControlFlow<Command, Gate> {
        if now.has_reached(self.max_on_end) {
            self.counts.max_on = self.counts.max_on.wrapping_add(1);
            self.switch_off(now);
            return ControlFlow::Continue(demand);
        }
        if demand.is_on() {
            return ControlFlow::Break(Command::until(Gate::On, self.max_on_end));
        }
        if now.has_reached(self.min_on_end) {
            self.switch_off(now);
            // A law may already ask for the next pulse (an on-time law on
            // a comparator, its output still below the reference): it then
            // waits for the minimum off-time, not for a sample.
            let next = if self.inner.asks_on_after_off() { Gate::On } else { Gate::Off };
            return ControlFlow::Continue(next);
        }
        if !self.on_clamp_noted {
            self.on_clamp_noted = true;
            self.counts.min_on = self.counts.min_on.wrapping_add(1);
        }
        ControlFlow::Break(Command::until(Gate::On, self.min_on_end))
    }

    #[inline(always)]
    fn while_off(&mut self, demand: Gate, now: Instant) -> Command {
        // Latched: test before computing, so a met limit costs one load.
        if !self.may_turn_on {
            self.may_turn_on = now.has_reached(self.turn_on_at);
        }
        if demand.is_on() {
            return self.turn_on_when_allowed(now);
        }
        if !self.slow_noted {
            if !now.has_reached(self.max_period_end) {
                return Command::until(Gate::Off, self.max_period_end);
            }
            self.slow_noted = true;
            self.counts.slow_periods = self.counts.slow_periods.wrapping_add(1);
            self.pulse_due = self.forced_pulses;
        }
        if self.pulse_due {
            return self.forced_pulse(now);
        }
        Command::hold(Gate::Off)
    }

    #[inline(always)]
    fn turn_on_when_allowed(&mut self, now: Instant) -> Command {
        if self.may_turn_on {
            self.switch_on(now);
            return Command::until(Gate::On, self.max_on_end);
        }
        if !self.off_clamp_noted {
            self.off_clamp_noted = true;
            if now.ticks_since(self.fall) >= self.min_off {
                self.counts.min_period = self.counts.min_period.wrapping_add(1);
            } else {
                self.counts.min_off = self.counts.min_off.wrapping_add(1);
            }
        }
        Command::until(Gate::Off, self.turn_on_at)
    }

    /// Light-load pulse: wait out the minimum off-time, then pulse for the
    /// minimum on-time (the law still asks for "off", so the next call after
    /// `min_on` ends it).
    #[inline(always)]
    fn forced_pulse(&mut self, now: Instant) -> Command {
        // Past the maximum period the minimum period is met: only the
        // minimum off-time can still hold the turn-on.
        if !self.may_turn_on {
            return Command::until(Gate::Off, self.turn_on_at);
        }
        self.counts.forced_pulses = self.counts.forced_pulses.wrapping_add(1);
        self.switch_on(now);
        self.on_clamp_noted = true;
        Command::until(Gate::On, self.min_on_end)
    }

    #[inline(always)]
    fn filter(&mut self, demand: Command, now: Instant) -> Command {
        let before = self.gate;
        let off_demand = match self.gate {
            Gate::On => self.while_on(demand.gate, now),
            Gate::Off => ControlFlow::Continue(demand.gate),
        };
        let guarded = match off_demand {
            ControlFlow::Break(command) => command,
            ControlFlow::Continue(gate) => self.while_off(gate, now),
        };
        // After an edge the law has seen `on_gate`: its deadline (an
        // on-time's end, say) is fresh only now.
        let inner_wake =
            if self.gate == before { demand.wake } else { self.inner.on_timer(now).wake };
        Command { gate: guarded.gate, wake: earliest(now, guarded.wake, inner_wake) }
    }
}

// The three entry points are forced inline: each is the law's call and the
// filter, and an outer stage (a supervisor) then compiles into one body with
// them rather than calling out and passing the command through memory.
impl<L: Law> Law for FrequencyGuard<L> {
    #[inline(always)]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        let demand = self.inner.on_sample(code, now);
        self.filter(demand, now)
    }

    #[inline(always)]
    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        let demand = self.inner.on_edge(level, now);
        self.filter(demand, now)
    }

    #[inline(always)]
    fn on_timer(&mut self, now: Instant) -> Command {
        let demand = self.inner.on_timer(now);
        self.filter(demand, now)
    }

    /// The law's answer to any event, then the filter: one copy of it.
    #[inline(always)]
    fn on_event(&mut self, event: Event, now: Instant) -> Command {
        let demand = self.inner.on_event(event, now);
        self.filter(demand, now)
    }

    /// The window's minimum on-time.
    fn min_on_ticks(&self) -> u32 {
        self.window.min_on
    }

    fn comparator_code(&self) -> Option<u16> {
        self.inner.comparator_code()
    }

    /// An outer stage (a supervisor) switched the gate itself, e.g. a fault
    /// turn-off: the guard times its limits from that edge.
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        if gate != self.gate {
            match gate {
                Gate::On => self.switch_on(at),
                Gate::Off => self.switch_off(at),
            }
        }
    }

    /// The window's limits count from the edge at `at`; so does the law.
    fn edge_at(&mut self, at: Instant) {
        match self.gate {
            Gate::On => self.time_rise(at),
            Gate::Off => self.time_fall(at),
        }
        self.may_turn_on = false;
        self.inner.edge_at(at);
    }
}

impl<L: Regulate> Regulate for FrequencyGuard<L> {
    fn reference_code(&self) -> u16 {
        self.inner.reference_code()
    }

    fn set_reference(&mut self, code: u16) {
        self.inner.set_reference(code);
    }

    fn retune(&mut self, conditions: &Conditions) {
        self.inner.retune(conditions);
    }

    fn frequency_lock(&self) -> Option<LockState> {
        self.inner.frequency_lock()
    }

    fn follows_reference(&self) -> bool {
        self.inner.follows_reference()
    }

    /// From the next edge: the shorter of `limit`'s and the window's
    /// maximum on-time (never below the window's minimum on-time), and as
    /// minimum off-time the longer of the window's and `limit`'s off-time
    /// per on-time times that maximum on-time (held within 2¹⁶ − 1 ticks,
    /// so the product stays in 32 bits): a pulse ended early waits as long
    /// as a full one, on the safe side. `None` restores the window's.
    fn limit_pulses(&mut self, limit: Option<PulseLimit>) {
        let w = &self.window;
        (self.max_on, self.min_off) = match limit {
            Some(p) => {
                let max_on = p.max_on.min(w.max_on).max(w.min_on);
                let reset = (max_on.min(0xffff) * u32::from(p.off_per_on)) >> 8;
                (max_on, w.min_off.max(reset))
            }
            None => (w.max_on, w.min_off),
        };
    }
}
