//! The simulated microcontroller's peripherals as built, against what the
//! firmware was configured with.
//!
//! A real board's ADC reads with a gain and an offset error (the divider's
//! resistor tolerances and the converter's own), and its timer runs from a
//! clock that is not exactly `clock_hz`. The firmware never knows: it is
//! built from the nominal `[mcu]` values ([`super::build`]), while the
//! engine's ADC and timer use the ones here. With the error keys at zero
//! (their default) both are the same.

use super::scenario::McuParams;
use crate::scale::AdcChannel;
use crate::ConfigError;

/// Scale a nominal divider ratio by the gain error, in the `f32` the
/// channel keeps (unchanged, bit for bit, at zero error).
fn ratio_with_gain_error(ratio: f64, gain_error: f64) -> f32 {
    (ratio * (1.0 + gain_error)) as f32
}

/// The output channel the simulated ADC converts with: the configured
/// divider and offset with `adc_gain_error` and `adc_offset_error_v` applied.
pub fn sensed_output_channel(mcu: &McuParams) -> Result<AdcChannel, ConfigError> {
    AdcChannel::new(
        mcu.adc_bits,
        mcu.adc_reference_v as f32,
        ratio_with_gain_error(mcu.divider_ratio, mcu.adc_gain_error),
        (mcu.adc_offset_v + mcu.adc_offset_error_v) as f32,
    )
}

/// The input channel the simulated ADC converts with (the same converter,
/// so the same gain and offset error).
pub fn sensed_input_channel(mcu: &McuParams) -> Result<AdcChannel, ConfigError> {
    AdcChannel::new(
        mcu.adc_bits,
        mcu.adc_reference_v as f32,
        ratio_with_gain_error(mcu.vin_divider_ratio, mcu.adc_gain_error),
        mcu.adc_offset_error_v as f32,
    )
}

/// The timer clock's true rate, Hz: `clock_hz · (1 + clock_error_ppm·10⁻⁶)`.
///
/// Everything the microcontroller counts in ticks (sample and slow-path
/// periods, conversion and latency, dead time, the firmware's deadlines)
/// keeps its tick count and so scales with it; the plant's time (profile
/// breakpoints, the run's length) does not.
pub fn true_clock_hz(mcu: &McuParams) -> f64 {
    f64::from(mcu.clock_hz) * (1.0 + mcu.clock_error_ppm * 1e-6)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sim::build::{input_channel, output_channel};
    use crate::sim::Scenario;

    #[test]
    fn zero_errors_leave_the_channels_and_clock_as_configured() {
        let mcu = Scenario::default_demo().mcu;
        assert_eq!(sensed_output_channel(&mcu), output_channel(&mcu));
        assert_eq!(sensed_input_channel(&mcu), input_channel(&mcu));
        assert_eq!(true_clock_hz(&mcu), f64::from(mcu.clock_hz));
    }

    #[test]
    fn gain_error_scales_the_reading() {
        let mut mcu = Scenario::default_demo().mcu;
        mcu.adc_gain_error = 0.01;
        let (real, nominal) = (sensed_output_channel(&mcu).unwrap(), output_channel(&mcu).unwrap());
        let ratio = real.exact_code(5.0) / nominal.exact_code(5.0);
        assert!((ratio - 1.01).abs() < 1e-6, "{ratio}");
    }
}
