//! What a run records: switching cycles, a waveform envelope for plots, and
//! integrals over the steady-state windows.
//!
//! Steady state: the run is split at every disturbance (each input or load
//! breakpoint after t = 0); the second half of each piece is taken as
//! steady. Frequency, ripple, mean output and efficiency figures use those
//! windows only; extremes (peak current, minimum on/off-times) use the whole
//! run.

use super::cells::CellGrid;
use super::plant::EnergyLedger;
use super::transient::TransientTracker;

/// Cell width of the inductor-current record in the steady windows, s.
pub const IL_CELL_S: f64 = 0.25e-6;

/// The longest stretch of a steady window the inductor-current record
/// keeps (its end), s: 2²⁰ cells, enough for the audible band's lowest
/// frequencies many times over.
pub const IL_RECORD_S: f64 = 0.25;

/// One switching cycle, from a turn-on to the next.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct Cycle {
    /// Turn-on time, s.
    pub t_s: f64,
    /// Time to the next turn-on, s.
    pub period_s: f64,
    /// Gate on-time, s.
    pub on_s: f64,
    /// Highest inductor current in the cycle, A.
    pub il_max_a: f64,
    /// Lowest inductor current in the cycle, A.
    pub il_min_a: f64,
    /// Highest output voltage in the cycle, V.
    pub vo_max_v: f64,
    /// Lowest output voltage in the cycle, V.
    pub vo_min_v: f64,
    /// Highest estimated inductor current in the cycle, A (NaN: none).
    pub il_est_max_a: f64,
    /// Inductor current at the turn-on, A.
    pub il_on_a: f64,
    /// Inductor current at the turn-off, A (NaN until the gate turns off).
    pub il_off_a: f64,
}

/// Waveform envelope over one slice of time, for plots and CSV.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct Slice {
    /// Slice start, s.
    pub t_s: f64,
    /// Output voltage range, V.
    pub vo_min_v: f64,
    /// Output voltage range, V.
    pub vo_max_v: f64,
    /// True inductor current range, A.
    pub il_min_a: f64,
    /// True inductor current range, A.
    pub il_max_a: f64,
    /// Estimated inductor current range, A (NaN: no estimate).
    pub il_est_min_a: f64,
    /// Estimated inductor current range, A (NaN: no estimate).
    pub il_est_max_a: f64,
    /// Fraction of the slice with the gate on.
    pub duty: f64,
}

impl Slice {
    fn empty(t_s: f64) -> Self {
        Self {
            t_s,
            vo_min_v: f64::INFINITY,
            vo_max_v: f64::NEG_INFINITY,
            il_min_a: f64::INFINITY,
            il_max_a: f64::NEG_INFINITY,
            il_est_min_a: f64::NAN,
            il_est_max_a: f64::NAN,
            duty: 0.0,
        }
    }
}

/// One observation of the circuit.
#[derive(Clone, Copy, Debug)]
pub struct Observation {
    /// Time, s.
    pub t_s: f64,
    /// Output voltage, V.
    pub vo_v: f64,
    /// Inductor current, A.
    pub il_a: f64,
    /// Estimated inductor current, A (NaN: none).
    pub il_est_a: f64,
    /// Gate on.
    pub gate_on: bool,
}

/// A steady-state window and its integrals.
#[derive(Clone, Copy, Debug, Default)]
pub struct Window {
    /// Start, s.
    pub from_s: f64,
    /// End, s.
    pub to_s: f64,
    /// ∫ v_o dt, V·s.
    pub vo_integral: f64,
    /// ∫ (i_est − i)² dt, A²·s.
    pub est_err_sq_integral: f64,
    /// ∫ i dt, A·s.
    pub il_integral: f64,
    /// ∫ i_est dt, A·s (NaN without an estimate).
    pub il_est_integral: f64,
    /// Energies at the start and end.
    pub energy_from: EnergyLedger,
    /// Energies at the end.
    pub energy_to: EnergyLedger,
    /// Output voltage range within, V.
    pub vo_min_v: f64,
    /// Output voltage range within, V.
    pub vo_max_v: f64,
    /// Sum of the firmware's estimated output power over its slow-path
    /// windows ending inside this window, W.
    pub est_output_w: f64,
    /// ... and of its estimated input power, W.
    pub est_input_w: f64,
}

/// `m ← max(m, x)` for an `m` that is never NaN (as `f64::max`, in one
/// comparison).
#[inline]
fn raise(m: &mut f64, x: f64) {
    if x > *m {
        *m = x;
    }
}

