//! Slow-path tuning of the on-time: input feed-forward and a frequency
//! trim. Integer arithmetic only.
//!
//! - [`OnTimeFeedForward`]: `T_on = V_out/(V_in·f)` keeps the CCM frequency
//!   `f = D/T_on` at the target whatever the input.
//! - [`FrequencyTrim`]: a slow integral loop that locks the mean switching
//!   frequency to the target by trimming the on-time:
//!   `trim ← trim − g·(T_measured − T_target)/T_target` (a long period
//!   means too low a frequency: shorten the on-time), bounded to
//!   `[min, max]`. It holds (anti-windup) while the frequency window binds,
//!   so it does not fight the guard.

use crate::error::{attempt, positive, within, ConfigError, ErrorKind};
use crate::scale::TimerClock;
use crate::tick::MAX_DURATION_TICKS;
use crate::units::{div_i64, div_u64, to_fixed_i64, Fraction, Volts, ONE};

/// Input feed-forward for the on-time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OnTimeFeedForward {
    /// `V_out·f_clock/f_target`, volt·ticks × 2¹⁶.
    volt_ticks: u64,
}

impl OnTimeFeedForward {
    /// For output `vout_v` at `f_target_hz` on `clock` (a `const fn`).
    ///
    /// Errors: `setpoint_v` or `feed_forward_hz` not positive; an on-time
    /// at 1 V input, `V_out·f_clock/f_target`, above 2²⁴ ticks (reported on
    /// `feed_forward_hz`).
    pub const fn new(
        vout_v: f32,
        f_target_hz: f32,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let vout = attempt!(positive("setpoint_v", vout_v as f64));
        let f = attempt!(positive("feed_forward_hz", f_target_hz as f64));
        let volt_ticks = to_fixed_i64(vout * clock.hz() as f64 / f, 16);
        if volt_ticks >= 1 << 40 {
            let range = ErrorKind::OutOfRange { min: 0.0, max: 16_777_216.0 };
            return Err(ConfigError::new("feed_forward_hz", range));
        }
        Ok(Self { volt_ticks: if volt_ticks < 0 { 0 } else { volt_ticks as u64 } })
    }

    /// The on-time for input `vin`, ticks, times `trim` ([`ONE`] = none);
    /// at least one tick, at most 2³¹ − 1. (Slow path: one division.)
    pub fn on_ticks(&self, vin: Volts, trim: Fraction) -> u32 {
        let vin = vin.to_bits();
        if vin <= 0 {
            return 1;
        }
        // volt_ticks < 2⁴⁰ (configuration), trim ≤ 2¹⁸: no overflow.
        let num = (self.volt_ticks * u64::from(trim)) >> 16;
        let t = div_u64(num + (vin as u64) / 2, vin as u64);
        t.clamp(1, u64::from(MAX_DURATION_TICKS)) as u32
    }
}

/// The frequency trim (see the module notes).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrequencyTrim {
    /// Target period, ticks.
    target_period: u32,
    /// Gain per update, min and max bounds and the trim itself, [`Fraction`]s.
    gain: Fraction,
    min: Fraction,
    max: Fraction,
    trim: Fraction,
}

/// `x` in (0, 65 536) as a [`Fraction`] (configuration).
const fn fraction(x: f64) -> Fraction {
    to_fixed_i64(x, 16) as Fraction
}

impl FrequencyTrim {
    /// Trim toward `f_target_hz` on `clock` with gain `gain` per update
    /// (0 < gain ≤ 1), within `[min, max]` (0 < min ≤ 1 ≤ max ≤ 4) (a
    /// `const fn`).
    ///
    /// Errors: `feed_forward_hz` not positive or below one period per
    /// tick; `trim_gain`, `trim_min`, `trim_max` out of their ranges.
    pub const fn new(
        f_target_hz: f32,
        gain: f32,
        min: f32,
        max: f32,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let target = attempt!(clock.period_ticks_for("feed_forward_hz", f_target_hz as f64)).raw;
        let gain = attempt!(within("trim_gain", gain as f64, 1.0 / 65_536.0, 1.0));
        let min = attempt!(within("trim_min", min as f64, 1.0 / 65_536.0, 1.0));
        let max = attempt!(within("trim_max", max as f64, 1.0, 4.0));
        Ok(Self {
            target_period: target,
            gain: fraction(gain),
            min: fraction(min),
            max: fraction(max),
            trim: ONE,
        })
    }

    /// The trim factor now ([`Fraction`], [`ONE`] = none).
    pub const fn trim(&self) -> Fraction {
        self.trim
    }

    /// One update with a window's `cycles` and their summed periods
    /// (ticks); `binding`: the window's limits acted, hold. Returns the
    /// trim.
    pub fn update(&mut self, cycles: u32, period_ticks: u32, binding: bool) -> Fraction {
        if cycles == 0 || binding {
            return self.trim;
        }
        let target = i64::from(cycles) * i64::from(self.target_period);
        // (T − T₀)/T₀ as a Fraction, positive for too long a period.
        let error = div_i64((i64::from(period_ticks) - target) << 16, target);
        let step = (error * i64::from(self.gain)) >> 16;
        // Bounds as max/min, not `clamp`: nothing here may panic.
        let trim = (i64::from(self.trim) - step).max(i64::from(self.min)).min(i64::from(self.max));
        self.trim = trim as Fraction;
        self.trim
    }
}
