//! Estimators against handbook relations.
//!
//! Sources: Erickson & Maksimović, *Fundamentals of Power Electronics*,
//! 3rd ed., ch. 2 (inductor ripple) and ch. 5 (CCM/DCM boundary);
//! Steinmetz's equation (C. P. Steinmetz, 1892); the hard-switching loss
//! approximation ½·V·I·(t_r + t_f)·f (common practice).

use ripplectl::design;
use ripplectl::estimate::{
    Amps, CurrentEstimator, CycleCurrents, InductorModel, LossConfig, LossModel,
    MeasuredEfficiency, Observer, ObserverConfig, SlopeScale, Steinmetz,
};
use ripplectl::units::{Fraction, Volts, ONE};
use ripplectl::{ConfigError, ErrorKind, Gate, Instant, TimerClock};

const CLOCK: u32 = 64_000_000;

fn lossless(l_h: f32) -> InductorModel {
    InductorModel {
        l_h,
        r_on_ohm: 0.0,
        dcr_ohm: 0.0,
        diode_vf_v: 0.0,
        diode_rd_ohm: 0.0,
        r_low_ohm: None,
    }
}

/// Drive `est` with `cycles` of on/off edges from `start` (wrapping
/// ticks); the last cycle completed.
fn run_cycles(
    est: &mut CurrentEstimator,
    start: u32,
    on: u32,
    period: u32,
    cycles: u32,
) -> Option<CycleCurrents> {
    let mut t = start;
    for _ in 0..cycles {
        est.on_gate(Gate::On, Instant(t));
        t = t.wrapping_add(on);
        est.on_gate(Gate::Off, Instant(t));
        t = t.wrapping_add(period - on);
    }
    est.on_gate(Gate::On, Instant(t))
}

#[test]
fn ccm_ripple_matches_erickson() {
    // 24 V → 5 V, 47 µH, 100 kHz: Δi = (Vin − Vout)·D/(L·f) = 0.842 A
    // (Erickson & Maksimović ch. 2, peak to peak).
    let (vin, l, f) = (24.0f32, 47e-6f32, 100e3f32);
    let period = (CLOCK as f32 / f) as u32;
    let on = (period as f32 * 5.0 / vin).round() as u32;
    // The output that balances the whole-tick duty exactly.
    let vout = vin * on as f32 / period as f32;
    let mut est = at_voltages(l, &TimerClock::new(CLOCK).unwrap(), vin, vout);
    est.restart_at(Instant(u32::MAX - 1000));
    est.shift(Amps::from_num(2));
    let c = run_cycles(&mut est, u32::MAX - 1000, on, period, 20).unwrap();
    let d = on as f32 / period as f32;
    let expected = (vin - vout) * d / (l * f);
    let got = (c.peak - c.valley).to_num::<f32>();
    assert!((got - expected).abs() / expected < 0.005, "ripple {got} vs {expected}");
    assert!(!c.dcm);
    // Volt-second balance holds, so the valley does not drift.
    assert!((c.valley.to_num::<f32>() - 2.0).abs() < 0.01, "valley {}", c.valley);
}

