//! Conversions between SI units and raw values, done once at configuration.
//!
//! The fast path works on raw ADC codes and timer ticks only. These types turn
//! volts and seconds into those raw values, rounding to nearest, and say how
//! far the rounded value is from the exact one ([`Quantized::error`]).
//!
//! The ADC is modelled as the ideal N-bit converter: one code is
//! `V_ref / 2^N` at the ADC pin and code `k` stands for `k · LSB`, the
//! transfer function of the ideal converter in Kester (ed.), *Data Conversion
//! Handbook*, ch. 2. The sensed signal reaches the pin through a divider (or
//! gain) and an offset: `V_pin = ratio · V_signal + offset`.
//!
//! The arithmetic runs in `f64` so that rounding is exact for every timer
//! clock a microcontroller has; on cores without a double-precision FPU this
//! costs a few microseconds, once, at configuration.

use crate::error::{finite, ConfigError};
use crate::tick::MAX_DURATION_TICKS;

/// A raw value obtained by rounding, with its rounding error.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Quantized<T> {
    /// The rounded raw value (ADC code or timer ticks).
    pub raw: T,
    /// `raw − exact`, in units of the raw value (LSB or ticks);
    /// always within ±0.5.
    pub error: f32,
}

/// Round half away from zero, in f64.
fn round_nearest(x: f64) -> f64 {
    libm::round(x)
}

/// One ADC channel and the signal conditioning in front of it.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdcChannel {
    bits: u8,
    reference_v: f32,
    ratio: f32,
    offset_v: f32,
}

impl AdcChannel {
    /// Describe a channel.
    ///
    /// - `bits`: resolution, 1..=16.
    /// - `reference_v`: ADC reference (full scale), volts, > 0.
    /// - `ratio`: volts at the ADC pin per volt of the sensed signal (a
    ///   divider `R2/(R1+R2)` or an amplifier gain), > 0.
    /// - `offset_v`: volts added at the pin (level shift or measured offset
    ///   error), `|offset_v| < reference_v`.
    pub fn new(bits: u8, reference_v: f32, ratio: f32, offset_v: f32) -> Result<Self, ConfigError> {
        if !(1..=16).contains(&bits) {
            return Err(ConfigError::AdcBitsOutOfRange);
        }
        if finite(reference_v)? <= 0.0 {
            return Err(ConfigError::AdcReferenceNotPositive);
        }
        if finite(ratio)? <= 0.0 {
            return Err(ConfigError::DividerRatioNotPositive);
        }
        if finite(offset_v)?.abs() >= reference_v {
            return Err(ConfigError::AdcOffsetOutOfRange);
        }
        Ok(Self { bits, reference_v, ratio, offset_v })
    }

    /// Resolution in bits.
    pub const fn bits(&self) -> u8 {
        self.bits
    }

    /// Reference voltage, volts.
    pub const fn reference_v(&self) -> f32 {
        self.reference_v
    }

    /// Divider ratio, ADC-pin volts per signal volt.
    pub const fn ratio(&self) -> f32 {
        self.ratio
    }

    /// Offset at the ADC pin, volts.
    pub const fn offset_v(&self) -> f32 {
        self.offset_v
    }

    /// Largest code the converter returns: `2^bits − 1`.
    pub const fn full_scale_code(&self) -> u16 {
        ((1u32 << self.bits) - 1) as u16
    }

    /// One LSB at the ADC pin, volts: `V_ref / 2^bits`.
    pub fn lsb_pin_v(&self) -> f64 {
        f64::from(self.reference_v) / f64::from(1u32 << self.bits)
    }

    /// One LSB referred to the sensed signal, volts: `LSB_pin / ratio`.
    pub fn lsb_signal_v(&self) -> f64 {
        self.lsb_pin_v() / f64::from(self.ratio)
    }

    /// The exact (unrounded) code for a signal voltage.
    pub fn exact_code(&self, signal_v: f64) -> f64 {
        (signal_v * f64::from(self.ratio) + f64::from(self.offset_v)) / self.lsb_pin_v()
    }

