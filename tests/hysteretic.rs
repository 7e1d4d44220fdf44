//! Hysteretic law: fixed-point decisions against the f64 oracle.

use crate::common;

use common::{cases, ideal_adc};
use proptest::prelude::*;
use ripplectl::law::{Hysteretic, HystereticConfig, Threshold};
use ripplectl::reference::HystereticModel;
use ripplectl::{AdcChannel, ConfigError, ErrorKind, Gate, Instant, Law};

fn channel() -> impl Strategy<Value = AdcChannel> {
    (8u8..=16, 1.0f32..5.0, 0.05f32..1.0)
        .prop_map(|(bits, vref, ratio)| AdcChannel::new(bits, vref, ratio, 0.0).unwrap())
}

/// A configuration with the band inside the channel's range, plus samples
/// around it.
fn law_and_samples() -> impl Strategy<Value = (AdcChannel, HystereticConfig, Vec<f64>)> {
    channel().prop_flat_map(|adc| {
        let fs = f64::from(adc.to_volts(adc.full_scale_code()));
        let lsb = adc.lsb_signal_v();
        (0.2f64..0.8, 1.0f64..60.0).prop_flat_map(move |(mid, band_codes)| {
            let setpoint = mid * fs;
            let band = band_codes * lsb;
            let cfg = HystereticConfig { setpoint_v: setpoint as f32, band_v: band as f32 };
            let span = 2.0 * band + 4.0 * lsb;
            (Just(adc), Just(cfg), prop::collection::vec(setpoint - span..setpoint + span, 1..200))
        })
    })
}

proptest! {
    #![proptest_config(cases(10_000))]

    /// Thresholds are the nearest codes to setpoint ± band/2.
    #[test]
    fn threshold_conversion_error_at_most_half_a_code((adc, cfg, _s) in law_and_samples()) {
        if let Ok(law) = Hysteretic::new(&cfg, &adc) {
            let half = f64::from(cfg.band_v) / 2.0;
            let setpoint = f64::from(cfg.setpoint_v);
            let lo = adc.exact_code(setpoint - half);
            let hi = adc.exact_code(setpoint + half);
            prop_assert!((f64::from(law.lower_code()) - lo).abs() <= 0.5 + 1e-3, "lower");
            prop_assert!((f64::from(law.upper_code()) - hi).abs() <= 0.5 + 1e-3, "upper");
            prop_assert!(half > 0.0 && law.lower_code() < law.upper_code());
        }
    }

    /// Sampled mode: the fixed-point law decides as the f64 model except for
    /// samples within one code of a threshold (where the oracle is then
    /// re-aligned to the law, since either decision is right there).
    #[test]
    fn sampled_decisions_match_oracle((adc, cfg, samples) in law_and_samples()) {
        let Ok(mut law) = Hysteretic::new(&cfg, &adc) else { return Ok(()) };
        let mut model = HystereticModel::new(f64::from(cfg.setpoint_v), f64::from(cfg.band_v));
        let lsb = adc.lsb_signal_v();
        for (i, &v) in samples.iter().enumerate() {
            let got = law.on_sample(ideal_adc(&adc, v), Instant(i as u32)).gate.is_on();
            let want = model.sample(v);
            if got != want {
                let near = (v - model.lower_v).abs() <= lsb || (v - model.upper_v).abs() <= lsb;
                prop_assert!(near, "v={v} lower={} upper={}", model.lower_v, model.upper_v);
                model.on = got;
            }
        }
    }

    /// Edge mode: a comparator against the armed threshold drives the same
    /// decisions as the f64 model, again except within one code of a threshold.
    #[test]
    fn edge_decisions_match_oracle((adc, cfg, samples) in law_and_samples()) {
        let Ok(mut law) = Hysteretic::new(&cfg, &adc) else { return Ok(()) };
        let mut model = HystereticModel::new(f64::from(cfg.setpoint_v), f64::from(cfg.band_v));
        let lsb = adc.lsb_signal_v();
        for (i, &v) in samples.iter().enumerate() {
            // The comparator compares the signal with the DAC threshold.
            let dac_v = f64::from(adc.to_volts(law.armed_code()));
            let got = law.on_edge(v > dac_v, Instant(i as u32)).gate.is_on();
            let want = model.sample(v);
            if got != want {
                let near = (v - model.lower_v).abs() <= lsb || (v - model.upper_v).abs() <= lsb;
                prop_assert!(near, "v={v}");
                model.on = got;
            }
            let expect_armed = if got { Threshold::Upper } else { Threshold::Lower };
            prop_assert_eq!(law.armed(), expect_armed);
        }
    }
}

/// Samples, each with a flag: a current limit ends the pulse just before
/// it (when the gate is on).
fn law_samples_and_cuts() -> impl Strategy<Value = (AdcChannel, HystereticConfig, Vec<(f64, bool)>)>
{
    law_and_samples().prop_flat_map(|(adc, cfg, samples)| {
        let n = samples.len();
        (Just(adc), Just(cfg), Just(samples), prop::collection::vec(prop::bool::weighted(0.2), n))
            .prop_map(|(adc, cfg, s, cuts)| (adc, cfg, s.into_iter().zip(cuts).collect()))
    })
}

