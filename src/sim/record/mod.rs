//! What a run records: switching cycles, a waveform envelope for plots, and
//! integrals over the steady-state windows.
//!
//! The record is fed the plant's motion panel by panel (each a few
//! microseconds at most, see [`crate::sim::plant::Panel`]) and the
//! firmware's current estimate at each event (its knots), so its integrals
//! and extremes do not depend on where the event loop happened to stop.
//!
//! Steady state: the run is split at every disturbance (each input or load
//! breakpoint after t = 0); the second half of each piece is taken as
//! steady. Frequency, ripple, mean output and efficiency figures use those
//! windows only; extremes (peak current, minimum on/off-times) use the whole
//! run.

mod estimate;
pub(crate) mod items;

use super::cells::CellGrid;
use super::plant::{EnergyLedger, Panel};
use super::quadratic::{squared_difference, Quadratic};
use super::transient::TransientTracker;
use estimate::{EstimateLine, Knot, Piece};
use items::{lower, raise};
pub use items::{Cycle, Observation, Slice, Window, WindowBoundary};

/// Cell width of the inductor-current record in the steady windows, s.
pub const IL_CELL_S: f64 = 0.25e-6;

/// The longest stretch of a steady window the inductor-current record
/// keeps (its end), s: 2²⁰ cells, enough for the audible band's lowest
/// frequencies many times over.
pub const IL_RECORD_S: f64 = 0.25;

/// Collects a run.
#[derive(Clone, Debug)]
pub struct Recorder {
    /// Completed cycles.
    pub cycles: Vec<Cycle>,
    /// Envelope slices.
    pub slices: Vec<Slice>,
    /// Steady windows.
    pub windows: Vec<Window>,
    /// The inductor current over each steady window (same order), as cell
    /// averages of at most [`IL_CELL_S`] (during the run, up to the last
    /// cell reached: see [`finished`](Self::finished)).
    pub il_cells: Vec<CellGrid>,
    slice_s: f64,
    slices_per_s: f64,
    /// Index of the first window not yet ended (observations come in time
    /// order).
    window_cursor: usize,
    rise: Option<f64>,
    fall: Option<f64>,
    current: Option<Cycle>,
    /// Shortest completed on-time, s.
    pub on_min_s: f64,
    /// Shortest completed off-time, s.
    pub off_min_s: f64,
    /// Largest inductor current magnitude, A.
    pub il_peak_a: f64,
    /// The output through each disturbance.
    pub transients: TransientTracker,
    /// The firmware's estimate, knots not yet recorded.
    estimate: EstimateLine,
    /// Where the last panel ended and the envelope slice holding that
    /// instant (NaN: none yet): the next panel, which starts there as a
    /// rule, takes its first slice from here.
    panel_end: (f64, usize),
}

impl Recorder {
    /// A recorder for a run of `duration_s` with the given disturbance
    /// times, keeping `slices` envelope slices.
    pub fn new(duration_s: f64, disturbances: &[f64], slices: usize) -> Self {
        let mut edges = vec![0.0];
        edges.extend(disturbances.iter().copied().filter(|&t| t > 0.0 && t < duration_s));
        edges.push(duration_s);
        let windows: Vec<Window> = edges
            .windows(2)
            .filter(|w| w[1] > w[0])
            .map(|w| Window {
                from_s: 0.5 * (w[0] + w[1]),
                to_s: w[1],
                vo_min_v: f64::INFINITY,
                vo_max_v: f64::NEG_INFINITY,
                ..Window::default()
            })
            .collect();
        let slice_s = duration_s / slices.max(1) as f64;
        // At most the last IL_RECORD_S of each window: memory stays bounded
        // however long the run. The panels come in time order: each cell is
        // stored when reached, none zeroed ahead.
        let il_cells = windows
            .iter()
            .map(|w| CellGrid::in_order(w.from_s.max(w.to_s - IL_RECORD_S), w.to_s, IL_CELL_S))
            .collect();
        Self {
            cycles: Vec::new(),
            slices: (0..slices.max(1)).map(|k| Slice::empty(k as f64 * slice_s)).collect(),
            windows,
            il_cells,
            slice_s,
            slices_per_s: 1.0 / slice_s,
            window_cursor: 0,
            rise: None,
            fall: None,
            current: None,
            on_min_s: f64::INFINITY,
            off_min_s: f64::INFINITY,
            il_peak_a: 0.0,
            transients: TransientTracker::default(),
            estimate: EstimateLine::default(),
            panel_end: (f64::NAN, 0),
        }
    }