    /// The code nearest to a signal voltage.
    ///
    /// Errors: [`ConfigError::NotFinite`], or
    /// [`ConfigError::VoltageOutsideAdcRange`] when the nearest code is below
    /// 0 or above [`full_scale_code`](Self::full_scale_code).
    pub fn to_code(&self, signal_v: f32) -> Result<Quantized<u16>, ConfigError> {
        let exact = self.exact_code(f64::from(finite(signal_v)?));
        let rounded = round_nearest(exact);
        if rounded < 0.0 || rounded > f64::from(self.full_scale_code()) {
            return Err(ConfigError::VoltageOutsideAdcRange);
        }
        Ok(Quantized { raw: rounded as u16, error: (rounded - exact) as f32 })
    }

    /// The signal voltage a code stands for (ideal converter, code centre).
    pub fn to_volts(&self, code: u16) -> f32 {
        ((f64::from(code) * self.lsb_pin_v() - f64::from(self.offset_v)) / f64::from(self.ratio))
            as f32
    }

    /// A signal-voltage *difference* in codes (offset cancels), unrounded.
    pub fn span_codes(&self, delta_v: f64) -> f64 {
        delta_v * f64::from(self.ratio) / self.lsb_pin_v()
    }
}

/// The clock of the timer that timestamps events and times gate edges.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TimerClock {
    hz: u32,
}

impl TimerClock {
    /// A timer counting at `hz` ticks per second.
    ///
    /// Errors: [`ConfigError::ClockZero`].
    pub const fn new(hz: u32) -> Result<Self, ConfigError> {
        if hz == 0 {
            Err(ConfigError::ClockZero)
        } else {
            Ok(Self { hz })
        }
    }

    /// Ticks per second.
    pub const fn hz(&self) -> u32 {
        self.hz
    }

    /// One tick, seconds.
    pub fn tick_s(&self) -> f64 {
        1.0 / f64::from(self.hz)
    }

    /// The tick count nearest to `seconds`.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::DurationNegative`],
    /// [`ConfigError::DurationTooLong`] beyond 2³¹ − 1 ticks.
    pub fn to_ticks(&self, seconds: f32) -> Result<Quantized<u32>, ConfigError> {
        if finite(seconds)? < 0.0 {
            return Err(ConfigError::DurationNegative);
        }
        Self::round_ticks(f64::from(seconds) * f64::from(self.hz))
    }

    fn round_ticks(exact: f64) -> Result<Quantized<u32>, ConfigError> {
        let rounded = round_nearest(exact);
        if rounded > f64::from(MAX_DURATION_TICKS) {
            return Err(ConfigError::DurationTooLong);
        }
        Ok(Quantized { raw: rounded as u32, error: (rounded - exact) as f32 })
    }

    /// Like [`to_ticks`](Self::to_ticks) but refuses a result of zero ticks
    /// ([`ConfigError::DurationBelowOneTick`]).
    pub fn to_ticks_nonzero(&self, seconds: f32) -> Result<Quantized<u32>, ConfigError> {
        let q = self.to_ticks(seconds)?;
        if q.raw == 0 {
            Err(ConfigError::DurationBelowOneTick)
        } else {
            Ok(q)
        }
    }

    /// Ticks of one period of `hz_signal`, rounded to nearest.
    ///
    /// Errors: [`ConfigError::FrequencyNotPositive`] and those of
    /// [`to_ticks_nonzero`](Self::to_ticks_nonzero).
    pub fn period_ticks(&self, hz_signal: f32) -> Result<Quantized<u32>, ConfigError> {
        if finite(hz_signal)? <= 0.0 {
            return Err(ConfigError::FrequencyNotPositive);
        }
        let q = Self::round_ticks(f64::from(self.hz) / f64::from(hz_signal))?;
        if q.raw == 0 {
            return Err(ConfigError::DurationBelowOneTick);
        }
        Ok(q)
    }

    /// A tick count in seconds.
    pub fn to_seconds(&self, ticks: u32) -> f64 {
        f64::from(ticks) / f64::from(self.hz)
    }
}
