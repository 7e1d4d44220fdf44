//! Transient figures: how the output rides each disturbance. The tracker a
//! scenario asks for is built beside the scenario
//! ([`TransientTracker::for_scenario`]).
//!
//! A disturbance is a load change (a step, a ramp or a short) or an input
//! step or ramp after t = 0; changes at the same instant are one
//! disturbance. Each is watched from its start until the next one starts
//! (or the run ends), at every simulation event:
//!
//! - **undershoot / overshoot**: how far the output went below / above the
//!   setpoint, V (0 when it never did);
//! - **recovery**: from the disturbance to the first instant after which
//!   the output stays inside the recovery band `setpoint ± band_v` until
//!   the next disturbance, s (0 when it never left; none when it never came
//!   back). The default band, ±2 % of the setpoint, is the usual settling
//!   criterion of control engineering (Ogata, *Modern Control Engineering*,
//!   5th ed., §5-3: settling within 2 % or 5 % of the final value);
//! - **inductor peak**: the largest inductor current magnitude, A;
//! - **frequency extremes during the recovery**: over the switching cycles
//!   that overlap it, Hz.

use super::notation::eng;
use super::profile::{InputProfile, Load, LoadChange};
use super::quadratic::Quadratic;
use super::record::items::{Cycle, Observation};
use serde::{Deserialize, Serialize};

/// Default recovery band: this fraction of the setpoint either side.
pub const DEFAULT_BAND_FRACTION: f64 = 0.02;

/// The optional `[transient]` table of a scenario.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TransientParams {
    /// Half-width of the recovery band around the setpoint, V; omitted:
    /// [`DEFAULT_BAND_FRACTION`] of the setpoint.
    #[serde(default)]
    pub band_v: Option<f64>,
}

impl TransientParams {
    /// The band's half-width for a setpoint, V.
    pub fn band_v(&self, setpoint_v: f64) -> f64 {
        self.band_v.unwrap_or(DEFAULT_BAND_FRACTION * setpoint_v)
    }
}

/// One disturbance: when it starts and what it is.
#[derive(Clone, Debug, PartialEq)]
pub struct Disturbance {
    /// Start, s.
    pub t_s: f64,
    /// `load-step`, `load-ramp`, `short`, `input-step` or `input-ramp`;
    /// simultaneous ones joined by `+`.
    pub kind: String,
}

fn load_kind(load: &Load) -> &'static str {
    match load {
        Load::Resistive { .. } | Load::Current { .. } => "load-step",
        Load::Ramp { .. } => "load-ramp",
        Load::Short => "short",
    }
}

/// Each input segment that changes the voltage: a step (two points at one
/// time) or a ramp (from its first point's time).
fn input_changes(input: &InputProfile) -> impl Iterator<Item = (f64, &'static str)> + '_ {
    input.points.windows(2).filter(|w| w[1][1] != w[0][1]).map(|w| {
        let kind = if w[1][0] == w[0][0] { "input-step" } else { "input-ramp" };
        (w[0][0], kind)
    })
}

/// The disturbances of a profile strictly inside `(0, duration_s)`, in time
/// order, simultaneous ones merged.
pub fn disturbances(
    input: &InputProfile,
    loads: &[LoadChange],
    duration_s: f64,
) -> Vec<Disturbance> {
    let mut all: Vec<(f64, &str)> = loads.iter().map(|c| (c.at_s, load_kind(&c.load))).collect();
    all.extend(input_changes(input));
    all.retain(|&(t, _)| t > 0.0 && t < duration_s);
    all.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut merged: Vec<Disturbance> = Vec::new();
    for (t_s, kind) in all {
        match merged.last_mut() {
            Some(last) if last.t_s == t_s => {
                if !last.kind.split('+').any(|k| k == kind) {
                    last.kind = format!("{}+{kind}", last.kind);
                }
            }
            _ => merged.push(Disturbance { t_s, kind: kind.to_string() }),
        }
    }
    merged
}

/// What is gathered over one disturbance's interval.
#[derive(Clone, Debug, PartialEq)]
struct Watch {
    disturbance: Disturbance,
    end_s: f64,
    vo_min_v: f64,
    vo_max_v: f64,
    il_peak_a: f64,
    /// Last instant the output was outside the band.
    last_outside_s: Option<f64>,
    /// First instant back inside after `last_outside_s`.
    back_inside_s: Option<f64>,
}

/// Follows the output through every disturbance of a run (fed by the
/// recorder with each panel of the plant's motion and each jump of the
/// output, in time order).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TransientTracker {
    watches: Vec<Watch>,
    setpoint_v: f64,
    band_v: f64,
    cursor: usize,
}

