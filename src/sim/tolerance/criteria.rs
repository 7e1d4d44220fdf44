//! Pass criteria (`[tolerance.criteria]`) and the figures each run is
//! judged on.
//!
//! | key | default | a run passes when |
//! |---|---|---|
//! | `regulation_pct` | 2 (demo default: set your rail's) | the steady mean output is within ± this % of the setpoint |
//! | `window` | true | the steady frequency stays inside `[control.window]` |
//! | `ripple_max_v` | 2 % of the setpoint | the steady ripple (mean peak to peak) is at most this |
//! | `il_peak_max_a` | the saturation current if modelled, else the current limit | the inductor's peak current is at most this |
//! | `no_fault` | true | the firmware logs no fault |
//! | `undershoot_max_v`, `overshoot_max_v`, `recovery_max_s` | none | every disturbance's figure is at most this |
//!
//! Each criterion also gives a margin: how far inside its limit the run
//! stayed, as a fraction of the limit (negative: failed). The worst runs
//! are those with the smallest margin.

pub use super::settings::Criteria;
use crate::sim::{Scenario, Summary};
use serde::Serialize;

/// What a run is judged on.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Figures {
    /// Steady mean output, V.
    pub vout_mean_v: f64,
    /// Its error against the setpoint, %.
    pub regulation_pct: f64,
    /// Steady ripple, V peak to peak.
    pub ripple_pp_v: f64,
    /// Steady frequency extremes and mean, Hz.
    pub fsw_min_hz: f64,
    /// Mean steady frequency, Hz.
    pub fsw_mean_hz: f64,
    /// Highest steady frequency, Hz.
    pub fsw_max_hz: f64,
    /// Inductor peak current, A.
    pub il_peak_a: f64,
    /// RMS error of the current estimate, A (NaN: none).
    pub il_est_error_rms_a: f64,
    /// True efficiency (NaN: not in regulation).
    pub efficiency: f64,
    /// Largest undershoot at a disturbance, V (0 without one).
    pub undershoot_v: f64,
    /// Largest overshoot at a disturbance, V.
    pub overshoot_v: f64,
    /// Longest recovery, s (infinite: one never came back in band).
    pub recovery_s: f64,
    /// Faults logged, kebab-case kinds.
    pub faults: Vec<String>,
}

impl Figures {
    /// A run's figures from its summary.
    pub fn of(s: &Summary) -> Self {
        let worst = |f: fn(&crate::sim::transient::Transient) -> f64| {
            s.transients.iter().map(f).fold(0.0, f64::max)
        };
        Self {
            vout_mean_v: s.vout_mean_v,
            regulation_pct: 100.0 * (s.vout_mean_v - s.vout_setpoint_v) / s.vout_setpoint_v,
            ripple_pp_v: s.vout_ripple_pp_v,
            fsw_min_hz: s.fsw_min_hz,
            fsw_mean_hz: s.fsw_mean_hz,
            fsw_max_hz: s.fsw_max_hz,
            il_peak_a: s.il_peak_a,
            il_est_error_rms_a: s.il_est_error_rms_a.unwrap_or(f64::NAN),
            efficiency: s.efficiency_true,
            undershoot_v: worst(|t| t.undershoot_v),
            overshoot_v: worst(|t| t.overshoot_v),
            recovery_s: worst(|t| t.recovery_s.unwrap_or(f64::INFINITY)),
            faults: s.faults.iter().map(|f| f.kind.clone()).collect(),
        }
    }
}

/// A figure's key, unit and value in a run.
pub type FigureColumn = (&'static str, &'static str, fn(&Figures) -> f64);

/// The figures the study reports on.
pub const FIGURES: [FigureColumn; 12] = [
    ("vout_mean_v", "V", |f| f.vout_mean_v),
    ("regulation_pct", "%", |f| f.regulation_pct),
    ("ripple_pp_v", "V", |f| f.ripple_pp_v),
    ("fsw_min_hz", "Hz", |f| f.fsw_min_hz),
    ("fsw_mean_hz", "Hz", |f| f.fsw_mean_hz),
    ("fsw_max_hz", "Hz", |f| f.fsw_max_hz),
    ("il_peak_a", "A", |f| f.il_peak_a),
    ("il_est_error_rms_a", "A", |f| f.il_est_error_rms_a),
    ("efficiency", "", |f| f.efficiency),
    ("undershoot_v", "V", |f| f.undershoot_v),
    ("overshoot_v", "V", |f| f.overshoot_v),
    ("recovery_s", "s", |f| f.recovery_s),
];

/// The criteria with every default resolved for a scenario.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Limits {
    /// The table as given.
    pub criteria: Criteria,
    /// Setpoint, V.
    pub setpoint_v: f64,
    /// Frequency window, Hz.
    pub f_min_hz: f64,
    /// Frequency window, Hz.
    pub f_max_hz: f64,
    /// Ripple limit, V.
    pub ripple_max_v: f64,
    /// Peak current limit, A.
    pub il_peak_max_a: f64,
}