    /// The record at the run's end: the inductor-current records whole
    /// (the cells never reached, zero, added).
    pub fn finished(mut self) -> Self {
        self.il_cells.iter_mut().for_each(CellGrid::complete);
        self
    }

    /// Follow the output through the disturbances `tracker` watches.
    pub fn with_transients(mut self, tracker: TransientTracker) -> Self {
        self.transients = tracker;
        self
    }

    /// Window boundaries, in time order (an end before a start at the same
    /// time).
    pub fn window_edges(&self) -> Vec<WindowBoundary> {
        let mut e: Vec<_> = self
            .windows
            .iter()
            .enumerate()
            .flat_map(|(k, w)| {
                [
                    WindowBoundary { t_s: w.from_s, window: k, is_start: true },
                    WindowBoundary { t_s: w.to_s, window: k, is_start: false },
                ]
            })
            .collect();
        e.sort_by(|a, b| a.t_s.total_cmp(&b.t_s).then(a.is_start.cmp(&b.is_start)));
        e
    }

    /// Record the energies at a window boundary.
    pub fn window_edge(&mut self, index: usize, is_start: bool, energy: &EnergyLedger) {
        if let Some(w) = self.windows.get_mut(index) {
            if is_start {
                w.energy_from = *energy;
            } else {
                w.energy_to = *energy;
            }
        }
    }

    /// The circuit at one instant where the record starts or the output
    /// jumps (a step of the input or load moves it at once through the
    /// ESR): extremes and the envelope, no integral.
    pub fn point(&mut self, o: Observation) {
        raise(&mut self.il_peak_a, o.il_a.abs());
        self.transients.observe(&o);
        if let Some(c) = self.current.as_mut() {
            c.take_output(o.vo_v);
            c.take_current(o.il_a);
            c.take_estimate(o.il_est_a);
        }
        let s = self.slice_at(o.t_s);
        s.take_output(o.vo_v);
        s.take_current(o.il_a);
        s.take_estimate(o.il_est_a);
    }

    /// The firmware's estimate at an event, just before and just after its
    /// handlers (and at any time the plant is moved to, where both are the
    /// same): the record takes it as straight in between.
    #[inline]
    pub fn estimate_knot(&mut self, t_s: f64, before_a: f64, after_a: f64) {
        self.estimate.knot(Knot { t_s, before_a, after_a });
    }

    /// The firmware's estimate after the handlers of the event at `t_s`
    /// (its knot was given with the value before them); `corrected`: they
    /// corrected it for what happened before the event (a pulse's end they
    /// learned of late), so the line runs to this value.
    pub fn estimate_after(&mut self, t_s: f64, after_a: f64, corrected: bool) {
        self.estimate.set_after(t_s, after_a, corrected);
    }

