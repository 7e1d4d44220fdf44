//! Looking ahead of the plant without moving it: the first event in an
//! interval ahead (a DCM zero, a saturation-band edge, the watched output
//! crossing), found on the closed form from the plant's state.
//!
//! The event loop scans each interval between its events, so an event is
//! known before anything after it happens, and moves the plant only where
//! it is changed or an event falls. A level is crossed in an interval when
//! it is past the level at the interval's end, or when it turns inside the
//! interval (its rate changes sign) and is past the level at the turn: a
//! level that crosses and comes back within one interval is found too.

use super::conduction::Conduction;
use super::events::{chord_zero, current_less, refine_from, Bracket, Stop, Watch};
use super::hermite::Hermite;
use super::Plant;
use crate::sim::linear::{Affine, Followed, Trajectory, Vec2};

/// A point ahead of the plant: its time (s after the plant's) and state.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ahead {
    /// Time after the plant's, s.
    pub t: f64,
    /// State `[i_L, v_C]` there.
    pub x: Vec2,
}

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
    /// the output does not turn in the interval: what is known past it.
    /// Up to the interval's end (given here) the output stays past the
    /// level, so the same level watched the other way is not reached, and
    /// no other level is.
    pub clear_to: Option<Ahead>,
}

/// Which side of a level counts as crossed.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Toward {
    /// At or above the level.
    Above,
    /// At or below it.
    Below,
}

impl Toward {
    fn reached(self, v: f64) -> bool {
        match self {
            Toward::Above => v >= 0.0,
            Toward::Below => v <= 0.0,
        }
    }
}

/// How far ahead of the plant one scan looks at most, as a fraction of the
/// fastest response's time constant `1/ρ` (`ρ` the larger eigenvalue
/// magnitude of the present mode; 6 µs for the demo stage): an event found
/// beyond the next one costs no second scan, and a step this short keeps
/// to the flow's power series. The Hermite cubic that rules out a turn back
/// to a level errs by about `(ρ·h)⁴/384` of the level's scale, well inside
/// the margin of [`clear_of_level`].
pub const LOOKAHEAD_OF_FASTEST: f64 = 1.0 / 16.0;

/// The longest look ahead, s, for a plant without a fast response (an idle
/// stage into no load).
const LONGEST_LOOKAHEAD_S: f64 = 1e-3;

impl Plant {
    /// How far ahead one [`scan`](Self::scan) may look on the present
    /// solution, s.
    pub fn lookahead_s(&self) -> f64 {
        let rate = self.solutions.at(self.solution).fastest_rate();
        (LOOKAHEAD_OF_FASTEST / rate).min(LONGEST_LOOKAHEAD_S)
    }

    /// The state at `ahead`, the plant's own time `0`.
    pub fn ahead(&self, t: f64) -> Ahead {
        Ahead { t, x: if t == 0.0 { [self.i_l(), self.v_c()] } else { self.state_ahead(t) } }
    }

    /// The first event in `(from.t, to]` after the plant's time, if any,
    /// without moving the plant: the diode current reaching zero, a
    /// saturation-band edge, or the `watch`ed crossing of the output.
    pub fn scan(&self, from: Ahead, to: f64, watch: Option<Watch>) -> Scan {
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
        for (edge, toward) in self.band_edges(from.x[0]) {
            consider(&mut first, current(edge, toward), Stop::BandEdge);
        }
        let alone = first.is_none();
        let mut clear_to = None;
        if let Some(w) = watch {
            let toward = if w.rising { Toward::Above } else { Toward::Below };
            let level = self.output.less(w.level_v);
            consider(&mut first, interval.first(&level, toward), Stop::Crossing);
            let crossed = matches!(first, Some((_, Stop::Crossing(_))));
            if crossed && alone && !interval.turns(&level) {
                clear_to = Some(end);
            }
        }
        Scan { end, event: first.map(|(t, stop)| Event { t, stop, clear_to }) }
    }

    /// The present band's edges as signed currents, with the side past
    /// each, for a current of `i`'s sign.
    fn band_edges(&self, i: f64) -> impl Iterator<Item = (f64, Toward)> {
        let (lo, hi) = self.band_range;
        let saturating = self.params.saturation.is_some();
        let (up, down) =
            if i < 0.0 { (Toward::Below, Toward::Above) } else { (Toward::Above, Toward::Below) };
        let sign = if i < 0.0 { -1.0 } else { 1.0 };
        [(sign * hi, up), (sign * lo, down)]
            .into_iter()
            .filter(move |&(edge, _)| saturating && edge.is_finite())
    }
}

/// An interval ahead of the plant on its present trajectory.
struct Interval<'a> {
    trajectory: &'a Trajectory<'a>,
    /// The plant's `τ`.
    tau: f64,
    from: Ahead,
    to: Ahead,
    /// The state's rates at `from` and `to` (each level's rate there is
    /// its map of them).
    moving: [Vec2; 2],
}

