//! Uniform cell averages of a piecewise-linear or piecewise-quadratic
//! signal.
//!
//! A signal known as straight segments between points (a switch-current
//! waveform) or as quadratics over panels (the simulator's inductor
//! current) is turned into a uniformly
//! sampled record by averaging it over each cell of a grid: the exact
//! integral of every segment over every cell it overlaps, divided by the cell
//! width. Unlike point sampling, an edge between two grid points keeps its
//! exact time (it shows as a fractional cell), and the averaging is a known
//! filter: a box of one cell, whose transfer `sinc(f·Δt)` a spectrum can
//! divide out ([`box_gain`]).

use super::quadratic::Quadratic;

/// Cell averages over `[from_s, from_s + n·dt_s)`, `n` cells.
#[derive(Clone, Debug, PartialEq)]
pub struct CellGrid {
    /// Start of the first cell, s.
    pub from_s: f64,
    /// Cell width, s (> 0).
    pub dt_s: f64,
    /// Average of the signal over each cell (before any segment is added:
    /// zero). A grid made by [`in_order`](Self::in_order) holds the cells
    /// up to the last one written, until [`complete`](Self::complete) adds
    /// the rest.
    pub cells: Vec<f64>,
    /// The number of cells the grid covers (`cells` may hold fewer).
    n: usize,
}

impl CellGrid {
    /// `n` empty cells of width `dt_s` from `from_s` (`n` below 2³¹, 16 GiB
    /// of cells: [`add_quadratic`](Self::add_quadratic) counts them in
    /// `i32`).
    pub fn new(from_s: f64, dt_s: f64, n: usize) -> Self {
        Self { from_s, dt_s, cells: vec![0.0; n], n }
    }

    /// The grid of [`covering`](Self::covering), for a signal added in
    /// time order: no cell is zeroed ahead, each is stored when first
    /// reached (a long record's cells are written once, not zeroed first;
    /// a part added out of order is still added right, to the cells held);
    /// [`complete`](Self::complete) adds the cells never reached.
    pub fn in_order(from_s: f64, to_s: f64, max_dt_s: f64) -> Self {
        let (dt_s, n) = covering_cells(from_s, to_s, max_dt_s);
        Self { from_s, dt_s, cells: Vec::with_capacity(n), n }
    }

    /// All the grid's cells, those never reached zero.
    pub fn complete(&mut self) {
        self.cells.resize(self.n, 0.0);
    }

    /// Cells of at most `max_dt_s` covering `[from_s, to_s]` exactly, their
    /// number rounded up to a power of two (fast transforms).
    pub fn covering(from_s: f64, to_s: f64, max_dt_s: f64) -> Self {
        let (dt_s, n) = covering_cells(from_s, to_s, max_dt_s);
        Self::new(from_s, dt_s, n)
    }

    /// The number of cells the grid covers (for an
    /// [`in_order`](Self::in_order) grid, those not yet reached included).
    pub fn cell_count(&self) -> usize {
        self.n
    }

    /// Time span of the grid, s.
    pub fn span_s(&self) -> f64 {
        self.dt_s * self.n as f64
    }

    /// Add the straight segment from `(ta, va)` to `(tb, vb)` (`ta ≤ tb`);
    /// the parts outside the grid are dropped.
    ///
    /// Each cell it covers gains the segment's average over the part
    /// inside it times that part's share of the cell: the first and last
    /// cell may be covered in part (the trapezoid over the part, divided by
    /// the width), the cells between in whole (the value at the centre, a
    /// loop without a division).
    pub fn add_segment(&mut self, (ta, va): (f64, f64), (tb, vb): (f64, f64)) {
        let end = self.from_s + self.span_s();
        let (lo, hi) = (ta.max(self.from_s), tb.min(end));
        if hi <= lo || (va == 0.0 && vb == 0.0) {
            return;
        }
        let line = Line { ta, va, slope: (vb - va) / (tb - ta) };
        let n = self.n;
        let k = self.cell_of(lo);
        let first_end = self.edge(k + 1).min(hi);
        self.add_piece(&line, k, lo, first_end);
        let (mut t, mut k) = (first_end, k + 1);
        let whole_end = self.whole_cells_end(k, hi);
        if whole_end > k {
            // A line's average over a whole cell is its value at the
            // cell's centre (cell `k + i`'s, `k + i + 0.5` in cells: see
            // `add_quadratic`).
            let (from, dt) = (self.from_s, self.dt_s);
            let centre_k = k as i64 as f64 + 0.5;
            self.add_whole_cells(k, whole_end, |i| {
                line.value(from + (centre_k + f64::from(i)) * dt)
            });
            (t, k) = (self.edge(whole_end), whole_end);
        }
        if t < hi && k < n {
            self.add_piece(&line, k, t, self.edge(k + 1).min(hi));
        }
    }

