//! The analog retrofit's soft-start through the guard: a board's own
//! comparator loop (the shipped `analog-retrofit.toml`: a 40 mV band, no
//! soft-start of its own) started from 0 V with the over-voltage threshold
//! at 125 % of the setpoint.
//!
//! Bounds: the project's acceptance (no over-voltage trip, true inductor peak ≤ 1.5 × the
//! current limit, output within 1 % of the setpoint); the pulses' peak
//! against the buck's on-state relation `ΔI = (V_in − V_out) · t_on / L`
//! (Erickson & Maksimović, Fundamentals of Power Electronics, 3rd ed.,
//! ch. 2: the inductor's voltage over its inductance is the current's
//! slope).

use ripplectl::sim::build::{law, stack_parts, ScenarioLaw};
use ripplectl::sim::{self, RunOutput, Scenario, StackFirmware, Summary};
use ripplectl::stack::Stack;

const SCENARIO: &str = include_str!("../examples/scenarios/analog-retrofit.toml");

/// The shipped retrofit from cold: 0 V, no current, over-voltage at 125 %.
fn cold() -> Scenario {
    let mut sc = Scenario::from_toml(SCENARIO).unwrap();
    sc.initial_output_v = 0.0;
    sc.initial_inductor_a = 0.0;
    sc.firmware.protection.ovp_v = 1.25 * sc.control.law.setpoint_v() as f32;
    sc
}

/// `cold()` read at 1 MHz with handlers in zero time (no core named), as
/// the retrofit scenario was shipped before it named its Cortex-M4: the
/// ramp's pulses are bounded from readings, and at the shipped 50 kHz the
/// first millisecond holds 6 bounded pulses (too few for the handbook
/// check below).
fn cold_fine_readings() -> Scenario {
    let mut sc = cold();
    sc.mcu.sample_rate_hz = 1.0e6;
    sc.mcu.core = None;
    sc.firmware.housekeeping_hz = 10_000.0;
    sc
}

/// Run `sc` with the crate's stack, the start's pulse bound on or off
/// (library API: `Supervisor::set_start_pulse_bound`).
fn run(sc: &Scenario, bound: bool) -> RunOutput {
    let parts = stack_parts(sc).unwrap();
    let ScenarioLaw::Retrofit(l) = law(sc).unwrap() else { panic!("not a retrofit") };
    sim::run_firmware(sc, |p| {
        let mut stack = Stack::new(l, parts);
        stack.supervisor_mut().set_start_pulse_bound(bound);
        StackFirmware::new(stack, p)
    })
    .unwrap()
}

/// The acceptance's three conditions; `Err` says which failed.
fn started_well(sc: &Scenario, out: &RunOutput) -> Result<(), String> {
    let limit = f64::from(sc.firmware.protection.current_limit_a);
    let s = Summary::without_audible(out, &sc.name, 0.0);
    let error = (s.vout_mean_v - s.vout_setpoint_v).abs() / s.vout_setpoint_v;
    let faults: Vec<_> =
        out.faults.iter().map(|(k, t)| format!("{} at {t:.6}", k.name())).collect();
    let peak = out.recorder.il_peak_a;
    eprintln!("peak {peak:.3} A, mean {:.4} V, faults {faults:?}", s.vout_mean_v);
    if !faults.is_empty() {
        return Err(format!("faults {faults:?}"));
    }
    if peak > 1.5 * limit {
        return Err(format!("true peak {peak} A > 1.5 × {limit} A"));
    }
    if error >= 0.01 {
        return Err(format!("mean output {} V", s.vout_mean_v));
    }
    Ok(())
}

#[test]
fn cold_start_through_the_guard_keeps_current_and_output() {
    let sc = cold();
    let out = run(&sc, true);
    started_well(&sc, &out).unwrap();
    let vo_max = out.recorder.cycles.iter().map(|c| c.vo_max_v).fold(0.0, f64::max);
    assert!(vo_max < f64::from(sc.firmware.protection.ovp_v), "output reached {vo_max} V");
}