impl TransientTracker {
    /// Watch `disturbances` of a run of `duration_s` regulating to
    /// `setpoint_v` with the recovery band `setpoint_v ± band_v`.
    pub fn new(
        disturbances: Vec<Disturbance>,
        duration_s: f64,
        setpoint_v: f64,
        band_v: f64,
    ) -> Self {
        let ends: Vec<f64> =
            disturbances.iter().skip(1).map(|d| d.t_s).chain([duration_s]).collect();
        let watches = disturbances
            .into_iter()
            .zip(ends)
            .map(|(disturbance, end_s)| Watch {
                disturbance,
                end_s,
                vo_min_v: f64::INFINITY,
                vo_max_v: f64::NEG_INFINITY,
                il_peak_a: 0.0,
                last_outside_s: None,
                back_inside_s: None,
            })
            .collect();
        Self { watches, setpoint_v, band_v, cursor: 0 }
    }

    /// The setpoint the figures are relative to, V.
    pub fn setpoint_v(&self) -> f64 {
        self.setpoint_v
    }

    /// Half-width of the recovery band, V.
    pub fn band_v(&self) -> f64 {
        self.band_v
    }

    /// Whether `v` lies in the recovery band.
    pub fn in_band(&self, v: f64) -> bool {
        (v - self.setpoint_v).abs() <= self.band_v
    }

    /// One observation of the circuit.
    pub fn observe(&mut self, o: &Observation) {
        while self.watches.get(self.cursor).is_some_and(|w| o.t_s >= w.end_s) {
            self.cursor += 1;
        }
        let inside = self.in_band(o.vo_v);
        let Some(w) = self.watches.get_mut(self.cursor) else { return };
        if o.t_s < w.disturbance.t_s {
            return;
        }
        w.vo_min_v = w.vo_min_v.min(o.vo_v);
        w.vo_max_v = w.vo_max_v.max(o.vo_v);
        w.il_peak_a = w.il_peak_a.max(o.il_a.abs());
        if !inside {
            w.last_outside_s = Some(o.t_s);
            w.back_inside_s = None;
        } else if w.last_outside_s.is_some() && w.back_inside_s.is_none() {
            w.back_inside_s = Some(o.t_s);
        }
    }

    /// A panel of the plant's motion from `t0_s` with output `vo` (see
    /// [`super::quadratic`]) over the range `(lo, hi)` and largest current
    /// magnitude `il_peak_a`: the output's extremes, and where it last came
    /// back into the band (the exact crossing) when it left it within the
    /// panel.
    #[inline]
    pub fn panel(&mut self, t0_s: f64, vo: &Quadratic, (lo, hi): (f64, f64), il_peak_a: f64) {
        let mid = t0_s + 0.5 * vo.h;
        while self.watches.get(self.cursor).is_some_and(|w| mid >= w.end_s) {
            self.cursor += 1;
        }
        let (band_lo, band_hi) = (self.setpoint_v - self.band_v, self.setpoint_v + self.band_v);
        let Some(w) = self.watches.get_mut(self.cursor) else { return };
        if mid < w.disturbance.t_s {
            return;
        }
        w.vo_min_v = w.vo_min_v.min(lo);
        w.vo_max_v = w.vo_max_v.max(hi);
        w.il_peak_a = w.il_peak_a.max(il_peak_a);
        let end = vo.at(vo.h);
        if end < band_lo || end > band_hi {
            w.last_outside_s = Some(t0_s + vo.h);
            w.back_inside_s = None;
        } else if lo < band_lo || hi > band_hi {
            let back = [band_lo, band_hi]
                .into_iter()
                .filter_map(|l| vo.last_crossing(l))
                .fold(0.0, f64::max);
            w.last_outside_s = Some(t0_s + back);
            w.back_inside_s = Some(t0_s + back);
        } else if w.last_outside_s.is_some() && w.back_inside_s.is_none() {
            w.back_inside_s = Some(t0_s);
        }
    }

    /// The figures of every disturbance, given the run's switching cycles.
    pub fn figures(&self, cycles: &[Cycle]) -> Vec<Transient> {
        self.watches.iter().map(|w| self.figure(w, cycles)).collect()
    }

    fn figure(&self, w: &Watch, cycles: &[Cycle]) -> Transient {
        let t0 = w.disturbance.t_s;
        let recovery_s = match (w.last_outside_s, w.back_inside_s) {
            (None, _) => Some(0.0),
            (Some(_), Some(back)) => Some(back - t0),
            (Some(_), None) => None,
        };
        let until = recovery_s.map_or(w.end_s, |r| t0 + r);
        let (fsw_min_hz, fsw_max_hz) = frequency_extremes(cycles, t0, until);
        let seen = w.vo_min_v.is_finite();
        Transient {
            t_s: t0,
            kind: w.disturbance.kind.clone(),
            undershoot_v: if seen { (self.setpoint_v - w.vo_min_v).max(0.0) } else { 0.0 },
            overshoot_v: if seen { (w.vo_max_v - self.setpoint_v).max(0.0) } else { 0.0 },
            recovery_s,
            il_peak_a: w.il_peak_a,
            fsw_min_hz,
            fsw_max_hz,
        }
    }
}