impl Limits {
    /// Resolve `criteria`'s defaults against `base`.
    pub fn new(criteria: Criteria, base: &Scenario) -> Self {
        let setpoint_v = base.control.law.setpoint_v();
        let peak_default = base
            .plant
            .saturation
            .map_or(f64::from(base.firmware.protection.current_limit_a), |s| s.i_sat_a);
        Self {
            criteria,
            setpoint_v,
            f_min_hz: f64::from(base.control.window.f_min_hz),
            f_max_hz: f64::from(base.control.window.f_max_hz),
            ripple_max_v: criteria.ripple_max_v.unwrap_or(0.02 * setpoint_v),
            il_peak_max_a: criteria.il_peak_max_a.unwrap_or(peak_default),
        }
    }

    /// The limit a criterion sets on a figure of [`FIGURES`], if any (the
    /// regulation band has two sides and is left out).
    pub fn on_figure(&self, figure: &str) -> Option<f64> {
        let c = &self.criteria;
        match figure {
            "ripple_pp_v" => Some(self.ripple_max_v),
            "il_peak_a" => Some(self.il_peak_max_a),
            "fsw_min_hz" if c.window => Some(self.f_min_hz),
            "fsw_max_hz" if c.window => Some(self.f_max_hz),
            "undershoot_v" => c.undershoot_max_v,
            "overshoot_v" => c.overshoot_max_v,
            "recovery_s" => c.recovery_max_s,
            _ => None,
        }
    }

    /// Judge a run: its smallest margin and the reasons it failed.
    pub fn judge(&self, f: &Figures) -> Verdict {
        let mut v = Verdict { margin: f64::INFINITY, failures: Vec::new() };
        let c = &self.criteria;
        let err = f.regulation_pct.abs();
        v.at_most("regulation error", err, c.regulation_pct, "%");
        if c.window {
            v.at_least("lowest frequency", f.fsw_min_hz, self.f_min_hz, "Hz");
            v.at_most("highest frequency", f.fsw_max_hz, self.f_max_hz, "Hz");
        }
        v.at_most("ripple", f.ripple_pp_v, self.ripple_max_v, "V");
        v.at_most("inductor peak", f.il_peak_a, self.il_peak_max_a, "A");
        if c.no_fault && !f.faults.is_empty() {
            v.fail(-1.0, format!("fault: {}", f.faults.join(", ")));
        }
        let optional = [
            ("undershoot", f.undershoot_v, c.undershoot_max_v, "V"),
            ("overshoot", f.overshoot_v, c.overshoot_max_v, "V"),
            ("recovery", f.recovery_s, c.recovery_max_s, "s"),
        ];
        for (what, value, limit, unit) in optional {
            if let Some(limit) = limit {
                v.at_most(what, value, limit, unit);
            }
        }
        v
    }
}

/// How a run fared.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Verdict {
    /// Smallest margin over the criteria, a fraction of each limit
    /// (negative: failed).
    pub margin: f64,
    /// Why it failed (empty: passed).
    pub failures: Vec<String>,
}

impl Verdict {
    /// Whether every criterion held.
    pub fn passed(&self) -> bool {
        self.failures.is_empty()
    }

    fn fail(&mut self, margin: f64, why: String) {
        self.margin = self.margin.min(margin);
        self.failures.push(why);
    }

    fn judge(&mut self, margin: f64, why: impl FnOnce() -> String) {
        if margin.is_nan() {
            self.fail(-1.0, why());
        } else if margin < 0.0 {
            self.fail(margin, why());
        } else {
            self.margin = self.margin.min(margin);
        }
    }

    fn at_most(&mut self, what: &str, value: f64, limit: f64, unit: &str) {
        let margin = (limit - value) / limit.abs().max(f64::MIN_POSITIVE);
        self.judge(margin, || describe(what, value, "above", limit, unit));
    }

    fn at_least(&mut self, what: &str, value: f64, limit: f64, unit: &str) {
        let margin = (value - limit) / limit.abs().max(f64::MIN_POSITIVE);
        self.judge(margin, || describe(what, value, "below", limit, unit));
    }
}

fn describe(what: &str, value: f64, side: &str, limit: f64, unit: &str) -> String {
    use crate::sim::notation::eng;
    if value.is_nan() {
        return format!("{what} not available (no steady switching)");
    }
    let show = |x: f64| if unit == "%" { format!("{x:.2} %") } else { eng(x, unit) };
    format!("{what} {} {side} {}", show(value), show(limit))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_nominal_demo_passes_with_margins() {
        let base = Scenario::default_demo();
        let out = crate::sim::run(&base).unwrap();
        let f = Figures::of(&Summary::of(&out, "", 0.0));
        let criteria = base.tolerance.map(|t| t.criteria).unwrap_or_default();
        let v = Limits::new(criteria, &base).judge(&f);
        assert!(v.passed(), "{v:?}");
        assert!(v.margin > 0.0 && v.margin < 1.0, "{v:?}");
    }

    #[test]
    fn a_tight_ripple_limit_fails_with_its_reason() {
        let base = Scenario::default_demo();
        let out = crate::sim::run(&base).unwrap();
        let f = Figures::of(&Summary::of(&out, "", 0.0));
        let criteria = Criteria { ripple_max_v: Some(0.01), ..Criteria::default() };
        let v = Limits::new(criteria, &base).judge(&f);
        assert_eq!(v.failures.len(), 1, "{v:?}");
        assert!(v.failures[0].starts_with("ripple") && v.margin < -5.0, "{v:?}");
    }
}
