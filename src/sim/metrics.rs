//! The summary of a run: the figures a designer checks, and the stable JSON
//! contract (`ripplectl simulate --json`).

use super::accounting::{regulating_windows, steady_efficiency};
use super::audible::{self, Audible};
use super::cpu::CpuUsage;
use super::emission::{EmissionSummary, Estimate};
use super::engine::RunOutput;
use super::plant::{EnergyLedger, Loss};
use super::transient::Transient;
use crate::guard::ClampCounts;
use serde::ser::{SerializeMap, Serializer};
use serde::Serialize;

/// A fault the firmware reported.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FaultEntry {
    /// Fault kind, kebab-case.
    pub kind: String,
    /// Simulated time, s.
    pub t_s: f64,
}

/// Loss breakdown over the steady windows, W: one entry per [`Loss`],
/// serialized as an object keyed by [`Loss::key`] in table order.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct LossesW(pub [f64; Loss::COUNT]);

impl LossesW {
    /// One term, W.
    pub fn get(&self, term: Loss) -> f64 {
        self.0[term as usize]
    }
}

impl Serialize for LossesW {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(Loss::COUNT))?;
        for term in Loss::ALL {
            map.serialize_entry(term.key(), &self.get(term))?;
        }
        map.end()
    }
}

/// The summary. Field names are the JSON keys; the first sixteen are the
/// stable contract.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Summary {
    /// Regulation setpoint, V.
    pub vout_setpoint_v: f64,
    /// Mean output voltage over the steady windows, V.
    pub vout_mean_v: f64,
    /// Output ripple, peak to peak, mean over steady cycles, V.
    pub vout_ripple_pp_v: f64,
    /// Lowest steady switching frequency, Hz.
    pub fsw_min_hz: f64,
    /// Mean steady switching frequency (cycles / time), Hz.
    pub fsw_mean_hz: f64,
    /// Highest steady switching frequency, Hz.
    pub fsw_max_hz: f64,
    /// Shortest on-time over the run, s.
    pub on_time_min_s: f64,
    /// Shortest off-time over the run, s.
    pub off_time_min_s: f64,
    /// Largest inductor current magnitude over the run, A.
    pub il_peak_a: f64,
    /// RMS error of the inductor-current estimate over the steady windows,
    /// A (null without an estimator).
    pub il_est_error_rms_a: Option<f64>,
    /// Output over output plus losses in the steady windows where the
    /// output is in regulation (null when it is in none; see
    /// [`super::accounting`]).
    pub efficiency_true: f64,
    /// The firmware's efficiency estimate over the same windows (null
    /// without an estimator).
    pub efficiency_estimated: Option<f64>,
    /// Faults the firmware logged.
    pub faults: Vec<FaultEntry>,
    /// Completed switching cycles over the run.
    pub switching_cycles: u64,
    /// Simulated time, s.
    pub simulated_s: f64,
    /// Wall-clock time of the run, s.
    pub wall_s: f64,
    /// Scenario name.
    pub scenario: String,
    /// Guard clamp counters.
    pub clamps: ClampCounts,
    /// Loss breakdown over the steady windows, W.
    pub losses_w: LossesW,
    /// Steady-window time, s.
    pub steady_s: f64,
    /// Why the efficiency covers fewer than all steady windows, if it does.
    pub efficiency_note: Option<String>,
    /// How the output rode each disturbance.
    pub transients: Vec<Transient>,
    /// Audible-band figures (null without a steady window long enough).
    pub audible: Option<Audible>,
    /// Conducted-emission estimate ([`Summary::with_emission`]).
    pub emission: EmissionSummary,
    /// Share of the named core's time the firmware's handlers took, 0–1
    /// (null without a core in the scenario).
    pub cpu_load: Option<f64>,
    /// The core's time by handler, and the longest handler.
    pub cpu: Option<CpuUsage>,
}

/// `a / b`, or NaN when `b` is zero.
fn ratio(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        f64::NAN
    } else {
        a / b
    }
}

