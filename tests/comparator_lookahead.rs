//! A comparator crossing and its return inside one long event-free
//! interval both reach the firmware, each at its own tick.
//!
//! The loop looks ahead of the plant for the comparator's crossings
//! between the microcontroller's events, testing each interval from its
//! ends. An interval that holds a crossing, its return and two turns of the
//! output can show the output below the level and moving the same way at
//! both ends; only a bound on the interval's length below `π/ρ` (`ρ` the
//! fastest rate; the bound is a quarter of `1/ρ`,
//! `sim::plant::SCAN_OF_FASTEST`, which also bounds the error of the
//! ends' cubic) keeps the pair in sight. Here a firmware of its own holds
//! the gate on from t = 0 over a 6 V input, so the demo stage rings from
//! 5 V (about 0.64 ms a period), with its first overshoot through a DAC
//! level near 6.1 V, and reads the ADC every 0.8 ms: after the first
//! microsecond's events (the first reading, its conversion, the DAC's
//! first report) nothing is due until 0.8 ms, and the overshoot lies
//! inside that interval. The test checks that premise first, on the
//! handlers' own log and on the reference.
//!
//! Reference: the stage's state equations in the switch's on state,
//! written from Kirchhoff's laws as in Erickson & Maksimović,
//! *Fundamentals of Power Electronics*, 3rd ed., ch. 2 (the inductor's
//! voltage and the capacitor's current), with the series resistance `r`
//! and the capacitor's ESR in parallel with the load `R` added:
//! `v_out = (v_C + ESR·i) / (1 + ESR/R)`; integrated here by the classical
//! fourth-order Runge–Kutta formula (Abramowitz & Stegun, *Handbook of
//! Mathematical Functions*, 25.5.10, cited from memory) at 1 ns steps,
//! independently of the simulator's closed form. The comparator's
//! interrupt comes at the first tick at or after the crossing plus the
//! comparator's propagation delay, plus the interrupt latency (the
//! scenario's `mcu` timings).

use embedded_hal::digital::OutputPin;
use ripplectl::sim::hardware::sensed_output_channel;
use ripplectl::sim::peripherals::{SimDac, SimPin};
use ripplectl::sim::plant::Stage;
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

/// The events of the run's first microsecond, s: none after it is due
/// before `QUIET_S`.
const EARLY_S: f64 = 1e-6;

/// The demo stage from `START` with the gate held on, read every
/// `QUIET_S`, handlers in zero time, no saturation (a linear stage), a
/// diode stage (no dead time: the high side conducts from t = 0) and an
/// exact clock.
fn scenario() -> Scenario {
    let mut sc = Scenario::default_demo();
    // The record's steady window starts at half the run, an event of the
    // loop: at `QUIET_S`, not inside the quiet interval.
    sc.duration_s = 2.0 * QUIET_S;
    sc.plant.stage = Stage::NonSynchronous;
    sc.mcu.clock_error_ppm = 0.0;
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

/// What the firmware saw: the comparator's edges, and when its other
/// handlers ran.
#[derive(Default)]
struct Log {
    edges: Vec<(bool, Instant)>,
    others: Vec<Instant>,
}

/// Holds the gate on, sets the DAC once, and logs its handlers.
struct Ringing {
    gate: SimPin,
    dac: SimDac,
    code: u16,
    log: Rc<RefCell<Log>>,
}

impl Firmware for Ringing {
    fn adc_done(&mut self, _output: u16, _input: u16, now: Instant) {
        self.log.borrow_mut().others.push(now);
    }

    fn comparator_edge(&mut self, level: bool, now: Instant) {
        self.log.borrow_mut().edges.push((level, now));
    }

    fn timer_compare(&mut self, now: Instant) {
        self.log.borrow_mut().others.push(now);
    }

    fn housekeeping(&mut self, now: Instant) {
        self.log.borrow_mut().others.push(now);
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
    let code = (0..=channel.full_scale_code())
        .find(|&c| f64::from(channel.to_volts(c)) >= LEVEL_V)
        .unwrap();
    let level = f64::from(channel.to_volts(code));

    let log = Rc::new(RefCell::new(Log::default()));
    let shared = Rc::clone(&log);
    sim::run_firmware(&sc, |p: &Peripherals| Ringing {
        gate: p.gate_pin(),
        dac: p.dac(),
        code,
        log: shared,
    })
    .unwrap();
    let log = log.borrow();
    let hz = f64::from(sc.mcu.clock_hz);
    let tick_of = |at: Instant| at.ticks_since(Instant(sc.mcu.start_tick));
    let seconds = |tick: u32| f64::from(tick) / hz;

    // The premise, on the handlers' log: every handler but the
    // overshoot's edges ran in the first microsecond or from `QUIET_S` on.
    let early: Vec<u32> = log
        .others
        .iter()
        .chain(log.edges.iter().take(1).map(|e| &e.1))
        .map(|&at| tick_of(at))
        .filter(|&tick| seconds(tick) < QUIET_S)
        .collect();
    assert!(early.iter().all(|&tick| seconds(tick) <= EARLY_S), "{early:?}");
    // And on the reference: over the quiet interval, from the last of
    // those events to `QUIET_S`, the output starts and ends below the
    // level, rising at both ends, and overshoots through it once, up and
    // back.
    let quiet_from = seconds(*early.iter().max().unwrap());
    let v = reference(&sc, QUIET_S);
    let first = (quiet_from / STEP_S).round() as usize;
    let rising = |k: usize| v[k + 1] > v[k];
    let last = v.len() - 2;
    assert!(v[first] < level && v[last] < level, "below at both ends");
    assert!(rising(first) && rising(last), "rising at both ends");
    let expected = crossings(&v[first..], level);
    assert_eq!(expected.iter().map(|c| c.0).collect::<Vec<_>>(), [true, false], "{expected:?}");
    let expected: Vec<_> =
        expected.iter().map(|&(up, t)| (up, t + first as f64 * STEP_S)).collect();

    let latency = (sc.mcu.isr_latency_s * hz).round() as u32;
    let seen: Vec<_> = log
        .edges
        .iter()
        .map(|&(high, at)| (high, tick_of(at)))
        .filter(|&(_, tick)| seconds(tick) < QUIET_S)
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
