//! A design proposal checked in the simulator before it is offered: its
//! written scenario, at the lowest, middle and highest input × 10, 50 and
//! 100 % of full load, each from a cold start, must regulate within 1 %
//! with no fault, stay inside its window and keep the CPU under the
//! simulator's 70 % warning.

use super::facts::{DesignError, Facts};
use super::proposal::{propose_with, Proposal};
use super::scenario_file::scenario;
use super::values::eng;
use crate::sim::cpu::WARN_LOAD;
use crate::sim::sweep::operating_point;
use crate::sim::{run, Summary};
use rayon::prelude::*;

/// Simulated time per point: the soft-start and the DC correction settle
/// within the first half (its time constant is 20 housekeeping windows).
pub const POINT_S: f64 = 0.020;

/// Regulation a point must hold, a fraction of the setpoint.
pub const REGULATION: f64 = 0.01;

/// One simulated operating point.
#[derive(Clone, Debug, PartialEq)]
pub struct Point {
    /// Input, V.
    pub vin_v: f64,
    /// Load, A.
    pub load_a: f64,
    /// The run's summary (steady figures over its second half).
    pub summary: Summary,
}

impl Point {
    /// Mean output error, a fraction of the setpoint.
    pub fn error(&self) -> f64 {
        self.summary.vout_mean_v / self.summary.vout_setpoint_v - 1.0
    }

    /// The CPU's load (NaN without a core).
    pub fn cpu_load(&self) -> f64 {
        self.summary.cpu.as_ref().map_or(f64::NAN, |c| c.load)
    }

    /// Why the point fails the check, if it does.
    pub fn failure(&self, p: &Proposal) -> Option<String> {
        let s = &self.summary;
        let at = format!("at {} and {}", eng(self.vin_v, "V"), eng(self.load_a, "A"));
        let (f_min, f_max) = (f64::from(p.window.f_min_hz), f64::from(p.window.f_max_hz));
        if !s.faults.is_empty() {
            let kinds: Vec<&str> = s.faults.iter().map(|f| f.kind.as_str()).collect();
            Some(format!("{at} it logs {}", kinds.join(", ")))
        } else if !below(self.error().abs(), REGULATION) {
            Some(format!("{at} its mean output is {:+.2} % off", 100.0 * self.error()))
        } else if !(s.fsw_min_hz >= f_min && s.fsw_max_hz <= f_max) {
            Some(format!(
                "{at} it switches from {} to {}, outside the window",
                eng(s.fsw_min_hz, "Hz"),
                eng(s.fsw_max_hz, "Hz")
            ))
        } else if !below(self.cpu_load(), WARN_LOAD) {
            Some(format!("{at} the CPU's load is {:.0} %", 100.0 * self.cpu_load()))
        } else {
            None
        }
    }
}

/// `x < limit`, false for NaN.
fn below(x: f64, limit: f64) -> bool {
    x < limit
}

/// Simulate the proposal's scenario over the grid (in parallel).
pub fn simulate_grid(p: &Proposal) -> Result<Vec<Point>, String> {
    let base = scenario(p).map_err(|e| format!("its scenario is refused: {e}"))?;
    let b = &p.facts.board;
    let grid: Vec<(f64, f64)> = [b.vin_min_v, b.vin_nominal_v(), b.vin_max_v]
        .iter()
        .flat_map(|&v| crate::design::range::LOAD_SHARES.map(|share| (v, share * b.iout_a)))
        .collect();
    grid.par_iter()
        .map(|&(vin_v, load_a)| {
            let mut sc = operating_point(&base, vin_v, load_a, POINT_S);
            sc.initial_output_v = 0.0;
            sc.initial_inductor_a = 0.0;
            let out = run(&sc).map_err(|e| format!("at {vin_v} V and {load_a} A: {e}"))?;
            Ok(Point { vin_v, load_a, summary: Summary::of(&out, &sc.name, 0.0) })
        })
        .collect()
}

/// The check [`propose_with`] takes: the first failing point, if any.
pub fn check(p: &Proposal) -> Result<(), String> {
    let points = simulate_grid(p)?;
    match points.iter().find_map(|q| q.failure(p)) {
        Some(why) => Err(format!("in the simulator, {why}")),
        None => Ok(()),
    }
}

/// Propose a configuration that passes the simulated check, with its
/// points.
pub fn propose_checked(facts: &Facts) -> Result<(Proposal, Vec<Point>), DesignError> {
    let p = propose_with(facts, &check)?;
    // Deterministic: the same points the check ran.
    let points = simulate_grid(&p).unwrap_or_default();
    Ok((p, points))
}
