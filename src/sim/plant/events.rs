//! Events inside a segment, found on its closed form: the diode current
//! reaching zero (DCM), a saturation-band edge, a watched output level.

use super::conduction::Conduction;
use super::Plant;
use crate::sim::linear::{Affine, Followed, Trajectory, Vec2};

/// A level crossing of the output voltage to stop at (comparator input).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Watch {
    /// Output voltage threshold, V.
    pub level_v: f64,
    /// Stop when the output rises through the level (else: falls).
    pub rising: bool,
}

/// Why [`Plant::advance`] stopped.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Stop {
    /// The whole interval was simulated.
    Reached,
    /// The diode current reached zero after this many seconds (DCM).
    CurrentZero(f64),
    /// The current crossed a saturation-band edge after this many seconds.
    BandEdge(f64),
    /// The watched level was crossed after this many seconds.
    Crossing(f64),
}

/// The inductor current less `amps`, whose zero is an event.
pub(super) fn current_less(amps: f64) -> Affine {
    Affine { c: [1.0, 0.0], k0: -amps, k1: 0.0 }
}

/// A segment from the plant's state: its closed form, length, and the
/// states at its middle and end.
pub(super) struct Segment<'a> {
    pub trajectory: &'a Trajectory<'a>,
    pub tau0: f64,
    pub dt: f64,
    pub start: &'a Vec2,
    pub mid: &'a Vec2,
    pub end: &'a Vec2,
}

impl Plant {
    /// The earliest event inside `(0, dt]`, if any.
    pub(super) fn first_event(
        &self,
        seg: &Segment<'_>,
        watch: Option<Watch>,
    ) -> Option<(f64, Stop)> {
        let mut best: Option<(f64, Stop)> = None;
        let mut consider = |level: Affine, make: fn(f64) -> Stop| {
            if let Some(tau) = root(seg, &level) {
                if best.is_none_or(|(b, _)| tau < b) {
                    best = Some((tau, make(tau)));
                }
            }
        };
        let (im, i1) = (seg.mid[0], seg.end[0]);
        let ends_wrong_sign = match self.mode {
            Conduction::Diode => i1 <= 0.0 || im <= 0.0,
            Conduction::HighBody => i1 >= 0.0 || im >= 0.0,
            _ => false,
        };
        if ends_wrong_sign {
            consider(current_less(0.0), Stop::CurrentZero);
        }
        if let Some(sat) = self.params.saturation {
            if self.outside_band(i1) || self.outside_band(im) {
                let rising = sat.band(i1.abs().max(im.abs())) > self.band;
                let edge = sat.lower_edge(if rising { self.band + 1 } else { self.band });
                let sign = if i1 < 0.0 { -1.0 } else { 1.0 };
                consider(current_less(sign * edge), Stop::BandEdge);
            }
        }
        if let Some(w) = watch {
            let level = self.output.less(w.level_v);
            let crossed = |x: &Vec2, t: f64| {
                let v = level.value(x, seg.tau0 + t);
                if w.rising {
                    v >= 0.0
                } else {
                    v <= 0.0
                }
            };
            if crossed(seg.mid, 0.5 * seg.dt) || crossed(seg.end, seg.dt) {
                consider(level, Stop::Crossing);
            }
        }
        best
    }

    fn outside_band(&self, i: f64) -> bool {
        let a = i.abs();
        a < self.band_range.0 || a >= self.band_range.1
    }
}

/// First `t ∈ (0, dt]` where `level` changes sign along the segment, on
/// its closed form (the level followed along the trajectory: one flow per
/// evaluation). The result lies just past the crossing (within a few
/// 1e-16 s), so the caller lands on its far side.
///
/// The sign is known at the start, middle and end. A change in the first
/// half is refined there. A change in the second half only is refined
/// there when the level's rate has one sign over the first half (so it
/// cannot have crossed and come back); otherwise, or when neither half
/// shows a change, the first change on eight equal steps is sought.
fn root(seg: &Segment<'_>, level: &Affine) -> Option<f64> {
    let path = seg.trajectory.follow(level);
    let value = |x: &Vec2, t: f64| level.value(x, seg.tau0 + t);
    let h = 0.5 * seg.dt;
    let (f_start, f_mid, f_end) =
        (value(seg.start, 0.0), value(seg.mid, h), value(seg.end, seg.dt));
    let crossed = |fv: f64| fv == 0.0 || fv.signum() != f_start.signum();
    let bracket = if crossed(f_mid) {
        Some(Bracket { lo: 0.0, f_lo: f_start, hi: h, f_hi: f_mid })
    } else if crossed(f_end) && monotone_first_half(seg, level) {
        Some(Bracket { lo: h, f_lo: f_mid, hi: seg.dt, f_hi: f_end })
    } else {
        first_change_on_eight_steps(seg, &path, &value, &crossed, f_start)
    };
    Some(refine(&path, bracket?, &crossed))
}