#[test]
fn ccm_dcm_boundary_matches_erickson() {
    // At the boundary the current just touches zero: I_crit = Δi/2
    // (Erickson & Maksimović ch. 5, K = K_crit).
    let (vin, vout, l) = (24.0f32, 5.0f32, 22e-6f32);
    let clock = TimerClock::new(CLOCK).unwrap();
    let period = 640u32;
    let on = (period as f32 * vout / vin).round() as u32;
    let mut est = at_voltages(l, &clock, vin, vout);
    let c = run_cycles(&mut est, 0, on, period, 5).unwrap();
    let d = f64::from(on) / f64::from(period);
    let vin_eff = f64::from(vout) / d;
    let i_crit = design::boundary_current(
        vin_eff,
        f64::from(vout),
        f64::from(l),
        f64::from(CLOCK) / f64::from(period),
    );
    // A triangle from zero (exactly at the boundary the clamp at zero may
    // or may not engage): its mean is (peak + valley)/2 = peak/2.
    assert!(c.valley.to_num::<f32>().abs() < 1e-3, "valley {}", c.valley);
    let avg = f64::from(est.cycle_average(&c).to_num::<f32>());
    assert!((avg - i_crit).abs() / i_crit < 0.01, "boundary average {avg} vs {i_crit}");
    // A longer period at the same on-time idles at zero: DCM.
    let mut light = at_voltages(l, &clock, vin, vout);
    light.restart_at(Instant(0));
    light.take_window();
    let c = run_cycles(&mut light, 0, on, 2 * period, 5).unwrap();
    assert!(c.dcm && c.valley == Amps::ZERO);
    // The DCM average is the triangle's charge over the period:
    // ½·i_pk·(T_on + T_fall), T_fall = T_on·(Vin − Vout)/Vout.
    let i_pk = f64::from(vin - vout) / f64::from(l) * f64::from(on) / f64::from(CLOCK);
    let t_on = f64::from(on) / f64::from(CLOCK);
    let q = 0.5 * i_pk * (t_on + t_on * f64::from(vin - vout) / f64::from(vout));
    let want = q / (f64::from(2 * period) / f64::from(CLOCK));
    let got = light.take_window().average().to_num::<f64>();
    assert!((got - want).abs() / want < 0.01, "DCM average {got} vs {want}");
    // The same, cycle by cycle.
    let per_cycle = f64::from(light.cycle_average(&c).to_num::<f32>());
    assert!((per_cycle - want).abs() / want < 0.01, "DCM cycle average {per_cycle} vs {want}");
}

#[test]
fn inductance_error_scales_the_ripple() {
    // The estimate's ripple is inversely proportional to the assumed L: a
    // model 10 % high gives 1/1.1 of the true ripple.
    let clock = TimerClock::new(CLOCK).unwrap();
    let ripple = |l: f32| {
        let mut est = at_voltages(l, &clock, 24.0, 5.0);
        est.restart_at(Instant(0));
        est.shift(Amps::from_num(2));
        let c = run_cycles(&mut est, 0, 133, 640, 10).unwrap();
        (c.peak - c.valley).to_num::<f32>()
    };
    let ratio = ripple(47e-6 * 1.1) / ripple(47e-6);
    assert!((ratio - 1.0 / 1.1).abs() < 0.002, "{ratio}");
}

#[test]
fn steinmetz_worked_example() {
    // P_v = k·f^α·B̂^β (Steinmetz 1892). Worked by hand: k = 4, α = 1.4,
    // β = 2.6 (MnZn-ferrite-like, from memory), f = 100 kHz, B̂ = 0.05 T:
    // f^α = 10^7, B̂^β = e^{2.6·ln 0.05} = 4.1418e-4, P_v = 16 567 W/m³;
    // over 1.5 cm³, 24.85 mW.
    let core =
        Steinmetz { k: 4.0, alpha: 1.4, beta: 2.6, turns: 20.0, area_m2: 20e-6, volume_m3: 1.5e-6 };
    // B̂ = L·Δi/(2·N·A_e) = 0.05 T for L = 40 µH, Δi = 1 A.
    let p = core.power_w(40e-6, 1.0, 100e3);
    assert!((p - 0.024_85).abs() / 0.024_85 < 0.002, "{p}");
}

/// A lossless estimator of inductance `l` on `clock` whose slopes use
/// `vin` and `vout`, volts.
fn at_voltages(l: f32, clock: &TimerClock, vin: f32, vout: f32) -> CurrentEstimator {
    let model = lossless(l);
    let mut est = CurrentEstimator::new(&model, clock, 40.0).unwrap();
    est.set_voltages(SlopeScale::of(&model, clock), vin, vout);
    est
}

fn flat_current_window(i_a: f32, vin: f32, vout: f32) -> ripplectl::estimate::Phases {
    // An estimator at constant current (no ripple: huge L), 100 cycles.
    let clock = TimerClock::new(CLOCK).unwrap();
    let mut est = at_voltages(1.0, &clock, vin, vout);
    est.restart_at(Instant(0));
    est.shift(Amps::from_num(i_a));
    let on = (640.0 * vout / vin) as u32;
    run_cycles(&mut est, 0, on, 640, 100);
    est.take_window()
}

