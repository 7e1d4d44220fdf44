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
//! clock a microcontroller has. Every function here is a `const fn`: a
//! firmware evaluates its configuration at compile time and carries only the
//! raw results, with no floating-point code linked (run at start-up
//! instead, on a core without a double-precision FPU, it costs a few
//! microseconds and the soft-float routines' flash).

use crate::error::{attempt, finite, positive, ConfigError, ErrorKind};
use crate::math::config::round;
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
    /// - `bits`: resolution, 1..=16 (`adc_bits`).
    /// - `reference_v`: ADC reference (full scale), volts, > 0
    ///   (`adc_reference_v`).
    /// - `ratio`: volts at the ADC pin per volt of the sensed signal (a
    ///   divider `R2/(R1+R2)` or an amplifier gain), > 0 (`divider_ratio`).
    /// - `offset_v`: volts added at the pin (level shift or measured offset
    ///   error), `|offset_v| < reference_v` (`adc_offset_v`).
    ///
    /// Errors name the parameter in brackets above.
    pub const fn new(
        bits: u8,
        reference_v: f32,
        ratio: f32,
        offset_v: f32,
    ) -> Result<Self, ConfigError> {
        if bits < 1 || bits > 16 {
            let range = ErrorKind::OutOfRange { min: 1.0, max: 16.0 };
            return Err(ConfigError::new("adc_bits", range));
        }
        attempt!(positive("adc_reference_v", reference_v as f64));
        attempt!(positive("divider_ratio", ratio as f64));
        attempt!(finite("adc_offset_v", offset_v as f64));
        if offset_v.abs() >= reference_v {
            let range = ErrorKind::OutOfRange { min: -reference_v, max: reference_v };
            return Err(ConfigError::new("adc_offset_v", range));
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
    pub const fn lsb_pin_v(&self) -> f64 {
        self.reference_v as f64 / (1u32 << self.bits) as f64
    }

    /// One LSB referred to the sensed signal, volts: `LSB_pin / ratio`.
    pub const fn lsb_signal_v(&self) -> f64 {
        self.lsb_pin_v() / self.ratio as f64
    }

    /// The exact (unrounded) code for a signal voltage.
    pub const fn exact_code(&self, signal_v: f64) -> f64 {
        (signal_v * self.ratio as f64 + self.offset_v as f64) / self.lsb_pin_v()
    }

    /// The code nearest to a signal voltage.
    ///
    /// Errors (parameter `signal_v`): [`ErrorKind::NotFinite`], or
    /// [`ErrorKind::OutOfRange`] (with the channel's range in volts) when the
    /// nearest code is below 0 or above
    /// [`full_scale_code`](Self::full_scale_code).
    pub const fn to_code(&self, signal_v: f32) -> Result<Quantized<u16>, ConfigError> {
        self.code_for("signal_v", signal_v as f64)
    }

    /// [`to_code`](Self::to_code) for the named parameter.
    pub(crate) const fn code_for(
        &self,
        parameter: &'static str,
        signal_v: f64,
    ) -> Result<Quantized<u16>, ConfigError> {
        let exact = self.exact_code(attempt!(finite(parameter, signal_v)));
        let rounded = round(exact);
        if rounded < 0.0 || rounded > self.full_scale_code() as f64 {
            let range = ErrorKind::OutOfRange {
                min: self.volts_of(-0.5) as f32,
                max: self.volts_of(self.full_scale_code() as f64 + 0.5) as f32,
            };
            return Err(ConfigError::new(parameter, range));
        }
        Ok(Quantized { raw: rounded as u16, error: (rounded - exact) as f32 })
    }

    /// The signal voltage of a (fractional) code.
    const fn volts_of(&self, code: f64) -> f64 {
        (code * self.lsb_pin_v() - self.offset_v as f64) / self.ratio as f64
    }

    /// The signal voltage a code stands for (ideal converter, code centre).
    pub const fn to_volts(&self, code: u16) -> f32 {
        self.volts_of(code as f64) as f32
    }

    /// A signal-voltage *difference* in codes (offset cancels), unrounded.
    pub const fn span_codes(&self, delta_v: f64) -> f64 {
        delta_v * self.ratio as f64 / self.lsb_pin_v()
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
    /// Errors: [`ErrorKind::NotPositive`] for 0 Hz (parameter `clock_hz`).
    pub const fn new(hz: u32) -> Result<Self, ConfigError> {
        if hz == 0 {
            Err(ConfigError::new("clock_hz", ErrorKind::NotPositive))
        } else {
            Ok(Self { hz })
        }
    }

    /// Ticks per second.
    pub const fn hz(&self) -> u32 {
        self.hz
    }

    /// One tick, seconds.
    pub const fn tick_s(&self) -> f64 {
        1.0 / self.hz as f64
    }

    /// The tick count nearest to `seconds`.
    ///
    /// Errors (parameter `seconds`): [`ErrorKind::NotFinite`],
    /// [`ErrorKind::Negative`], [`ErrorKind::TooLong`] beyond 2³¹ − 1 ticks.
    pub const fn to_ticks(&self, seconds: f32) -> Result<Quantized<u32>, ConfigError> {
        self.ticks_for("seconds", seconds as f64)
    }

    /// [`to_ticks`](Self::to_ticks) for the named parameter.
    pub(crate) const fn ticks_for(
        &self,
        parameter: &'static str,
        seconds: f64,
    ) -> Result<Quantized<u32>, ConfigError> {
        let seconds = attempt!(crate::error::non_negative(parameter, seconds));
        Self::round_ticks(parameter, seconds * self.hz as f64)
    }

    const fn round_ticks(
        parameter: &'static str,
        exact: f64,
    ) -> Result<Quantized<u32>, ConfigError> {
        let rounded = round(exact);
        if rounded > MAX_DURATION_TICKS as f64 {
            return Err(ConfigError::new(parameter, ErrorKind::TooLong));
        }
        Ok(Quantized { raw: rounded as u32, error: (rounded - exact) as f32 })
    }

    /// Like [`to_ticks`](Self::to_ticks) but refuses a result of zero ticks
    /// ([`ErrorKind::BelowResolution`]).
    pub const fn to_ticks_nonzero(&self, seconds: f32) -> Result<Quantized<u32>, ConfigError> {
        self.ticks_nonzero_for("seconds", seconds as f64)
    }

    /// [`to_ticks_nonzero`](Self::to_ticks_nonzero) for the named parameter.
    pub(crate) const fn ticks_nonzero_for(
        &self,
        parameter: &'static str,
        seconds: f64,
    ) -> Result<Quantized<u32>, ConfigError> {
        let q = attempt!(self.ticks_for(parameter, seconds));
        if q.raw == 0 {
            Err(ConfigError::new(parameter, ErrorKind::BelowResolution))
        } else {
            Ok(q)
        }
    }

    /// Ticks of one period of `hz_signal`, rounded to nearest.
    ///
    /// Errors (parameter `hz_signal`): [`ErrorKind::NotPositive`] and those
    /// of [`to_ticks_nonzero`](Self::to_ticks_nonzero).
    pub const fn period_ticks(&self, hz_signal: f32) -> Result<Quantized<u32>, ConfigError> {
        self.period_ticks_for("hz_signal", hz_signal as f64)
    }

    /// [`period_ticks`](Self::period_ticks) for the named parameter.
    pub(crate) const fn period_ticks_for(
        &self,
        parameter: &'static str,
        hz_signal: f64,
    ) -> Result<Quantized<u32>, ConfigError> {
        let hz_signal = attempt!(positive(parameter, hz_signal));
        let q = attempt!(Self::round_ticks(parameter, self.hz as f64 / hz_signal));
        if q.raw == 0 {
            return Err(ConfigError::new(parameter, ErrorKind::BelowResolution));
        }
        Ok(q)
    }

    /// A tick count in seconds.
    pub const fn to_seconds(&self, ticks: u32) -> f64 {
        ticks as f64 / self.hz as f64
    }
}
