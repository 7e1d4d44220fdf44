//! The switched plant against closed-form relations.
//!
//! Source: R. W. Erickson and D. Maksimović, *Fundamentals of Power
//! Electronics*, 3rd ed. (Springer, 2020): ch. 2 (inductor volt-second
//! balance, inductor and capacitor ripple), ch. 3 (buck with inductor
//! winding resistance), ch. 5 (DCM conversion ratio).

use crate::common;

use common::plants::near_ideal;
use ripplectl::sim::open_loop::{applied_duty, run_fixed_duty, FixedDuty};
use ripplectl::sim::plant::{Environment, PlantParams, Stage};
use ripplectl::sim::{self, Scenario};

fn resistive(vin: f64, ohms: f64) -> Environment {
    Environment { vin_v: vin, load_g_s: 1.0 / ohms, ..Environment::default() }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn ccm_mean_output_and_ripple_match_erickson() {
    let (vin, r, dcr, l, c, f) = (24.0, 2.5, 0.02, 47e-6, 100e-6, 100e3);
    let run = FixedDuty {
        duty: 0.25,
        f_sw_hz: f,
        cycles: 800,
        measured_cycles: 20,
        samples_per_cycle: 1000,
    };
    let d = applied_duty(&run);
    // Erickson & Maksimović ch. 3: V/Vg = D / (1 + R_L/R) for the buck with
    // inductor winding resistance R_L.
    let v = vin * d / (1.0 + dcr / r);
    let ss = run_fixed_duty(near_ideal(l, c, 0.0, dcr), resistive(vin, r), (v / r, v), &run);
    assert!(rel(ss.vout_mean_v, v) < 0.01, "mean {} vs {v}", ss.vout_mean_v);
    // Ch. 2: peak-to-peak inductor ripple (Vg − V − I·R_L)·D·Ts/L.
    let di = (vin - v - v / r * dcr) * d / (l * f);
    assert!(rel(ss.il_pp_a, di) < 0.01, "ΔiL {} vs {di}", ss.il_pp_a);
    // Ch. 2: peak-to-peak capacitor ripple Δi/(8·f·C), all ripple current in C.
    let dv = di / (8.0 * f * c);
    assert!(rel(ss.vout_pp_v, dv) < 0.01, "Δv {} vs {dv}", ss.vout_pp_v);
}

#[test]
fn dcm_conversion_ratio_matches_erickson() {
    let (vin, r, l, f) = (24.0, 50.0, 10e-6, 100e3);
    let run = FixedDuty {
        duty: 0.1,
        f_sw_hz: f,
        cycles: 3000,
        measured_cycles: 50,
        samples_per_cycle: 500,
    };
    let d = applied_duty(&run);
    // Ch. 5: K = 2L/(R·Ts); DCM when K < 1 − D; M = 2/(1 + √(1 + 4K/D²)).
    let k = 2.0 * l * f / r;
    assert!(k < 1.0 - d, "operating point must be in DCM");
    let m = 2.0 / (1.0 + (1.0 + 4.0 * k / (d * d)).sqrt());
    let v = m * vin;
    let ss = run_fixed_duty(near_ideal(l, 100e-6, 0.0, 0.0), resistive(vin, r), (0.0, v), &run);
    assert!(ss.il_min_a.abs() < 1e-9, "current must idle at zero in DCM: {}", ss.il_min_a);
    assert!(rel(ss.vout_mean_v, v) < 0.01, "mean {} vs {v} (M = {m})", ss.vout_mean_v);
}

#[test]
fn synchronous_stage_stays_in_ccm_at_light_load() {
    // With a low-side switch the current reverses instead of idling (forced
    // CCM), so the ideal CCM ratio V = D·Vg holds even at light load.
    let mut p = near_ideal(10e-6, 100e-6, 0.0, 0.0);
    p.stage = Stage::Synchronous { r_on_low_ohm: 0.0, dead_time_s: 0.0 };
    let run = FixedDuty {
        duty: 0.2,
        f_sw_hz: 100e3,
        cycles: 3000,
        measured_cycles: 50,
        samples_per_cycle: 500,
    };
    let v = 24.0 * applied_duty(&run);
    let ss = run_fixed_duty(p, resistive(24.0, 50.0), (0.0, v), &run);
    assert!(ss.il_min_a < -0.5, "current must reverse: {}", ss.il_min_a);
    assert!(rel(ss.vout_mean_v, v) < 0.01, "mean {} vs {v}", ss.vout_mean_v);
}

#[test]
fn energy_balances_over_the_default_run() {
    // Conservation of energy: source energy = load energy + every loss +
    // change in stored energy (½LI², ½CV²), each integrated separately.
    let out = sim::run(&Scenario::default_demo()).unwrap();
    let e = &out.energy;
    let stored = out.stored_j.1 - out.stored_j.0;
    let residual = e.input_j - e.output_j - e.losses_j() - stored;
    assert!(residual.abs() / e.input_j < 1e-3, "residual {residual} J of {} J", e.input_j);
}

#[test]
fn saturating_inductor_stores_energy_consistently() {
    // With saturation the magnetic energy is ∫ i·L(i) di; the balance must
    // still close while the current runs deep into the roll-off.
    let mut p: PlantParams = near_ideal(47e-6, 100e-6, 0.01, 0.02);
    p.saturation =
        Some(ripplectl::sim::plant::Saturation { i_sat_a: 1.0, roll_off_a: 1.0, floor: 0.3 });
    let mut plant = ripplectl::sim::plant::Plant::new(p, 0.0);
    plant.set_environment(resistive(24.0, 1.0));
    plant.set_mode(ripplectl::sim::plant::Conduction::HighSide);
    let w0 = plant.stored_j();
    let mut t = 0.0;
    while t < 20e-6 {
        match plant.advance(20e-6 - t, None) {
            ripplectl::sim::plant::Stop::Reached => break,
            ripplectl::sim::plant::Stop::BandEdge(tau)
            | ripplectl::sim::plant::Stop::CurrentZero(tau) => t += tau,
            ripplectl::sim::plant::Stop::Crossing(tau) => t += tau,
        }
    }
    assert!(plant.i_l() > 2.0, "current must pass the roll-off: {}", plant.i_l());
    assert!(
        plant.inductance_h() < 0.31 * 47e-6,
        "inductance at the floor: {}",
        plant.inductance_h()
    );
    let e = plant.energy();
    let residual = e.input_j - e.output_j - e.losses_j() - (plant.stored_j() - w0);
    assert!(residual.abs() / e.input_j < 1e-3, "residual {residual} of {}", e.input_j);
}