#[test]
fn switching_loss_is_half_v_i_t_f() {
    // ½·Vin·I·(t_r + t_f)·f_sw (common practice, hard switching).
    let model = loss_model(LossConfig {
        l_h: 1.0,
        r_on_ohm: 0.0,
        dcr_ohm: 0.0,
        diode_vf_v: 0.0,
        off_r_ohm: 0.0,
        esr_ohm: 0.0,
        t_rise_s: 20e-9,
        t_fall_s: 30e-9,
        gate_charge_c: 0.0,
        gate_drive_v: 0.0,
        core: None,
    });
    let w = flat_current_window(2.0, 24.0, 5.0);
    let b = model.evaluate(&w, volts(24.0), volts(5.0));
    let expected = 0.5 * 24.0 * 2.0 * 50e-9 * 100e3;
    let got = b.switching.to_num::<f32>();
    assert!((got - expected).abs() / expected < 0.01, "{got} vs {expected}");
}

#[test]
fn conduction_losses_follow_rms_current() {
    // Flat 2 A at D = 5/24: switch I²·R_on·D, diode V_f·I·(1 − D) (the
    // textbook CCM forms), DCR I²·R.
    let model = loss_model(LossConfig {
        l_h: 1.0,
        r_on_ohm: 0.1,
        dcr_ohm: 0.05,
        diode_vf_v: 0.4,
        off_r_ohm: 0.0,
        esr_ohm: 0.0,
        t_rise_s: 0.0,
        t_fall_s: 0.0,
        gate_charge_c: 0.0,
        gate_drive_v: 0.0,
        core: None,
    });
    let w = flat_current_window(2.0, 24.0, 5.0);
    let b = model.evaluate(&w, volts(24.0), volts(5.0));
    let d = fraction(w.duty);
    let close = |a: Volts, b: f32| (a.to_num::<f32>() - b).abs() / b < 0.01;
    assert!(close(b.switch, 4.0 * 0.1 * d), "switch {}", b.switch);
    assert!(close(b.diode, 0.4 * 2.0 * (1.0 - d)), "diode {}", b.diode);
    assert!(close(b.dcr, 4.0 * 0.05), "dcr {}", b.dcr);
    assert!(close(b.output, 10.0), "output {}", b.output);
}

#[test]
fn fixed_point_core_loss_follows_steinmetz() {
    // The slow path's integer evaluation of k·f^α·B̂^β·V (Steinmetz 1892)
    // against the equation in floating point, over a decade of frequency
    // and of ripple: within 0.5 %.
    let core =
        Steinmetz { k: 4.0, alpha: 1.4, beta: 2.6, turns: 20.0, area_m2: 20e-6, volume_m3: 1.5e-6 };
    let model = loss_model(LossConfig {
        l_h: 47e-6,
        r_on_ohm: 0.0,
        dcr_ohm: 0.0,
        diode_vf_v: 0.0,
        off_r_ohm: 0.0,
        esr_ohm: 0.0,
        t_rise_s: 0.0,
        t_fall_s: 0.0,
        gate_charge_c: 0.0,
        gate_drive_v: 0.0,
        core: Some(core),
    });
    for (period, on) in [(640u32, 133u32), (1_280, 266), (3_200, 660), (6_400, 1_330)] {
        let clock = TimerClock::new(CLOCK).unwrap();
        let mut est = at_voltages(47e-6, &clock, 24.0, 24.0 * on as f32 / period as f32);
        est.restart_at(Instant(0));
        est.shift(Amps::from_num(3));
        run_cycles(&mut est, 0, on, period, 10);
        let w = est.take_window();
        let got = model.evaluate(&w, volts(24.0), volts(5.0)).core.to_num::<f32>();
        let want = core.power_w(47e-6, w.ripple().to_num::<f32>(), w.f_sw_hz as f32);
        assert!((got - want).abs() / want < 0.005, "{period}: {got} vs {want}");
    }
}

fn loss_model(cfg: LossConfig) -> LossModel {
    LossModel::new(&cfg, &TimerClock::new(CLOCK).unwrap()).unwrap()
}

fn volts(v: f32) -> Volts {
    Volts::from_num(v)
}

fn fraction(f: Fraction) -> f32 {
    f as f32 / ONE as f32
}

#[test]
fn measured_efficiency_is_power_ratio() {
    let mut m = MeasuredEfficiency::new(ONE / 5);
    for _ in 0..50 {
        m.update(volts(24.0), Amps::from_num(0.5), volts(5.0), Amps::from_num(2.16));
    }
    assert!((fraction(m.efficiency()) - 10.8 / 12.0).abs() < 1e-4);
}

