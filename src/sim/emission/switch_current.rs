//! The high-side switch current, rebuilt from the recorded switching cycles.
//!
//! While the switch conducts, its current is the inductor current, taken as
//! a straight line from its value at the turn-on to its value at the
//! turn-off (the on-state current of a buck is a ramp; the exponential bend
//! over one on-time is far below a percent for the stage's time constants).
//! The transitions are linear ramps of `t_rise_s` (from zero up to the
//! on-state current) and `t_fall_s` (back to zero), centred on the
//! simulator's gate edges, so the edges are the ramps' 50 % points and the
//! charge per cycle is kept. Between pulses the switch carries nothing.
//! In a synchronous stage the turn-on waits out the dead time.

use crate::sim::cells::CellGrid;
use crate::sim::record::Cycle;

/// Switch transition times, s (≥ 0).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ramps {
    /// Current rise at turn-on, s.
    pub rise_s: f64,
    /// Current fall at turn-off, s.
    pub fall_s: f64,
    /// Delay from the gate's turn-on to the switch conducting, s (the dead
    /// time of a synchronous stage; 0 otherwise).
    pub turn_on_delay_s: f64,
}

/// A piecewise-linear waveform: `(time s, value)` points in time order,
/// joined by straight lines, zero outside.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Waveform {
    /// The points, times non-decreasing.
    pub points: Vec<(f64, f64)>,
}

impl Waveform {
    /// The switch current of the cycles whose pulses overlap
    /// `[from_s, to_s]`. Cycles without a recorded turn-off are left out.
    pub fn switch_current(cycles: &[Cycle], ramps: Ramps, from_s: f64, to_s: f64) -> Self {
        let mut w = Self::default();
        let reach = ramps.rise_s.max(ramps.fall_s) + ramps.turn_on_delay_s;
        for c in cycles {
            let complete = c.on_s.is_finite() && c.il_on_a.is_finite() && c.il_off_a.is_finite();
            if complete && c.t_s + c.on_s + reach >= from_s && c.t_s - reach <= to_s {
                w.push_pulse(c, ramps);
            }
        }
        w
    }

    /// One trapezoid: ramp up around the turn-on, the on-state line, ramp
    /// down around the turn-off. Ramps that would overlap meet at the middle
    /// of the on-time.
    fn push_pulse(&mut self, c: &Cycle, ramps: Ramps) {
        let on = c.t_s + ramps.turn_on_delay_s;
        let off = (c.t_s + c.on_s).max(on);
        let on_state = |t: f64| {
            if off > on {
                c.il_on_a + (c.il_off_a - c.il_on_a) * (t - on) / (off - on)
            } else {
                c.il_off_a
            }
        };
        let mid = 0.5 * (on + off);
        let top_from = (on + 0.5 * ramps.rise_s).min(mid);
        let top_to = (off - 0.5 * ramps.fall_s).max(mid);
        self.push((on - 0.5 * ramps.rise_s, 0.0));
        self.push((top_from, on_state(top_from)));
        self.push((top_to, on_state(top_to)));
        self.push((off + 0.5 * ramps.fall_s, 0.0));
    }

    /// Append a point, keeping times non-decreasing (a point earlier than
    /// the last is moved to the last's time: an instantaneous step).
    fn push(&mut self, (t, v): (f64, f64)) {
        let t = self.points.last().map_or(t, |&(last, _)| t.max(last));
        self.points.push((t, v));
    }

    /// Average of the waveform over each cell of `grid` (added to what the
    /// grid holds).
    pub fn sample_into(&self, grid: &mut CellGrid) {
        for pair in self.points.windows(2) {
            grid.add_segment(pair[0], pair[1]);
        }
    }
}
