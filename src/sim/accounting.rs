//! The true efficiency over the steady windows, counted only where the
//! output is in steady regulation.
//!
//! Energy into a window splits into output, losses and the change of the
//! energy stored in L and C. A window's efficiency is therefore taken as
//! `E_out / (E_out + E_loss)`, which is `E_out / (E_in − ΔE_stored)`: the
//! stored energy's change (up to about 1 % of a window's energy from the
//! ripple's phase at its two ends) is not counted as delivered or lost.
//!
//! A window counts only when the output is in steady regulation there: some
//! switching cycle starts in it, no fault is logged in it, and its mean
//! output lies in the recovery band ([`super::transient`]). Otherwise the
//! output is fed from the capacitor (a fault, an input below UVLO) and the
//! ratio says nothing about the converter: with no such window the
//! efficiency is not available (NaN, `null` in JSON).

use super::engine::RunOutput;
use super::plant::EnergyLedger;
use super::record::Window;

/// The efficiency and which windows it covers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SteadyEfficiency {
    /// `E_out / (E_out + E_loss)` over the windows in regulation; NaN with
    /// none.
    pub efficiency: f64,
    /// Windows in regulation.
    pub regulating: usize,
    /// Steady windows in all.
    pub windows: usize,
}

impl SteadyEfficiency {
    /// A note for the report when not every window counted.
    pub fn note(&self) -> Option<String> {
        if self.regulating == self.windows {
            None
        } else if self.regulating == 0 {
            Some("n/a: the output is not in steady regulation in any steady window".to_string())
        } else {
            Some(format!(
                "over {} of {} steady windows (the others not in regulation)",
                self.regulating, self.windows
            ))
        }
    }
}

/// Whether the output is in steady regulation in window `w`.
pub fn is_regulating(out: &RunOutput, w: &Window) -> bool {
    let inside = |t: f64| t >= w.from_s && t < w.to_s;
    let switching = out.recorder.cycles.iter().any(|c| inside(c.t_s));
    let faulted = out.faults.iter().any(|&(_, t)| inside(t));
    let span = w.to_s - w.from_s;
    let mean_ok = span > 0.0 && out.recorder.transients.in_band(w.vo_integral / span);
    switching && !faulted && mean_ok
}

/// The windows in regulation.
pub fn regulating_windows(out: &RunOutput) -> impl Iterator<Item = &Window> + '_ {
    out.recorder.windows.iter().filter(|w| is_regulating(out, w))
}

/// The true efficiency over the windows in regulation.
pub fn steady_efficiency(out: &RunOutput) -> SteadyEfficiency {
    let (e, regulating) = regulating_windows(out)
        .fold((EnergyLedger::default(), 0), |(e, n), w| {
            (e.plus(&w.energy_to.since(&w.energy_from)), n + 1)
        });
    let delivered = e.output_j + e.losses_j();
    SteadyEfficiency {
        efficiency: if regulating > 0 && delivered > 0.0 {
            e.output_j / delivered
        } else {
            f64::NAN
        },
        regulating,
        windows: out.recorder.windows.len(),
    }
}
