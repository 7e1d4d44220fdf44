//! After a housekeeping window the current estimator's on-slope keeps the
//! last input reading, not the window's average input.
//!
//! The fast path hands every conversion to the estimator; the slow path
//! ran once a window and set the slopes from the window's average input,
//! which lags a moving bus by half a window (100 µs at 5 kHz). Until the
//! next reading the estimate then integrated the wrong on-slope: on the
//! default scenario's input step (24 V to 18 V at 6 ms) an on-time right
//! after the window read 0.65 A high, and on its ramp (18 V to 32 V in
//! 1 ms) one read 0.19 A low. (The output's share still takes the
//! window's average: a single reading carries the ripple.) Checked here
//! on the whole stack (the demo board, in its soft-start) with the input
//! ramping 20 V to 30 V over one window and the output steady at 1 V,
//! against the buck's inductor slopes (Erickson & Maksimović,
//! Fundamentals of Power Electronics, 3rd ed., ch. 2: `L di/dt = V_in −
//! V_out` while the switch conducts, `−(V_out + V_f)` while the diode
//! does; no resistive drop yet, as no switching cycle has been counted).

use ripplectl::law::{Hysteretic, HystereticConfig};
use ripplectl::stack::{Stack, StackConfig, StackParts};
use ripplectl::supervisor::State;
use ripplectl::{unwrap_config, Instant};

const CONFIG: StackConfig = StackConfig::demo();
const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
const LAW: Hysteretic = unwrap_config(Hysteretic::new(
    &HystereticConfig { setpoint_v: CONFIG.setpoint_v, band_v: 0.04 },
    &CONFIG.output_adc,
));

/// Conversions per housekeeping window: 50 kHz against 5 kHz.
const READINGS: u32 = 10;
/// Timer ticks between conversions (20 µs at 64 MHz).
const SAMPLE_TICKS: u32 = 1_280;

fn input_code(v: f32) -> u16 {
    unwrap_config(CONFIG.input_adc.to_code(v)).raw
}

fn output_code(v: f32) -> u16 {
    unwrap_config(CONFIG.output_adc.to_code(v)).raw
}

/// One window of conversions, the input and output moving linearly from
/// the first values to the second, then housekeeping; returns the last
/// codes read and the next instant.
fn window(
    stack: &mut Stack<Hysteretic>,
    start: u32,
    (vin_a, vin_b): (f32, f32),
    (vout_a, vout_b): (f32, f32),
) -> ((u16, u16), u32) {
    let mut last = (0, 0);
    for k in 0..READINGS {
        let x = k as f32 / (READINGS - 1) as f32;
        last =
            (input_code(vin_a + (vin_b - vin_a) * x), output_code(vout_a + (vout_b - vout_a) * x));
        let now = Instant(start + k * SAMPLE_TICKS);
        assert_eq!(stack.on_conversion(last.1, last.0, now), None);
    }
    let end = start + READINGS * SAMPLE_TICKS;
    assert_eq!(stack.housekeeping(Instant(end)), None);
    (last, end)
}

#[test]
fn the_on_slope_keeps_the_last_input_reading_after_housekeeping() {
    let mut stack = Stack::new(LAW, PARTS);
    // A steady 24 V bus and a cold output: the first window starts.
    let (_, t) = window(&mut stack, 0, (24.0, 24.0), (0.5, 0.5));
    assert_eq!(stack.supervisor().state(), State::SoftStart);
    // The bus ramps under a steady output.
    let ((vin_code, vout_code), _) = window(&mut stack, t, (20.0, 30.0), (1.0, 1.0));
    let vin = f64::from(CONFIG.input_adc.to_volts(vin_code));
    let vout = f64::from(CONFIG.output_adc.to_volts(vout_code));
    // Amperes per timer tick per volt across the inductor.
    let per_volt = CONFIG.clock.tick_s() / f64::from(CONFIG.model.l_h);
    // Ticks per microsecond, for the messages.
    let per_us = 1e-6 / CONFIG.clock.tick_s();
    let est = stack.supervisor().estimator();
    let on = est.slope_on().to_num::<f64>();
    let off = est.slope_off().to_num::<f64>();
    // Within one code's share of its channel (the codes' scaling
    // truncates a few bits); the window's average input sits 5.0 V (513
    // codes) below the last reading.
    let within_on = CONFIG.input_adc.lsb_signal_v() * per_volt;
    let within_off = CONFIG.output_adc.lsb_signal_v() * per_volt;
    let (on_expected, off_expected) =
        ((vin - vout) * per_volt, -(vout + f64::from(CONFIG.model.diode_vf_v)) * per_volt);
    assert!(
        (on - on_expected).abs() <= within_on,
        "on-slope {:.4} A/µs, (V_in − V_out)/L = {:.4} A/µs",
        on * per_us,
        on_expected * per_us
    );
    assert!(
        (off - off_expected).abs() <= within_off,
        "off-slope {:.4} A/µs, −(V_out + V_f)/L = {:.4} A/µs",
        off * per_us,
        off_expected * per_us
    );
}