    /// The cell holding `t` (the first or last for a time outside the
    /// grid): `⌊(t − from)/Δt⌋` through i64, one instruction where `floor`
    /// is a library call.
    fn cell_of(&self, t: f64) -> usize {
        ((((t - self.from_s) / self.dt_s) as i64).max(0) as usize).min(self.n - 1)
    }

    /// Add the quadratic `q` over `[t0_s, t0_s + q.h]` (the parts outside
    /// the grid dropped): each cell gains its exact integral over the part
    /// inside it, divided by the width (over a whole cell, the value at the
    /// centre plus `c₂·Δt²/12`).
    pub fn add_quadratic(&mut self, t0_s: f64, q: &Quadratic) {
        let Some((lo, hi)) = self.inside(t0_s, t0_s + q.h) else { return };
        let k = self.cell_of(lo);
        if self.cells.len() < k {
            self.cells.resize(k, 0.0);
        }
        if self.cells.len() > k + 1 {
            // Cells past the first already held: added out of order.
            return self.add_quadratic_held(t0_s, q, k, (lo, hi));
        }
        self.add_quadratic_in_order(t0_s, q, k, (lo, hi));
    }

    /// The part of `[a, b]` inside the grid, if any. The grid's end is
    /// `from + n·Δt` as `span_s` has it, through i64 (one instruction where
    /// a `usize` takes several).
    #[inline]
    fn inside(&self, a: f64, b: f64) -> Option<(f64, f64)> {
        let (lo, hi) = (later(a, self.from_s), earlier(b, self.edge(self.n)));
        (hi > lo).then_some((lo, hi))
    }

    /// [`add_quadratic`](Self::add_quadratic) over `[lo, hi]` from cell
    /// `k` on, in time order (the record's case): cell `k` is the last held
    /// or the next, every cell after it is appended.
    #[inline]
    fn add_quadratic_in_order(&mut self, t0_s: f64, q: &Quadratic, k: usize, (lo, hi): (f64, f64)) {
        let first_end = earlier(self.edge(k + 1), hi);
        let whole_end = self.whole_cells_end(k + 1, hi);
        let dt = self.dt_s;
        let part = |a: f64, b: f64| q.integral(a - t0_s, b - t0_s) / dt;
        if first_end > lo {
            let v = part(lo, first_end);
            match self.cells.get_mut(k) {
                Some(cell) => *cell += v,
                None => self.cells.push(v),
            }
        } else if self.cells.len() == k {
            self.cells.push(0.0);
        }
        if whole_end > k + 1 {
            let value = whole_cell_averages(q, self.cell_centre(k + 1) - t0_s, dt);
            // Cell counts stay below 2³¹ (see `new`).
            self.cells.extend((0..(whole_end - k - 1) as i32).map(value));
        }
        // The part in the last cell reached, when it is not whole: from the
        // end of the cells before it to `hi`.
        if whole_end < self.n {
            let a = self.edge(whole_end);
            let b = earlier(self.edge(whole_end + 1), hi);
            if a < hi && b > a {
                self.cells.push(part(a, b));
            }
        }
    }

    /// [`add_quadratic`](Self::add_quadratic) over `[lo, hi]` from cell
    /// `k` on, where the grid holds cells past `k` already (added in place
    /// there, appended past them).
    fn add_quadratic_held(&mut self, t0_s: f64, q: &Quadratic, k: usize, (lo, hi): (f64, f64)) {
        let n = self.n;
        let first_end = earlier(self.edge(k + 1), hi);
        self.add_quadratic_part(t0_s, q, k, lo, first_end);
        let (mut t, mut k) = (first_end, k + 1);
        let whole_end = self.whole_cells_end(k, hi);
        if whole_end > k {
            let value = whole_cell_averages(q, self.cell_centre(k) - t0_s, self.dt_s);
            self.add_whole_cells(k, whole_end, value);
            (t, k) = (self.edge(whole_end), whole_end);
        }
        if t < hi && k < n {
            self.add_quadratic_part(t0_s, q, k, t, earlier(self.edge(k + 1), hi));
        }
    }

    /// The centre of cell `k`, s (`k + 0.5` cells from the start).
    fn cell_centre(&self, k: usize) -> f64 {
        self.from_s + (k as i64 as f64 + 0.5) * self.dt_s
    }

    /// Add the part of `q` (from `t0_s`) over `[a, b]` (inside cell `k`).
    fn add_quadratic_part(&mut self, t0_s: f64, q: &Quadratic, k: usize, a: f64, b: f64) {
        if b > a {
            self.add_to_cell(k, q.integral(a - t0_s, b - t0_s) / self.dt_s);
        }
    }