#[test]
fn without_a_soft_start_the_cold_start_fails() {
    // The soft-start time at 64 ticks (1 µs): no ramp of either kind.
    let mut sc = cold();
    sc.firmware.protection.soft_start_s = 1e-6;
    let out = run(&sc, true);
    assert!(started_well(&sc, &out).is_err(), "started well without a soft-start");
}

#[test]
fn ramp_pulses_start_from_zero_and_peak_as_the_on_state_relation() {
    let sc = cold_fine_readings();
    let out = run(&sc, true);
    let l = sc.plant.l_h;
    let vin = sc.input.points[0][1];
    let limit = f64::from(sc.firmware.protection.current_limit_a);
    let soft_start = f64::from(sc.firmware.protection.soft_start_s);
    let t0 = 1.0 / sc.firmware.housekeeping_hz;
    // The ramp's pulses: the first millisecond of switching (the start
    // begins at the first housekeeping tick), below the current where the
    // plant's inductance begins to fall (`i_sat_a`).
    let i_sat = sc.plant.saturation.map_or(f64::INFINITY, |s| s.i_sat_a);
    let first = out.recorder.cycles.first().unwrap().t_s;
    let ramp: Vec<_> = out
        .recorder
        .cycles
        .iter()
        .filter(|c| c.t_s < first + 1e-3 && c.il_max_a < i_sat && c.on_s > 1e-6)
        .collect();
    assert!(ramp.len() >= 8, "{} ramp pulses", ramp.len());
    for c in ramp {
        assert!(c.il_on_a.abs() < 1e-3, "pulse at {} s began at {} A", c.t_s, c.il_on_a);
        let vout = 0.5 * (c.vo_min_v + c.vo_max_v);
        let handbook = (vin - vout) * c.on_s / l;
        // −2.5 % … +0.5 %: the relation leaves out the resistive drops
        // (0.14 Ω at up to 4 A against 24 V: at most 1.2 % lower on average
        // over the pulse), the 20 ns transitions against ≥ 1 µs pulses and
        // the output's rise within the pulse (each lowers the true peak);
        // the output taken as its cycle's midpoint (measured: −1.2 … −0.1 %).
        let ratio = c.il_max_a / handbook;
        assert!(
            (0.975..=1.005).contains(&ratio),
            "at {} s: {} A, handbook {handbook} A",
            c.t_s,
            c.il_max_a
        );
        // And no more than twice the ramp's cap at the pulse's end, within
        // the limit: the cap from an eighth of the limit to the limit over
        // the soft-start time, from the first housekeeping tick (the
        // firmware's L is the plant's).
        let t = (c.t_s + c.on_s - t0) / soft_start;
        let cap = limit / 8.0 + 7.0 / 8.0 * limit * t.min(1.0);
        let bound = (2.0 * cap).min(limit);
        assert!(c.il_max_a <= 1.01 * bound, "at {} s: {} A over {bound} A", c.t_s, c.il_max_a);
    }
}

/// Mean of the cycles' output midpoints from `t_s` on, V.
fn output_after(out: &RunOutput, t_s: f64) -> f64 {
    let v: Vec<f64> = out
        .recorder
        .cycles
        .iter()
        .filter(|c| c.t_s >= t_s)
        .map(|c| 0.5 * (c.vo_min_v + c.vo_max_v))
        .collect();
    v.iter().sum::<f64>() / v.len() as f64
}

#[test]
fn a_pre_biased_output_is_not_discharged() {
    // 60 % of the setpoint on the output at the start; 1 A of load.
    let mut sc = cold();
    sc.initial_output_v = 3.0;
    let out = run(&sc, true);
    started_well(&sc, &out).unwrap();
    // From the first pulse on, the output never falls below where it
    // stood then (less 10 mV, a quarter of the comparator's band): the ramp
    // begins as far along as the output is (60 %), so the first pulses
    // already carry more than the load draws.
    let cycles = &out.recorder.cycles;
    let start = cycles.iter().find(|c| c.on_s > 1e-6).unwrap();
    let lowest = cycles.iter().map(|c| c.vo_min_v).fold(f64::INFINITY, f64::min);
    assert!(
        lowest >= start.vo_min_v - 0.010,
        "output fell to {lowest} V from {} V at {} s",
        start.vo_min_v,
        start.t_s
    );
}

