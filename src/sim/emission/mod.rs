//! Conducted-emission estimate: the switch current through the input
//! network into the line impedance stabilisation networks, read by an
//! emulated receiver against CISPR 32 limits.
//!
//! A pre-compliance estimate on a model, not a measurement: it sees only the
//! differential-mode current the switch draws, through ideal parts and the
//! input capacitor's ESR and ESL; layout, parasitic capacitances, common-mode
//! paths and radiated coupling are outside it. The real board at a test
//! house decides.
//!
//! | module | what |
//! |---|---|
//! | [`network`] | LISN, input filter, input capacitor: switch current → LISN voltage |
//! | [`params`] | the scenario's `[emission]` table |
//! | [`switch_current`] | the switch current rebuilt from the recorded cycles |
//! | [`receiver`] | RBW filter, peak and average detectors |
//! | [`limits`] | CISPR 32 limit lines |
//! | [`plot`] | the spectrum against the limits |
//!
//! Per steady window: the switch current is averaged over cells of at most
//! 1/256 MHz, transformed (realfft), divided by the cells' box response,
//! multiplied by the network's transfer and read by the receiver. The
//! estimate is the worst reading over the steady windows at each tuning
//! frequency; the margin is the smallest distance below the limits, the peak
//! reading against the quasi-peak limit and the average against the average
//! limit.

pub mod limits;
pub mod network;
pub mod params;
pub mod plot;
pub mod receiver;
pub mod switch_current;

use super::cells::{box_gain, CellGrid};
use super::plant::Stage;
use super::record::Recorder;
use super::scenario::Scenario;
pub use crate::sim::plant::InputCapacitor;
pub use limits::{Class, Detector};
pub use network::{InputFilter, InputNetwork};
pub use params::EmissionParams;
use rayon::prelude::*;
use realfft::num_complex::Complex64;
use realfft::RealFftPlanner;
pub use receiver::{Receiver, Scan};
use serde::Serialize;
pub use switch_current::{Ramps, Waveform};

/// Longest cell of the switch-current record, s (a 256 MHz rate at least).
pub const MAX_CELL_S: f64 = 1.0 / 256e6;

/// The smallest margin below the limits.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Margin {
    /// Limit minus reading, dB (negative: over the limit).
    pub db: f64,
    /// Where it occurs, Hz.
    pub f_hz: f64,
    /// Which limit it is against.
    pub detector: Detector,
}

/// One steady window's switch current.
#[derive(Clone, Debug, PartialEq)]
pub struct WindowCurrent {
    /// Window start, s.
    pub from_s: f64,
    /// Window end, s.
    pub to_s: f64,
    /// The switch current over it.
    pub current: Waveform,
}

/// The estimate of one run.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    /// Limit class.
    pub class: Class,
    /// Worst reading over the steady windows at each tuning frequency.
    pub scan: Scan,
    /// The smallest margin.
    pub margin: Margin,
    /// The switch current of each steady window that was read.
    pub windows: Vec<WindowCurrent>,
}

/// The estimate's figures in the run summary (`emission` in the JSON).
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "status", rename_all = "kebab-case")]
pub enum EmissionSummary {
    /// Estimated.
    Estimated {
        /// Limit class.
        class: Class,
        /// Smallest margin below the limits, dB.
        margin_db: f64,
        /// Where it occurs, Hz.
        margin_hz: f64,
        /// Against which limit.
        margin_detector: Detector,
        /// Highest peak reading, dBµV.
        peak_max_dbuv: f64,
        /// Where it occurs, Hz.
        peak_max_hz: f64,
    },
    /// Not estimated, and why.
    NotAvailable {
        /// Why not.
        reason: String,
    },
}

impl EmissionSummary {
    /// The summary of an estimate, or of the reason there is none.
    pub fn of(estimate: &Result<Estimate, String>) -> Self {
        match estimate {
            Ok(e) => {
                let (peak_max_hz, peak_max_dbuv) = e
                    .scan
                    .f_hz
                    .iter()
                    .copied()
                    .zip(e.scan.peak_dbuv.iter().copied())
                    .fold((f64::NAN, f64::NEG_INFINITY), |a, b| if b.1 > a.1 { b } else { a });
                Self::Estimated {
                    class: e.class,
                    margin_db: e.margin.db,
                    margin_hz: e.margin.f_hz,
                    margin_detector: e.margin.detector,
                    peak_max_dbuv,
                    peak_max_hz,
                }
            }
            Err(reason) => Self::NotAvailable { reason: reason.clone() },
        }
    }
}

/// The scenario's input network, if it has an input capacitor.
pub fn input_network(scenario: &Scenario) -> Option<InputNetwork> {
    let capacitor = scenario.plant.input_capacitor?;
    Some(InputNetwork { capacitor, filter: scenario.emission.filter })
}

