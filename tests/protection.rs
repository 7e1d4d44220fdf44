//! Protections in closed loop: the firmware's supervisor against the plant.

use crate::common;

use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::{self, RunOutput, Scenario};

/// The sampled test fixture (`tests/fixtures/sampled-1mhz.toml`) at a constant 24 V and 1 A resistive load.
fn base() -> Scenario {
    let mut s = common::sampled_fixture();
    s.input = InputProfile { points: vec![[0.0, 24.0]] };
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: 5.0 } }];
    s
}

fn kinds(out: &RunOutput) -> Vec<&'static str> {
    out.faults.iter().map(|(k, _)| k.name()).collect()
}

fn output_max_after(out: &RunOutput, t_s: f64) -> f64 {
    out.recorder
        .slices
        .iter()
        .filter(|s| s.t_s >= t_s)
        .map(|s| s.vo_max_v)
        .fold(f64::NEG_INFINITY, f64::max)
}

#[test]
fn hard_short_is_limited_and_hiccups() {
    let mut s = base();
    s.duration_s = 8e-3;
    s.load.push(LoadChange { at_s: 3e-3, load: Load::Short });
    let out = sim::run(&s).unwrap();
    let limit = f64::from(s.firmware.protection.current_limit_a);
    // The true current, observed at every event including each turn-off.
    assert!(
        out.recorder.il_peak_a <= 1.2 * limit,
        "peak {} A, limit {limit} A",
        out.recorder.il_peak_a
    );
    // The limit ends pulses, but not before the guard's minimum on-time
    // (its blanking): no pulse is shorter, cold start and short included.
    let min_on = f64::from(s.control.window.min_on_s);
    let shortest = out.recorder.cycles.iter().map(|c| c.on_s).fold(f64::INFINITY, f64::min);
    assert!(shortest >= min_on, "shortest pulse {shortest} s, minimum on-time {min_on} s");
    let shorts: Vec<f64> =
        out.faults.iter().filter(|(k, _)| k.name() == "short-circuit").map(|f| f.1).collect();
    assert!(!shorts.is_empty(), "faults: {:?}", kinds(&out));
    assert!((3e-3..3.2e-3).contains(&shorts[0]), "detected at {}", shorts[0]);
    // Hiccup: a second detection after the 2 ms off-time and a restart.
    assert!(shorts.len() >= 2 && shorts[1] - shorts[0] > 2e-3, "{shorts:?}");
}

#[test]
fn open_feedback_divider_latches_before_the_output_runs_away() {
    let mut s = base();
    // Each restart takes its hiccup (2 ms), its soft-start (1 ms: no cycle
    // ended by the ramping cap counts toward a short) and the 8 limited
    // cycles: the fifth detection, which latches, comes after 15 ms.
    s.duration_s = 18e-3;
    s.mcu.feedback_open_at_s = Some(3e-3);
    let out = sim::run(&s).unwrap();
    let ovp = f64::from(s.firmware.protection.ovp_v);
    // To firmware without another sensor the open divider reads like a
    // short: it hiccups, and latches when no restart reaches regulation.
    let k = kinds(&out);
    assert!(k.last() == Some(&"retries-exhausted") || k == ["sensor-stuck"], "faults: {k:?}");
    let peak = output_max_after(&out, 3e-3);
    assert!(peak <= 1.1 * ovp, "output reached {peak} V (OVP {ovp} V)");
    // Latched: no switching after the last fault.
    let t_fault = out.faults.last().unwrap().1;
    assert!(out.recorder.cycles.iter().all(|c| c.t_s <= t_fault), "switched after the latch");
}

#[test]
fn input_sag_below_uvlo_stops_and_soft_starts_again() {
    let mut s = base();
    s.duration_s = 8e-3;
    s.input = InputProfile {
        points: vec![[0.0, 24.0], [3e-3, 24.0], [3e-3, 12.0], [4e-3, 12.0], [4e-3, 24.0]],
    };
    let out = sim::run(&s).unwrap();
    assert_eq!(kinds(&out), ["input-undervoltage"]);
    let t_stop = out.faults[0].1;
    assert!((3e-3..3.2e-3).contains(&t_stop), "stopped at {t_stop}");
    // No turn-on between the stop and the input's return.
    assert!(
        !out.recorder.cycles.iter().any(|c| c.t_s > t_stop + 1e-4 && c.t_s < 4e-3),
        "switched during the sag"
    );
    // The output sagged with the input, then rises along the 1 ms ramp:
    // not at once, but back within 2 % by the end.
    let v_at =
        |t: f64| out.recorder.slices.iter().find(|s| s.t_s >= t).map(|s| s.vo_max_v).unwrap();
    let setpoint = 5.0;
    assert!(v_at(4.0e-3) < 0.9 * setpoint, "output held up: {}", v_at(4.0e-3));
    assert!(v_at(4.3e-3) < 0.9 * setpoint, "no ramp: {} at 0.3 ms", v_at(4.3e-3));
    assert!((v_at(7.5e-3) - setpoint).abs() < 0.02 * setpoint, "not back: {}", v_at(7.5e-3));
}
