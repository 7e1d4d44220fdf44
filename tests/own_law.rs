//! A law written outside the crate (`examples/own_law.rs`), in the crate's
//! stack, run through the public simulation API: it regulates and keeps
//! the frequency window, and its narrowed band lifts the light-load
//! frequency out of the audible band where the crate's fixed band does not
//! (on the sampled test fixture, close to an ideal comparator loop: on the
//! default scenario's comparator edges the handlers' time widens both
//! bands, and the narrow one lifts 5.5 kHz to 13 kHz at 18 V, not past
//! 20 kHz).
//!
//! Bounds: regulation within 1 % (the crate's own target for the demo);
//! the window is the scenario's (20 kHz–140 kHz, 150 ns minimum on-time,
//! 300 ns minimum off-time on the fixture, 3 µs on the default); 20 kHz as the top of the audible band is
//! common practice.

#[path = "../examples/own_law.rs"]
mod example;

use crate::common;

use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, sweep::operating_point, Scenario, Summary};

fn inside_the_window(s: &Summary, sc: &Scenario, what: &str) {
    let w = sc.control.window;
    let error = (s.vout_mean_v - s.vout_setpoint_v).abs() / s.vout_setpoint_v;
    assert!(error < 0.01, "{what}: mean {} V", s.vout_mean_v);
    assert!(s.faults.is_empty(), "{what}: faults {:?}", s.faults);
    assert!(s.fsw_max_hz <= f64::from(w.f_max_hz) * 1.001, "{what}: {} Hz", s.fsw_max_hz);
    // Edges fall on 15.6 ns ticks: the minimum times round up.
    assert!(s.on_time_min_s >= f64::from(w.min_on_s) - 1e-12, "{what}: on {}", s.on_time_min_s);
    assert!(s.off_time_min_s >= f64::from(w.min_off_s) - 1e-12, "{what}: off {}", s.off_time_min_s);
}

#[test]
fn own_law_lifts_the_light_load_frequency_and_keeps_the_window() {
    for vin in [18.0, 24.0, 32.0] {
        let sc = example::light_load(&common::sampled_fixture(), vin);
        let own = example::run(&sc).unwrap();
        let plain = Summary::of(&sim::run(&sc).unwrap(), &sc.name, 0.0);
        eprintln!(
            "{vin} V, 100 mA: own law {:.1} kHz mean (min {:.1}), fixed band {:.1} kHz",
            own.fsw_mean_hz / 1e3,
            own.fsw_min_hz / 1e3,
            plain.fsw_mean_hz / 1e3
        );
        inside_the_window(&own, &sc, &format!("{vin} V light load"));
        assert!(own.fsw_mean_hz > 20e3, "{vin} V: mean {} Hz", own.fsw_mean_hz);
        assert!(plain.fsw_mean_hz < 20e3, "{vin} V: the fixed band is audible here");
    }
}

#[test]
fn own_law_keeps_its_wide_band_at_full_load() {
    let mut sc = operating_point(&Scenario::default_demo(), 24.0, 2.0, 6e-3);
    // The crate's law with its fixed band (no lock), as the own law's.
    if let LawParams::Hysteretic { lock_hz, .. } = &mut sc.control.law {
        *lock_hz = None;
    }
    let own = example::run(&sc).unwrap();
    let plain = Summary::of(&sim::run(&sc).unwrap(), &sc.name, 0.0);
    inside_the_window(&own, &sc, "24 V full load");
    // The same 40 mV band as the crate's law: the same frequency, within
    // the run's own spread.
    let ratio = own.fsw_mean_hz / plain.fsw_mean_hz;
    assert!((ratio - 1.0).abs() < 0.05, "{} vs {} Hz", own.fsw_mean_hz, plain.fsw_mean_hz);
}
