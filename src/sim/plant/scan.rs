//! Looking ahead of the plant without moving it: the first event in an
//! interval ahead (a DCM zero, a saturation-band edge, the watched output
//! crossing), found on the closed form from the plant's state.
//!
//! The event loop scans each interval between its events, so an event is
//! known before anything after it happens, and moves the plant only where
//! it is changed or an event falls. Each level is tested over the interval
//! by [`super::interval`].

use super::conduction::Conduction;
use super::events::{current_less, Stop, Watch};
use super::interval::{Ahead, Interval, Toward};
use super::Plant;

/// What [`Plant::scan`] found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Scan {
    /// The interval's end.
    pub end: Ahead,
    /// The first event in the interval.
    pub event: Option<Event>,
}

/// The first event in a scanned interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Event {
    /// Its time after the plant's, s.
    pub t: f64,
    /// Its kind.
    pub stop: Stop,
    /// For the watched crossing when it is the interval's only event and
    /// the output does not turn between it and the interval's end: what is
    /// known past it.
    /// Up to the interval's end (given here) the output stays past the
    /// level, so the same level watched the other way is not reached, and
    /// no other level is.
    pub clear_to: Option<Ahead>,
}

/// How far ahead of the plant one scan looks at least (further when the
/// loop's next event is further, up to [`SCAN_OF_FASTEST`]), as a
/// fraction of the fastest response's time constant `1/ρ` (`ρ` the larger
/// eigenvalue magnitude of the present mode; about 100 µs for the demo
/// stage, see [`super::PANEL_OF_FASTEST`], so a scan looks about 6 µs
/// ahead): an event found beyond the next one costs no second scan, and a
/// step this short keeps to the flow's shortest power series.
pub const LOOKAHEAD_OF_FASTEST: f64 = 1.0 / 16.0;

/// The longest interval one scan tests as a whole, as a fraction of the
/// fastest response's time constant `1/ρ` (the loop may ask for more, up
/// to its next event; the rest is left to the next scan). A level is tested
/// from its values and rates at the interval's ends: a turn inside shows as
/// a change of sign of its rate, and the cubic through the ends (Hermite)
/// rules a turn's return clear of the level within an error of about
/// `(ρ·h)⁴/384` of the oscillation's amplitude, 1e-5 of it here, inside the
/// margin of a thousandth of the ends' values and rates that
/// `super::interval` allows. Without a ramp of the input or the load a
/// level's rate is `e^{st}` times a sinusoid of `ω ≤ ρ` (zeros `π/ω` apart)
/// or a sum of two exponentials (one zero at most): one turn at most inside
/// `h < π/ρ`, where a longer interval could hold a crossing and its return
/// with the rate of one sign at both ends. A ramp adds a constant to the
/// rate, and two turns may then fall inside one interval; the excursion
/// between them, about `(ρ·h)³/12` of the amplitude, is what a crossing
/// and return there could hide. The plant's panels have the same bound.
pub const SCAN_OF_FASTEST: f64 = super::PANEL_OF_FASTEST;

/// The longest look ahead, s, for a plant without a fast response (an idle
/// stage into no load).
const LONGEST_LOOKAHEAD_S: f64 = 1e-3;

impl Plant {
    /// How far ahead one [`scan`](Self::scan) looks at least on the
    /// present solution, s.
    pub fn lookahead_s(&self) -> f64 {
        lookahead_of(self.time_constant_s())
    }

    /// Where one [`scan`](Self::scan) from `from` (s after the plant's
    /// time) toward the loop's next event at `to` ends: at `to`, but at
    /// least the [look-ahead](Self::lookahead_s) on and at most the
    /// longest interval a scan tests as a whole ([`SCAN_OF_FASTEST`]) on;
    /// the rest is left to the next scan.
    pub fn scan_end(&self, from: f64, to: f64) -> f64 {
        let time_constant = self.time_constant_s();
        to.min(from + SCAN_OF_FASTEST * time_constant).max(from + lookahead_of(time_constant))
    }

    /// The fastest response's time constant `1/ρ` on the present
    /// solution, s (infinite for a plant that does not move): scans and
    /// panels are power-of-two fractions of it, the same values as the
    /// fractions divided by `ρ`.
    pub(super) fn time_constant_s(&self) -> f64 {
        1.0 / self.solutions.at(self.solution).fastest_rate()
    }

    /// The state at `ahead`, the plant's own time `0`.
    pub fn ahead(&self, t: f64) -> Ahead {
        Ahead { t, x: if t == 0.0 { [self.i_l(), self.v_c()] } else { self.state_ahead(t) } }
    }

