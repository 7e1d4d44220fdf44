//! Audible-band figures against Fourier series of known signals, and the
//! share of time in slow periods against the ESR-dominated hysteretic
//! loop's closed-form frequency.

use crate::common;

use common::open_window;
use common::plants::near_ideal;
use ripplectl::sim::audible::{lines, slow_share, AUDIBLE_HZ};
use ripplectl::sim::cells::CellGrid;
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, Scenario, Summary};
use std::f64::consts::PI;

/// A symmetric triangle wave of peak `amplitude` at `f_hz` (an inductor
/// current's ripple) plus a sine of `a_low` at `f_low_hz`, sampled as cell
/// averages over `span_s`.
fn ripple_with_hum(f_hz: f64, amplitude: f64, f_low_hz: f64, a_low: f64, span_s: f64) -> CellGrid {
    let mut grid = CellGrid::covering(0.0, span_s, 0.25e-6);
    let n = 64 * grid.cells.len();
    let dt = span_s / n as f64;
    let signal = |t: f64| {
        let phase = (t * f_hz).fract();
        let triangle = amplitude * (1.0 - 4.0 * (phase - 0.5).abs());
        triangle + a_low * (2.0 * PI * f_low_hz * t).sin() + 2.0
    };
    for k in 0..n {
        let (t0, t1) = (k as f64 * dt, (k + 1) as f64 * dt);
        grid.add_segment((t0, signal(t0)), (t1, signal(t1)));
    }
    grid
}

/// A triangle wave of peak A has a fundamental of amplitude 8A/π² (its
/// Fourier series, 8A/(π²n²) at odd n: any table of Fourier series, e.g.
/// Kreyszig, Advanced Engineering Mathematics, ch. 11). With a 30 dB weaker tone of
/// 5 kHz the audible line is that tone, 30 dB below the fundamental
/// (within 0.2 dB: both fall on bins; Hann amplitudes are exact there).
#[test]
fn audible_line_relative_to_the_switching_fundamental() {
    let (f_sw, a) = (60e3, 0.5);
    let fundamental = 8.0 * a / (PI * PI);
    let hum = fundamental * 10f64.powf(-30.0 / 20.0);
    let grid = ripple_with_hum(f_sw, a, 5e3, hum, 2e-3);
    let l = lines(&grid).expect("2 ms resolves 5 kHz");
    println!("{l:?}  {:.2} dB", l.relative_db());
    assert!((l.fundamental.0 - f_sw).abs() < 1.0);
    assert!((l.fundamental.1 - fundamental).abs() < 0.01 * fundamental);
    assert!((l.audible.0 - 5e3).abs() < 1.0);
    assert!((l.relative_db() + 30.0).abs() < 0.2, "{:.2} dB", l.relative_db());
    assert!(l.audible.0 < AUDIBLE_HZ);
}

/// A record shorter than three bins below 20 kHz (T < 150 µs) resolves no
/// audible line.
#[test]
fn too_short_a_record_has_no_audible_figure() {
    let grid = ripple_with_hum(60e3, 0.5, 5e3, 0.01, 0.1e-3);
    assert!(lines(&grid).is_none());
}

#[test]
fn the_slow_share_counts_time_not_cycles() {
    // Three 40 µs periods and two 60 µs ones: 120 µs of 240 µs lie in
    // periods over 50 µs (the definition: a period over 50 µs is a
    // switching frequency under 20 kHz).
    let share = slow_share([40e-6, 60e-6, 40e-6, 60e-6, 40e-6].into_iter());
    assert!((share - 0.5).abs() < 1e-12, "{share}");
    assert_eq!(slow_share(std::iter::empty()), 0.0);
}

/// An exact analog comparator with hysteresis `band_v` around 5 V on an
/// ESR-dominated stage (ESR 50 mΩ, L 220 µH, C 0.1 F), 24 V in, 1 A
/// current-sink load, 4 ms without a disturbance.
fn esr_loop(band_v: f64) -> Scenario {
    let mut s = common::sampled_fixture();
    s.control.law =
        LawParams::AnalogRetrofit { lower_v: 5.0 - band_v / 2.0, upper_v: 5.0 + band_v / 2.0 };
    s.control.window = open_window();
    s.plant = near_ideal(220e-6, 0.1, 0.05, 0.0);
    s.firmware.observer_bandwidth_hz = None;
    s.firmware.protection.current_limit_a = 20.0;
    s.mcu.clock_hz = 1_000_000_000;
    s.mcu.comparator_delay_s = 0.0;
    s.mcu.isr_latency_s = 0.0;
    s.mcu.noise_lsb_rms = 0.0;
    s.input = InputProfile { points: vec![[0.0, 24.0]] };
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Current { amps: 1.0 } }];
    s.initial_output_v = 5.0;
    s.initial_inductor_a = 1.0;
    s.duration_s = 4e-3;
    s
}

#[test]
fn a_loop_switching_below_20_khz_spends_its_steady_time_in_slow_periods() {
    // ESR-dominated hysteretic loop: the output ripple is ESR·Δi_L, so
    // Δi_L = band/ESR, and with the inductor slopes (V_in − V_o)/L and
    // V_o/L (Erickson & Maksimović, Fundamentals of Power Electronics, 3rd
    // ed., ch. 2) f = ESR·V_o·(V_in − V_o)/(L·band·V_in): 11.2 kHz with an
    // 80 mV band, 45.0 kHz with 20 mV.
    for (band_v, slow) in [(0.08, true), (0.02, false)] {
        let s = esr_loop(band_v);
        let f = 0.05 * 5.0 * 19.0 / (220e-6 * band_v * 24.0);
        let summary = Summary::of(&sim::run(&s).unwrap(), &s.name, 0.0);
        assert!((summary.fsw_mean_hz - f).abs() < 0.02 * f, "{} vs {f}", summary.fsw_mean_hz);
        let share = summary.audible.expect("a 2 ms steady window").slow_period_share;
        println!("band {band_v} V: {:.2} kHz, slow share {share}", summary.fsw_mean_hz / 1e3);
        assert_eq!(share, if slow { 1.0 } else { 0.0 }, "band {band_v} V");
    }
}
