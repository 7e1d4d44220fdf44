//! Constant on-time (COT) law: turn on when the sensed output falls to the
//! reference (the valley), stay on for a set time.
//!
//! The turn-on decision is one integer compare per sample (or a comparator
//! edge); the on-time is a tick count that a timer deadline ends
//! ([`Command::wake`]). The law times its on-time from the real turn-on
//! ([`Law::on_gate`]), so a guard delaying the turn-on does not shorten it.
//! The minimum off-time is the guard's job.
//!
//! On the slow path the on-time follows the input (feed-forward,
//! [`OnTimeFeedForward`]) and a trim that locks the mean frequency to a
//! target ([`FrequencyTrim`]); the reference can be trimmed so the *mean*
//! output, not the valley, sits at the setpoint
//! ([`crate::law::DcCorrection`]).

use super::{Command, Gate, Law, Regulate};
use crate::error::{finite, ConfigError};
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::Instant;

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
    ripple: Option<EmulatedRipple>,
    ripple_peak: u32,
    predicted: Option<Instant>,
}

/// Emulated ripple added to the sensed output before the valley compare: a
/// sawtooth in phase with the inductor current, zero at each turn-on,
/// rising through the on-time, falling at the inductor's off-slope ratio
/// and floored at zero. It gives a ceramic-only output (negligible ESR) the
/// current-shaped ripple a valley loop needs.
///
/// Slopes: `u32` in 2⁻¹⁶ ADC codes per tick; each segment's ramp is one
/// 32-bit multiply (segments beyond 2¹⁶ ticks saturate the ramp).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EmulatedRipple {
    up: u32,
    down: u32,
    /// Ticks per code of the falling ramp, 2⁻⁸ ticks (≤ 2¹⁹).
    ticks_per_code: u32,
    /// Predict a crossing only this many ticks ahead (a sampling period).
    horizon: u32,
}

impl EmulatedRipple {
    /// A ramp of `amplitude_v` (at the sensed output) over the on-time
    /// `on_ticks`, falling at `duty/(1 − duty)` of that rate.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::BandNotPositive`]
    /// for a non-positive amplitude, [`ConfigError::ThresholdsOutOfOrder`]
    /// for a duty outside (0, 1).
    ///
    /// `sample_ticks`: the sampling period; while off, a sample that shows
    /// the falling ramp will cross the reference before the next sample sets
    /// a timer deadline at the predicted tick, so turn-ons are not quantized
    /// to the sampling period.
    pub fn new(
        amplitude_v: f32,
        on_ticks: u32,
        duty: f32,
        adc: &AdcChannel,
        sample_ticks: u32,
    ) -> Result<Self, ConfigError> {
        if finite(amplitude_v)? <= 0.0 {
            return Err(ConfigError::BandNotPositive);
        }
        if !(finite(duty)? > 0.0 && duty < 1.0) {
            return Err(ConfigError::ThresholdsOutOfOrder);
        }
        let codes = adc.span_codes(f64::from(amplitude_v)) as f32;
        let up = codes * 65_536.0 / on_ticks.max(1) as f32;
        let mut r = Self { up: Self::bits(up), down: 0, ticks_per_code: 0, horizon: sample_ticks };
        r.set_duty(duty);
        Ok(r)
    }

    fn bits(x: f32) -> u32 {
        if x >= u32::MAX as f32 {
            u32::MAX
        } else if x > 0.0 {
            x as u32
        } else {
            0
        }
    }

    /// Slow path: follow the duty (`V_out/V_in`) so the ramp returns to
    /// zero at the next turn-on in steady state.
    pub fn set_duty(&mut self, duty: f32) {
        if duty > 0.0 && duty < 1.0 {
            self.down = Self::bits(self.up as f32 * duty / (1.0 - duty));
            // 2²⁴ / down: ticks per code in 2⁻⁸ ticks, capped at 2¹⁹ so a
            // margin below 16 codes (in 2⁻⁸ codes) times it fits 31 bits.
            self.ticks_per_code = if self.down == 0 {
                0
            } else {
                (16_777_216.0 / self.down as f32).min(524_288.0) as u32
            };
        }
    }

