//! A comparator crossing and its return inside one long event-free
//! interval both reach the firmware, each at its own tick.
//!
//! The loop looks ahead of the plant for the comparator's crossings
//! between the microcontroller's events, testing each interval from its
//! ends. An interval that holds a crossing, its return and two turns of the
//! output can show the output below the level and moving the same way at
//! both ends; only a bound on the interval's length (a quarter of the
//! fastest time constant, `sim::plant::SCAN_OF_FASTEST`) keeps the pair in
//! sight. Here a firmware of its own holds the gate on from t = 0 over a
//! 6 V input, so the demo stage rings from 5 V (about 0.64 ms a period),
//! with its first overshoot through a DAC level near 6.1 V, and reads the
//! ADC every 0.8 ms: the overshoot lies wholly inside the first 0.8 ms
//! without any event, and the test checks that premise first.
//!
//! Reference: the stage's state equations written from Kirchhoff's laws
//! (series resistance `r`, inductance `L`, the capacitor with its ESR in
//! parallel with the load `R`: `v_out = (v_C + ESR·i) / (1 + ESR/R)`),
//! integrated here by classical fourth-order Runge–Kutta at 1 ns steps,
//! independently of the simulator's closed form. The comparator's
//! interrupt comes at the first tick at or after the crossing plus the
//! comparator's propagation delay, plus the interrupt latency (the
//! scenario's `mcu` timings).

use embedded_hal::digital::OutputPin;
use ripplectl::sim::hardware::sensed_output_channel;
use ripplectl::sim::peripherals::{SimDac, SimPin};
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::{self, Firmware, Peripherals, Scenario};
use ripplectl::Instant;
use std::cell::RefCell;
use std::rc::Rc;

/// The input, V: low, so the ring stays within a few amperes.
const VIN_V: f64 = 6.0;
/// The resistive load, Ω.
const LOAD_OHM: f64 = 5.0;
/// The start: inductor current, A, and capacitor voltage, V.
const START: (f64, f64) = (1.0, 5.0);
/// The ADC's (and housekeeping's) period, s: no event between t = 0 and it.
const QUIET_S: f64 = 0.8e-3;
/// The level the DAC is set to, at least, V (its code rounds up).
const LEVEL_V: f64 = 6.1;
/// The reference's step, s.
const STEP_S: f64 = 1e-9;

/// The demo stage from `START` with the gate held on, read every
/// `QUIET_S`, handlers in zero time, no saturation (a linear stage).
fn scenario() -> Scenario {
    let mut sc = Scenario::default_demo();
    sc.duration_s = 1.0e-3;
    sc.initial_inductor_a = START.0;
    sc.initial_output_v = START.1;
    sc.plant.saturation = None;
    sc.input = InputProfile { points: vec![[0.0, VIN_V]] };
    sc.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: LOAD_OHM } }];
    sc.mcu.sample_rate_hz = 1.0 / QUIET_S;
    sc.mcu.core = None;
    sc.firmware.housekeeping_hz = 1.0 / QUIET_S;
    sc
}

/// Holds the gate on, sets the DAC once, and logs the comparator's edges.
struct Ringing {
    gate: SimPin,
    dac: SimDac,
    code: u16,
    edges: Rc<RefCell<Vec<(bool, Instant)>>>,
}

impl Firmware for Ringing {
    fn adc_done(&mut self, _output: u16, _input: u16, _now: Instant) {}

    fn comparator_edge(&mut self, level: bool, now: Instant) {
        self.edges.borrow_mut().push((level, now));
    }

    fn timer_compare(&mut self, _now: Instant) {}

    fn housekeeping(&mut self, _now: Instant) {
        let Ok(()) = self.gate.set_high();
        self.dac.write(self.code);
    }
}

/// The stage's output voltage on its state `[i, v_C]`.
fn output(sc: &Scenario, [i, v_c]: [f64; 2]) -> f64 {
    let esr = sc.plant.esr_ohm;
    (v_c + esr * i) / (1.0 + esr / LOAD_OHM)
}

