//! Constant on-time (COT) law: turn on when the sensed output falls to the
//! reference (the valley), stay on for a set time.
//!
//! The turn-on decision is one integer compare per sample (or a comparator
//! edge: an on-time that ends with the comparator still below the
//! reference asks for the next pulse at once, as a sample there would);
//! the on-time is a tick count that a timer deadline ends
//! ([`Command::wake`]). The law times its on-time from the real turn-on
//! ([`Law::on_gate`]), so a guard delaying the turn-on does not shorten it.
//! The minimum off-time is the guard's job.
//!
//! On the slow path ([`Regulate::retune`]) the on-time follows the input
//! (feed-forward, [`OnTimeFeedForward`]) and a trim that locks the mean
//! frequency to a target ([`FrequencyTrim`]); the reference can be trimmed
//! so the *mean* output, not the valley, sits at the setpoint
//! ([`crate::law::DcCorrection`]). A ceramic-only output needs
//! [`EmulatedRipple`].

use super::{
    Command, Conditions, EmulatedRipple, FrequencyTrim, Gate, Law, LockState, OnTimeFeedForward,
    Regulate,
};
use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::part::{self, Part};
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::Instant;
use crate::units::ONE;

/// On-time law settings, SI units, at the sensed output.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct OnTimeConfig {
    /// Output reference (the valley the law turns on at), V.
    pub setpoint_v: f32,
    /// Initial on-time, s (at least one tick).
    pub on_time_s: f32,
}

/// The on-time law.
///
/// Reference: `u16` ADC code of the sensed output (format of the configured
/// channel). On-time: `u32` timer ticks, ≥ 1, ≤ 2³¹ − 1.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OnTime {
    reference: u16,
    full_scale: u16,
    on_ticks: u32,
    gate_on: bool,
    on_since: Instant,
    // End of the present on-time: `on_since` + the on-time at the turn-on.
    on_until: Instant,
    off_since: Instant,
    demand: Gate,
    // Edge input: the comparator's last level said the output is below
    // the reference (an on-time that ends there asks for the next at once).
    below: bool,
    ripple: Part<EmulatedRipple, { part::EMULATED_RIPPLE }>,
    ripple_peak: u32,
    predicted: Option<Instant>,
    feed_forward: Part<OnTimeFeedForward, { part::FEED_FORWARD }>,
    trim: Part<FrequencyTrim, { part::FREQUENCY_LOCK }>,
}

impl OnTime {
    /// Build the law (a `const fn`).
    ///
    /// Errors: `setpoint_v` not positive or outside the channel's range;
    /// `on_time_s` rounding to zero ticks or too long.
    pub const fn new(
        config: &OnTimeConfig,
        adc: &AdcChannel,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let setpoint = attempt!(positive("setpoint_v", config.setpoint_v as f64));
        let reference = attempt!(adc.code_for("setpoint_v", setpoint)).raw;
        let on_ticks = attempt!(clock.ticks_nonzero_for("on_time_s", config.on_time_s as f64)).raw;
        Ok(Self {
            reference,
            full_scale: adc.full_scale_code(),
            on_ticks,
            gate_on: false,
            on_since: Instant(0),
            on_until: Instant(0),
            off_since: Instant(0),
            demand: Gate::Off,
            below: false,
            ripple: Part::none(),
            ripple_peak: 0,
            predicted: None,
            feed_forward: Part::none(),
            trim: Part::none(),
        })
    }

    /// Add emulated ripple (configuration). Feature `emulated-ripple`.
    #[cfg(feature = "emulated-ripple")]
    pub const fn with_emulated_ripple(mut self, ripple: EmulatedRipple) -> Self {
        self.ripple = Part::some(ripple);
        self
    }

    /// Add input feed-forward of the on-time (configuration); the slow path
    /// applies it in [`Regulate::retune`]. Feature `feed-forward`.
    #[cfg(feature = "feed-forward")]
    pub const fn with_feed_forward(mut self, feed_forward: OnTimeFeedForward) -> Self {
        self.feed_forward = Part::some(feed_forward);
        self
    }

    /// Add a frequency trim of the feed-forward on-time (configuration).
    /// Feature `frequency-lock`.
    #[cfg(feature = "frequency-lock")]
    pub const fn with_trim(mut self, trim: FrequencyTrim) -> Self {
        self.trim = Part::some(trim);
        self
    }

    /// The emulated ripple, mutable.
    pub fn emulated_ripple_mut(&mut self) -> Option<&mut EmulatedRipple> {
        self.ripple.get_mut()
    }

    /// The frequency trim, if configured.
    pub const fn frequency_trim(&self) -> Option<&FrequencyTrim> {
        self.trim.get()
    }

    /// Whether the plain valley loop (no emulated ripple) is stable with an
    /// output capacitor of `c_f` and ESR `esr_ohm` at on-time `on_time_s`:
    /// the ESR's ripple, in phase with the inductor current, must dominate
    /// the capacitor's own, which lags it; the usual condition for valley
    /// on-time control is `ESR·C > T_on/2` (from memory of the ripple-based
    /// control literature, not derived here). With emulated ripple
    /// configured the check passes.
    ///
    /// Errors: [`ErrorKind::RippleTooSmall`] on `esr_ohm`; a value not
    /// finite.
    pub const fn check_ripple(
        &self,
        esr_ohm: f32,
        c_f: f32,
        on_time_s: f32,
    ) -> Result<(), ConfigError> {
        if self.ripple.is_some() {
            return Ok(());
        }
        let esr = attempt!(crate::error::finite("esr_ohm", esr_ohm as f64));
        let c = attempt!(crate::error::finite("c_f", c_f as f64));
        let t = attempt!(crate::error::finite("on_time_s", on_time_s as f64));
        if esr * c > t / 2.0 {
            Ok(())
        } else {
            Err(ConfigError::new("esr_ohm", ErrorKind::RippleTooSmall))
        }
    }