    /// Ticks until the falling ramp closes a margin of `margin_q16`
    /// (2⁻¹⁶ codes), if within the horizon (fast path: one multiply).
    #[inline(always)]
    fn crossing_in(&self, margin_q16: u32) -> Option<u32> {
        let margin_q8 = (margin_q16 >> 8).min(4_095);
        let ticks = (margin_q8 * self.ticks_per_code) >> 16;
        (self.ticks_per_code != 0 && ticks < self.horizon).then_some(ticks)
    }

    #[inline(always)]
    fn ramp(rate: u32, ticks: u32) -> u32 {
        rate.saturating_mul(ticks.min(u32::from(u16::MAX)))
    }
}

impl OnTime {
    /// Build the law.
    ///
    /// Errors: [`ConfigError::SetpointNotPositive`], [`ConfigError::SetpointAboveAdcRange`],
    /// and the timer's duration errors (an on-time of zero ticks is
    /// [`ConfigError::DurationBelowOneTick`]).
    pub fn new(
        config: &OnTimeConfig,
        adc: &AdcChannel,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        if finite(config.setpoint_v)? <= 0.0 {
            return Err(ConfigError::SetpointNotPositive);
        }
        let reference =
            adc.to_code(config.setpoint_v).map_err(|_| ConfigError::SetpointAboveAdcRange)?.raw;
        let on_ticks = clock.to_ticks_nonzero(config.on_time_s)?.raw;
        Ok(Self {
            reference,
            full_scale: adc.full_scale_code(),
            on_ticks,
            gate_on: false,
            on_since: Instant(0),
            on_until: Instant(0),
            off_since: Instant(0),
            demand: Gate::Off,
            ripple: None,
            ripple_peak: 0,
            predicted: None,
        })
    }

    /// Add emulated ripple (configuration).
    pub fn with_emulated_ripple(mut self, ripple: EmulatedRipple) -> Self {
        self.ripple = Some(ripple);
        self
    }

    /// The emulated ripple, mutable (slow path: its duty).
    pub fn emulated_ripple_mut(&mut self) -> Option<&mut EmulatedRipple> {
        self.ripple.as_mut()
    }

    /// Whether the plain valley loop (no emulated ripple) is stable with an
    /// output capacitor of `c_f` and ESR `esr_ohm` at on-time `on_time_s`:
    /// the ESR's ripple, in phase with the inductor current, must dominate
    /// the capacitor's own, which lags it; the usual condition for valley
    /// on-time control is `ESR·C > T_on/2` (from memory of the ripple-based
    /// control literature, not derived here). With emulated ripple
    /// configured the check passes.
    ///
    /// Errors: [`ConfigError::RippleTooSmall`], [`ConfigError::NotFinite`].
    pub fn check_ripple(&self, esr_ohm: f32, c_f: f32, on_time_s: f32) -> Result<(), ConfigError> {
        if self.ripple.is_some() {
            return Ok(());
        }
        if finite(esr_ohm)? * finite(c_f)? > finite(on_time_s)? / 2.0 {
            Ok(())
        } else {
            Err(ConfigError::RippleTooSmall)
        }
    }