    /// A panel of the plant's motion from `t0_s`, the gate on or off all
    /// along: its output and current taken as the quadratics through the
    /// panel's three states ([`super::quadratic`]), integrated by Simpson's rule,
    /// with their extremes (a turn inside the panel included) and the
    /// output's exits from the recovery band; the firmware's estimate from
    /// the knots up to the panel's end.
    pub fn panel(&mut self, t0_s: f64, p: &Panel, gate_on: bool) {
        let vo = Quadratic::through(p.h, p.vo);
        let il = Quadratic::through(p.h, [p.states[0][0], p.states[1][0], p.states[2][0]]);
        let t1_s = t0_s + p.h;
        // The output's turn: the plant's, on the closed form, if it found
        // one; else the quadratic's.
        let (vo_turn, v_range) = match p.vo_turn {
            Some((s, v)) => {
                (Some((s, v)), (v.min(p.vo[0]).min(p.vo[2]), v.max(p.vo[0]).max(p.vo[2])))
            }
            None => {
                let e = vo.extremes();
                (e.turn, e.range)
            }
        };
        let i_ext = il.extremes();
        let (i_lo, i_hi) = i_ext.range;
        let i_peak = i_hi.max(-i_lo);
        raise(&mut self.il_peak_a, i_peak);
        if let Some(c) = self.current.as_mut() {
            c.take_output_range(v_range);
            c.take_current_range(i_ext.range);
        }
        let first = match self.panel_end {
            (t, k) if t == t0_s => k,
            _ => self.slice_index(t0_s),
        };
        let slices = (first, self.slice_index(t1_s));
        self.panel_end = (t1_s, slices.1);
        if slices.0 == slices.1 {
            let s = &mut self.slices[slices.0];
            s.take_output_range(v_range);
            s.take_current_range(i_ext.range);
        } else {
            let ends = [(p.vo[0], p.vo[2]), (il.c[0], i_ext.end)];
            self.take_extremes_by_slice(t0_s, slices, ends, [vo_turn, i_ext.turn]);
        }
        self.transients.panel(t0_s, &vo, v_range, i_peak);
        let window = self.window_at(t0_s + 0.5 * p.h);
        if let Some(k) = window {
            let w = &mut self.windows[k];
            w.vo_integral += vo.total();
            w.il_integral += il.total();
            lower(&mut w.vo_min_v, v_range.0);
            raise(&mut w.vo_max_v, v_range.1);
            if let Some(cells) = self.il_cells.get_mut(k) {
                cells.add_quadratic(t0_s, &il);
            }
        }
        self.take_estimate(t0_s, t1_s, slices, &il, window);
        if gate_on {
            self.add_duty(t0_s, t1_s, slices.0);
        }
    }

    /// The output's and current's extremes over a panel from `t0_s` that
    /// spans envelope slices (from `slices.0` to `slices.1`), each in its
    /// slice: `ends`, their values at the panel's start and end (in the
    /// first and last slice), `turns`, where they turn inside, if they do.
    fn take_extremes_by_slice(
        &mut self,
        t0_s: f64,
        slices: (usize, usize),
        [(v0, v1), (i0, i1)]: [(f64, f64); 2],
        [v_turn, i_turn]: [Option<(f64, f64)>; 2],
    ) {
        self.slices[slices.0].take_output(v0);
        self.slices[slices.0].take_current(i0);
        self.slices[slices.1].take_output(v1);
        self.slices[slices.1].take_current(i1);
        if let Some((s, v)) = v_turn {
            self.slice_at(t0_s + s).take_output(v);
        }
        if let Some((s, i)) = i_turn {
            self.slice_at(t0_s + s).take_current(i);
        }
    }

    /// The firmware's estimate over a panel from `t0_s` to `t1_s` (in the
    /// envelope slices `slices.0` to `slices.1`) whose current is `il`: its
    /// straight pieces up to the panel's end, their extremes in the cycle
    /// and the envelope, their integrals in the steady window `window`.
    fn take_estimate(
        &mut self,
        t0_s: f64,
        t1_s: f64,
        slices: (usize, usize),
        il: &Quadratic,
        window: Option<usize>,
    ) {
        let mut extremes = EstimateExtremes::new(slices.0);
        let mut t = t0_s;
        // The slice where the piece starts (the last one's end).
        let mut k0 = slices.0;
        // Where the last piece ended, already taken: the next one starts
        // there (same time, cycle and slice) unless the estimate steps at
        // the knot between them.
        let mut taken = f64::NAN;
        loop {
            let piece = self.estimate.piece_from(t, t1_s);
            // A panel inside one slice has each of its pieces there.
            let k1 = if slices.0 == slices.1 { k0 } else { self.slice_within(piece.t1, slices) };
            if piece.e0 != taken {
                extremes.take(k0, piece.e0, &mut self.slices);
            }
            extremes.take(k1, piece.e1, &mut self.slices);
            if let Some(k) = window {
                integrate_estimate_piece(&mut self.windows[k], t0_s, il, &piece);
            }
            if piece.t1 >= t1_s {
                break;
            }
            (t, k0, taken) = (piece.t1, k1, piece.e1);
        }
        extremes.finish(&mut self.slices, self.current.as_mut());
    }