/// The switch transitions of the scenario's stage.
pub fn ramps(scenario: &Scenario) -> Ramps {
    let p = &scenario.plant;
    let turn_on_delay_s = match p.stage {
        Stage::Synchronous { dead_time_s, .. } => dead_time_s,
        Stage::NonSynchronous => 0.0,
    };
    Ramps { rise_s: p.t_rise_s, fall_s: p.t_fall_s, turn_on_delay_s }
}

/// Estimate the conducted emission of a run; `Err` says why there is none.
pub fn estimate(scenario: &Scenario, recorder: &Recorder) -> Result<Estimate, String> {
    let network = input_network(scenario).ok_or(
        "no `plant.input_capacitor`: the input capacitor carries most of the switch current, \
         so without it there is nothing to estimate",
    )?;
    let receiver = Receiver::band_b();
    let windows: Vec<WindowCurrent> = recorder
        .windows
        .iter()
        .filter(|w| w.to_s - w.from_s >= receiver.min_record_s())
        .map(|w| WindowCurrent {
            from_s: w.from_s,
            to_s: w.to_s,
            current: Waveform::switch_current(&recorder.cycles, ramps(scenario), w.from_s, w.to_s),
        })
        .filter(|w| !w.current.points.is_empty())
        .collect();
    let scan = windows
        .par_iter()
        .map(|w| {
            scan_record(record(&w.current, w.from_s, w.to_s), |f| network.transfer(f), &receiver)
        })
        .reduce_with(|a, b| a.max(&b))
        .ok_or_else(|| {
            format!(
                "no steady window of at least {:.2} ms with switching in it (the receiver settles \
                 at both ends of a record)",
                receiver.min_record_s() * 1e3
            )
        })?;
    let class = scenario.emission.class;
    Ok(Estimate { class, margin: margin(&scan, class), scan, windows })
}

/// The longest record the receiver reads, s: the end of a longer steady
/// window (memory stays bounded; a 9 kHz receiver settles in well under a
/// millisecond).
pub const MAX_RECORD_S: f64 = 8e-3;

/// The waveform averaged over cells of at most [`MAX_CELL_S`] spanning
/// `[from_s, to_s]`, or its last [`MAX_RECORD_S`].
pub fn record(current: &Waveform, from_s: f64, to_s: f64) -> CellGrid {
    let mut grid = CellGrid::covering(from_s.max(to_s - MAX_RECORD_S), to_s, MAX_CELL_S);
    current.sample_into(&mut grid);
    grid
}

/// Read one record of switch current through `transfer` (volts per ampere
/// at a frequency in Hz).
pub fn scan_record(
    record: CellGrid,
    transfer: impl Fn(f64) -> Complex64,
    receiver: &Receiver,
) -> Scan {
    let mut record = record;
    record.complete();
    let n = record.cells.len();
    let (span, dt) = (record.span_s(), record.dt_s);
    let mut input = record.cells;
    let fft = RealFftPlanner::<f64>::new().plan_fft_forward(n);
    let mut bins = fft.make_output_vec();
    fft.process(&mut input, &mut bins).expect("buffers sized by the planner");
    for (k, bin) in bins.iter_mut().enumerate() {
        let f = k as f64 / span;
        *bin *= transfer(f) / box_gain(f, dt);
    }
    receiver.scan(&bins, n, span)
}

/// The smallest margin of a scan below the class's limits.
pub fn margin(scan: &Scan, class: Class) -> Margin {
    let mut worst = Margin { db: f64::INFINITY, f_hz: f64::NAN, detector: Detector::Average };
    for (k, &f) in scan.f_hz.iter().enumerate() {
        for (detector, reading) in
            [(Detector::QuasiPeak, scan.peak_dbuv[k]), (Detector::Average, scan.average_dbuv[k])]
        {
            let db = limits::limit_dbuv(class, detector, f) - reading;
            if db < worst.db {
                worst = Margin { db, f_hz: f, detector };
            }
        }
    }
    worst
}

/// The switch current of every window read, as CSV: one row per point of
/// the piecewise-linear waveform, with the window's index and bounds.
pub fn current_csv(windows: &[WindowCurrent]) -> String {
    let mut out = String::from("window,from_s,to_s,t_s,i_a\n");
    for (k, w) in windows.iter().enumerate() {
        for (t, i) in &w.current.points {
            out += &format!("{k},{:e},{:e},{t:e},{i}\n", w.from_s, w.to_s);
        }
    }
    out
}

/// The worst readings and the limits as CSV.
pub fn scan_csv(scan: &Scan, class: Class) -> String {
    let mut out = String::from("f_hz,peak_dbuv,average_dbuv,limit_qp_dbuv,limit_av_dbuv\n");
    for (k, &f) in scan.f_hz.iter().enumerate() {
        out += &format!(
            "{f},{:.3},{:.3},{:.3},{:.3}\n",
            scan.peak_dbuv[k],
            scan.average_dbuv[k],
            limits::limit_dbuv(class, Detector::QuasiPeak, f),
            limits::limit_dbuv(class, Detector::Average, f)
        );
    }
    out
}
