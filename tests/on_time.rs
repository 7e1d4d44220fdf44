//! Constant on-time law: fixed point against the f64 oracle; feed-forward,
//! frequency trim and DC correction.

use crate::common;

use common::{cases, ideal_adc};
use proptest::prelude::*;
use ripplectl::law::{DcCorrection, FrequencyTrim, OnTime, OnTimeConfig, OnTimeFeedForward};
use ripplectl::reference::OnTimeModel;
use ripplectl::units::{Volts, ONE};
use ripplectl::{AdcChannel, ConfigError, ErrorKind, Gate, Instant, Law, TimerClock};

proptest! {
    #![proptest_config(cases(10_000))]

    /// The gate follows the law's demand at once. Turn-on decisions agree
    /// with the oracle except for samples within one code of the
    /// reference; on-times agree to the tick (power-of-two clock, whole-tick
    /// on-time, so tick times are exact in f64).
    #[test]
    fn decisions_and_on_times_match_oracle(
        log2_hz in 20u32..=27,
        on_ticks in 1u32..2_000,
        bits in 8u8..=12,
        start in prop_oneof![u32::MAX - 20_000..=u32::MAX, any::<u32>()],
        steps in prop::collection::vec((1u32..300, -40.0f64..40.0), 1..300),
    ) {
        let hz = 1u32 << log2_hz;
        let clock = TimerClock::new(hz).unwrap();
        let adc = AdcChannel::new(bits, 3.3, 4.7 / 14.7, 0.0).unwrap();
        let on_time_s = on_ticks as f32 / hz as f32;
        let mut law = OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s }, &adc, &clock).unwrap();
        prop_assert_eq!(law.on_ticks(), on_ticks);
        let reference_v = f64::from(adc.to_volts(law.reference_code()));
        let mut model = OnTimeModel::new(reference_v, f64::from(on_ticks) / f64::from(hz));
        let lsb = adc.lsb_signal_v();
        let (mut t, mut gate) = (0u64, false);
        for (dt, mv) in steps {
            t += u64::from(dt);
            let v = reference_v + mv * lsb;
            let now = Instant(start.wrapping_add(t as u32));
            let mut cmd = law.on_sample(ideal_adc(&adc, v), now);
            if cmd.gate.is_on() != gate {
                gate = cmd.gate.is_on();
                law.on_gate(cmd.gate, now);
                // As the guard does after an edge: the law's fresh deadline.
                cmd = law.on_timer(now);
            }
            let want = model.sample(v, t as f64 / f64::from(hz));
            if gate != want {
                prop_assert!((v - reference_v).abs() <= lsb, "v {v} ref {reference_v}");
                model.on = gate;
                model.on_since_s = t as f64 / f64::from(hz);
            }
            if gate {
                let end = cmd.wake.map(|w| w.ticks_since(now));
                let left = on_ticks - now.ticks_since(Instant(start.wrapping_add((model.on_since_s * f64::from(hz)) as u32)));
                prop_assert_eq!(end, Some(left));
            }
        }
    }
}

#[test]
fn on_time_converts_and_refuses() {
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let clock = TimerClock::new(64_000_000).unwrap();
    // 2.08 µs at 64 MHz = 133.3 ticks → 133.
    let law =
        OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.083e-6 }, &adc, &clock).unwrap();
    assert_eq!(law.on_ticks(), 133);
    assert_eq!(law.reference_code(), 1984);
    let bad =
        |setpoint_v, on_time_s| OnTime::new(&OnTimeConfig { setpoint_v, on_time_s }, &adc, &clock);
    fn refused<T>(p: &'static str, k: ErrorKind) -> Result<T, ConfigError> {
        Err(ConfigError::new(p, k))
    }
    assert_eq!(bad(5.0, 1e-9), refused("on_time_s", ErrorKind::BelowResolution));
    assert_eq!(bad(-5.0, 2e-6), refused("setpoint_v", ErrorKind::NotPositive));
    let e = bad(20.0, 2e-6).unwrap_err();
    assert_eq!(e.parameter, "setpoint_v");
    assert!(matches!(e.kind, ErrorKind::OutOfRange { .. }), "{e}");
}

#[test]
fn feed_forward_holds_the_ccm_frequency() {
    // f = D/T_on = V_out/(V_in·T_on): with T_on = V_out/(V_in·f_target) the
    // ideal CCM frequency is the target at every input (Erickson &
    // Maksimović ch. 2: D = V/Vg).
    let clock = TimerClock::new(64_000_000).unwrap();
    let ff = OnTimeFeedForward::new(5.0, 100e3, &clock).unwrap();
    for vin in [18.0f32, 24.0, 32.0] {
        let ticks = ff.on_ticks(Volts::from_num(vin), ONE);
        let f = ripplectl::design::on_time_frequency(f64::from(vin), 5.0, f64::from(ticks) / 64e6);
        assert!((f - 100e3).abs() / 100e3 < 0.005, "{vin} V: {f} Hz");
    }
    // A trim of 0.8 shortens the on-time by that factor.
    let full = f64::from(ff.on_ticks(Volts::from_num(24), ONE));
    let trimmed = f64::from(ff.on_ticks(Volts::from_num(24), ONE * 4 / 5));
    assert!((trimmed / full - 0.8).abs() < 0.01, "{trimmed} / {full}");
    assert_eq!(ff.on_ticks(Volts::ZERO, ONE), 1);
}

#[test]
fn trim_integrates_bounded_and_holds_for_the_guard() {
    let clock = TimerClock::new(64_000_000).unwrap();
    let mut trim = FrequencyTrim::new(100e3, 0.5, 0.5, 1.5, &clock).unwrap();
    // 10 % long periods (90 kHz: 704 ticks against 640, over 10 cycles):
    // trim ← 1 − 0.5·0.1 = 0.95.
    let t1 = trim.update(10, 7_040, false);
    assert!((f64::from(t1) / f64::from(ONE) - 0.95).abs() < 1e-4, "{t1}");
    // Held while the guard binds, and without cycles.
    assert_eq!(trim.update(10, 12_800, true), t1);
    assert_eq!(trim.update(0, 0, false), t1);
    // Bounded.
    for _ in 0..100 {
        trim.update(10, 12_800, false);
    }
    assert_eq!(trim.trim(), ONE / 2);
    let e = FrequencyTrim::new(100e3, 2.0, 0.5, 1.5, &clock).unwrap_err();
    assert_eq!(e.parameter, "trim_gain");
}

#[test]
fn dc_correction_moves_the_reference_by_the_error() {
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let clock = TimerClock::new(64_000_000).unwrap();
    let mut law =
        OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2e-6 }, &adc, &clock).unwrap();
    let mut dc = DcCorrection::new(1984, 0.5, 20.0).unwrap();
    // The mean sits 8 codes high: the reference comes down, bounded.
    let mut r = 0;
    for _ in 0..50 {
        r = dc.update(1992 << 16, &mut law);
    }
    assert_eq!(r, 1964);
    assert_eq!(law.reference_code(), 1964);
    let _ = Gate::Off;
}