/// The state's rate with the high-side switch closed.
fn rate(sc: &Scenario, x: [f64; 2]) -> [f64; 2] {
    let p = &sc.plant;
    let r = p.r_source_ohm + p.r_on_ohm + p.dcr_ohm;
    let v = output(sc, x);
    [(VIN_V - r * x[0] - v) / p.l_h, (x[0] - v / LOAD_OHM) / p.c_f]
}

/// The output every `STEP_S` from t = 0 to `until_s` (classical RK4).
fn reference(sc: &Scenario, until_s: f64) -> Vec<f64> {
    let h = STEP_S;
    let at = |x: [f64; 2], k: [f64; 2], s: f64| [x[0] + s * k[0], x[1] + s * k[1]];
    let mut x = [START.0, START.1];
    let mut out = vec![output(sc, x)];
    for _ in 0..(until_s / h).round() as usize {
        let k1 = rate(sc, x);
        let k2 = rate(sc, at(x, k1, 0.5 * h));
        let k3 = rate(sc, at(x, k2, 0.5 * h));
        let k4 = rate(sc, at(x, k3, h));
        x = [0, 1].map(|j| x[j] + h / 6.0 * (k1[j] + 2.0 * k2[j] + 2.0 * k3[j] + k4[j]));
        out.push(output(sc, x));
    }
    out
}

/// The times the sampled output crosses `level`, s, each with its
/// direction (true: rising), by linear interpolation between samples.
fn crossings(v: &[f64], level: f64) -> Vec<(bool, f64)> {
    v.windows(2)
        .enumerate()
        .filter(|(_, w)| (w[0] < level) != (w[1] < level))
        .map(|(k, w)| (w[1] > w[0], (k as f64 + (level - w[0]) / (w[1] - w[0])) * STEP_S))
        .collect()
}

#[test]
fn a_crossing_and_its_return_between_two_readings_both_interrupt() {
    let sc = scenario();
    let channel = sensed_output_channel(&sc.mcu).unwrap();
    let code = (0..4096u16).find(|&c| f64::from(channel.to_volts(c)) >= LEVEL_V).unwrap();
    let level = f64::from(channel.to_volts(code));

    // The premise: over the quiet interval the output starts and ends
    // below the level, rising at both ends, and overshoots through it
    // once, up and back.
    let v = reference(&sc, QUIET_S);
    let rising = |k: usize| v[k + 1] > v[k];
    let last = v.len() - 2;
    assert!(v[0] < level && v[last] < level, "below at both ends");
    assert!(rising(0) && rising(last), "rising at both ends");
    let expected = crossings(&v, level);
    assert_eq!(expected.iter().map(|c| c.0).collect::<Vec<_>>(), [true, false], "{expected:?}");

    let edges = Rc::new(RefCell::new(Vec::new()));
    let log = Rc::clone(&edges);
    sim::run_firmware(&sc, |p: &Peripherals| Ringing {
        gate: p.gate_pin(),
        dac: p.dac(),
        code,
        edges: log,
    })
    .unwrap();

    let hz = f64::from(sc.mcu.clock_hz);
    let latency = (sc.mcu.isr_latency_s * hz).round() as u32;
    let seen: Vec<_> = edges
        .borrow()
        .iter()
        .map(|&(high, at)| (high, at.ticks_since(Instant(sc.mcu.start_tick))))
        .filter(|&(_, tick)| f64::from(tick) / hz < QUIET_S)
        .collect();
    let due: Vec<_> = expected
        .iter()
        .map(|&(up, t)| (up, ((t + sc.mcu.comparator_delay_s) * hz).ceil() as u32 + latency))
        .collect();
    // The DAC's first code settles the comparator low at once (its
    // report comes after the delay and latency); then the overshoot.
    let levels: Vec<_> = seen.iter().map(|e| e.0).collect();
    assert_eq!(levels, [false, true, false], "{seen:?}, due {due:?}");
    for (&(_, tick), &(_, at)) in seen[1..].iter().zip(&due) {
        // One tick either way: a crossing within rounding of a tick's
        // boundary may fall on either side of it.
        assert!(tick.abs_diff(at) <= 1, "edge at tick {tick}, due at {at}");
    }
}
