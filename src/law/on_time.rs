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
    demand: Gate,
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
            demand: Gate::Off,
        })
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

    #[inline(always)]
    fn on_time_over(&self, now: Instant) -> bool {
        now.ticks_since(self.on_since) >= self.on_ticks
    }

    /// The command for the present state: while on, a deadline at the end
    /// of the on-time.
    #[inline(always)]
    fn command(&mut self, now: Instant) -> Command {
        if self.gate_on {
            if self.on_time_over(now) {
                self.demand = Gate::Off;
            }
            if self.demand.is_on() {
                return Command::until(Gate::On, self.on_since.after(self.on_ticks));
            }
        }
        Command::hold(self.demand)
    }
}

impl Law for OnTime {
    #[inline]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        if !self.gate_on && code <= self.reference {
            self.demand = Gate::On;
        }
        self.command(now)
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
        self.command(now)
    }

    #[inline]
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        self.gate_on = gate.is_on();
        if self.gate_on {
            self.on_since = at;
        } else {
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
