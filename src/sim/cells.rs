//! Uniform cell averages of a piecewise-linear signal.
//!
//! A signal known as straight segments between points (the simulator's
//! observations, a switch-current waveform) is turned into a uniformly
//! sampled record by averaging it over each cell of a grid: the exact
//! integral of every segment over every cell it overlaps, divided by the cell
//! width. Unlike point sampling, an edge between two grid points keeps its
//! exact time (it shows as a fractional cell), and the averaging is a known
//! filter: a box of one cell, whose transfer `sinc(f·Δt)` a spectrum can
//! divide out ([`box_gain`]).

/// Cell averages over `[from_s, from_s + cells.len()·dt_s)`.
#[derive(Clone, Debug, PartialEq)]
pub struct CellGrid {
    /// Start of the first cell, s.
    pub from_s: f64,
    /// Cell width, s (> 0).
    pub dt_s: f64,
    /// Average of the signal over each cell (before any segment is added:
    /// zero).
    pub cells: Vec<f64>,
}

impl CellGrid {
    /// `n` empty cells of width `dt_s` from `from_s`.
    pub fn new(from_s: f64, dt_s: f64, n: usize) -> Self {
        Self { from_s, dt_s, cells: vec![0.0; n] }
    }

    /// Cells of at most `max_dt_s` covering `[from_s, to_s]` exactly, their
    /// number rounded up to a power of two (fast transforms).
    pub fn covering(from_s: f64, to_s: f64, max_dt_s: f64) -> Self {
        let span = (to_s - from_s).max(0.0);
        let n = ((span / max_dt_s).ceil() as usize).max(1).next_power_of_two();
        Self::new(from_s, span / n as f64, n)
    }

    /// Time span of the grid, s.
    pub fn span_s(&self) -> f64 {
        self.dt_s * self.cells.len() as f64
    }

    /// Add the straight segment from `(ta, va)` to `(tb, vb)` (`ta ≤ tb`);
    /// the parts outside the grid are dropped.
    pub fn add_segment(&mut self, (ta, va): (f64, f64), (tb, vb): (f64, f64)) {
        let end = self.from_s + self.span_s();
        let (lo, hi) = (ta.max(self.from_s), tb.min(end));
        if hi <= lo || (va == 0.0 && vb == 0.0) {
            return;
        }
        let slope = (vb - va) / (tb - ta);
        let value = |t: f64| va + slope * (t - ta);
        let first = ((lo - self.from_s) / self.dt_s).floor() as usize;
        let mut k = first.min(self.cells.len() - 1);
        let mut t = lo;
        while t < hi && k < self.cells.len() {
            let cell_end = (self.from_s + (k + 1) as f64 * self.dt_s).min(hi);
            if cell_end > t {
                self.cells[k] += 0.5 * (value(t) + value(cell_end)) * (cell_end - t) / self.dt_s;
            }
            t = cell_end;
            k += 1;
        }
    }

    /// Mean of the cells.
    pub fn mean(&self) -> f64 {
        self.cells.iter().sum::<f64>() / self.cells.len().max(1) as f64
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
    fn covering_rounds_to_a_power_of_two() {
        let g = CellGrid::covering(1.0, 2.0, 0.3);
        assert_eq!(g.cells.len(), 4);
        assert!((g.span_s() - 1.0).abs() < 1e-12);
    }
}
