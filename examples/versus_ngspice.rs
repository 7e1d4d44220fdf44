//! Wall time of the same 10 ms closed-loop run in ripplectl and in ngspice.
//!
//! The circuit is the default scenario's power stage under an analog
//! hysteretic comparator (4.98 V / 5.02 V, no delay), the loop ngspice can
//! express with a voltage-controlled switch; ripplectl runs it as the
//! `analog-retrofit` law with a guard window that never binds, and its
//! supervisor. Both start from the same state. Needs `ngspice` on the PATH.
//!
//!     cargo run --release --example versus_ngspice

use ripplectl::sim::netlist::{parse_wrdata, Drive, Netlist};
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, Scenario, Summary};
use ripplectl::{LightLoad, WindowConfig};
use std::process::Command;
use std::time::Instant;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let (lower, upper, vin, load_ohm, stop) = (4.98, 5.02, 24.0, 2.5, 10e-3);
    let mut s = Scenario::default_demo();
    s.plant.saturation = None;
    s.duration_s = stop;
    s.control.law = LawParams::AnalogRetrofit { lower_v: lower, upper_v: upper };
    s.control.window = WindowConfig {
        f_min_hz: 1e3,
        f_max_hz: 5e6,
        min_on_s: 1e-9,
        min_off_s: 1e-9,
        max_on_s: 1e-3,
        light_load: LightLoad::ReportOnly,
    };
    s.mcu.clock_hz = 1_000_000_000;
    s.mcu.comparator_delay_s = 0.0;
    s.mcu.isr_latency_s = 0.0;
    s.input = InputProfile { points: vec![[0.0, vin]] };
    // Both start pre-biased at the operating point. (From cold, the analog
    // comparator has no soft-start: its inrush trips the over-voltage
    // protection, which is worth seeing, but not what this times.)
    s.initial_output_v = 5.0;
    s.initial_inductor_a = vout_a(load_ohm);
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: load_ohm } }];

    let started = Instant::now();
    let out = sim::run(&s)?;
    let ours_s = started.elapsed().as_secs_f64();
    let summary = Summary::of(&out, &s.name, ours_s);
    if std::env::var_os("VERBOSE").is_some() {
        eprintln!(
            "{:?} cycles {} faults {:?}",
            summary.clamps, summary.switching_cycles, summary.faults
        );
    }

    let dir = tempfile::tempdir()?;
    let data = dir.path().join("out.data");
    let netlist = Netlist {
        params: s.plant,
        vin_v: vin,
        load_ohm,
        il0_a: s.initial_inductor_a,
        vc0_v: s.initial_output_v,
        drive: Drive::Hysteretic { lower_v: lower, upper_v: upper },
        stop_s: stop,
        max_step_s: 10e-9,
        data_path: data.display().to_string(),
    };
    let cir = dir.path().join("loop.cir");
    std::fs::write(&cir, netlist.text())?;
    let started = Instant::now();
    let status = Command::new("ngspice").arg("-b").arg(&cir).output()?;
    let spice_s = started.elapsed().as_secs_f64();
    if !status.status.success() {
        return Err(format!("ngspice failed: {}", String::from_utf8_lossy(&status.stderr)).into());
    }
    let rows = parse_wrdata(&std::fs::read_to_string(&data)?);
    let rises = count_turn_ons(&rows, lower, stop / 2.0);

    println!("same 10 ms closed loop (analog hysteretic comparator, 24 V -> 5 V, 2 A)");
    println!(
        "  ripplectl  {:>9.3} ms wall   {:>7.1} kHz mean (steady half)",
        ours_s * 1e3,
        summary.fsw_mean_hz / 1e3
    );
    println!(
        "  ngspice    {:>9.3} ms wall   {:>7.1} kHz mean (steady half, from output minima)",
        spice_s * 1e3,
        rises as f64 / (stop / 2.0) / 1e3
    );
    println!("  ngspice / ripplectl wall time: {:.0}x", spice_s / ours_s);
    Ok(())
}

/// The load current at 5 V, A.
fn vout_a(load_ohm: f64) -> f64 {
    5.0 / load_ohm
}

/// Switching cycles in ngspice's output after `from_s`: count each local
/// minimum of the output (the turn-on point) below the band's middle.
fn count_turn_ons(rows: &[[f64; 3]], lower: f64, from_s: f64) -> usize {
    let tail: Vec<&[f64; 3]> = rows.iter().filter(|r| r[0] >= from_s).collect();
    let mut n = 0;
    let mut armed = true;
    for w in tail.windows(2) {
        // The current turns from falling to rising at each turn-on.
        if armed && w[1][2] > w[0][2] && w[0][1] < lower + 0.02 {
            n += 1;
            armed = false;
        } else if w[1][2] < w[0][2] {
            armed = true;
        }
    }
    n
}