    /// The first event after `from.t` (s after the plant's time), looking
    /// toward the loop's next event at `target`, if any, without moving
    /// the plant: the diode current reaching zero, a saturation-band edge,
    /// or the `watch`ed crossing of the output. The interval scanned ends
    /// where [`scan_end`](Self::scan_end) says (the [`Scan`]'s end): a
    /// longer one, tested as a whole, could hide a crossing and its return.
    // In line always: the event loop's `scan_until` is its one caller in
    // a run, and in line the start, the result and the plant's fields
    // pass in registers, not through memory and a frame of their own.
    #[inline(always)]
    pub fn scan(&self, from: Ahead, target: f64, watch: Option<Watch>) -> Scan {
        let to = self.scan_end(from.t, target);
        let trajectory = self.trajectory();
        let end = Ahead { t: to, x: trajectory.at(to) };
        let interval = Interval {
            trajectory: &trajectory,
            tau: self.tau,
            from,
            to: end,
            moving: [trajectory.rate(&from.x, from.t), trajectory.rate(&end.x, end.t)],
        };
        let mut first: Option<(f64, Stop)> = None;
        let consider =
            |first: &mut Option<(f64, Stop)>, found: Option<f64>, make: fn(f64) -> Stop| {
                if let Some(t) = found {
                    if first.is_none_or(|(f, _)| t < f) {
                        *first = Some((t, make(t)));
                    }
                }
            };
        let current = |amps: f64, toward: Toward| {
            if interval.current_may_reach(amps, toward) {
                interval.first(&current_less(amps), toward)
            } else {
                None
            }
        };
        match self.mode {
            Conduction::Diode => {
                consider(&mut first, current(0.0, Toward::Below), Stop::CurrentZero)
            }
            Conduction::HighBody => {
                consider(&mut first, current(0.0, Toward::Above), Stop::CurrentZero)
            }
            _ => {}
        }
        if self.params.saturation.is_some() {
            for (edge, toward) in self.band_edges(from.x[0]) {
                if edge.is_finite() {
                    consider(&mut first, current(edge, toward), Stop::BandEdge);
                }
            }
        }
        let alone = first.is_none();
        let mut clear_to = None;
        if let Some(w) = watch {
            let toward = if w.rising { Toward::Above } else { Toward::Below };
            let level = self.output.less(w.level_v);
            let crossing = interval.first_crossing(&level, toward);
            consider(&mut first, crossing.map(|c| c.t), Stop::Crossing);
            let crossed = matches!(first, Some((_, Stop::Crossing(_))));
            if crossed && alone && crossing.is_some_and(|c| c.runs_on) {
                clear_to = Some(end);
            }
        }
        Scan { end, event: first.map(|(t, stop)| Event { t, stop, clear_to }) }
    }

    /// The present band's edges as signed currents, with the side past
    /// each, for a current of `i`'s sign (an edge the band does not have
    /// is infinite; a stage without saturation has none: the caller
    /// tests both, on a fixed pair rather than a filtered iterator).
    #[inline]
    fn band_edges(&self, i: f64) -> [(f64, Toward); 2] {
        let (lo, hi) = self.band_range;
        let (up, down) =
            if i < 0.0 { (Toward::Below, Toward::Above) } else { (Toward::Above, Toward::Below) };
        let sign = if i < 0.0 { -1.0 } else { 1.0 };
        [(sign * hi, up), (sign * lo, down)]
    }
}

/// The look-ahead for a fastest time constant of `time_constant` s: a
/// power-of-two fraction of it, so the same value as the fraction divided
/// by the rate.
fn lookahead_of(time_constant: f64) -> f64 {
    (LOOKAHEAD_OF_FASTEST * time_constant).min(LONGEST_LOOKAHEAD_S)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sim::plant::Environment;
    use crate::sim::Scenario;

    /// The first event scanning `(0, to]` as the event loop does: scan on
    /// from each scan's end until one finds an event or reaches `to`.
    fn first_event_by_scans(plant: &Plant, to: f64, watch: Watch) -> Option<Event> {
        let mut from = plant.ahead(0.0);
        loop {
            let scan = plant.scan(from, to, Some(watch));
            if scan.event.is_some() || scan.end.t >= to {
                return scan.event;
            }
            from = scan.end;
        }
    }

    #[test]
    fn a_crossing_and_its_return_inside_one_long_interval_are_found() {
        // The demo stage with the high side on, 24 V into 2.5 Ω: an
        // under-damped LC (ω ≈ 1/√(LC) ≈ 9 800 rad/s, a period of about
        // 640 µs; any circuits text), started 2 A above the current of its
        // resting point so the output swings up past a level and back down
        // within the period. Over one period the output's rate has the same
        // sign at both ends and its value is below the level at the end: an
        // interval tested as a whole from its ends sees no crossing.
        let mut params = Scenario::default_demo().plant;
        params.saturation = None;
        let mut plant = Plant::new(params, 5.0);
        plant.set_environment(Environment { vin_v: 24.0, load_g_s: 0.4, ..Environment::default() });
        plant.set_mode(Conduction::HighSide);
        let rest_v = 24.0 * 2.5 / (2.5 + params.dcr_ohm);
        plant.set_state(rest_v / 2.5 + 2.0, rest_v);
        let v_at = |t: f64| plant.v_out_of(&plant.state_ahead(t), t);
        // The first time the output reaches `level`, on 1 ns samples.
        let period = 2.0 * core::f64::consts::PI * (params.l_h * params.c_f).sqrt();
        let peak = (0..(period * 1e9) as usize).map(|k| v_at(k as f64 * 1e-9)).fold(0.0, f64::max);
        let level = 0.5 * (rest_v + peak);
        let sampled = (0..).map(|k| k as f64 * 1e-9).find(|&t| v_at(t) >= level).unwrap();
        assert!(v_at(period) < level, "the output is back below the level after a period");
        let slope = |t: f64| v_at(t + 1e-9) - v_at(t);
        assert!(slope(0.0) * slope(period) > 0.0, "the output moves the same way at both ends");
        let watch = Watch { level_v: level, rising: true };
        let event = first_event_by_scans(&plant, period, watch).expect("the crossing is found");
        assert!(matches!(event.stop, Stop::Crossing(_)), "{event:?}");
        assert!((event.t - sampled).abs() <= 1e-9, "{} against {sampled} s", event.t);
    }
}