    /// The emulated ramp now, 2⁻¹⁶ codes (fast path: one multiply).
    #[inline(always)]
    fn emulated_q16(&self, now: Instant) -> u32 {
        let Some(&r) = self.ripple.get() else { return 0 };
        if self.gate_on {
            r.rise(now.ticks_since(self.on_since))
        } else {
            self.ripple_peak.saturating_sub(r.fall(now.ticks_since(self.off_since)))
        }
    }

    /// The valley test with emulated ripple: sensed + ramp against the
    /// reference, in 2⁻¹⁶ codes; when the ramp alone will cross before the
    /// next sample, turn on at the predicted tick.
    #[inline(always)]
    fn valley_with_ripple(&mut self, r: EmulatedRipple, code: u16, now: Instant) {
        let sensed = (u32::from(code) << 16).saturating_add(self.emulated_q16(now));
        let reference = u32::from(self.reference) << 16;
        if sensed <= reference {
            self.demand = Gate::On;
        } else {
            self.predicted = r.crossing_in(sensed - reference).map(|t| now.after(t));
        }
    }

    /// The reference (the valley), ADC code.
    pub const fn reference_code(&self) -> u16 {
        self.reference
    }

    /// The on-time, ticks.
    pub const fn on_ticks(&self) -> u32 {
        self.on_ticks
    }

    /// Slow path: a new on-time, ticks (at least 1, at most 2³¹ − 1); takes
    /// effect from the next turn-on.
    pub fn set_on_ticks(&mut self, ticks: u32) {
        self.on_ticks = ticks.clamp(1, crate::tick::MAX_DURATION_TICKS);
    }

    /// What the law asks for now.
    pub const fn demand(&self) -> Gate {
        self.demand
    }

    /// The command for the present state: while on, a deadline at the end
    /// of the on-time.
    #[inline(always)]
    fn command(&mut self, now: Instant) -> Command {
        if self.gate_on {
            if now.has_reached(self.on_until) {
                self.demand = Gate::Off;
            }
            if self.demand.is_on() {
                return Command::until(Gate::On, self.on_until);
            }
        }
        Command::hold(self.demand)
    }
}

impl Law for OnTime {
    #[inline]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        if self.gate_on {
            return self.command(now);
        }
        let Some(&r) = self.ripple.get() else {
            // The plain valley compare; nothing is ever predicted.
            if code <= self.reference {
                self.demand = Gate::On;
            }
            return Command::hold(self.demand);
        };
        self.valley_with_ripple(r, code, now);
        match (self.demand, self.predicted) {
            (Gate::Off, Some(at)) => Command::until(Gate::Off, at),
            _ => Command::hold(self.demand),
        }
    }

    /// `level`: the comparator against the reference (true: above).
    #[inline]
    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.below = !level;
        if !self.gate_on && !level {
            self.demand = Gate::On;
        }
        self.command(now)
    }

    #[inline]
    fn on_timer(&mut self, now: Instant) -> Command {
        if let Some(at) = self.predicted {
            if !self.gate_on && now.ticks_since(at) < crate::tick::MAX_DURATION_TICKS {
                self.demand = Gate::On;
                self.predicted = None;
            }
        }
        self.command(now)
    }

    fn comparator_code(&self) -> Option<u16> {
        Some(self.reference)
    }

    #[inline]
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        if gate.is_on() {
            self.gate_on = true;
            self.on_since = at;
            self.on_until = at.after(self.on_ticks);
            self.predicted = None;
        } else {
            if self.gate_on {
                self.ripple_peak =
                    self.ripple.get().map_or(0, |r| r.rise(at.ticks_since(self.on_since)));
            }
            self.gate_on = false;
            self.off_since = at;
            // An on-time ended early (a guard or a limit) still ends; with
            // the output still below the reference (no comparator edge
            // since), the next one is due at once (the guard holds it for
            // the minimum off-time).
            self.demand = if self.below { Gate::On } else { Gate::Off };
        }
    }

    fn asks_on_after_off(&self) -> bool {
        !self.gate_on && self.demand.is_on()
    }

    /// The on-time (or the off-time) counts from `at`.
    fn edge_at(&mut self, at: Instant) {
        if self.gate_on {
            self.on_since = at;
            self.on_until = at.after(self.on_ticks);
        } else {
            self.off_since = at;
        }
    }
}

impl Regulate for OnTime {
    fn reference_code(&self) -> u16 {
        OnTime::reference_code(self)
    }

    fn set_reference(&mut self, code: u16) {
        self.reference = code.min(self.full_scale);
    }

    /// Feed-forward of the on-time from the window's mean input (times the
    /// frequency trim), and the emulated ripple's duty.
    fn frequency_lock(&self) -> Option<LockState> {
        self.trim.get().map(FrequencyTrim::state)
    }

    fn retune(&mut self, c: &Conditions) {
        let trim = match self.trim.get_mut() {
            Some(t) => t.update(c.cycles, c.period_ticks, c.window_binding || c.long_period),
            None => ONE,
        };
        if let Some(&ff) = self.feed_forward.get() {
            self.set_on_ticks(ff.on_ticks(c.vin, trim));
        }
        if let Some(r) = self.ripple.get_mut() {
            r.follow(c.vout, c.vin);
        }
    }
}
