//! Input-voltage × load grids, run in parallel.

use super::build::run_with;
use super::engine::{RunError, RunOutput};
use super::metrics::Summary;
use super::notation::eng;
use super::plant::Stage;
use super::profile::{InputProfile, Load, LoadChange};
use super::run_control::RunControl;
use super::scenario::{HystereticInput, LawParams, Scenario};
use crate::design;
use rayon::prelude::*;

/// One grid point.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SweepPoint {
    /// Input voltage, V.
    pub vin_v: f64,
    /// Load current at the setpoint, A.
    pub load_a: f64,
    /// Closed-form frequency ([`design::hysteretic_frequency`]), Hz.
    pub fsw_predicted_hz: f64,
    /// Simulated mean frequency, Hz.
    pub fsw_simulated_hz: f64,
    /// Mean output, V.
    pub vout_mean_v: f64,
    /// Output ripple, V peak to peak.
    pub vout_ripple_pp_v: f64,
    /// True efficiency.
    pub efficiency_true: f64,
    /// Peak inductor current, A.
    pub il_peak_a: f64,
    /// Why the point has no steady switching cycles (and so no frequency,
    /// ripple or efficiency), if it has none.
    pub not_switching: Option<String>,
    /// Why a point that switched has no efficiency (its output is not in
    /// steady regulation), if it has none.
    pub not_regulating: Option<String>,
}

/// Loop delay of the scenario's firmware, s: on average half a sampling
/// period plus conversion and latency when sampled; comparator delay plus
/// latency when edge-driven.
pub fn loop_delay_s(s: &Scenario) -> f64 {
    let m = &s.mcu;
    match s.control.law {
        LawParams::Hysteretic { input: HystereticInput::Sampled, .. } => {
            0.5 / m.sample_rate_hz + m.conversion_s + m.isr_latency_s
        }
        _ => m.comparator_delay_s + m.isr_latency_s + 0.5 / f64::from(m.clock_hz),
    }
}

/// The closed-form frequency for a scenario at one operating point, Hz (a
/// law that locks its mean frequency: the target).
pub fn predicted_frequency(s: &Scenario, vin: f64, load_a: f64) -> f64 {
    if let LawParams::OnTime { on_time_s, feed_forward_hz, .. } = s.control.law {
        // With feed-forward the target; else f = D/T_on (CCM).
        return match feed_forward_hz {
            Some(f) => f64::from(f),
            None => {
                design::on_time_frequency(vin, s.control.law.setpoint_v(), f64::from(on_time_s))
            }
        };
    }
    if let LawParams::Hysteretic { lock_hz: Some(f), .. } = s.control.law {
        // The lock's target (it holds the mean there within its range).
        return f64::from(f);
    }
    let p = &s.plant;
    let vout = s.control.law.setpoint_v();
    // Volt-second balance with the conduction drops sets the effective
    // input seen by the inductor during the on-time.
    let (r_low, vf) = match p.stage {
        Stage::Synchronous { r_on_low_ohm, .. } => (r_on_low_ohm, 0.0),
        Stage::NonSynchronous => (p.diode_rd_ohm, p.diode_vf_v),
    };
    let d = design::duty_ccm(vin, vout, load_a, p.r_on_ohm + p.r_source_ohm, vf, r_low, p.dcr_ohm);
    let op = design::OperatingPoint { vin_v: vout / d, vout_v: vout, iout_a: load_a, vf_v: vf };
    let filter = design::OutputFilter { l_h: p.l_h, c_f: p.c_f, esr_ohm: p.esr_ohm };
    let synchronous = matches!(p.stage, Stage::Synchronous { .. });
    design::hysteretic_frequency(&op, &filter, s.control.law.band_v(), loop_delay_s(s), synchronous)
}

