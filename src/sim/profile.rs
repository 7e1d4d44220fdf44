//! Input-voltage and load profiles over time.
//!
//! The input is piecewise linear through `(t, V)` points (two points at the
//! same time make a step). The load is a list of changes, each a resistance,
//! a constant current, or a current ramp, in force from its start time until
//! the next one. Between breakpoints both are affine in time, which the plant
//! integrates exactly.

use super::plant::Environment;
use serde::{Deserialize, Serialize};

/// Piecewise-linear source voltage.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputProfile {
    /// `[t_s, volts]` points in non-decreasing time; before the first and
    /// after the last point the voltage is held.
    pub points: Vec<[f64; 2]>,
}

/// One load setting.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Load {
    /// A resistor, Ω.
    Resistive {
        /// Resistance, Ω (> 0).
        ohms: f64,
    },
    /// A constant-current sink, A.
    Current {
        /// Current, A (≥ 0).
        amps: f64,
    },
    /// A current ramping linearly from `from_a` to `to_a` over `over_s`, then
    /// held.
    Ramp {
        /// Start current, A.
        from_a: f64,
        /// End current, A.
        to_a: f64,
        /// Ramp duration, s (> 0).
        over_s: f64,
    },
    /// A hard short: 1 mΩ.
    Short,
}

/// Resistance of [`Load::Short`], Ω.
pub const SHORT_OHMS: f64 = 1e-3;

/// A load change at a time.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(from = "LoadEntry", into = "LoadEntry")]
pub struct LoadChange {
    /// When the change takes effect, s.
    pub at_s: f64,
    /// The new load.
    pub load: Load,
}

/// A load change as written in a scenario file: `kind`, `at_s` and the
/// kind's own keys in one table.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case", deny_unknown_fields)]
enum LoadEntry {
    Resistive { at_s: f64, ohms: f64 },
    Current { at_s: f64, amps: f64 },
    Ramp { at_s: f64, from_a: f64, to_a: f64, over_s: f64 },
    Short { at_s: f64 },
}

impl From<LoadEntry> for LoadChange {
    fn from(e: LoadEntry) -> Self {
        let (at_s, load) = match e {
            LoadEntry::Resistive { at_s, ohms } => (at_s, Load::Resistive { ohms }),
            LoadEntry::Current { at_s, amps } => (at_s, Load::Current { amps }),
            LoadEntry::Ramp { at_s, from_a, to_a, over_s } => {
                (at_s, Load::Ramp { from_a, to_a, over_s })
            }
            LoadEntry::Short { at_s } => (at_s, Load::Short),
        };
        Self { at_s, load }
    }
}

impl From<LoadChange> for LoadEntry {
    fn from(c: LoadChange) -> Self {
        let at_s = c.at_s;
        match c.load {
            Load::Resistive { ohms } => Self::Resistive { at_s, ohms },
            Load::Current { amps } => Self::Current { at_s, amps },
            Load::Ramp { from_a, to_a, over_s } => Self::Ramp { at_s, from_a, to_a, over_s },
            Load::Short => Self::Short { at_s },
        }
    }
}

/// Input and load together.
#[derive(Clone, Debug, PartialEq)]
pub struct Profile {
    input: InputProfile,
    loads: Vec<LoadChange>,
}

impl Profile {
    /// Combine an input profile and load changes (sorted by time here).
    pub fn new(input: InputProfile, mut loads: Vec<LoadChange>) -> Self {
        loads.sort_by(|a, b| a.at_s.total_cmp(&b.at_s));
        Self { input, loads }
    }

    /// Source voltage and slope at `t` (right-continuous at steps).
    fn input_at(&self, t: f64) -> (f64, f64) {
        let p = &self.input.points;
        match p.iter().position(|q| q[0] > t) {
            None => (p.last().map_or(0.0, |q| q[1]), 0.0),
            Some(0) => (p[0][1], 0.0),
            Some(k) => {
                let (a, b) = (p[k - 1], p[k]);
                let slope = (b[1] - a[1]) / (b[0] - a[0]);
                (a[1] + slope * (t - a[0]), slope)
            }
        }
    }

    /// Load conductance, current and current slope at `t`.
    fn load_at(&self, t: f64) -> (f64, f64, f64) {
        let Some(change) = self.loads.iter().rev().find(|c| c.at_s <= t) else {
            return (0.0, 0.0, 0.0);
        };
        match change.load {
            Load::Resistive { ohms } => (1.0 / ohms, 0.0, 0.0),
            Load::Short => (1.0 / SHORT_OHMS, 0.0, 0.0),
            Load::Current { amps } => (0.0, amps, 0.0),
            Load::Ramp { from_a, to_a, over_s } => {
                let into = t - change.at_s;
                if into >= over_s {
                    (0.0, to_a, 0.0)
                } else {
                    let slope = (to_a - from_a) / over_s;
                    (0.0, from_a + slope * into, slope)
                }
            }
        }
    }

    /// The plant's drive from `t` until the next breakpoint.
    pub fn environment_at(&self, t: f64) -> Environment {
        let (vin_v, vin_slope) = self.input_at(t);
        let (load_g_s, load_i_a, load_i_slope) = self.load_at(t);
        Environment { vin_v, vin_slope, load_g_s, load_i_a, load_i_slope }
    }

    /// Every time at which the drive changes form, sorted, deduplicated.
    pub fn breakpoints(&self) -> Vec<f64> {
        let mut t: Vec<f64> = self.input.points.iter().map(|q| q[0]).collect();
        for c in &self.loads {
            t.push(c.at_s);
            if let Load::Ramp { over_s, .. } = c.load {
                t.push(c.at_s + over_s);
            }
        }
        t.sort_by(f64::total_cmp);
        t.dedup();
        t
    }

    /// The times of disturbances: every breakpoint after the start.
    pub fn disturbances(&self) -> Vec<f64> {
        self.breakpoints().into_iter().filter(|&t| t > 0.0).collect()
    }

    /// Lowest and highest source voltage anywhere in the profile.
    pub fn input_range(&self) -> (f64, f64) {
        let v = self.input.points.iter().map(|q| q[1]);
        (v.clone().fold(f64::INFINITY, f64::min), v.fold(f64::NEG_INFINITY, f64::max))
    }

    /// Whether the profile ever shorts the output.
    pub fn has_short(&self) -> bool {
        self.loads.iter().any(|c| c.load == Load::Short)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_and_ramps() {
        let input =
            InputProfile { points: vec![[0.0, 24.0], [1e-3, 24.0], [1e-3, 18.0], [3e-3, 32.0]] };
        let loads = vec![
            LoadChange { at_s: 0.0, load: Load::Resistive { ohms: 5.0 } },
            LoadChange { at_s: 2e-3, load: Load::Ramp { from_a: 0.5, to_a: 2.0, over_s: 1e-3 } },
        ];
        let p = Profile::new(input, loads);
        assert_eq!(p.environment_at(0.5e-3).vin_v, 24.0);
        assert_eq!(p.environment_at(1e-3).vin_v, 18.0);
        let e = p.environment_at(2.5e-3);
        assert!((e.vin_v - 28.5).abs() < 1e-9 && (e.vin_slope - 7e3).abs() < 1e-6);
        assert!((e.load_i_a - 1.25).abs() < 1e-9 && e.load_g_s == 0.0);
        assert_eq!(p.environment_at(4e-3).load_i_a, 2.0);
        assert_eq!(p.breakpoints(), vec![0.0, 1e-3, 2e-3, 3e-3]);
    }
}
