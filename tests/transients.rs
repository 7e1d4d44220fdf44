//! Transient figures against a case with a closed form: a current-load step
//! on the ESR-dominated hysteretic loop.

use crate::common;

use common::open_window;
use common::plants::near_ideal;
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::transient::TransientParams;
use ripplectl::sim::{self, Scenario, Summary};

const VIN: f64 = 24.0;
const VOUT: f64 = 5.0;
const L: f64 = 220e-6;
const ESR: f64 = 0.05;
const BAND: f64 = 0.04;
const I0: f64 = 1.0;
const DI: f64 = 2.0;
/// Recovery band half-width, V.
const RECOVERY_BAND: f64 = 0.05;
const T_STEP: f64 = 2e-3;

/// An exact analog comparator (no delay, 1 ns timer ticks) around a stage
/// whose output ripple is all ESR (C = 0.1 F: its own ripple is under 0.1 %
/// of ESR·Δi), fed by a current-sink load stepping from I0 to I0 + DI at
/// `T_STEP + phase_s`; ADC samples every 250 ns, so the output is observed
/// at least that often.
fn scenario(phase_s: f64) -> Scenario {
    let mut s = common::sampled_fixture();
    s.control.law =
        LawParams::AnalogRetrofit { lower_v: VOUT - BAND / 2.0, upper_v: VOUT + BAND / 2.0 };
    s.control.window = open_window();
    s.plant = near_ideal(L, 0.1, ESR, 0.0);
    s.firmware.observer_bandwidth_hz = None;
    // The loop, not the firmware's current limit, is under test here.
    s.firmware.protection.current_limit_a = 20.0;
    s.mcu.clock_hz = 1_000_000_000;
    s.mcu.sample_rate_hz = 4e6;
    s.mcu.conversion_s = 50e-9;
    s.mcu.comparator_delay_s = 0.0;
    s.mcu.isr_latency_s = 0.0;
    s.mcu.noise_lsb_rms = 0.0;
    s.input = InputProfile { points: vec![[0.0, VIN]] };
    s.load = vec![
        LoadChange { at_s: 0.0, load: Load::Current { amps: I0 } },
        LoadChange { at_s: T_STEP + phase_s, load: Load::Current { amps: I0 + DI } },
    ];
    s.transient = Some(TransientParams { band_v: Some(RECOVERY_BAND) });
    s.initial_output_v = VOUT;
    s.initial_inductor_a = I0;
    s.duration_s = T_STEP + 0.5e-3;
    s
}

/// Closed forms, derived here for the ESR-dominated loop. The output is
/// `v_o = v_C + ESR·(i_L − I_o)` with `v_C` constant (C large), and the
/// inductor current ramps at `(V_in − V_o)/L` while on and `V_o/L` while
/// off (Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd
/// ed., ch. 2, inductor volt-second relations). So `v_o` ramps up at
/// `s_up = ESR·(V_in − V_o)/L` from the lower threshold for
/// `T_on = BAND/s_up`, then down at `s_down = ESR·V_o/L` from the upper.
struct Loop {
    s_up: f64,
    s_down: f64,
    t_on: f64,
}

impl Loop {
    fn new() -> Self {
        let s_up = ESR * (VIN - VOUT) / L;
        Self { s_up, s_down: ESR * VOUT / L, t_on: BAND / s_up }
    }

    /// The output just before the step, from the time since the turn-on of
    /// the cycle the step falls in.
    fn output_before(&self, since_on_s: f64) -> f64 {
        if since_on_s < self.t_on {
            VOUT - BAND / 2.0 + since_on_s * self.s_up
        } else {
            VOUT + BAND / 2.0 - (since_on_s - self.t_on) * self.s_down
        }
    }
}