impl Interval<'_> {
    /// Whether `level`'s rate has opposite signs at the interval's ends
    /// (it turns inside).
    fn turns(&self, level: &Affine) -> bool {
        let (ra, rb) = (level.rate(&self.moving[0]), level.rate(&self.moving[1]));
        ra != 0.0 && rb != 0.0 && ra.signum() != rb.signum()
    }

    /// Whether the inductor current may reach `amps` in the interval, by
    /// the first test [`first`](Self::first) makes (the level past at the
    /// end, or turning), on the current itself: most levels a scan watches
    /// are currents far from the present one.
    #[inline]
    fn current_may_reach(&self, amps: f64, toward: Toward) -> bool {
        let (fa, fb) = (self.from.x[0] - amps, self.to.x[0] - amps);
        let (ra, rb) = (self.moving[0][0], self.moving[1][0]);
        let turns = ra != 0.0 && rb != 0.0 && ra.signum() != rb.signum();
        turns || (!toward.reached(fa) && toward.reached(fb))
    }

    /// The first time in the interval `level` is reached from the side
    /// away from `toward`, just past the crossing.
    fn first(&self, level: &Affine, toward: Toward) -> Option<f64> {
        let value = |p: &Ahead| level.value(&p.x, self.tau + p.t);
        let (fa, fb) = (value(&self.from), value(&self.to));
        let (ra, rb) = (level.rate(&self.moving[0]), level.rate(&self.moving[1]));
        let reached = |v: f64| toward.reached(v);
        let (a, b) = (self.from.t, self.to.t);
        let turns = self.turns(level);
        if !turns && (reached(fa) || !reached(fb)) {
            return None;
        }
        if turns && !reached(fb) && clear_of_level(fa, ra, fb, rb, b - a, toward) {
            return None;
        }
        let path = self.trajectory.follow(level);
        // The bracket, with the level's rates at its ends (zero at a turn).
        let (bracket, r_lo, r_hi) = if turns {
            let (tm, fm) = turn(&path, (a, fa, ra), (b, fb, rb));
            if !reached(fa) && reached(fm) {
                (Bracket { lo: a, f_lo: fa, hi: tm, f_hi: fm }, ra, 0.0)
            } else if !reached(fm) && reached(fb) {
                (Bracket { lo: tm, f_lo: fm, hi: b, f_hi: fb }, 0.0, rb)
            } else {
                return None;
            }
        } else if !reached(fa) && reached(fb) {
            (Bracket { lo: a, f_lo: fa, hi: b, f_hi: fb }, ra, rb)
        } else {
            return None;
        };
        let start = start_of(&bracket, r_lo, r_hi);
        Some(refine_from(&path, bracket, start, &reached))
    }
}

/// Whether a level that turns inside an interval of length `h` (value and
/// rate `fa`, `ra` at its start, `fb`, `rb` at its end) surely stays on
/// the side away from `toward`: the cubic through the ends' values and
/// rates ([`Hermite`]) turns farther from the level than a thousandth of
/// the level's scale over the interval, where the cubic's own error,
/// `h⁴·f⁗/384`, is a few millionths of it on the plant's short intervals.
fn clear_of_level(fa: f64, ra: f64, fb: f64, rb: f64, h: f64, toward: Toward) -> bool {
    let cubic = Hermite::new(fa, ra, fb, rb, h);
    let margin = 1e-3 * fa.abs().max(fb.abs()).max(cubic.ra.abs()).max(cubic.rb.abs());
    cubic.turns().into_iter().filter(|s| *s > 0.0 && *s < 1.0).all(|s| {
        let v = cubic.value(s);
        match toward {
            Toward::Above => v < -margin,
            Toward::Below => v > margin,
        }
    })
}

/// Where to start refining the crossing in `bracket`, whose ends the level
/// leaves and reaches at rates `r_lo` and `r_hi`: the zero of the cubic
/// through the ends' values and rates ([`Hermite`]), or the chord's when
/// the cubic's is not inside.
fn start_of(bracket: &Bracket, r_lo: f64, r_hi: f64) -> f64 {
    let Bracket { lo, f_lo, hi, f_hi } = *bracket;
    match Hermite::new(f_lo, r_lo, f_hi, r_hi, hi - lo).zero() {
        Some(s) => lo + (hi - lo) * s,
        None => chord_zero(bracket),
    }
}

/// Where a level whose value and rate are `fa`, `ra` at `a` and `fb`, `rb`
/// (a rate of the other sign) at `b` turns, with its value there: Newton
/// on the rate from the turn of the cubic through the ends' values and
/// rates ([`Hermite`]; the rates' linear interpolation when that turn is
/// not inside), kept inside the interval.
pub(super) fn turn(
    path: &Followed<'_>,
    (a, fa, ra): (f64, f64, f64),
    (b, fb, rb): (f64, f64, f64),
) -> (f64, f64) {
    let (mut lo, mut hi) = (a, b);
    let mut t = match Hermite::new(fa, ra, fb, rb, b - a)
        .turns()
        .into_iter()
        .find(|s| *s > 0.0 && *s < 1.0)
    {
        Some(s) => a + (b - a) * s,
        None => a + (b - a) * ra / (ra - rb),
    };
    let mut value = fa;
    for _ in 0..20 {
        let [v, r, c] = path.value_rate_curvature(t);
        value = v;
        if r.signum() == ra.signum() {
            lo = t;
        } else {
            hi = t;
        }
        let step = r / c;
        // The value is flat at the turn: a nanosecond is plenty.
        if step.abs() < 1e-12 || hi - lo < 1e-12 {
            break;
        }
        let newton = t - step;
        t = if c != 0.0 && newton > lo && newton < hi { newton } else { 0.5 * (lo + hi) };
    }
    (t, value)
}