    /// The steady window a panel centred at `mid_s` lies in, if any
    /// (panels come in time order).
    fn window_at(&mut self, mid_s: f64) -> Option<usize> {
        while self.windows.get(self.window_cursor).is_some_and(|w| mid_s >= w.to_s) {
            self.window_cursor += 1;
        }
        let w = self.windows.get(self.window_cursor)?;
        (mid_s >= w.from_s).then_some(self.window_cursor)
    }

    /// The envelope slice holding `t_s`.
    fn slice_at(&mut self, t_s: f64) -> &mut Slice {
        let k = self.slice_index(t_s);
        &mut self.slices[k]
    }

    /// The index of the envelope slice holding `t_s` (through i64: one
    /// instruction).
    fn slice_index(&self, t_s: f64) -> usize {
        let last = self.slices.len() - 1;
        ((t_s * self.slices_per_s) as i64).clamp(0, last as i64) as usize
    }

    /// The index of the envelope slice holding `t_s`, a time inside a
    /// panel whose start and end lie in the slices `slices` (the same as
    /// [`slice_index`](Self::slice_index)): for a panel over two slices,
    /// the common case, one comparison with the second's start, `⌊x⌋ ≥ m`
    /// being `x ≥ m` for a whole `m`.
    fn slice_within(&self, t_s: f64, slices: (usize, usize)) -> usize {
        if slices.1 == slices.0 + 1 {
            if t_s * self.slices_per_s >= slices.1 as i64 as f64 {
                slices.1
            } else {
                slices.0
            }
        } else {
            self.slice_index(t_s)
        }
    }

    /// The gate on over `[t0_s, t1_s]`, which starts in the slice `first`:
    /// each slice's share of it.
    fn add_duty(&mut self, t0_s: f64, t1_s: f64, first: usize) {
        let mut t = t0_s;
        let mut k = first;
        while t < t1_s {
            let slice_s = self.slice_s;
            let s = &mut self.slices[k];
            let end = (s.t_s + slice_s).min(t1_s);
            // The last slice holds whatever lies beyond the run.
            let end = if end <= t { t1_s } else { end };
            s.duty += (end - t) / slice_s;
            t = end;
            if t < t1_s {
                k = self.slice_index(t);
            }
        }
    }

    /// The gate turned on; returns the cycle this edge completed.
    pub fn rise(&mut self, t_s: f64, o: Observation) -> Option<Cycle> {
        if let Some(f) = self.fall {
            self.off_min_s = self.off_min_s.min(t_s - f);
        }
        let done = self.current.take().map(|mut c| {
            c.period_s = t_s - c.t_s;
            c
        });
        if let Some(c) = done {
            self.cycles.push(c);
        }
        self.rise = Some(t_s);
        self.current = Some(Cycle {
            t_s,
            period_s: f64::NAN,
            on_s: f64::NAN,
            il_max_a: o.il_a,
            il_min_a: o.il_a,
            vo_max_v: o.vo_v,
            vo_min_v: o.vo_v,
            il_est_max_a: o.il_est_a,
            il_on_a: o.il_a,
            il_off_a: f64::NAN,
        });
        done
    }