    /// The emulated ramp now, 2⁻¹⁶ codes (fast path: one multiply).
    #[inline(always)]
    fn emulated_q16(&self, now: Instant) -> u32 {
        let Some(r) = self.ripple else { return 0 };
        if self.gate_on {
            EmulatedRipple::ramp(r.up, now.ticks_since(self.on_since))
        } else {
            self.ripple_peak
                .saturating_sub(EmulatedRipple::ramp(r.down, now.ticks_since(self.off_since)))
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
        let Some(r) = self.ripple else {
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

    #[inline]
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        if gate.is_on() {
            self.gate_on = true;
            self.on_since = at;
            self.on_until = at.after(self.on_ticks);
            self.predicted = None;
        } else {
            if self.gate_on {
                self.ripple_peak = self
                    .ripple
                    .map_or(0, |r| EmulatedRipple::ramp(r.up, at.ticks_since(self.on_since)));
            }
            self.gate_on = false;
            self.off_since = at;
            // An on-time ended early (a guard or a limit) still ends.
            self.demand = Gate::Off;
        }
    }
}

impl Regulate for OnTime {
    fn reference_code(&self) -> u16 {
        self.reference
    }

    fn set_reference(&mut self, code: u16) {
        self.reference = code.min(self.full_scale);
    }
}

/// Input feed-forward for the on-time (slow path): `T_on = V_out/(V_in·f)`
/// keeps the CCM frequency `f = D/T_on` at the target whatever the input.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OnTimeFeedForward {
    /// `V_out·f_clock/f_target`, volt·ticks.
    volt_ticks: f32,
}

impl OnTimeFeedForward {
    /// For output `vout_v` at `f_target_hz` on `clock`.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::SetpointNotPositive`],
    /// [`ConfigError::FrequencyNotPositive`].
    pub fn new(vout_v: f32, f_target_hz: f32, clock: &TimerClock) -> Result<Self, ConfigError> {
        if finite(vout_v)? <= 0.0 {
            return Err(ConfigError::SetpointNotPositive);
        }
        if finite(f_target_hz)? <= 0.0 {
            return Err(ConfigError::FrequencyNotPositive);
        }
        Ok(Self { volt_ticks: vout_v * clock.hz() as f32 / f_target_hz })
    }

    /// The on-time for input `vin_v`, ticks, times `trim` (1 = none);
    /// at least one tick. (Slow path: divides.)
    pub fn on_ticks(&self, vin_v: f32, trim: f32) -> u32 {
        if vin_v.is_nan() || vin_v <= 0.0 || !trim.is_finite() {
            return 1;
        }
        let t = self.volt_ticks / vin_v * trim;
        if t >= crate::tick::MAX_DURATION_TICKS as f32 {
            crate::tick::MAX_DURATION_TICKS
        } else if t < 1.0 {
            1
        } else {
            (t + 0.5) as u32
        }
    }
}

/// A slow integral loop that locks the mean switching frequency to a target
/// by trimming the on-time: `trim ← trim − g·(T_measured − T_target)/T_target`
/// (a long period means too low a frequency: shorten the on-time), bounded
/// to `[min, max]`. It holds (anti-windup) while the frequency window binds,
/// so it does not fight the guard.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrequencyTrim {
    target_period_s: f32,
    gain: f32,
    min: f32,
    max: f32,
    trim: f32,
}

impl FrequencyTrim {
    /// Trim toward `f_target_hz` with gain `gain` per update (0 < gain ≤ 1),
    /// within `[min, max]` (0 < min ≤ 1 ≤ max).
    ///
    /// Errors: [`ConfigError::FrequencyNotPositive`], [`ConfigError::NotFinite`],
    /// [`ConfigError::ThresholdsOutOfOrder`] for bad gain or bounds.
    pub fn new(f_target_hz: f32, gain: f32, min: f32, max: f32) -> Result<Self, ConfigError> {
        if finite(f_target_hz)? <= 0.0 {
            return Err(ConfigError::FrequencyNotPositive);
        }
        let ok = finite(gain)? > 0.0
            && gain <= 1.0
            && finite(min)? > 0.0
            && min <= 1.0
            && finite(max)? >= 1.0;
        if !ok {
            return Err(ConfigError::ThresholdsOutOfOrder);
        }
        Ok(Self { target_period_s: 1.0 / f_target_hz, gain, min, max, trim: 1.0 })
    }

    /// The trim factor now.
    pub const fn trim(&self) -> f32 {
        self.trim
    }

    /// One update with the window's mean period, s (`None`: no cycle);
    /// `guard_binding`: the window's limits acted, hold. Returns the trim.
    pub fn update(&mut self, mean_period_s: Option<f32>, guard_binding: bool) -> f32 {
        if let (Some(t), false) = (mean_period_s, guard_binding) {
            if t.is_finite() && t > 0.0 {
                let error = (t - self.target_period_s) / self.target_period_s;
                self.trim = (self.trim - self.gain * error).clamp(self.min, self.max);
            }
        }
        self.trim
    }
}
