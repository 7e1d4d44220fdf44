//! Configuration errors.
//!
//! Every value handed to a constructor is checked once, at configuration time.
//! An impossible or inconsistent value returns one of these variants; nothing
//! is clamped silently and nothing panics.

use core::fmt;

/// Why a configuration was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ConfigError {
    /// A value was NaN or infinite.
    NotFinite,
    /// ADC resolution outside 1..=16 bits.
    AdcBitsOutOfRange,
    /// ADC reference voltage not strictly positive.
    AdcReferenceNotPositive,
    /// Divider ratio (ADC-pin volts per signal volt) not strictly positive.
    DividerRatioNotPositive,
    /// ADC offset at or beyond the reference voltage in magnitude.
    AdcOffsetOutOfRange,
    /// A voltage converts to a code below 0 or above the ADC's full-scale code.
    VoltageOutsideAdcRange,
    /// Timer clock of 0 Hz.
    ClockZero,
    /// A duration was negative.
    DurationNegative,
    /// A duration needs more than 2³¹ − 1 timer ticks, beyond what wrapping
    /// tick arithmetic can compare.
    DurationTooLong,
    /// A duration that must be at least one tick rounds to zero ticks.
    DurationBelowOneTick,
    /// Output setpoint not strictly positive.
    SetpointNotPositive,
    /// Upper threshold (setpoint + half band) above the ADC's full-scale code.
    SetpointAboveAdcRange,
    /// Hysteresis band not strictly positive.
    BandNotPositive,
    /// Hysteresis band narrower than one ADC code at the ADC pin.
    BandBelowOneCode,
    /// Lower threshold (setpoint − half band) below code 0.
    ThresholdBelowAdcRange,
    /// A frequency was not strictly positive.
    FrequencyNotPositive,
    /// Minimum switching frequency at or above the maximum.
    FrequencyWindowInverted,
    /// Minimum on-time longer than the maximum on-time.
    MinOnExceedsMaxOn,
    /// Minimum on-time plus minimum off-time reach the longest allowed period
    /// (1 / f_min): the window cannot be met.
    PulsesExceedMaxPeriod,
    /// Inductance not strictly positive.
    InductanceNotPositive,
    /// Capacitance not strictly positive.
    CapacitanceNotPositive,
    /// A resistance or forward voltage was negative.
    ResistanceNegative,
    /// An observer pole outside the unit circle's interior (0 < pole < 1).
    ObserverPoleOutOfRange,
    /// The observer's model is not observable from the output voltage.
    NotObservable,
    /// A protection threshold is out of order (e.g. UVLO off above UVLO on,
    /// over-voltage below the setpoint).
    ThresholdsOutOfOrder,
    /// A current limit not strictly positive.
    CurrentLimitNotPositive,
    /// A count that must be at least one is zero.
    CountZero,
    /// The output's own ripple is too small for a plain valley on-time loop
    /// (`ESR·C` not above half the on-time): configure emulated ripple.
    RippleTooSmall,
}

impl ConfigError {
    /// A one-line description, the same text as [`fmt::Display`].
    pub const fn message(self) -> &'static str {
        match self {
            Self::NotFinite => "a value is NaN or infinite",
            Self::AdcBitsOutOfRange => "ADC resolution must be 1 to 16 bits",
            Self::AdcReferenceNotPositive => "ADC reference voltage must be positive",
            Self::DividerRatioNotPositive => "divider ratio must be positive",
            Self::AdcOffsetOutOfRange => "ADC offset must be smaller than the reference",
            Self::VoltageOutsideAdcRange => "voltage lies outside the ADC's range",
            Self::ClockZero => "timer clock must be above 0 Hz",
            Self::DurationNegative => "duration must not be negative",
            Self::DurationTooLong => "duration exceeds 2^31 - 1 timer ticks",
            Self::DurationBelowOneTick => "duration rounds to zero timer ticks",
            Self::SetpointNotPositive => "setpoint must be positive",
            Self::SetpointAboveAdcRange => "setpoint plus half band exceeds the ADC's range",
            Self::BandNotPositive => "hysteresis band must be positive",
            Self::BandBelowOneCode => "hysteresis band is narrower than one ADC code",
            Self::ThresholdBelowAdcRange => "setpoint minus half band is below ADC code 0",
            Self::FrequencyNotPositive => "frequency must be positive",
            Self::FrequencyWindowInverted => "minimum frequency must be below maximum frequency",
            Self::MinOnExceedsMaxOn => "minimum on-time exceeds maximum on-time",
            Self::PulsesExceedMaxPeriod => {
                "minimum on-time plus minimum off-time reach the longest allowed period"
            }
            Self::InductanceNotPositive => "inductance must be positive",
            Self::CapacitanceNotPositive => "capacitance must be positive",
            Self::ResistanceNegative => "resistances and forward voltages must not be negative",
            Self::ObserverPoleOutOfRange => "observer poles must lie strictly between 0 and 1",
            Self::NotObservable => "the observer cannot see the current through the output voltage",
            Self::ThresholdsOutOfOrder => "protection thresholds are out of order",
            Self::CurrentLimitNotPositive => "current limit must be positive",
            Self::CountZero => "a count must be at least one",
            Self::RippleTooSmall => "ESR times C is below half the on-time: the plain on-time loop would be unstable; add emulated ripple",
        }
    }
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.message())
    }
}

impl core::error::Error for ConfigError {}

/// Refuse NaN and infinities.
pub(crate) fn finite(x: f32) -> Result<f32, ConfigError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(ConfigError::NotFinite)
    }
}
