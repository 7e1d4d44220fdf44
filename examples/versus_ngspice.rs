//! Wall time and accuracy of the same 10 ms closed loop in ripplectl and in
//! ngspice (Debian's `ngspice` package, batch mode).
//!
//! The circuit is the default scenario's power stage (saturation left out)
//! under an analog hysteretic comparator, 4.98 V / 5.02 V, 24 V in, 2.5 Ω
//! out. ngspice runs the netlist this example writes, the comparator being
//! a voltage-controlled switch with hysteresis; ripplectl runs it as the
//! `analog-retrofit` law with its supervisor and a guard window that never
//! binds, on a 1 GHz timer clock (gate edges on 1 ns ticks) with zero
//! comparator delay and interrupt latency. Both start from the same state
//! at the operating point.
//!
//! It prints, over the second half of the run, the mean output, the output
//! ripple (peak to peak, mean over cycles) and the switching frequency of
//! each, their differences, and the wall times (ripplectl: the median of
//! repeated runs; ngspice: the median of three, file output included),
//! for ngspice at two largest time steps: 10 ns, the reference, and
//! 100 ns, the coarsest that still agrees within the bounds. It fails if a
//! difference from the reference exceeds 0.5 %, 2 % or 1 % respectively.
//!
//!     cargo run --release --example versus_ngspice [-- --netlist FILE]
//!
//! (`--netlist FILE` keeps a copy of the netlist.)

use ripplectl::sim::netlist::{parse_wrdata, Drive, Netlist};
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, Scenario, Summary};
use ripplectl::{LightLoad, WindowConfig};
use std::path::Path;
use std::process::Command;
use std::time::Instant;

/// Comparator thresholds, V.
const LOWER_V: f64 = 4.98;
const UPPER_V: f64 = 5.02;
const VIN_V: f64 = 24.0;
const LOAD_OHM: f64 = 2.5;
const STOP_S: f64 = 10e-3;
/// ngspice's largest time step, s: the reference (its figures move by at
/// most 0.12 % between 30 ns and 10 ns), and the coarsest of 30, 100 and
/// 300 ns that still keeps within the bounds.
const SPICE_STEPS_S: [f64; 2] = [10e-9, 100e-9];
/// Timed ripplectl runs (the median is reported).
const RUNS: usize = 21;

/// The figures compared, over the second half of the run: mean output
/// (V), output ripple (V peak to peak, mean over cycles), switching
/// frequency (Hz).
#[derive(Clone, Copy, Debug)]
struct Figures([f64; 3]);

/// Each figure's label, display scale and bound on the relative difference.
const ROWS: [(&str, f64, f64); 3] = [
    ("mean output, V", 1.0, 0.005),
    ("output ripple, mV p-p", 1e3, 0.02),
    ("frequency, kHz", 1e-3, 0.01),
];

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let keep = std::env::args().skip_while(|a| a != "--netlist").nth(1);
    let scenario = comparator_loop();
    let (ours_s, summary) = time_ripplectl(&scenario)?;
    let ours = Figures([summary.vout_mean_v, summary.vout_ripple_pp_v, summary.fsw_mean_hz]);
    let dir = tempfile::tempdir()?;
    let mut runs = Vec::new();
    for max_step_s in SPICE_STEPS_S {
        runs.push(run_ngspice(&scenario, dir.path(), max_step_s, keep.as_deref())?);
    }

    println!("same 10 ms closed loop: analog hysteretic comparator, 24 V -> 5 V at 2 A,");
    println!("1 ns timer ticks, zero delays; figures over the second half");
    print!("  {:<22} {:>10}", "", "ripplectl");
    for r in &runs {
        print!("   {:>18}", format!("ngspice {:.0} ns", r.max_step_s * 1e9));
    }
    println!("   bound");
    let mut outside = Vec::new();
    for (row, (name, scale, bound)) in ROWS.into_iter().enumerate() {
        let ours = ours.0[row];
        print!("  {name:<22} {:>10.4}", ours * scale);
        for (k, r) in runs.iter().enumerate() {
            let theirs = r.figures.0[row];
            let diff = (ours - theirs) / theirs;
            print!("   {:>9.4} {:>+7.3}%", theirs * scale, 100.0 * diff);
            if k == 0 && diff.abs() > bound {
                outside.push(name);
            }
        }
        println!("   {:.1}%", 100.0 * bound);
    }
    print!("  {:<22} {:>10.3}", "wall time, ms", ours_s * 1e3);
    for r in &runs {
        print!("   {:>9.1} {:>7.0}x", r.wall_s * 1e3, r.wall_s / ours_s);
    }
    println!();
    println!("  (differences: ripplectl against each ngspice run; bounds against the first)");
    if outside.is_empty() {
        Ok(())
    } else {
        Err(format!("outside the bound: {}", outside.join(", ")).into())
    }
}

/// One ngspice setting: its largest time step, median wall time and figures.
struct SpiceRun {
    max_step_s: f64,
    wall_s: f64,
    figures: Figures,
}