/// `m ← min(m, x)` for an `m` that is never NaN.
#[inline]
fn lower(m: &mut f64, x: f64) {
    if x < *m {
        *m = x;
    }
}

/// `m ← max(m, x)` for a number `x`, where an `m` of NaN means "none yet".
#[inline]
fn raise_or_set(m: &mut f64, x: f64) {
    if m.is_nan() || x > *m {
        *m = x;
    }
}

/// `m ← min(m, x)` for a number `x`, where an `m` of NaN means "none yet".
#[inline]
fn lower_or_set(m: &mut f64, x: f64) {
    if m.is_nan() || x < *m {
        *m = x;
    }
}

/// A start or end of a steady window.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WindowBoundary {
    /// Its time, s.
    pub t_s: f64,
    /// The window's index in [`Recorder::windows`].
    pub window: usize,
    /// The window's start (else its end).
    pub is_start: bool,
}

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
    /// averages of at most [`IL_CELL_S`].
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
    last: Option<Observation>,
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
        // however long the run.
        let il_cells = windows
            .iter()
            .map(|w| CellGrid::covering(w.from_s.max(w.to_s - IL_RECORD_S), w.to_s, IL_CELL_S))
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
            last: None,
        }
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

    /// The circuit at one instant (called at every simulation event).
    pub fn observe(&mut self, o: Observation) {
        raise(&mut self.il_peak_a, o.il_a.abs());
        self.transients.observe(&o);
        if let Some(c) = self.current.as_mut() {
            raise(&mut c.il_max_a, o.il_a);
            lower(&mut c.il_min_a, o.il_a);
            raise(&mut c.vo_max_v, o.vo_v);
            lower(&mut c.vo_min_v, o.vo_v);
            if o.il_est_a.is_finite() {
                raise_or_set(&mut c.il_est_max_a, o.il_est_a);
            }
        }
        if let Some(prev) = self.last {
            self.integrate(&prev, &o);
        }
        self.envelope(&o);
        self.last = Some(o);
    }

    /// Trapezoid integrals over the part of `[prev, o]` inside a window.
    fn integrate(&mut self, prev: &Observation, o: &Observation) {
        let dt = o.t_s - prev.t_s;
        if dt <= 0.0 {
            return;
        }
        let mid = 0.5 * (prev.t_s + o.t_s);
        while self.windows.get(self.window_cursor).is_some_and(|w| mid >= w.to_s) {
            self.window_cursor += 1;
        }
        let Some(w) = self.windows.get_mut(self.window_cursor) else { return };
        if mid < w.from_s {
            return;
        }
        if let Some(cells) = self.il_cells.get_mut(self.window_cursor) {
            cells.add_segment((prev.t_s, prev.il_a), (o.t_s, o.il_a));
        }
        w.vo_integral += 0.5 * (prev.vo_v + o.vo_v) * dt;
        lower(&mut w.vo_min_v, o.vo_v);
        raise(&mut w.vo_max_v, o.vo_v);
        w.il_integral += 0.5 * (prev.il_a + o.il_a) * dt;
        w.il_est_integral += 0.5 * (prev.il_est_a + o.il_est_a) * dt;
        if prev.il_est_a.is_finite() && o.il_est_a.is_finite() {
            let (e0, e1) = (prev.il_est_a - prev.il_a, o.il_est_a - o.il_a);
            w.est_err_sq_integral += 0.5 * (e0 * e0 + e1 * e1) * dt;
        }
    }

    fn envelope(&mut self, o: &Observation) {
        // Through i64 (one instruction; the same index for any time).
        let last = self.slices.len() - 1;
        let k = ((o.t_s * self.slices_per_s) as i64).clamp(0, last as i64) as usize;
        let s = &mut self.slices[k];
        lower(&mut s.vo_min_v, o.vo_v);
        raise(&mut s.vo_max_v, o.vo_v);
        lower(&mut s.il_min_a, o.il_a);
        raise(&mut s.il_max_a, o.il_a);
        if o.il_est_a.is_finite() {
            lower_or_set(&mut s.il_est_min_a, o.il_est_a);
            raise_or_set(&mut s.il_est_max_a, o.il_est_a);
        }
        if let Some(prev) = self.last {
            if prev.gate_on {
                s.duty += (o.t_s - prev.t_s) / self.slice_s;
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

    /// The gate turned off. The circuit at `t_s` is the last observation
    /// (the engine observes the circuit up to an edge before carrying it out).
    pub fn fall(&mut self, t_s: f64) {
        let il_now = self.last.filter(|o| o.t_s == t_s).map_or(f64::NAN, |o| o.il_a);
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
}