#[test]
fn the_restart_after_a_hiccup_ramps_again() {
    use ripplectl::sim::profile::{Load, LoadChange};
    // A short across the output from 3.0 to 3.5 ms: detected, 2 ms off
    // (the hiccup), then a restart from a discharged output into the full
    // 2.5 Ω load, at the shipped 50 kHz readings. (Until the bounded start
    // held its pulses past the ramp while the output stood below half the
    // setpoint, this restart tripped the short-circuit detector a second
    // time, at 6.26 ms, with the output at 2.2 V.)
    let mut sc = cold();
    sc.load.push(LoadChange { at_s: 3.0e-3, load: Load::Short });
    sc.load.push(LoadChange { at_s: 3.5e-3, load: Load::Resistive { ohms: 2.5 } });
    sc.load.sort_by(|a, b| a.at_s.total_cmp(&b.at_s));
    let out = run(&sc, true);
    let kinds: Vec<_> = out.faults.iter().map(|(k, t)| (k.name(), *t)).collect();
    assert!(
        kinds.iter().all(|(k, _)| *k == "short-circuit") && kinds.len() == 1,
        "faults {kinds:?}"
    );
    let limit = f64::from(sc.firmware.protection.current_limit_a);
    let restart = kinds[0].1 + f64::from(sc.firmware.protection.hiccup_s);
    let after: Vec<_> = out.recorder.cycles.iter().filter(|c| c.t_s >= restart).collect();
    let lowest = after.iter().map(|c| c.vo_min_v).fold(f64::INFINITY, f64::min);
    assert!(lowest < 1.0, "the hiccup left {lowest} V: no restart from a discharged output");
    let peak = after.iter().map(|c| c.il_max_a).fold(0.0, f64::max);
    assert!(peak <= 1.5 * limit, "restart peak {peak} A");
    let highest = after.iter().map(|c| c.vo_max_v).fold(0.0, f64::max);
    assert!(highest < f64::from(sc.firmware.protection.ovp_v), "restart reached {highest} V");
    let end = output_after(&out, sc.duration_s - 1e-3);
    let setpoint = sc.control.law.setpoint_v();
    assert!((end - setpoint).abs() < 0.01 * setpoint, "output {end} V at the end");
}

/// A cold start into a short: the bounded start holds its pulses past the
/// ramp only while the output may still be coming up (twice the ramp's
/// time in all), then the short-circuit detector trips, and the bounded
/// pulses (each back to zero current) kept the inductor within the limit
/// meanwhile.
#[test]
fn a_start_into_a_short_still_trips() {
    use ripplectl::sim::profile::{Load, LoadChange};
    let mut sc = cold();
    sc.load = vec![LoadChange { at_s: 0.0, load: Load::Short }];
    sc.duration_s = 4e-3;
    let out = run(&sc, true);
    let first = out.faults.first().map(|(k, t)| (k.name(), *t));
    let ramp = f64::from(sc.firmware.protection.soft_start_s);
    let (kind, at) = first.expect("the short was never detected");
    assert_eq!(kind, "short-circuit");
    let begun = out.recorder.cycles.first().map_or(0.0, |c| c.t_s - c.period_s);
    let held = at - begun;
    // Held twice the ramp's time, then released: the detector's eight
    // cycles at the limit come within one more ramp's time.
    assert!(held > 2.0 * ramp && held < 3.0 * ramp, "tripped {held} s into the start");
    let peak = out.recorder.cycles.iter().map(|c| c.il_max_a).fold(0.0, f64::max);
    let limit = f64::from(sc.firmware.protection.current_limit_a);
    assert!(peak <= 1.5 * limit, "peak {peak} A");
}