/// The demo's stage at a 10 kHz slow path, 1 kHz observer bandwidth.
fn demo_observer() -> ObserverConfig {
    ObserverConfig {
        l_h: 47e-6,
        c_f: 220e-6,
        r_ohm: 0.08,
        period_s: 100e-6,
        poles: ObserverConfig::poles_for_bandwidth(1_000.0, 100e-6),
    }
}

#[test]
fn observer_places_its_poles() {
    // Ackermann's formula: the error dynamics Φ − K·H must have exactly the
    // requested characteristic polynomial (z − p1)(z − p2)(z − p3).
    let cfg = demo_observer();
    let obs = Observer::new(&cfg).unwrap();
    let m = obs.error_dynamics();
    let trace = m[0][0] + m[1][1] + m[2][2];
    let minors = m[0][0] * m[1][1] - m[0][1] * m[1][0] + m[0][0] * m[2][2] - m[0][2] * m[2][0]
        + m[1][1] * m[2][2]
        - m[1][2] * m[2][1];
    let det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
    let [p1, p2, p3] = cfg.poles.map(f64::from);
    assert!((trace - (p1 + p2 + p3)).abs() < 1e-4, "trace {trace}");
    assert!((minors - (p1 * p2 + p1 * p3 + p2 * p3)).abs() < 1e-4, "minors {minors}");
    assert!((det - p1 * p2 * p3).abs() < 1e-4, "det {det}");
}

#[test]
fn observer_converges_to_the_drop_balance() {
    // Steady state of the averaged model: i = (u − v)/R. Start far off.
    let cfg = demo_observer();
    let mut obs = Observer::new(&cfg).unwrap();
    obs.reset(Amps::ZERO, volts(5.0), Amps::ZERO);
    let (v, i) = (5.0f32, 2.0f32);
    for _ in 0..200 {
        obs.update(volts(v + 0.08 * i), volts(v), None);
    }
    let (current, load) = (obs.current().to_num::<f32>(), obs.load().to_num::<f32>());
    assert!((current - i).abs() < 0.01, "{current}");
    assert!((load - i).abs() < 0.01, "{load}");
}

#[test]
fn zero_resistance_is_not_observable() {
    // The DC current is seen through R·i only; with R = 0 it is not.
    let cfg = ObserverConfig {
        l_h: 47e-6,
        c_f: 220e-6,
        r_ohm: 0.0,
        period_s: 100e-6,
        poles: [0.5, 0.6, 0.7],
    };
    assert_eq!(
        Observer::new(&cfg).unwrap_err(),
        ConfigError::new("r_ohm", ErrorKind::NotObservable)
    );
}

mod never_panics {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(proptest::test_runner::Config { cases: 10_000, failure_persistence: None, ..Default::default() })]

        /// Any edges, times (with overflow checks on, in the test build),
        /// readings and voltages: no panic, and a diode stage's current is
        /// never negative once an off-time segment has been integrated
        /// (while on it may reverse: with V_in below V_out the switch
        /// conducts backwards).
        #[test]
        fn arbitrary_edges_and_readings(
            vin in -100.0f32..100.0, vout in -10.0f32..60.0,
            events in prop::collection::vec((any::<u32>(), 0u8..4, any::<u16>()), 1..200),
        ) {
            let clock = TimerClock::new(CLOCK).unwrap();
            let mut est = at_voltages(47e-6, &clock, vin, vout);
            let adc = ripplectl::AdcChannel::new(12, 3.3, 0.32, 0.0).unwrap();
            est.follow_output(&adc, SlopeScale::of(&lossless(47e-6), &clock));
            for (t, kind, code) in events {
                let now = Instant(t);
                match kind {
                    0 => { est.on_gate(Gate::On, now); }
                    1 => { est.on_gate(Gate::Off, now); }
                    2 => {
                        est.on_output_code(code, now);
                        if est.gate() == Gate::Off {
                            prop_assert!(est.current() >= Amps::ZERO, "{}", est.current());
                        }
                    }
                    _ => { est.current_at(now); est.ticks_to_reach(Amps::from_num(4)); }
                }
            }
        }
    }
}