/// An interval `[lo, hi]` of a segment, with the level at its ends, whose
/// far end is past a crossing.
pub(super) struct Bracket {
    pub lo: f64,
    pub f_lo: f64,
    pub hi: f64,
    pub f_hi: f64,
}

/// The crossing in `bracket`: regula falsi for a start, then Newton kept
/// inside the bracket, to within 1e-15 s; the result lies just past the
/// crossing (`crossed` holds there).
pub(super) fn refine(path: &Followed<'_>, bracket: Bracket, crossed: &impl Fn(f64) -> bool) -> f64 {
    let start = chord_zero(&bracket);
    refine_from(path, bracket, start, crossed)
}

/// Where the chord across `bracket` crosses zero (regula falsi).
pub(super) fn chord_zero(bracket: &Bracket) -> f64 {
    let Bracket { lo, f_lo, hi, f_hi } = *bracket;
    lo + (hi - lo) * f_lo / (f_lo - f_hi)
}

/// [`refine`] from `start`, a time inside the bracket.
pub(super) fn refine_from(
    path: &Followed<'_>,
    bracket: Bracket,
    start: f64,
    crossed: &impl Fn(f64) -> bool,
) -> f64 {
    let Bracket { mut lo, mut hi, .. } = bracket;
    let mut t = start;
    for _ in 0..60 {
        let (fv, dfv) = path.value_and_rate(t);
        if crossed(fv) {
            hi = t;
        } else {
            lo = t;
        }
        let step = fv / dfv;
        if hi - lo < 1e-15 || step.abs() < 1e-16 {
            return if crossed(fv) { t } else { step_across(path, crossed, t, step, hi) };
        }
        let newton = t - step;
        t = if dfv != 0.0 && newton > lo && newton < hi { newton } else { 0.5 * (lo + hi) };
    }
    hi
}

/// Whether the level's rate has the same sign at the start and the middle
/// of the segment: on these short stretches of a damped second-order
/// response it then has one sign between them.
fn monotone_first_half(seg: &Segment<'_>, level: &Affine) -> bool {
    let rate_at = |x: &Vec2, t: f64| level.rate(&seg.trajectory.rate(x, t));
    rate_at(seg.start, 0.0).signum() == rate_at(seg.mid, 0.5 * seg.dt).signum()
}

/// The first sign change on eight equal steps of the segment.
fn first_change_on_eight_steps(
    seg: &Segment<'_>,
    path: &Followed<'_>,
    value: &impl Fn(&Vec2, f64) -> f64,
    crossed: &impl Fn(f64) -> bool,
    f_start: f64,
) -> Option<Bracket> {
    let (mut lo, mut f_lo) = (0.0, f_start);
    for k in 1..=8 {
        let t = seg.dt * f64::from(k) / 8.0;
        let fv = match k {
            4 => value(seg.mid, t),
            8 => value(seg.end, t),
            _ => path.value(t),
        };
        if crossed(fv) {
            return Some(Bracket { lo, f_lo, hi: t, f_hi: fv });
        }
        (lo, f_lo) = (t, fv);
    }
    None
}

/// From `t` just short of a root `step` away, the first point past it:
/// probes at growing distances, never beyond `hi` (known to be past).
fn step_across(
    path: &Followed<'_>,
    crossed: &impl Fn(f64) -> bool,
    t: f64,
    step: f64,
    hi: f64,
) -> f64 {
    let mut probe = step.abs().max(1e-16) * 2.0;
    while t + probe < hi {
        if crossed(path.value(t + probe)) {
            return t + probe;
        }
        probe *= 4.0;
    }
    hi
}