    /// Add `v` to cell `k`, storing the cells up to it first where the grid
    /// does not hold them yet (zero until reached).
    fn add_to_cell(&mut self, k: usize, v: f64) {
        if k >= self.cells.len() {
            self.cells.resize(k + 1, 0.0);
        }
        self.cells[k] += v;
    }

    /// Add `value(i)` to each cell `k + i` of `k..end`: in place where the
    /// grid holds the cell, else appended (a cell not yet reached is zero,
    /// so it is the value itself). `i` is counted in i32, whose conversion
    /// the compiler does two cells at a time.
    fn add_whole_cells(&mut self, k: usize, end: usize, value: impl Fn(i32) -> f64) {
        if self.cells.len() < k {
            self.cells.resize(k, 0.0);
        }
        let held_end = end.min(self.cells.len());
        for (i, cell) in (0..i32::MAX).zip(&mut self.cells[k..held_end]) {
            *cell += value(i);
        }
        // Cell counts stay below 2³¹ (see `new`).
        let (held, all) = ((held_end - k) as i32, (end - k) as i32);
        self.cells.extend((held..all).map(value));
    }

    /// Start of cell `k` (end of cell `k − 1`), s.
    fn edge(&self, k: usize) -> f64 {
        edge(self.from_s, self.dt_s, k)
    }

    /// Add the segment's part over `[t0, t1]` (inside cell `k`).
    fn add_piece(&mut self, line: &Line, k: usize, t0: f64, t1: f64) {
        if t1 > t0 {
            self.add_to_cell(k, line.trapezoid(t0, t1) / self.dt_s);
        }
    }

    /// The first cell from `k` on that a segment ending at `hi` does not
    /// cover whole (or the number of cells): cells `k..` it returns end
    /// before `hi`.
    #[inline(always)]
    fn whole_cells_end(&self, k: usize, hi: f64) -> usize {
        let n = self.n;
        let partial = |j: usize| j >= n || self.edge(j + 1) >= hi;
        let mut j = self.cell_of(hi).saturating_sub(1).clamp(k, n);
        while j > k && partial(j - 1) {
            j -= 1;
        }
        while !partial(j) {
            j += 1;
        }
        j
    }
    /// Mean of the cells.
    pub fn mean(&self) -> f64 {
        self.cells.iter().sum::<f64>() / self.n.max(1) as f64
    }
}

/// Width and number of the cells of [`CellGrid::covering`]: at most
/// `max_dt_s` wide, covering `[from_s, to_s]` exactly, their number a power
/// of two.
fn covering_cells(from_s: f64, to_s: f64, max_dt_s: f64) -> (f64, usize) {
    let span = (to_s - from_s).max(0.0);
    let n = ((span / max_dt_s).ceil() as usize).max(1).next_power_of_two();
    (span / n as f64, n)
}

/// The later of two times, `b` if `a` is NaN (as `f64::max` for a `b`
/// that is a number, without its handling of a NaN `b`).
#[inline]
fn later(a: f64, b: f64) -> f64 {
    if a > b {
        a
    } else {
        b
    }
}

/// The earlier of two times, `b` if `a` is NaN (as `f64::min` for a `b`
/// that is a number).
#[inline]
fn earlier(a: f64, b: f64) -> f64 {
    if a < b {
        a
    } else {
        b
    }
}

/// The average of `q` over the whole cells of width `dt` whose first has
/// its centre at `s0` (from `q`'s start), as a quadratic in the cell's
/// count `i` from that one, a step of one cell `Δt` a count:
/// `q(s₀ + i·Δt) + c₂·Δt²/12`, two multiplications and two additions a
/// cell.
fn whole_cell_averages(q: &Quadratic, s0: f64, dt: f64) -> impl Fn(i32) -> f64 {
    let [c0, c1, c2] =
        [q.at(s0) + q.c[2] * dt * dt / 12.0, (q.c[1] + 2.0 * q.c[2] * s0) * dt, q.c[2] * dt * dt];
    move |i| {
        let i = f64::from(i);
        c0 + i * (c1 + i * c2)
    }
}

/// Start of cell `k` of a grid from `from_s` in cells of `dt_s`, s.
fn edge(from_s: f64, dt_s: f64, k: usize) -> f64 {
    // Through i64: the same value for any grid, and one instruction.
    from_s + k as i64 as f64 * dt_s
}

/// A straight segment through `(ta, va)`.
struct Line {
    ta: f64,
    va: f64,
    slope: f64,
}

