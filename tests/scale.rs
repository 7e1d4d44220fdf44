//! ADC and timer scaling against the ideal converter.
//!
//! Source: W. Kester (ed.), *Data Conversion Handbook* (Analog Devices /
//! Newnes, 2005), ch. 2, "Fundamentals of sampled data systems": the ideal
//! N-bit ADC has 1 LSB = FS / 2^N, code k stands for k·LSB, and the largest
//! code 2^N − 1 stands for FS − 1 LSB.

use crate::common;

use proptest::prelude::*;
use ripplectl::{AdcChannel, ConfigError, ErrorKind, TimerClock};

#[test]
fn lsb_is_reference_over_two_to_the_n() {
    // Kester ch. 2: 1 LSB = FS / 2^N. 12 bits, 3.3 V: 805.664 µV.
    let adc = AdcChannel::new(12, 3.3, 1.0, 0.0).unwrap();
    assert!((adc.lsb_pin_v() - f64::from(3.3f32) / 4096.0).abs() < 1e-15);
    assert!((adc.lsb_pin_v() - 805.664e-6).abs() < 1e-9);
}

#[test]
fn half_scale_and_full_scale_codes() {
    // Kester ch. 2: FS/2 is code 2^(N-1); the top code is FS − 1 LSB.
    let adc = AdcChannel::new(12, 3.3, 1.0, 0.0).unwrap();
    assert_eq!(adc.to_code(1.65).unwrap().raw, 2048);
    assert_eq!(adc.full_scale_code(), 4095);
    let top = f64::from(adc.to_volts(4095));
    assert!((top - (3.3 - 3.3 / 4096.0)).abs() < 1e-6);
    // A voltage beyond FS − ½ LSB has no code.
    let e = adc.to_code(3.3).unwrap_err();
    assert_eq!(e.parameter, "signal_v");
    let ErrorKind::OutOfRange { min, max } = e.kind else { panic!("{e}") };
    // The range reported is the codes' edges in volts: −½ LSB to FS − ½ LSB.
    assert!(
        (f64::from(min) + 3.3 / 8192.0).abs() < 1e-6
            && (f64::from(max) - (3.3 - 3.3 / 8192.0)).abs() < 1e-6
    );
}

#[test]
fn divider_and_offset_refer_codes_to_the_signal() {
    // 5 V rail through a 10 k / 4.7 k divider (ratio 4.7/14.7) into a 12-bit,
    // 3.3 V ADC: V_pin = 1.5986 V, code = V_pin / LSB = 1984.3 → 1984.
    let ratio = 4.7 / 14.7;
    let adc = AdcChannel::new(12, 3.3, ratio, 0.0).unwrap();
    let q = adc.to_code(5.0).unwrap();
    assert_eq!(q.raw, 1984);
    let exact = 5.0 * f64::from(ratio) / (3.3 / 4096.0);
    assert!((f64::from(q.error) - (1984.0 - exact)).abs() < 1e-4);
    // An offset of +10 LSB moves the code by 10.
    let shifted = AdcChannel::new(12, 3.3, ratio, (10.0 * 3.3 / 4096.0) as f32).unwrap();
    assert_eq!(shifted.to_code(5.0).unwrap().raw, 1994);
}

#[test]
fn bad_channels_and_clocks_are_named() {
    fn refused<T>(p: &'static str, k: ErrorKind) -> Result<T, ConfigError> {
        Err(ConfigError::new(p, k))
    }
    let bits = ErrorKind::OutOfRange { min: 1.0, max: 16.0 };
    assert_eq!(AdcChannel::new(0, 3.3, 1.0, 0.0), refused("adc_bits", bits));
    assert_eq!(AdcChannel::new(17, 3.3, 1.0, 0.0), refused("adc_bits", bits));
    assert_eq!(
        AdcChannel::new(12, 0.0, 1.0, 0.0),
        refused("adc_reference_v", ErrorKind::NotPositive)
    );
    assert_eq!(
        AdcChannel::new(12, 3.3, -0.5, 0.0),
        refused("divider_ratio", ErrorKind::NotPositive)
    );
    let offset = ErrorKind::OutOfRange { min: -3.3, max: 3.3 };
    assert_eq!(AdcChannel::new(12, 3.3, 1.0, 3.3), refused("adc_offset_v", offset));
    assert_eq!(
        AdcChannel::new(12, f32::NAN, 1.0, 0.0),
        refused("adc_reference_v", ErrorKind::NotFinite)
    );
    assert_eq!(TimerClock::new(0), refused("clock_hz", ErrorKind::NotPositive));
    let clock = TimerClock::new(64_000_000).unwrap();
    assert_eq!(clock.to_ticks(-1e-6), refused("seconds", ErrorKind::Negative));
    assert_eq!(clock.to_ticks(40.0), refused("seconds", ErrorKind::TooLong));
    assert_eq!(clock.to_ticks_nonzero(1e-9), refused("seconds", ErrorKind::BelowResolution));
    assert_eq!(clock.period_ticks(0.0), refused("hz_signal", ErrorKind::NotPositive));
}

#[test]
fn timer_rounds_to_nearest_tick() {
    // 64 MHz: 150 ns = 9.6 ticks → 10; 1/140 kHz = 457.14 ticks → 457.
    let clock = TimerClock::new(64_000_000).unwrap();
    assert_eq!(clock.to_ticks(150e-9).unwrap().raw, 10);
    assert_eq!(clock.period_ticks(140_000.0).unwrap().raw, 457);
    assert_eq!(clock.period_ticks(20_000.0).unwrap().raw, 3200);
}

proptest! {
    #![proptest_config(common::cases(10_000))]

    /// Rounding to nearest: the code's error against the ideal transfer
    /// function is at most half a code, and the reported error is that error.
    #[test]
    fn adc_conversion_error_at_most_half_a_code(
        bits in 1u8..=16, vref in 0.5f32..5.0, ratio in 0.01f32..2.0,
        offset_frac in -0.2f32..0.2, frac in 0.0f64..1.0,
    ) {
        let adc = AdcChannel::new(bits, vref, ratio, offset_frac * vref).unwrap();
        let lsb = f64::from(vref) / f64::from(1u32 << bits);
        // A signal that lands inside the converter's range.
        let pin = frac * (f64::from(adc.full_scale_code()) + 0.49) * lsb;
        let v = ((pin - f64::from(offset_frac * vref)) / f64::from(ratio)) as f32;
        if let Ok(q) = adc.to_code(v) {
            let exact = (f64::from(v) * f64::from(ratio) + f64::from(offset_frac * vref)) / lsb;
            let err = f64::from(q.raw) - exact;
            prop_assert!(err.abs() <= 0.5 + 1e-9, "err {err}");
            prop_assert!((err - f64::from(q.error)).abs() < 1e-3);
        }
    }

    #[test]
    fn tick_conversion_error_at_most_half_a_tick(hz in 1u32..=500_000_000, s in 0.0f32..1e-2) {
        let clock = TimerClock::new(hz).unwrap();
        if let Ok(q) = clock.to_ticks(s) {
            let exact = f64::from(s) * f64::from(hz);
            prop_assert!((f64::from(q.raw) - exact).abs() <= 0.5);
        }
    }
}
