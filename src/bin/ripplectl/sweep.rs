//! `ripplectl sweep`: a grid of input voltage × load in parallel.

use crate::failure::{bad_input, failed, interrupted, load_scenario, run_failure, Failure};
use crate::progress::{self, Progress, INTERRUPTED};
use ripplectl::sim::{self, notation, report};
use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};

fn sweep_table(points: &[sim::sweep::SweepPoint]) -> String {
    let mut s = String::from(
        "   vin V   load A   f predicted   f simulated   error     ripple    efficiency\n",
    );
    for p in points {
        if let Some(reason) = &p.not_switching {
            s += &format!(
                "  {:6.1}   {:6.2}   {:>11}   not switching: {reason}\n",
                p.vin_v,
                p.load_a,
                notation::eng(p.fsw_predicted_hz, "Hz")
            );
            continue;
        }
        let err = 100.0 * (p.fsw_simulated_hz - p.fsw_predicted_hz) / p.fsw_predicted_hz;
        let why = p
            .not_regulating
            .as_ref()
            .map_or(String::new(), |w| format!("   not in regulation: {w}"));
        s += &format!(
            "  {:6.1}   {:6.2}   {:>11}   {:>11}   {:+5.1} %   {:>8}   {:>8}{why}\n",
            p.vin_v,
            p.load_a,
            notation::eng(p.fsw_predicted_hz, "Hz"),
            notation::eng(p.fsw_simulated_hz, "Hz"),
            err,
            notation::eng(p.vout_ripple_pp_v, "V"),
            efficiency(p.efficiency_true)
        );
    }
    s
}

/// A percentage, or "n/a" when the point was not regulating.
fn efficiency(x: f64) -> String {
    if x.is_finite() {
        format!("{:.1} %", 100.0 * x)
    } else {
        "n/a".to_string()
    }
}

/// Every point, with why it did not switch or regulate in the last column
/// (quoted; empty when it did).
fn sweep_csv(points: &[sim::sweep::SweepPoint]) -> String {
    let mut s = String::from("vin_v,load_a,fsw_predicted_hz,fsw_simulated_hz,vout_mean_v,vout_ripple_pp_v,efficiency_true,il_peak_a,note\n");
    for p in points {
        let note = p.not_switching.as_ref().or(p.not_regulating.as_ref());
        s += &format!(
            "{},{},{},{},{},{},{},{},\"{}\"\n",
            p.vin_v,
            p.load_a,
            p.fsw_predicted_hz,
            p.fsw_simulated_hz,
            p.vout_mean_v,
            p.vout_ripple_pp_v,
            p.efficiency_true,
            p.il_peak_a,
            note.map_or(String::new(), |n| n.replace('"', "\"\""))
        );
    }
    s
}

pub fn sweep(
    scenario: Option<&Path>,
    vin: &[f64],
    load: &[f64],
    duration: f64,
    out: Option<&Path>,
    json: bool,
) -> Result<(), Failure> {
    let base = load_scenario(scenario)?;
    if !(duration.is_finite() && duration > 0.0) {
        return Err(bad_input("--duration must be a positive number of seconds"));
    }
    let vins: Vec<f64> = if vin.is_empty() {
        let (lo, hi) = base.profile().input_range();
        (0..5).map(|k| lo + (hi - lo) * f64::from(k) / 4.0).collect()
    } else {
        vin.to_vec()
    };
    let loads: Vec<f64> = if load.is_empty() { vec![0.2, 1.0, 2.0] } else { load.to_vec() };
    let setpoint = base.control.law.setpoint_v();
    if let Some(v) = vins.iter().find(|&&v| !(v.is_finite() && v > setpoint)) {
        return Err(bad_input(format!("--vin {v}: must exceed the {setpoint} V setpoint")));
    }
    if let Some(l) = loads.iter().find(|&&l| !(l.is_finite() && l > 0.0)) {
        return Err(bad_input(format!("--load {l}: must be a positive current")));
    }
    let total = vins.len() * loads.len();
    let bar = Progress::items(total as u64, "points");
    let done = AtomicUsize::new(0);
    let tick = || bar.set((done.fetch_add(1, Ordering::Relaxed) + 1) as f64);
    let points = sim::sweep::sweep_with(&base, &vins, &loads, duration, &tick, Some(&INTERRUPTED));
    bar.finish();
    let points = points.map_err(run_failure)?;
    if progress::interrupted() {
        return Err(interrupted());
    }
    let grid_json = serde_json::to_string_pretty(&points).map_err(failed)?;
    if let Some(dir) = out {
        let svg = sim::plot::sweep_svg(&points, &format!("{}: switching frequency", base.name))
            .map_err(failed)?;
        report::write_all(
            dir,
            &[
                ("sweep.csv", sweep_csv(&points).into_bytes()),
                ("sweep.svg", svg.into_bytes()),
                ("sweep.json", grid_json.clone().into_bytes()),
            ],
        )
        .map_err(|e| failed(format!("{}: {e}", dir.display())))?;
    }
    if json {
        println!("{grid_json}");
    } else {
        print!("{}", sweep_table(&points));
    }
    Ok(())
}
