//! The record's items: a switching cycle, an envelope slice, one
//! observation of the circuit, a steady window and its boundaries; and how
//! a cycle and a slice keep their extremes.

use crate::sim::plant::EnergyLedger;

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

impl Cycle {
    #[inline]
    pub(super) fn take_output(&mut self, v: f64) {
        raise(&mut self.vo_max_v, v);
        lower(&mut self.vo_min_v, v);
    }

    #[inline]
    pub(super) fn take_current(&mut self, i: f64) {
        raise(&mut self.il_max_a, i);
        lower(&mut self.il_min_a, i);
    }

    #[inline]
    pub(super) fn take_estimate(&mut self, e: f64) {
        if e.is_finite() {
            raise_or_set(&mut self.il_est_max_a, e);
        }
    }

    /// The output's range `(lo, hi)` (as both taken, `lo ≤ hi`).
    #[inline]
    pub(super) fn take_output_range(&mut self, (lo, hi): (f64, f64)) {
        raise(&mut self.vo_max_v, hi);
        lower(&mut self.vo_min_v, lo);
    }

    /// The current's range `(lo, hi)`.
    #[inline]
    pub(super) fn take_current_range(&mut self, (lo, hi): (f64, f64)) {
        raise(&mut self.il_max_a, hi);
        lower(&mut self.il_min_a, lo);
    }
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
    #[inline]
    pub(super) fn take_output(&mut self, v: f64) {
        lower(&mut self.vo_min_v, v);
        raise(&mut self.vo_max_v, v);
    }

    #[inline]
    pub(super) fn take_current(&mut self, i: f64) {
        lower(&mut self.il_min_a, i);
        raise(&mut self.il_max_a, i);
    }

    #[inline]
    pub(super) fn take_estimate(&mut self, e: f64) {
        if e.is_finite() {
            lower_or_set(&mut self.il_est_min_a, e);
            raise_or_set(&mut self.il_est_max_a, e);
        }
    }

    /// The output's range `(lo, hi)` (as both taken, `lo ≤ hi`).
    #[inline]
    pub(super) fn take_output_range(&mut self, (lo, hi): (f64, f64)) {
        lower(&mut self.vo_min_v, lo);
        raise(&mut self.vo_max_v, hi);
    }

    /// The current's range `(lo, hi)`.
    #[inline]
    pub(super) fn take_current_range(&mut self, (lo, hi): (f64, f64)) {
        lower(&mut self.il_min_a, lo);
        raise(&mut self.il_max_a, hi);
    }

    /// The estimate's range `(lo, hi)`, `lo ≤ hi`; none taken when not
    /// finite.
    #[inline]
    pub(super) fn take_estimate_range(&mut self, (lo, hi): (f64, f64)) {
        if lo.is_finite() {
            lower_or_set(&mut self.il_est_min_a, lo);
            raise_or_set(&mut self.il_est_max_a, hi);
        }
    }

    pub(super) fn empty(t_s: f64) -> Self {
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
pub(super) fn raise(m: &mut f64, x: f64) {
    if x > *m {
        *m = x;
    }
}

/// `m ← min(m, x)` for an `m` that is never NaN.
#[inline]
pub(super) fn lower(m: &mut f64, x: f64) {
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
    /// The window's index in [`Recorder::windows`](super::Recorder::windows).
    pub window: usize,
    /// The window's start (else its end).
    pub is_start: bool,
}
