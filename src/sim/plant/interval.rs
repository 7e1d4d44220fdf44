//! A point ahead of the plant ([`Ahead`]), and a level over an interval
//! ahead of it: whether and where it is
//! first reached, on the closed form, from its values and rates at the
//! interval's ends.
//!
//! A level is crossed in an interval when it is past the level at the
//! interval's end, or when it turns inside the interval (its rate changes
//! sign) and is past the level at the turn: a level that crosses and comes
//! back within one interval is found too. A turn the cubic through the
//! ends ([`Hermite`]) keeps clear of the level is ruled out without the
//! closed form.

use super::events::{chord_zero, refine_from, Bracket};
use super::hermite::Hermite;
use crate::sim::linear::{Affine, Followed, Trajectory, Vec2};

/// A point ahead of the plant: its time (s after the plant's) and state.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ahead {
    /// Time after the plant's, s.
    pub t: f64,
    /// State `[i_L, v_C]` there.
    pub x: Vec2,
}

/// Which side of a level counts as crossed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Toward {
    /// At or above the level.
    Above,
    /// At or below it.
    Below,
}

impl Toward {
    /// Whether `v` is on this side of zero: `±v ≥ 0` (the sign flip is
    /// exact), without a branch on the side in the refinement's loop.
    #[inline]
    pub(super) fn reached(self, v: f64) -> bool {
        let sign = match self {
            Toward::Above => 1.0,
            Toward::Below => -1.0,
        };
        sign * v >= 0.0
    }
}

/// An interval ahead of the plant on its present trajectory.
pub(super) struct Interval<'a> {
    pub trajectory: &'a Trajectory<'a>,
    /// The plant's `τ`.
    pub tau: f64,
    pub from: Ahead,
    pub to: Ahead,
    /// The state's rates at `from` and `to` (each level's rate there is
    /// its map of them).
    pub moving: [Vec2; 2],
}

impl Interval<'_> {
    /// Whether `level`'s rate has opposite signs at the interval's ends
    /// (it turns inside): the tests' check of a setting.
    #[cfg(test)]
    pub fn turns(&self, level: &Affine) -> bool {
        opposite_signs(level.rate(&self.moving[0]), level.rate(&self.moving[1]))
    }

    /// Whether the inductor current may reach `amps` in the interval, by
    /// the first test [`first`](Self::first) makes (the level past at the
    /// end, or turning), on the current itself: most levels a scan watches
    /// are currents far from the present one.
    #[inline]
    pub fn current_may_reach(&self, amps: f64, toward: Toward) -> bool {
        let (fa, fb) = (self.from.x[0] - amps, self.to.x[0] - amps);
        let (ra, rb) = (self.moving[0][0], self.moving[1][0]);
        opposite_signs(ra, rb) || (!toward.reached(fa) && toward.reached(fb))
    }

    /// The first time in the interval `level` is reached from the side
    /// away from `toward`, just past the crossing.
    pub fn first(&self, level: &Affine, toward: Toward) -> Option<f64> {
        self.first_crossing(level, toward).map(|c| c.t)
    }

    /// [`first`](Self::first), and whether the level runs on without a
    /// turn from the crossing to the interval's end: it does not turn in
    /// the interval, or its one turn comes before the crossing (both known
    /// only where it turns at most once in the interval: see
    /// [`Followed::turns_at_most_once`]).
    ///
    /// The first test, in line where the scan calls it, rules out most
    /// levels (not past at the end, no turn) on the ends' values and rates
    /// alone; the rest is [`crossing_within`](Self::crossing_within).
    #[inline(always)]
    pub fn first_crossing(&self, level: &Affine, toward: Toward) -> Option<Crossing> {
        let value = |p: &Ahead| level.value(&p.x, self.tau + p.t);
        let (fa, fb) = (value(&self.from), value(&self.to));
        let (ra, rb) = (level.rate(&self.moving[0]), level.rate(&self.moving[1]));
        let turns = opposite_signs(ra, rb);
        if !turns && (toward.reached(fa) || !toward.reached(fb)) {
            return None;
        }
        self.crossing_within(level, toward, [fa, ra, fb, rb], turns)
    }

    /// [`first_crossing`](Self::first_crossing) past its first test, from
    /// the level's value and rate at the interval's start and end
    /// (`[fa, ra, fb, rb]`) and whether it `turns` inside.
    // In line always, as `first_crossing` is: in the scan for the watched
    // output (most calls), the bracket's values stay in registers.
    #[inline(always)]
    fn crossing_within(
        &self,
        level: &Affine,
        toward: Toward,
        [fa, ra, fb, rb]: [f64; 4],
        turns: bool,
    ) -> Option<Crossing> {
        let reached = |v: f64| toward.reached(v);
        let (a, b) = (self.from.t, self.to.t);
        if turns && !reached(fb) && clear_of_level(fa, ra, fb, rb, b - a, toward) {
            return None;
        }
        let path = self.trajectory.follow(level);
        // The bracket, with the level's rates at its ends (zero at a turn).
        let (bracket, r_lo, r_hi, runs_on) = if turns {
            let (tm, fm) = turn(&path, (a, fa, ra), (b, fb, rb));
            if !reached(fa) && reached(fm) {
                (Bracket { lo: a, f_lo: fa, hi: tm, f_hi: fm }, ra, 0.0, false)
            } else if !reached(fm) && reached(fb) {
                let runs_on = path.turns_at_most_once(b - a);
                (Bracket { lo: tm, f_lo: fm, hi: b, f_hi: fb }, 0.0, rb, runs_on)
            } else {
                return None;
            }
        } else if !reached(fa) && reached(fb) {
            let runs_on = path.turns_at_most_once(b - a);
            (Bracket { lo: a, f_lo: fa, hi: b, f_hi: fb }, ra, rb, runs_on)
        } else {
            return None;
        };
        let start = start_of(&bracket, r_lo, r_hi);
        Some(Crossing { t: refine_from(&path, bracket, start, &reached), runs_on })
    }
}