#[test]
fn load_step_undershoot_is_esr_times_step_plus_the_band_position() {
    let lp = Loop::new();
    let period = lp.t_on + BAND / lp.s_down;
    let mut undershoots = Vec::new();
    for k in 0..8 {
        let phase = period * f64::from(k) / 8.0;
        let s = scenario(phase);
        let out = sim::run(&s).unwrap();
        let summary = Summary::of(&out, &s.name, 0.0);
        assert!(summary.faults.is_empty(), "{:?}", summary.faults);
        let [t] = summary.transients.as_slice() else { panic!("{:?}", summary.transients) };
        let t_step = T_STEP + phase;
        assert_eq!((t.t_s, t.kind.as_str()), (t_step, "load-step"));
        // The step lowers v_o by ESR·ΔI at once (the capacitor's voltage is
        // continuous, its current falls by ΔI); the comparator, already
        // below its lower threshold, turns the switch on with no delay, so
        // that instant is the minimum:
        //   undershoot = V_set − v_o(t⁻) + ESR·ΔI,
        // with v_o(t⁻) anywhere in V_set ± band/2.
        // The cycle in progress when the step came (the comparator turns the
        // switch on at the step itself when it was off).
        let cycle = out.recorder.cycles.iter().rev().find(|c| c.t_s < t_step).unwrap();
        let v_before = lp.output_before(t_step - cycle.t_s);
        let predicted = VOUT - v_before + ESR * DI;
        eprintln!(
            "phase {k}/8: undershoot {:.2} mV, closed form {:.2} mV",
            t.undershoot_v * 1e3,
            predicted * 1e3
        );
        // 1.5 mV: the capacitor's own ripple and drift (under 0.5 mV here)
        // and one 250 ns observation interval at the comparator's edge.
        assert!((t.undershoot_v - predicted).abs() < 1.5e-3, "{t:?} vs {predicted}");
        assert!(
            (ESR * DI - BAND / 2.0 - 1.5e-3..=ESR * DI + BAND / 2.0 + 1.5e-3)
                .contains(&t.undershoot_v),
            "{t:?}"
        );
        // Recovery: v_o rises at s_up from its minimum into the band
        // V_set ± 50 mV, and the loop then holds it within V_set ± band/2.
        let recovery = (predicted - RECOVERY_BAND) / lp.s_up;
        let got = t.recovery_s.expect("recovers");
        eprintln!("          recovery {:.2} µs, closed form {:.2} µs", got * 1e6, recovery * 1e6);
        // One observation interval (250 ns) plus 3 % for the capacitor's
        // discharge while the current catches up (ΔI/C against s_up).
        assert!((got - recovery).abs() < 0.25e-6 + 0.03 * recovery, "{got} vs {recovery}");
        // No overshoot beyond the upper threshold without loop delay.
        assert!(t.overshoot_v <= BAND / 2.0 + 1.5e-3, "{t:?}");
        // The inductor peaks where the output reaches the upper threshold:
        // v_o − v_C = ESR·(i_L − I_o) = band/2, so i_L = I0 + ΔI + band/(2·ESR).
        let peak = I0 + DI + BAND / (2.0 * ESR);
        eprintln!("          inductor peak {:.4} A, closed form {peak:.4} A", t.il_peak_a);
        // 1 %: the capacitor sits under 1 mV from the setpoint (its drift:
        // 20 mA of current per mV at 50 mΩ).
        assert!((t.il_peak_a - peak).abs() < 0.01 * peak, "peak {} vs {peak}", t.il_peak_a);
        // The slowest cycle of the recovery is the one the step falls in:
        // on until the output climbs from its minimum to the upper
        // threshold (band + ESR·ΔI from a turn-on at the lower threshold,
        // or from the step when the switch was off), then off down the band.
        let on_s = if t_step - cycle.t_s < lp.t_on {
            (BAND + ESR * DI) / lp.s_up
        } else {
            (predicted + BAND / 2.0) / lp.s_up
        };
        let f_min = 1.0 / (on_s + BAND / lp.s_down);
        let got_f = t.fsw_min_hz.expect("cycles during the recovery");
        eprintln!("          slowest {:.3} kHz, closed form {:.3} kHz", got_f / 1e3, f_min / 1e3);
        assert!((got_f - f_min).abs() < 0.01 * f_min, "f_min {got_f} vs {f_min}");
        undershoots.push(t.undershoot_v);
    }
    // The step's position in the ripple shows: the spread across phases
    // covers most of the band.
    let spread = undershoots.iter().fold(f64::NEG_INFINITY, |a, &b| a.max(b))
        - undershoots.iter().fold(f64::INFINITY, |a, &b| a.min(b));
    assert!(spread > 0.6 * BAND, "spread {spread}");
}

#[test]
fn summary_json_lists_the_transients() {
    let s = Scenario::default_demo();
    let out = sim::run(&s).unwrap();
    let v = serde_json::to_value(Summary::of(&out, &s.name, 0.0)).unwrap();
    let list = v["transients"].as_array().unwrap();
    assert_eq!(list.len(), 3, "load step, input step, input ramp: {v}");
    for t in list {
        for key in ["t_s", "kind", "undershoot_v", "overshoot_v", "recovery_s"] {
            assert!(t.get(key).is_some(), "{key} missing in {t}");
        }
    }
}