/// Lowest and highest frequency of the completed cycles overlapping
/// `[from_s, to_s]`, Hz (none without such a cycle).
fn frequency_extremes(cycles: &[Cycle], from_s: f64, to_s: f64) -> (Option<f64>, Option<f64>) {
    let periods = cycles
        .iter()
        .filter(|c| c.period_s.is_finite() && c.t_s + c.period_s > from_s && c.t_s <= to_s)
        .map(|c| c.period_s);
    let (lo, hi) = periods.fold((f64::INFINITY, 0.0f64), |(lo, hi), p| (lo.min(p), hi.max(p)));
    if hi > 0.0 {
        (Some(1.0 / hi), Some(1.0 / lo))
    } else {
        (None, None)
    }
}

/// How the output rode one disturbance (JSON: an entry of `transients`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Transient {
    /// Start of the disturbance, s.
    pub t_s: f64,
    /// What it was (see [`Disturbance::kind`]).
    pub kind: String,
    /// Setpoint minus the lowest output until the next disturbance, V (≥ 0).
    pub undershoot_v: f64,
    /// Highest output minus the setpoint until the next disturbance, V (≥ 0).
    pub overshoot_v: f64,
    /// Time to be back inside the recovery band for good, s; null: not
    /// before the next disturbance or the end.
    pub recovery_s: Option<f64>,
    /// Largest inductor current magnitude until the next disturbance, A.
    pub il_peak_a: f64,
    /// Lowest switching frequency during the recovery, Hz.
    pub fsw_min_hz: Option<f64>,
    /// Highest switching frequency during the recovery, Hz.
    pub fsw_max_hz: Option<f64>,
}

impl Transient {
    /// One line of the report.
    pub fn line(&self) -> String {
        let recovery = match self.recovery_s {
            Some(r) if r > 0.0 => format!("back in {}", eng(r, "s")),
            Some(_) => "stayed in band".to_string(),
            None => "not back in band".to_string(),
        };
        let fsw = match (self.fsw_min_hz, self.fsw_max_hz) {
            (Some(lo), Some(hi)) if lo == hi => eng(lo, "Hz"),
            (Some(lo), Some(hi)) => format!("{} to {}", eng(lo, "Hz"), eng(hi, "Hz")),
            _ => "no switching".to_string(),
        };
        format!(
            "{} {}: -{} +{}, {recovery}, peak {}, {fsw}",
            eng(self.t_s, "s"),
            self.kind,
            eng(self.undershoot_v, "V"),
            eng(self.overshoot_v, "V"),
            eng(self.il_peak_a, "A")
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_demo_profile_has_three_disturbances() {
        let s = crate::sim::Scenario::default_demo();
        let d = disturbances(&s.input, &s.load, s.duration_s);
        let got: Vec<(f64, &str)> = d.iter().map(|d| (d.t_s, d.kind.as_str())).collect();
        assert_eq!(got, [(3e-3, "load-step"), (6e-3, "input-step"), (8e-3, "input-ramp")]);
    }

    #[test]
    fn simultaneous_changes_merge() {
        let input = InputProfile { points: vec![[0.0, 24.0], [1e-3, 24.0], [1e-3, 18.0]] };
        let loads = [LoadChange { at_s: 1e-3, load: Load::Short }];
        let d = disturbances(&input, &loads, 2e-3);
        assert_eq!(d, [Disturbance { t_s: 1e-3, kind: "short+input-step".into() }]);
    }

    fn obs(t_s: f64, vo_v: f64) -> Observation {
        Observation { t_s, vo_v, il_a: 1.0, il_est_a: f64::NAN, gate_on: false }
    }

    #[test]
    fn recovery_runs_to_the_first_instant_back_for_good() {
        let d = vec![Disturbance { t_s: 1.0, kind: "load-step".into() }];
        let mut t = TransientTracker::new(d, 10.0, 5.0, 0.1);
        for (time, v) in [(0.5, 4.0), (1.0, 5.0), (2.0, 4.8), (3.0, 5.0), (4.0, 5.2), (5.0, 5.05)] {
            t.observe(&obs(time, v));
        }
        let f = &t.figures(&[])[0];
        assert_eq!(f.recovery_s, Some(4.0));
        assert!((f.undershoot_v - 0.2).abs() < 1e-12 && (f.overshoot_v - 0.2).abs() < 1e-12);
        assert_eq!((f.fsw_min_hz, f.fsw_max_hz), (None, None));
    }
}