impl Line {
    fn value(&self, t: f64) -> f64 {
        self.va + self.slope * (t - self.ta)
    }

    /// `∫` of the line over `[t0, t1]` (trapezoid: exact for a line).
    fn trapezoid(&self, t0: f64, t1: f64) -> f64 {
        0.5 * (self.value(t0) + self.value(t1)) * (t1 - t0)
    }
}

/// Amplitude gain of averaging over a cell of `dt_s` at `f_hz`:
/// `sin(π·f·Δt)/(π·f·Δt)`, 1 at DC.
pub fn box_gain(f_hz: f64, dt_s: f64) -> f64 {
    let x = std::f64::consts::PI * f_hz * dt_s;
    if x.abs() < 1e-12 {
        1.0
    } else {
        x.sin() / x
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_ramp_integrates_exactly_over_fractional_cells() {
        let mut g = CellGrid::new(0.0, 1.0, 4);
        // 0 → 2 over t = 0.5 .. 2.5: cell 0 gets ∫0.5..1 = 0.125, cell 1
        // ∫1..2 = 1.0, cell 2 ∫2..2.5 = 0.875.
        g.add_segment((0.5, 0.0), (2.5, 2.0));
        let expect = [0.125, 1.0, 0.875, 0.0];
        for (c, e) in g.cells.iter().zip(expect) {
            assert!((c - e).abs() < 1e-12, "{:?}", g.cells);
        }
    }

    #[test]
    fn a_grid_filled_in_order_holds_the_cells_reached_then_all() {
        let mut g = CellGrid::in_order(0.0, 4.0, 1.0);
        // The ramp of the test above, in two pieces: 0 → 1 over 0.5 .. 1.5,
        // 1 → 2 over 1.5 .. 2.5; the same integrals by hand.
        g.add_segment((0.5, 0.0), (1.5, 1.0));
        g.add_segment((1.5, 1.0), (2.5, 2.0));
        assert_eq!(g.cells.len(), 3);
        g.complete();
        let expect = [0.125, 1.0, 0.875, 0.0];
        assert_eq!(g.cells.len(), 4);
        for (c, e) in g.cells.iter().zip(expect) {
            assert!((c - e).abs() < 1e-12, "{:?}", g.cells);
        }
    }

    #[test]
    fn a_quadratic_averages_exactly_over_each_cell() {
        // s² over [0, 6] on unit cells: ∫ⱼʲ⁺¹ s² ds = j² + j + 1/3 by hand.
        let mut g = CellGrid::in_order(0.0, 8.0, 1.0);
        g.add_quadratic(0.0, &Quadratic { c: [0.0, 0.0, 1.0], h: 6.0 });
        g.complete();
        let expect = |j: f64| if j < 6.0 { j * j + j + 1.0 / 3.0 } else { 0.0 };
        for (j, c) in g.cells.iter().enumerate() {
            assert!((c - expect(j as f64)).abs() < 1e-12, "{:?}", g.cells);
        }
    }

    #[test]
    fn covering_rounds_to_a_power_of_two() {
        let g = CellGrid::covering(1.0, 2.0, 0.3);
        assert_eq!(g.cells.len(), 4);
        assert!((g.span_s() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn quadratics_in_time_order_add_as_in_place_bit_for_bit() {
        // Panels one after another (some with gaps, some shorter than a
        // cell), through the in-order path and through the one that adds
        // in place: the same cells to the last bit.
        let mut seed = 12345u64;
        let mut rnd = || {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for trial in 0..300 {
            let from = rnd() * 1e-3;
            let span = 1e-4 + rnd() * 1e-3;
            let mut a = CellGrid::in_order(from, from + span, 0.25e-6);
            let mut b = CellGrid::in_order(from, from + span, 0.25e-6);
            let mut t = from - rnd() * 2e-5;
            while t < from + span + 3e-5 {
                let h = if trial % 3 == 0 { rnd() * 1e-6 } else { rnd() * 3e-5 };
                let q =
                    Quadratic { c: [rnd() - 0.5, (rnd() - 0.5) * 1e5, (rnd() - 0.5) * 1e10], h };
                a.add_quadratic(t, &q);
                if let Some((lo, hi)) = b.inside(t, t + q.h) {
                    b.add_quadratic_held(t, &q, b.cell_of(lo), (lo, hi));
                }
                t += h + if trial % 5 == 1 && rnd() < 0.2 { rnd() * 5e-6 } else { 0.0 };
            }
            a.complete();
            b.complete();
            for (x, y) in a.cells.iter().zip(&b.cells) {
                assert_eq!(x.to_bits(), y.to_bits(), "trial {trial}");
            }
        }
    }
}
