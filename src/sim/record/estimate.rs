//! The firmware's current estimate over time, for the record: straight
//! between the simulator's events (the firmware moves it only in its
//! handlers, and a line's slope only changes there), with a step at an
//! event whose handlers moved it. The engine hands over the estimate just
//! before and just after each event's handlers (a [`Knot`]), and a knot at
//! any time it moves the plant; each panel of the plant's motion then takes
//! the pieces of the line within it, one after another.

/// The estimate at an event, just before and just after its handlers, A
/// (NaN: the firmware gives none).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Knot {
    /// Time, s.
    pub t_s: f64,
    /// Before the handlers, A.
    pub before_a: f64,
    /// After them, A.
    pub after_a: f64,
}

/// A straight piece of the estimate: from `(t0, e0)` to `(t1, e1)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Piece {
    /// Start, s.
    pub t0: f64,
    /// End, s.
    pub t1: f64,
    /// Estimate at the start, A.
    pub e0: f64,
    /// Estimate at the end, A.
    pub e1: f64,
}

/// The estimate's line, with the knots not yet reached by the record.
#[derive(Clone, Debug, Default)]
pub struct EstimateLine {
    /// Where the present piece starts: time, s, and value, A.
    from: (f64, f64),
    /// The knots given, those before `next` used up. Emptied whenever the
    /// record reaches the last (it soon does: the knots lead the plant by
    /// an event at most), so a plain vector serves as the queue, without
    /// a ring's index arithmetic.
    pending: Vec<Knot>,
    /// The first knot not yet reached.
    next: usize,
}

/// Used-up knots kept at most before they are dropped from the queue's
/// front (should the record lag the knots for long).
const USED_KEPT: usize = 64;

impl EstimateLine {
    /// A knot. One earlier than the last knot given is dropped: the
    /// firmware's state behind it has moved on since (the plant, found
    /// late to have stopped there, lags the handlers), and the line between
    /// the knots around it already holds its value.
    #[inline]
    pub fn knot(&mut self, k: Knot) {
        let last = self.pending.last().map_or(self.from.0, |p| p.t_s);
        if k.t_s >= last {
            if self.next >= USED_KEPT {
                self.pending.drain(..self.next);
                self.next = 0;
            }
            self.pending.push(k);
        }
    }

    /// The estimate after the handlers of the event at `t_s`, once they
    /// ran (its knot was given with the value before them); `corrected`:
    /// the value before them is replaced too (the line runs to it). The
    /// last knot in the queue is never used up (the queue is emptied when
    /// it is), so it is the one to change.
    pub fn set_after(&mut self, t_s: f64, after_a: f64, corrected: bool) {
        match self.pending.last_mut() {
            Some(k) if k.t_s == t_s => {
                k.after_a = after_a;
                if corrected {
                    k.before_a = after_a;
                }
            }
            _ if self.from.0 == t_s => self.from.1 = after_a,
            _ => {}
        }
    }

    /// The straight piece of the line from `t` towards `t1`: up to the
    /// next knot, or to `t1` without one before it; the knots it reaches
    /// are used up.
    #[inline]
    pub fn piece_from(&mut self, t: f64, t1: f64) -> Piece {
        // The first knot pending, read once for each knot passed: the
        // piece's start, end and values all need it.
        let mut next = self.front();
        while let Some(k) = next.filter(|k| k.t_s <= t) {
            self.use_up(&k);
            next = self.front();
        }
        let e0 = self.value_at(t, next);
        match next.filter(|k| k.t_s <= t1) {
            Some(k) => {
                self.use_up(&k);
                Piece { t0: t, t1: k.t_s, e0, e1: k.before_a }
            }
            None => Piece { t0: t, t1, e0, e1: self.value_at(t1, next) },
        }
    }

    /// The first knot not yet reached.
    fn front(&self) -> Option<Knot> {
        self.pending.get(self.next).copied()
    }

    /// The line reaches `k`, the first knot pending: the next piece starts
    /// there (the queue emptied when it was the last).
    fn use_up(&mut self, k: &Knot) {
        self.from = (k.t_s, k.after_a);
        self.next += 1;
        if self.next == self.pending.len() {
            self.pending.clear();
            self.next = 0;
        }
    }

    /// The value at `t` on the present piece, `next` the first knot
    /// pending: the line from the piece's start to that knot's value
    /// before its handlers (held without a next knot).
    fn value_at(&self, t: f64, next: Option<Knot>) -> f64 {
        let (ta, ea) = self.from;
        match next {
            Some(k) if k.t_s > ta => ea + (k.before_a - ea) * ((t - ta) / (k.t_s - ta)),
            _ => ea,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pieces_run_straight_between_knots_and_step_at_them() {
        let mut line = EstimateLine::default();
        line.knot(Knot { t_s: 0.0, before_a: 0.0, after_a: 1.0 });
        line.knot(Knot { t_s: 2.0, before_a: 3.0, after_a: 0.5 });
        line.knot(Knot { t_s: 4.0, before_a: 0.5, after_a: 0.5 });
        let got = [line.piece_from(0.0, 1.0), line.piece_from(1.0, 3.0), line.piece_from(2.0, 3.0)];
        assert_eq!(
            got,
            [
                Piece { t0: 0.0, t1: 1.0, e0: 1.0, e1: 2.0 },
                Piece { t0: 1.0, t1: 2.0, e0: 2.0, e1: 3.0 },
                Piece { t0: 2.0, t1: 3.0, e0: 0.5, e1: 0.5 },
            ]
        );
    }

    #[test]
    fn a_line_read_behind_its_knots_stays_straight_between_them() {
        // Knots at t = k, A: before k, after k + ½. Read one knot behind
        // the last given, the queue never empties and its used-up front is
        // dropped as it grows; each piece must still be the straight line
        // from knot k − 2's value after it to knot k − 1's value before it
        // (slope ½ A/s).
        let mut line = EstimateLine::default();
        let knot = |k: f64| Knot { t_s: k, before_a: k, after_a: k + 0.5 };
        line.knot(knot(0.0));
        line.knot(knot(1.0));
        for k in 2..(4 * USED_KEPT) {
            let k = k as f64;
            line.knot(knot(k));
            let on_line = |t: f64| (k - 1.5) + 0.5 * (t - (k - 2.0));
            let piece = line.piece_from(k - 1.5, k - 1.25);
            let want =
                Piece { t0: k - 1.5, t1: k - 1.25, e0: on_line(k - 1.5), e1: on_line(k - 1.25) };
            assert_eq!(piece, want, "at knot {k}");
        }
        assert!(line.pending.len() <= USED_KEPT + 2, "{} kept", line.pending.len());
    }
}