/// Drive `law` through `samples` as a stage does: the gate follows the
/// law's demand, except where a sample's flag ends a pulse first; compare
/// with the f64 model (which waits for the lower threshold after a cut),
/// except within one code of a threshold.
fn follow_with_cuts(
    law: &mut Hysteretic,
    adc: &AdcChannel,
    cfg: &HystereticConfig,
    samples: &[(f64, bool)],
    decide: impl Fn(&mut Hysteretic, f64, Instant) -> bool,
) -> Result<(), TestCaseError> {
    let mut model = HystereticModel::new(f64::from(cfg.setpoint_v), f64::from(cfg.band_v));
    let lsb = adc.lsb_signal_v();
    let mut gate = Gate::Off;
    for (i, &(v, cut)) in samples.iter().enumerate() {
        let now = Instant(i as u32);
        if cut && gate.is_on() {
            gate = Gate::Off;
            law.on_gate(Gate::Off, now);
            model.cut_short();
        }
        let got = decide(law, v, now);
        let want = model.sample(v);
        if got != want {
            let near = (v - model.lower_v).abs() <= lsb || (v - model.upper_v).abs() <= lsb;
            prop_assert!(near, "v={v} lower={} upper={}", model.lower_v, model.upper_v);
            model.on = got;
        }
        if Gate::from_bool(got) != gate {
            gate = Gate::from_bool(got);
            law.on_gate(gate, now);
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(cases(5_000))]

    /// Sampled, with pulses cut short: after a cut the next pulse waits for
    /// a sample at or below the lower threshold, as the model's.
    #[test]
    fn sampled_cut_pulses_wait_for_the_lower_threshold(
        (adc, cfg, samples) in law_samples_and_cuts()
    ) {
        let Ok(mut law) = Hysteretic::new(&cfg, &adc) else { return Ok(()) };
        follow_with_cuts(&mut law, &adc, &cfg, &samples, |law, v, now| {
            law.on_sample(ideal_adc(&adc, v), now).gate.is_on()
        })?;
    }

    /// On edges, with pulses cut short: the comparator, re-armed at the
    /// lower threshold after a cut, reports the level against it, and the
    /// law decides as the model.
    #[test]
    fn edge_cut_pulses_wait_for_the_lower_threshold(
        (adc, cfg, samples) in law_samples_and_cuts()
    ) {
        let Ok(mut law) = Hysteretic::new(&cfg, &adc) else { return Ok(()) };
        follow_with_cuts(&mut law, &adc, &cfg, &samples, |law, v, now| {
            let dac_v = f64::from(adc.to_volts(law.armed_code()));
            law.on_edge(v > dac_v, now).gate.is_on()
        })?;
    }
}

#[test]
fn demo_thresholds() {
    // 5 V ± 20 mV through 10 k / 4.7 k into 12 bits at 3.3 V: one code is
    // 2.520 mV at the output, so the 40 mV band spans 15.9 codes.
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let law = Hysteretic::new(&HystereticConfig { setpoint_v: 5.0, band_v: 0.04 }, &adc).unwrap();
    assert_eq!(law.reference_code(), 1984);
    assert_eq!(law.lower_code(), 1976);
    assert_eq!(law.upper_code(), 1992);
}

#[test]
fn set_reference_moves_band_and_saturates() {
    let adc = AdcChannel::new(12, 3.3, 1.0, 0.0).unwrap();
    let mut law =
        Hysteretic::new(&HystereticConfig { setpoint_v: 1.65, band_v: 0.02 }, &adc).unwrap();
    let (below, above) = (2048 - law.lower_code(), law.upper_code() - 2048);
    law.set_reference(100);
    assert_eq!((law.lower_code(), law.upper_code()), (100 - below, 100 + above));
    assert_eq!(law.reference_code(), 100);
    law.set_reference(0);
    assert_eq!((law.lower_code(), law.reference_code()), (0, 0));
    law.set_reference(u16::MAX);
    assert_eq!(law.upper_code(), 4095);
    // A sample of 0 still turns the gate on at the bottom of a soft-start.
    law.set_reference(0);
    assert_eq!(law.on_sample(0, Instant(0)).gate, Gate::On);
}

#[test]
fn invalid_configurations_are_named() {
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let build =
        |setpoint_v, band_v| Hysteretic::new(&HystereticConfig { setpoint_v, band_v }, &adc);
    // One code at the output is 2.52 mV.
    fn refused<T>(p: &'static str, k: ErrorKind) -> Result<T, ConfigError> {
        Err(ConfigError::new(p, k))
    }
    assert_eq!(build(5.0, 0.002), refused("band_v", ErrorKind::BelowResolution));
    let range = |e: ConfigError| (e.parameter, matches!(e.kind, ErrorKind::OutOfRange { .. }));
    // The channel reads 0 to 10.32 V.
    assert_eq!(range(build(11.0, 0.04).unwrap_err()), ("setpoint_v", true));
    assert_eq!(range(build(0.01, 0.04).unwrap_err()), ("band_v", true));
    assert_eq!(build(-1.0, 0.04), refused("setpoint_v", ErrorKind::NotPositive));
    assert_eq!(build(5.0, 0.0), refused("band_v", ErrorKind::NotPositive));
    assert_eq!(build(5.0, f32::INFINITY), refused("band_v", ErrorKind::NotFinite));
}
