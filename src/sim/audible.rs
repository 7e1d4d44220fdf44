//! Audible-band figures of a run: the strongest component of the inductor
//! current below 20 kHz relative to the switching fundamental, and the share
//! of time the switching period exceeds 50 µs (a frequency below 20 kHz).
//!
//! 20 kHz is the usual upper limit of hearing (common practice). A light-load
//! loop that bursts puts energy below it even when every single period lies
//! inside the frequency window; the inductor (magnetostriction) and ceramic
//! capacitors (piezoelectric effect) turn it into sound.
//!
//! The spectrum is taken per steady window from the recorded inductor current
//! ([`super::record::Recorder::il_cells`]): mean removed, Hann window, FFT,
//! amplitudes corrected for the window's coherent gain (½). The switching
//! fundamental is the strongest line at or above 20 kHz. Below 20 kHz the
//! search starts at the third bin, `3/T` for a window of `T` (the Hann main
//! lobe of the mean's residue covers the first two), so a window of 1 ms sees
//! down to 3 kHz: slower modulation shows in the period share, not in the
//! spectrum. The figures are those of the window with the strongest audible
//! component relative to its fundamental.

use super::cells::CellGrid;
use super::engine::RunOutput;
use realfft::RealFftPlanner;
use serde::Serialize;

/// Upper end of the audible band, Hz (common practice).
pub const AUDIBLE_HZ: f64 = 20e3;
/// A period longer than this switches in the audible band, s.
pub const SLOW_PERIOD_S: f64 = 1.0 / AUDIBLE_HZ;
/// Lowest bin searched below 20 kHz.
const FIRST_BIN: usize = 3;

/// The audible-band figures (`audible` in the JSON).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Audible {
    /// Frequency of the strongest inductor-current component below 20 kHz,
    /// Hz.
    pub strongest_hz: f64,
    /// Its amplitude relative to the switching fundamental, dB.
    pub strongest_dbc: f64,
    /// Frequency of the switching fundamental it is compared with, Hz.
    pub fundamental_hz: f64,
    /// Share of the steady time spent in cycles longer than 50 µs (0 to 1).
    pub slow_period_share: f64,
}

/// One record's strongest audible line and switching fundamental, each
/// `(frequency Hz, amplitude)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Lines {
    /// Strongest line from the third bin up to 20 kHz.
    pub audible: (f64, f64),
    /// Strongest line at or above 20 kHz.
    pub fundamental: (f64, f64),
}

impl Lines {
    /// The audible line relative to the fundamental, dB.
    pub fn relative_db(&self) -> f64 {
        20.0 * (self.audible.1 / self.fundamental.1).log10()
    }
}

/// The audible-band figures of a run (none without a steady window long
/// enough to resolve a line below 20 kHz, or without switching in it).
pub fn analyse(out: &RunOutput) -> Option<Audible> {
    let worst = out
        .recorder
        .il_cells
        .iter()
        .filter_map(lines)
        .max_by(|a, b| a.relative_db().total_cmp(&b.relative_db()))?;
    Some(Audible {
        strongest_hz: worst.audible.0,
        strongest_dbc: worst.relative_db(),
        fundamental_hz: worst.fundamental.0,
        slow_period_share: slow_period_share(out),
    })
}

/// Amplitude spectrum of a record: `(frequency Hz, amplitude)` per bin, Hann
/// window, mean removed (cells a grid has not reached count as zero).
pub fn amplitude_spectrum(record: &CellGrid) -> Vec<(f64, f64)> {
    let n = record.cell_count();
    let mean = record.mean();
    let mut input: Vec<f64> = record
        .cells
        .iter()
        .chain(std::iter::repeat(&0.0))
        .take(n)
        .enumerate()
        .map(|(k, &x)| {
            let hann = 0.5 - 0.5 * (2.0 * std::f64::consts::PI * k as f64 / n as f64).cos();
            (x - mean) * hann
        })
        .collect();
    let fft = RealFftPlanner::<f64>::new().plan_fft_forward(n);
    let mut bins = fft.make_output_vec();
    fft.process(&mut input, &mut bins).expect("buffers sized by the planner");
    // One-sided amplitude: 2|X|/n, over the Hann window's coherent gain ½.
    let scale = 4.0 / n as f64;
    let df = 1.0 / record.span_s();
    bins.iter().enumerate().map(|(k, b)| (k as f64 * df, b.norm() * scale)).collect()
}

/// The lines of one record (none if it is too short to resolve a line
/// below 20 kHz, or carries no AC at or above it).
pub fn lines(record: &CellGrid) -> Option<Lines> {
    let spectrum = amplitude_spectrum(record);
    let strongest = |from: usize, below_hz: f64| {
        spectrum
            .iter()
            .skip(from)
            .take_while(|(f, _)| *f < below_hz)
            .copied()
            .max_by(|a, b| a.1.total_cmp(&b.1))
    };
    let first_above = spectrum.iter().position(|(f, _)| *f >= AUDIBLE_HZ)?;
    if first_above <= FIRST_BIN {
        return None;
    }
    let audible = strongest(FIRST_BIN, AUDIBLE_HZ)?;
    let fundamental = strongest(first_above, f64::INFINITY)?;
    (fundamental.1 > 0.0).then_some(Lines { audible, fundamental })
}

/// Share of steady switching time in periods longer than [`SLOW_PERIOD_S`].
fn slow_period_share(out: &RunOutput) -> f64 {
    slow_share(out.recorder.steady_cycles().map(|c| c.period_s))
}

/// Share of the summed time of `periods` (s) spent in those longer than
/// [`SLOW_PERIOD_S`], 0 to 1 (0 without any).
pub fn slow_share(periods: impl Iterator<Item = f64>) -> f64 {
    let (slow, total) =
        periods.fold((0.0, 0.0), |(s, t), p| (if p > SLOW_PERIOD_S { s + p } else { s }, t + p));
    if total > 0.0 {
        slow / total
    } else {
        0.0
    }
}