/// `base` at a constant input and resistive load, for `duration_s`.
pub fn operating_point(base: &Scenario, vin: f64, load_a: f64, duration_s: f64) -> Scenario {
    let vout = base.control.law.setpoint_v();
    let mut s = base.clone();
    s.name = format!("{vin:.1} V, {load_a:.2} A");
    s.duration_s = duration_s;
    s.initial_output_v = vout;
    s.initial_inductor_a = load_a;
    s.input = InputProfile { points: vec![[0.0, vin]] };
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: vout / load_a } }];
    s
}

/// Why an operating point at input `vin` shows no steady switching, from
/// the protection settings and the faults the run logged; none when it
/// switched.
pub fn not_switching(
    base: &Scenario,
    vin: f64,
    out: &RunOutput,
    summary: &Summary,
) -> Option<String> {
    if summary.fsw_mean_hz.is_finite() {
        return None;
    }
    let p = &base.firmware.protection;
    let reason = if vin < f64::from(p.uvlo_on_v) {
        format!("input {vin} V below UVLO ({} V)", p.uvlo_on_v)
    } else if vin > f64::from(p.vin_max_v) {
        format!("input {vin} V above the input limit ({} V)", p.vin_max_v)
    } else if !out.faults.is_empty() {
        let kinds: Vec<&str> = out.faults.iter().map(|f| f.0.name()).collect();
        format!("fault: {}", kinds.join(", "))
    } else {
        "no steady switching cycles".to_string()
    };
    Some(reason)
}

/// Why a point that switched has no efficiency: its output is not in
/// steady regulation in any steady window ([`super::accounting`]); none
/// when it has one or did not switch.
pub fn not_regulating(out: &RunOutput, summary: &Summary) -> Option<String> {
    if summary.efficiency_true.is_finite() || !summary.fsw_mean_hz.is_finite() {
        return None;
    }
    let t = &out.recorder.transients;
    let mut why = Vec::new();
    if !t.in_band(summary.vout_mean_v) {
        why.push(format!(
            "mean output {} outside {} ± {}",
            eng(summary.vout_mean_v, "V"),
            eng(t.setpoint_v(), "V"),
            eng(t.band_v(), "V")
        ));
    }
    if !out.faults.is_empty() {
        let kinds: Vec<&str> = out.faults.iter().map(|f| f.0.name()).collect();
        why.push(format!("fault: {}", kinds.join(", ")));
    }
    if why.is_empty() {
        why.push("no steady window in regulation".to_string());
    }
    Some(why.join("; "))
}

/// Run the grid in parallel; `tick` is called after each point.
pub fn sweep(
    base: &Scenario,
    vins: &[f64],
    loads: &[f64],
    duration_s: f64,
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<SweepPoint>, RunError> {
    sweep_with(base, vins, loads, duration_s, tick, None)
}

/// [`sweep`], stopping with [`RunError::Cancelled`] once `cancel` is set.
pub fn sweep_with(
    base: &Scenario,
    vins: &[f64],
    loads: &[f64],
    duration_s: f64,
    tick: &(dyn Fn() + Sync),
    cancel: Option<&std::sync::atomic::AtomicBool>,
) -> Result<Vec<SweepPoint>, RunError> {
    let grid: Vec<(f64, f64)> =
        vins.iter().flat_map(|&v| loads.iter().map(move |&l| (v, l))).collect();
    grid.par_iter()
        .map(|&(vin, load_a)| {
            let scenario = operating_point(base, vin, load_a, duration_s);
            let out = run_with(&scenario, &RunControl { cancel, ..RunControl::default() })?;
            let s = Summary::of(&out, &scenario.name, 0.0);
            tick();
            Ok(SweepPoint {
                vin_v: vin,
                load_a,
                fsw_predicted_hz: predicted_frequency(base, vin, load_a),
                fsw_simulated_hz: s.fsw_mean_hz,
                vout_mean_v: s.vout_mean_v,
                vout_ripple_pp_v: s.vout_ripple_pp_v,
                efficiency_true: s.efficiency_true,
                il_peak_a: s.il_peak_a,
                not_switching: not_switching(base, vin, &out, &s),
                not_regulating: not_regulating(&out, &s),
            })
        })
        .collect()
}