/// Write the netlist for `max_step_s` into `dir` (and a copy to `keep`,
/// for the first setting), run ngspice three times, read its output.
fn run_ngspice(
    s: &Scenario,
    dir: &Path,
    max_step_s: f64,
    keep: Option<&str>,
) -> Result<SpiceRun, Box<dyn std::error::Error>> {
    let data = dir.join("out.data");
    let cir = dir.join("loop.cir");
    std::fs::write(&cir, netlist(s, &data, max_step_s).text())?;
    if let (Some(path), true) = (keep, max_step_s == SPICE_STEPS_S[0]) {
        std::fs::copy(&cir, path)?;
    }
    let times = (0..3).map(|_| time_ngspice(&cir)).collect::<Result<Vec<_>, _>>()?;
    let figures = spice_figures(&parse_wrdata(&std::fs::read_to_string(&data)?), STOP_S / 2.0);
    Ok(SpiceRun { max_step_s, wall_s: median(times), figures })
}

/// The default scenario's stage under the analog comparator, at 1 ns ticks
/// with zero delays, pre-biased at the operating point. (From cold, the
/// analog comparator has no soft-start: its inrush trips the over-voltage
/// protection, which is worth seeing, but not what this times.)
fn comparator_loop() -> Scenario {
    let mut s = Scenario::default_demo();
    s.plant.saturation = None;
    s.duration_s = STOP_S;
    s.control.law = LawParams::AnalogRetrofit { lower_v: LOWER_V, upper_v: UPPER_V };
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
    // The comparator's edges in zero time, as the netlist's switch: no
    // core charged.
    s.mcu.core = None;
    s.input = InputProfile { points: vec![[0.0, VIN_V]] };
    s.initial_output_v = 5.0;
    s.initial_inductor_a = 5.0 / LOAD_OHM;
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: LOAD_OHM } }];
    s
}

/// The same circuit for ngspice, writing `t, v(out), i(L)` to `data`.
fn netlist(s: &Scenario, data: &Path, max_step_s: f64) -> Netlist {
    Netlist {
        params: s.plant,
        vin_v: VIN_V,
        load_ohm: LOAD_OHM,
        il0_a: s.initial_inductor_a,
        vc0_v: s.initial_output_v,
        drive: Drive::Hysteretic { lower_v: LOWER_V, upper_v: UPPER_V },
        stop_s: STOP_S,
        max_step_s,
        data_path: data.display().to_string(),
    }
}

/// The median wall time of [`RUNS`] runs, and the last run's summary.
fn time_ripplectl(s: &Scenario) -> Result<(f64, Summary), sim::RunError> {
    let mut times = Vec::with_capacity(RUNS);
    let mut last = None;
    for _ in 0..RUNS {
        let started = Instant::now();
        let out = sim::run(s)?;
        times.push(started.elapsed().as_secs_f64());
        last = Some(out);
    }
    let wall = median(times);
    let out = last.expect("RUNS > 0");
    Ok((wall, Summary::of(&out, &s.name, wall)))
}

/// One ngspice run's wall time.
fn time_ngspice(cir: &Path) -> Result<f64, Box<dyn std::error::Error>> {
    let started = Instant::now();
    let status = Command::new("ngspice").arg("-b").arg(cir).output()?;
    let wall = started.elapsed().as_secs_f64();
    if !status.status.success() {
        return Err(format!("ngspice failed: {}", String::from_utf8_lossy(&status.stderr)).into());
    }
    Ok(wall)
}

fn median(mut xs: Vec<f64>) -> f64 {
    xs.sort_by(f64::total_cmp);
    xs[xs.len() / 2]
}

/// ngspice's figures from `t ≥ from_s`. A cycle starts each time the
/// output falls through a quarter band above the lower threshold (the
/// crossing interpolated between points; the output turns at the
/// thresholds themselves, which its points need not pass exactly), and
/// re-arms at a quarter band below the upper one; its ripple is its
/// output's peak to peak.
fn spice_figures(rows: &[[f64; 3]], from_s: f64) -> Figures {
    let quarter = 0.25 * (UPPER_V - LOWER_V);
    let (arm_v, start_v) = (UPPER_V - quarter, LOWER_V + quarter);
    let tail: Vec<&[f64; 3]> = rows.iter().filter(|r| r[0] >= from_s).collect();
    let (mut area, mut armed) = (0.0, false);
    let mut starts = Vec::new();
    let mut ripples = Vec::new();
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for w in tail.windows(2) {
        let ([t0, v0, _], [t1, v1, _]) = (*w[0], *w[1]);
        area += 0.5 * (v0 + v1) * (t1 - t0);
        if armed && v1 < start_v {
            armed = false;
            starts.push(t0 + (t1 - t0) * (v0 - start_v) / (v0 - v1));
            if starts.len() > 1 {
                ripples.push(hi - lo);
            }
            (lo, hi) = (f64::INFINITY, f64::NEG_INFINITY);
        } else if !armed && v1 > arm_v {
            armed = true;
        }
        (lo, hi) = (lo.min(v1), hi.max(v1));
    }
    let span = tail.last().map_or(0.0, |r| r[0]) - tail.first().map_or(0.0, |r| r[0]);
    let cycles = starts.len().saturating_sub(1);
    let first_to_last = starts.last().unwrap_or(&0.0) - starts.first().unwrap_or(&0.0);
    Figures([
        area / span,
        ripples.iter().sum::<f64>() / ripples.len() as f64,
        cycles as f64 / first_to_last,
    ])
}