/// Frequency statistics `(min, mean, max)` over steady cycles, Hz.
pub fn frequency_stats(out: &RunOutput) -> (f64, f64, f64) {
    let (mut n, mut total, mut lo, mut hi) = (0u64, 0.0, f64::INFINITY, 0.0f64);
    for c in out.recorder.steady_cycles() {
        n += 1;
        total += c.period_s;
        lo = lo.min(c.period_s);
        hi = hi.max(c.period_s);
    }
    if n == 0 {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    (1.0 / hi, n as f64 / total, 1.0 / lo)
}

/// Energies summed over the steady windows.
pub fn steady_energy(out: &RunOutput) -> EnergyLedger {
    out.recorder
        .windows
        .iter()
        .fold(EnergyLedger::default(), |sum, w| sum.plus(&w.energy_to.since(&w.energy_from)))
}

impl Summary {
    /// Summarise a run that took `wall_s` seconds.
    pub fn of(out: &RunOutput, scenario: &str, wall_s: f64) -> Self {
        Self { audible: audible::analyse(out), ..Self::without_audible(out, scenario, wall_s) }
    }

    /// [`Summary::of`] without the audible-band figures (`audible` none):
    /// their spectra cost about as much as a short run itself, and the
    /// figures a tolerance study judges do not use them.
    pub fn without_audible(out: &RunOutput, scenario: &str, wall_s: f64) -> Self {
        let windows = &out.recorder.windows;
        let steady_s: f64 = windows.iter().map(|w| w.to_s - w.from_s).sum();
        let vo_integral: f64 = windows.iter().map(|w| w.vo_integral).sum();
        let (ripple_sum, ripple_n) = out
            .recorder
            .steady_cycles()
            .fold((0.0, 0u32), |(s, n), c| (s + (c.vo_max_v - c.vo_min_v), n + 1));
        let (fsw_min_hz, fsw_mean_hz, fsw_max_hz) = frequency_stats(out);
        let e = steady_energy(out);
        let efficiency = steady_efficiency(out);
        let (est_out, est_in) = regulating_windows(out)
            .fold((0.0, 0.0), |(o, i), w| (o + w.est_output_w, i + w.est_input_w));
        let est_err_sq: f64 = windows.iter().map(|w| w.est_err_sq_integral).sum();
        let per_s = |j: f64| ratio(j, steady_s);
        Self {
            vout_setpoint_v: out.setpoint_v,
            vout_mean_v: ratio(vo_integral, steady_s),
            vout_ripple_pp_v: ratio(ripple_sum, f64::from(ripple_n)),
            fsw_min_hz,
            fsw_mean_hz,
            fsw_max_hz,
            on_time_min_s: out.recorder.on_min_s,
            off_time_min_s: out.recorder.off_min_s,
            il_peak_a: out.recorder.il_peak_a,
            il_est_error_rms_a: Some(ratio(est_err_sq, steady_s).sqrt()),
            efficiency_true: efficiency.efficiency,
            efficiency_estimated: (est_in > 0.0).then(|| est_out / est_in),
            faults: out
                .faults
                .iter()
                .map(|&(kind, t_s)| FaultEntry { kind: kind.name().to_string(), t_s })
                .collect(),
            switching_cycles: out.recorder.cycles.len() as u64,
            simulated_s: out.simulated_s,
            wall_s,
            scenario: scenario.to_string(),
            clamps: out.clamps,
            losses_w: LossesW(e.loss_j.map(per_s)),
            steady_s,
            efficiency_note: efficiency.note(),
            transients: out.recorder.transients.figures(&out.recorder.cycles),
            audible: None,
            emission: EmissionSummary::NotAvailable {
                reason: "not estimated for this summary".to_string(),
            },
            cpu_load: out.cpu.as_ref().map(|c| c.load),
            cpu: out.cpu.clone(),
        }
    }

    /// The summary with a run's emission estimate, or the reason it has
    /// none ([`super::emission::estimate`]).
    pub fn with_emission(mut self, estimate: &Result<Estimate, String>) -> Self {
        self.emission = EmissionSummary::of(estimate);
        self
    }
}
