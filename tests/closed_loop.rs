//! The closed loop: the crate's own firmware objects against the plant.

use crate::common;

use common::open_window;
use common::plants::near_ideal;
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::{HystereticInput, LawParams};
use ripplectl::sim::{self, Scenario, Summary};
use ripplectl::WindowConfig;

/// The sampled test fixture (`tests/fixtures/sampled-1mhz.toml`), reshaped: constant 24 V, 2 A resistive load.
fn steady(law: LawParams, mut tweak: impl FnMut(&mut Scenario)) -> Summary {
    let mut s = common::sampled_fixture();
    s.control.law = law;
    s.control.window = open_window();
    s.input = InputProfile { points: vec![[0.0, 24.0]] };
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: 2.5 } }];
    s.duration_s = 4e-3;
    s.initial_output_v = 5.0;
    s.initial_inductor_a = 2.0;
    tweak(&mut s);
    let out = sim::run(&s).unwrap();
    Summary::of(&out, &s.name, 0.0)
}

#[test]
fn esr_dominated_hysteretic_frequency_matches_closed_form() {
    // An analog comparator with exact thresholds and no delay, on a stage
    // whose output ripple is all ESR: C large enough that its own ripple
    // Δi/(8fC) is about 1 % of ESR·Δi.
    let (vin, vout, l, esr, band) = (24.0, 5.0, 47e-6, 0.05, 0.04);
    let s = steady(
        LawParams::AnalogRetrofit { lower_v: vout - band / 2.0, upper_v: vout + band / 2.0 },
        |s| {
            s.plant = near_ideal(l, 4.7e-3, esr, 0.0);
            // With no resistance the DC current is not observable from the
            // output voltage (the observer refuses, rightly): run without it.
            s.firmware.observer_bandwidth_hz = None;
            s.mcu.clock_hz = 1_000_000_000;
            s.mcu.comparator_delay_s = 0.0;
            s.mcu.isr_latency_s = 0.0;
            s.mcu.noise_lsb_rms = 0.0;
        },
    );
    // Derived here: the sensed ripple is ESR·i_L, so the comparator switches
    // when ESR·Δi_L = band. Volt-second balance on L (Erickson & Maksimović,
    // ch. 2): T_on = L·Δi/(Vin − Vout), T_off = L·Δi/Vout.
    let di = band / esr;
    let f = 1.0 / (l * di / (vin - vout) + l * di / vout);
    let err = (s.fsw_mean_hz - f).abs() / f;
    eprintln!(
        "hysteretic: simulated {:.1} Hz, closed form {f:.1} Hz ({:.2} %)",
        s.fsw_mean_hz,
        100.0 * err
    );
    assert!(err < 0.03, "simulated {} Hz vs {f} Hz", s.fsw_mean_hz);
    // The design module's ESR formula agrees when given zero delay.
    let design = ripplectl::design::hysteretic_frequency_esr(vin, vout, l, esr, band, 0.0);
    assert!((design - f).abs() / f < 1e-12);
}

#[test]
fn sampled_law_regulates_inside_its_band() {
    let s = steady(
        LawParams::Hysteretic {
            setpoint_v: 5.0,
            band_v: 0.04,
            input: HystereticInput::Sampled,
            lock_hz: None,
            dither_depth: None,
        },
        |_| {},
    );
    assert!((s.vout_mean_v - 5.0).abs() < 0.05, "mean {}", s.vout_mean_v);
    assert!(s.fsw_mean_hz > 20e3 && s.fsw_mean_hz < 140e3, "f {}", s.fsw_mean_hz);
}

#[test]
fn edge_mode_switches_on_comparator_interrupts() {
    // Edge mode has no sampling delay, so with the same band it switches
    // faster than the sampled law.
    let law = |input| LawParams::Hysteretic {
        setpoint_v: 5.0,
        band_v: 0.04,
        input,
        lock_hz: None,
        dither_depth: None,
    };
    let sampled = steady(law(HystereticInput::Sampled), |_| {});
    let edge = steady(law(HystereticInput::Edge), |_| {});
    assert!((edge.vout_mean_v - 5.0).abs() < 0.05, "mean {}", edge.vout_mean_v);
    assert!(
        edge.fsw_mean_hz > 1.2 * sampled.fsw_mean_hz,
        "edge {} sampled {}",
        edge.fsw_mean_hz,
        sampled.fsw_mean_hz
    );
}

#[test]
fn guard_caps_a_fast_analog_loop_at_f_max() {
    // A narrow analog band would switch far above 140 kHz; the guard holds
    // every steady period to at least 1/f_max.
    let s = steady(LawParams::AnalogRetrofit { lower_v: 4.995, upper_v: 5.005 }, |s| {
        s.control.window = WindowConfig::demo();
    });
    assert!(s.clamps.min_period > 100, "guard must act: {:?}", s.clamps);
    assert!(s.fsw_max_hz <= 140e3 * 1.001, "max {}", s.fsw_max_hz);
    let free = steady(LawParams::AnalogRetrofit { lower_v: 4.995, upper_v: 5.005 }, |_| {});
    assert!(free.fsw_mean_hz > 150e3, "without the guard the loop runs at {}", free.fsw_mean_hz);
}