    /// The gate turned off at `t_s` with the inductor current at `il_a`.
    pub fn fall(&mut self, t_s: f64, il_a: f64) {
        let il_now = il_a;
        if let Some(r) = self.rise {
            self.on_min_s = self.on_min_s.min(t_s - r);
            if let Some(c) = self.current.as_mut() {
                c.on_s = t_s - r;
                c.il_off_a = il_now;
            }
        }
        self.fall = Some(t_s);
    }

    /// The firmware's slow-path estimate of output and input power for the
    /// window ending at `t_s`.
    pub fn estimate(&mut self, t_s: f64, output_w: f64, input_w: f64) {
        if let Some(w) = self.windows.iter_mut().find(|w| t_s > w.from_s && t_s <= w.to_s) {
            w.est_output_w += output_w;
            w.est_input_w += input_w;
        }
    }

    /// Whether `t_s` lies in a steady window.
    pub fn is_steady(&self, t_s: f64) -> bool {
        self.windows.iter().any(|w| t_s >= w.from_s && t_s < w.to_s)
    }

    /// The completed cycles that start in a steady window.
    pub fn steady_cycles(&self) -> impl Iterator<Item = &Cycle> + '_ {
        self.cycles.iter().filter(|c| c.period_s.is_finite() && self.is_steady(c.t_s))
    }
}

/// A straight piece of the firmware's estimate inside a panel from `t0_s`
/// whose current is `il`, in the steady window `w`: its integral and that
/// of its squared error (exact for a line less a quadratic).
fn integrate_estimate_piece(w: &mut Window, t0_s: f64, il: &Quadratic, piece: &Piece) {
    let dt = piece.t1 - piece.t0;
    w.il_est_integral += 0.5 * (piece.e0 + piece.e1) * dt;
    if piece.e0.is_finite() && piece.e1.is_finite() && dt > 0.0 {
        let (a, b) = (piece.t0 - t0_s, piece.t1 - t0_s);
        w.est_err_sq_integral += squared_difference(il, a, b, piece.e0, piece.e1);
    }
}

/// The estimate's extremes over one panel, gathered point by point in time
/// order: taken into each envelope slice once (its range over the points
/// there) and into the cycle once, not point by point (the same extremes:
/// the estimate's values are numbers or skipped, so order does not matter).
struct EstimateExtremes {
    /// The slice of the points gathered in `range`.
    slice: usize,
    /// Their lowest and highest value (+∞ and −∞: none yet, so that each
    /// point is one comparison against each).
    range: (f64, f64),
    /// The highest value in the slices before (−∞: none).
    max: f64,
}

impl EstimateExtremes {
    /// None yet; the first points in slice `slice`.
    fn new(slice: usize) -> Self {
        Self { slice, range: (f64::INFINITY, f64::NEG_INFINITY), max: f64::NEG_INFINITY }
    }

    /// The estimate `e` in slice `slice` (at or after the last point's);
    /// `slices`: the envelope, where the range of an earlier slice goes.
    fn take(&mut self, slice: usize, e: f64, slices: &mut [Slice]) {
        if !e.is_finite() {
            return;
        }
        if slice != self.slice {
            self.flush(slices);
            self.slice = slice;
        }
        lower(&mut self.range.0, e);
        raise(&mut self.range.1, e);
    }

    /// The range gathered in the present slice, into it; none gathered
    /// after.
    fn flush(&mut self, slices: &mut [Slice]) {
        let (lo, hi) = self.range;
        if lo <= hi {
            slices[self.slice].take_estimate_range((lo, hi));
            raise(&mut self.max, hi);
        }
        self.range = (f64::INFINITY, f64::NEG_INFINITY);
    }

    /// The extremes gathered, into the envelope and the present cycle.
    fn finish(mut self, slices: &mut [Slice], cycle: Option<&mut Cycle>) {
        self.flush(slices);
        if let Some(c) = cycle {
            c.take_estimate(self.max);
        }
    }
}
