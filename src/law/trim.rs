//! The mean-frequency integrator of the slow path: a slow integral loop
//! that locks the mean switching frequency to a target by scaling what
//! sets a cycle's length (the on-time of [`OnTime`](super::OnTime), the
//! band of [`Hysteretic`](super::Hysteretic)):
//! `trim ← trim − g·(T_measured − T_target)/T_target` (a long period means
//! too low a frequency: shorten the on-time, narrow the band), bounded to
//! `[min, max]`. It holds (anti-windup) while the frequency window binds,
//! so it does not fight the guard. Integer arithmetic only; one division
//! per housekeeping window.

use super::LockState;
use crate::error::{attempt, within, ConfigError};
use crate::scale::TimerClock;
use crate::units::{div_i64, to_fixed_i64, Fraction, ONE};

/// The frequency trim (see the module notes).
///
/// The trim factor is a [`Fraction`] (unsigned Q16.16, [`ONE`] = 1),
/// within `[min, max]` ⊂ (0, 4].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrequencyTrim {
    /// Target period, ticks.
    target_period: u32,
    /// Target frequency, Hz (rounded).
    target_hz: u32,
    /// Gain per update, min and max bounds and the trim itself, [`Fraction`]s.
    gain: Fraction,
    min: Fraction,
    max: Fraction,
    trim: Fraction,
}

/// The hysteretic band lock's gain per housekeeping window (demo value;
/// see [`FrequencyTrim::band_lock`]).
pub const BAND_LOCK_GAIN: f32 = 0.25;
/// Narrowest band the lock may set, a fraction of the configured band (at
/// least one ADC code a side in any case).
pub const BAND_LOCK_MIN: f32 = 0.125;
/// Widest band the lock may set, a multiple of the configured band.
pub const BAND_LOCK_MAX: f32 = 2.0;

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
        Self::named("feed_forward_hz", f_target_hz, gain, min, max, clock)
    }

    /// As [`new`](Self::new), with the target frequency's errors reported
    /// on `target_parameter` (the hysteretic law's `lock_hz`, say).
    pub const fn named(
        target_parameter: &'static str,
        f_target_hz: f32,
        gain: f32,
        min: f32,
        max: f32,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let target = attempt!(clock.period_ticks_for(target_parameter, f_target_hz as f64)).raw;
        let gain = attempt!(within("trim_gain", gain as f64, 1.0 / 65_536.0, 1.0));
        let min = attempt!(within("trim_min", min as f64, 1.0 / 65_536.0, 1.0));
        let max = attempt!(within("trim_max", max as f64, 1.0, 4.0));
        Ok(Self {
            target_period: target,
            target_hz: (f_target_hz as f64 + 0.5) as u32,
            gain: fraction(gain),
            min: fraction(min),
            max: fraction(max),
            trim: ONE,
        })
    }

    /// The hysteretic law's band lock to `lock_hz` on `clock`: gain
    /// [`BAND_LOCK_GAIN`], the band within [`BAND_LOCK_MIN`] …
    /// [`BAND_LOCK_MAX`] times the configured one; errors name `lock_hz`
    /// (the scenario key) (a `const fn`).
    pub const fn band_lock(lock_hz: f32, clock: &TimerClock) -> Result<Self, ConfigError> {
        Self::named("lock_hz", lock_hz, BAND_LOCK_GAIN, BAND_LOCK_MIN, BAND_LOCK_MAX, clock)
    }

    /// The target frequency, Hz (rounded to a whole hertz).
    pub const fn target_hz(&self) -> u32 {
        self.target_hz
    }

    /// One full step down (the trim less its gain, bounded): for a window
    /// whose frequency is known to be too low without a measurable mean
    /// (a period past the window's longest). Returns the trim.
    pub fn step_down(&mut self) -> Fraction {
        self.trim = self.trim.saturating_sub(self.gain).max(self.min);
        self.trim
    }

    /// Its target and whether the trim sits at a bound (`pulses_cut`
    /// false: the law that runs the trim knows its pulses).
    pub const fn state(&self) -> LockState {
        LockState {
            target_hz: self.target_hz,
            at_min: self.trim <= self.min,
            at_max: self.trim >= self.max,
            pulses_cut: false,
            cut_reported: false,
        }
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
