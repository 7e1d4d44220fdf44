//! The plant against an independent circuit simulator: ngspice (Debian's
//! `ngspice` package) in batch mode, on an open-loop fixed-duty netlist this
//! test writes from the same parameters.
//!
//! Without ngspice on the PATH the checks are skipped with a message, unless
//! `RIPPLECTL_REQUIRE_NGSPICE` is set (CI sets it), when they fail.

use crate::common;

use common::plants::near_ideal;
use common::tools::ngspice_available;
use ripplectl::sim::netlist::{parse_wrdata, steady_figures, Drive, Netlist};
use ripplectl::sim::open_loop::{run_fixed_duty, FixedDuty};
use ripplectl::sim::plant::{Environment, PlantParams};
use std::process::Command;

/// Run ngspice on the netlist; returns (mean output, inductor ripple) over
/// the last `measured` seconds.
fn ngspice_steady(netlist: &mut Netlist, measured: f64) -> (f64, f64) {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("out.data");
    netlist.data_path = data.display().to_string();
    let cir = dir.path().join("buck.cir");
    std::fs::write(&cir, netlist.text()).unwrap();
    let out = Command::new("ngspice").arg("-b").arg(&cir).output().unwrap();
    assert!(out.status.success(), "ngspice failed: {}", String::from_utf8_lossy(&out.stderr));
    let rows = parse_wrdata(&std::fs::read_to_string(&data).unwrap());
    assert!(rows.len() > 1000, "ngspice wrote {} rows", rows.len());
    steady_figures(&rows, netlist.stop_s - measured)
}

fn cross_check(
    params: PlantParams,
    vin: f64,
    load_ohm: f64,
    duty: f64,
    f: f64,
    cycles: u32,
    initial: (f64, f64),
) {
    let period = 1.0 / f;
    // ripplectl: the duty applies exactly with 1000 samples per cycle.
    let run = FixedDuty { duty, f_sw_hz: f, cycles, measured_cycles: 20, samples_per_cycle: 1000 };
    let env = Environment { vin_v: vin, load_g_s: 1.0 / load_ohm, ..Environment::default() };
    let ours = run_fixed_duty(params, env, initial, &run);
    let mut netlist = Netlist {
        params,
        vin_v: vin,
        load_ohm,
        il0_a: initial.0,
        vc0_v: initial.1,
        drive: Drive::FixedDuty { duty, f_sw_hz: f },
        stop_s: f64::from(cycles) * period,
        max_step_s: period / 1000.0,
        data_path: String::new(),
    };
    let (mean, ripple) = ngspice_steady(&mut netlist, 20.0 * period);
    let mean_err = (ours.vout_mean_v - mean).abs() / mean;
    let ripple_err = (ours.il_pp_a - ripple).abs() / ripple;
    eprintln!(
        "mean {:.5} V vs ngspice {mean:.5} V ({:.3} %); ripple {:.5} A vs {ripple:.5} A ({:.3} %)",
        ours.vout_mean_v,
        100.0 * mean_err,
        ours.il_pp_a,
        100.0 * ripple_err
    );
    assert!(mean_err < 0.005, "mean output differs by {:.3} %", 100.0 * mean_err);
    assert!(ripple_err < 0.02, "inductor ripple differs by {:.3} %", 100.0 * ripple_err);
}

/// A lossy stage, so drops and the diode count: Schottky-like 0.4 V + 50 mΩ.
fn lossy(l_h: f64, c_f: f64) -> PlantParams {
    let mut p = near_ideal(l_h, c_f, 0.03, 0.05);
    p.r_on_ohm = 0.08;
    p.r_source_ohm = 0.02;
    p.diode_vf_v = 0.4;
    p.diode_rd_ohm = 0.05;
    p
}

#[test]
fn ccm_open_loop_matches_ngspice() {
    if !ngspice_available() {
        return;
    }
    // 24 V → ~5.5 V at 2.2 A, 100 kHz, 47 µH / 47 µF: CCM with 1 A ripple.
    cross_check(lossy(47e-6, 47e-6), 24.0, 2.5, 0.25, 100e3, 250, (2.2, 5.5));
}

#[test]
fn dcm_open_loop_matches_ngspice() {
    if !ngspice_available() {
        return;
    }
    // Light load (50 Ω) with 10 µH: the diode current reaches zero each cycle.
    cross_check(lossy(10e-6, 47e-6), 24.0, 50.0, 0.1, 100e3, 400, (0.0, 9.0));
}