/// Whether two rates have opposite signs, neither zero (a level with
/// these rates at an interval's ends turns inside); a NaN counts as
/// either sign.
#[inline]
fn opposite_signs(ra: f64, rb: f64) -> bool {
    ra != 0.0 && rb != 0.0 && !(ra > 0.0 && rb > 0.0) && !(ra < 0.0 && rb < 0.0)
}

/// A level's first crossing in an interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Crossing {
    /// Its time after the plant's, just past the crossing, s.
    pub t: f64,
    /// The level does not turn from the crossing to the interval's end.
    pub runs_on: bool,
}

/// Whether a level that turns inside an interval of length `h` (value and
/// rate `fa`, `ra` at its start, `fb`, `rb` at its end) surely stays on
/// the side away from `toward`: the cubic through the ends' values and
/// rates ([`Hermite`]) turns farther from the level than a thousandth of
/// the level's scale over the interval, where the cubic's own error,
/// `h⁴·f⁗/384`, is at most about 1e-5 of the level's oscillation on the
/// plant's intervals (see `super::scan::SCAN_OF_FASTEST`).
fn clear_of_level(fa: f64, ra: f64, fb: f64, rb: f64, h: f64, toward: Toward) -> bool {
    let cubic = Hermite::new(fa, ra, fb, rb, h);
    let margin = 1e-3 * fa.abs().max(fb.abs()).max((h * ra).abs()).max((h * rb).abs());
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
/// (a rate of the other sign) at `b` turns, with its value there: in
/// closed form where the trajectory allows ([`Followed::turn_within`]),
/// else Newton on the rate from the turn of the cubic through the ends'
/// values and rates ([`Hermite`]; the rates' linear interpolation when
/// that turn is not inside), kept inside the interval.
pub(super) fn turn(
    path: &Followed<'_>,
    (a, fa, ra): (f64, f64, f64),
    (b, fb, rb): (f64, f64, f64),
) -> (f64, f64) {
    if let Some(t) = path.turn_within(a, b) {
        return (t, path.value(t));
    }
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sim::linear::{Solution, System};

    /// An under-damped stage with constant forcing (`s = −3 900/s`,
    /// `ω ≈ 9 490 rad/s`), the level `i_L + 0.1·v_C`, from a start that
    /// turns soon after.
    fn setting() -> (Solution, Affine) {
        let system =
            System { a: [[-6.0e3, -2.1e4], [4.5e3, -1.8e3]], b0: [5.1e5, -4.0e3], b1: [0.0; 2] };
        (Solution::new(system).unwrap(), Affine { c: [1.0, 0.1], k0: 0.0, k1: 0.0 })
    }

    fn crossing(tr: &Trajectory<'_>, a: f64, b: f64, level: &Affine, t: Toward) -> Crossing {
        let ahead = |t: f64| Ahead { t, x: tr.at(t) };
        let (from, to) = (ahead(a), ahead(b));
        let moving = [tr.rate(&from.x, a), tr.rate(&to.x, b)];
        let interval = Interval { trajectory: tr, tau: 0.0, from, to, moving };
        assert!(interval.turns(level), "the level turns in [{a}, {b}]");
        interval.first_crossing(level, t).expect("a crossing")
    }

    #[test]
    fn a_level_runs_on_only_past_its_one_turn() {
        // The rate of e^{st}·(A·cos ωt + C·sin ωt) vanishes every π/ω (any
        // linear-systems text): an interval shorter than that holds one
        // turn, and past a crossing after it the level moves away.
        let (solution, path_level) = setting();
        let tr = solution.start_at([-40.0, 9.0], 0.0);
        let path = tr.follow(&path_level);
        let turn = path.turn_within(0.0, 1e-3).expect("a turn");
        let after =
            if path.value_and_rate(turn + 1e-6).1 > 0.0 { Toward::Above } else { Toward::Below };
        let before = if after == Toward::Above { Toward::Below } else { Toward::Above };
        let (short, long) = (2e-5, 5e-5);
        // Turn, then crossing: the level runs on to the interval's end.
        let level = path_level.less(path.value(turn + 0.5 * long));
        let c = crossing(&tr, turn - short, turn + long, &level, after);
        assert!(c.t > turn && c.runs_on, "{c:?}");
        // Crossing, then turn: it comes back.
        let level = path_level.less(path.value(turn - 0.5 * long));
        let c = crossing(&tr, turn - long, turn + short, &level, before);
        assert!(c.t < turn && !c.runs_on, "{c:?}");
        // Turn, then crossing, on an interval longer than π/ω: a second
        // turn cannot be ruled out, and the level is not said to run on.
        let omega = ((6.0e3f64 - 1.8e3).powi(2) / 4.0 - 2.1e4 * 4.5e3).abs().sqrt();
        let h = 1.03 * core::f64::consts::PI / omega;
        let level = path_level.less(path.value(turn + 0.5 * long));
        let c = crossing(&tr, turn - short, turn - short + h, &level, after);
        assert!(c.t > turn && !c.runs_on, "{c:?}");
    }
}
