//! A measuring receiver emulated on a spectrum: tuning steps, a Gaussian
//! resolution-bandwidth filter, peak and average detectors.
//!
//! For each tuning frequency `f_c` the spectrum of a record is weighted by
//! the filter `|H(f)| = exp(−(f − f_c)²/(2σ²))`, whose −6 dB width is the
//! resolution bandwidth (9 kHz in CISPR band B, 150 kHz to 30 MHz, CISPR
//! 16-1-1). The weighted bins, shifted to baseband and transformed back by a
//! small inverse FFT, give the complex envelope at the filter's output over
//! the record. A shift of all bins by one frequency does not change the
//! envelope's magnitude, so the shift is by whole bins.
//!
//! - Peak detector: the largest envelope.
//! - Average detector: the linear mean of the envelope.
//! - Quasi-peak: not emulated. The peak reading is its upper bound (a
//!   quasi-peak detector charges more slowly than it discharges, so it
//!   never reads above the peak) and is compared with the quasi-peak limit.
//!
//! Readings are RMS-calibrated like a receiver's: a steady sine of amplitude
//! `A` at the tuning frequency reads `A/√2` on both detectors. The record
//! is treated as periodic (that is what its FFT sees); envelope samples
//! within four time constants of the filter from either end, where the
//! periodic wrap would show, are left out.
//!
//! The tuning step (2.5 kHz) is under half the bandwidth: a line midway
//! between two steps reads at most 0.46 dB low (the filter at ±1.25 kHz).

use realfft::num_complex::Complex64;
use rustfft::FftPlanner;
use std::f64::consts::PI;

/// The receiver's settings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Receiver {
    /// Lowest tuning frequency, Hz.
    pub from_hz: f64,
    /// Highest tuning frequency, Hz.
    pub to_hz: f64,
    /// Tuning step, Hz.
    pub step_hz: f64,
    /// Resolution bandwidth at −6 dB, Hz.
    pub rbw_hz: f64,
}

/// Readings over the tuning frequencies, dBµV.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Scan {
    /// Tuning frequencies, Hz.
    pub f_hz: Vec<f64>,
    /// Peak detector, dBµV.
    pub peak_dbuv: Vec<f64>,
    /// Average detector, dBµV.
    pub average_dbuv: Vec<f64>,
}

impl Scan {
    /// The larger of two scans over the same tuning frequencies, reading by
    /// reading (the worst of two operating points).
    pub fn max(mut self, other: &Scan) -> Scan {
        for (a, b) in self.peak_dbuv.iter_mut().zip(&other.peak_dbuv) {
            *a = a.max(*b);
        }
        for (a, b) in self.average_dbuv.iter_mut().zip(&other.average_dbuv) {
            *a = a.max(*b);
        }
        self
    }
}

/// How far either side of the tuning frequency the filter is applied, in
/// bandwidths (the Gaussian is 1.5·10⁻⁵, −96 dB, there).
const SPAN_RBW: f64 = 2.5;
/// Envelope samples per bin in the filter's span, so the peak of lines
/// beating inside the filter is caught: with 16, samples lie 1/(16·45 kHz)
/// apart, and the peak of two lines one bandwidth apart reads under 0.05 dB
/// low.
const ENVELOPE_OVERSAMPLING: usize = 16;
/// Envelope samples this many filter time constants from the record's ends
/// are left out.
const SETTLE_SIGMAS: f64 = 4.0;

impl Receiver {
    /// CISPR band B: 150 kHz to 30 MHz, 9 kHz bandwidth, 2.5 kHz steps.
    pub fn band_b() -> Self {
        Self { from_hz: 150e3, to_hz: 30e6, step_hz: 2.5e3, rbw_hz: 9e3 }
    }

    /// The tuning frequencies: whole multiples of the step within the band.
    pub fn tuning_frequencies(&self) -> Vec<f64> {
        let first = (self.from_hz / self.step_hz).ceil() as u64;
        let last = (self.to_hz / self.step_hz).floor() as u64;
        (first..=last).map(|k| k as f64 * self.step_hz).collect()
    }

    /// Standard deviation of the Gaussian filter, Hz: `|H| = ½` at ±RBW/2.
    fn sigma_hz(&self) -> f64 {
        self.rbw_hz / (2.0 * (2.0 * 2f64.ln()).sqrt())
    }

    /// Time the filter takes to settle, s: four standard deviations of its
    /// Gaussian impulse response, `σ_t = 1/(2π·σ_f)`.
    pub fn settle_s(&self) -> f64 {
        SETTLE_SIGMAS / (2.0 * PI * self.sigma_hz())
    }

    /// Shortest record the detectors can read: settled at both ends, with
    /// one bandwidth's reciprocal in between, s.
    pub fn min_record_s(&self) -> f64 {
        2.0 * self.settle_s() + 1.0 / self.rbw_hz
    }

    /// Read a record's spectrum. `bins[k]` is the FFT of `n` real samples
    /// (volts) spanning `record_s` at frequency `k/record_s` (no scaling).
    pub fn scan(&self, bins: &[Complex64], n: usize, record_s: f64) -> Scan {
        let tuning = self.tuning_frequencies();
        let df = 1.0 / record_s;
        let span_bins = (SPAN_RBW * self.rbw_hz / df).ceil() as usize;
        let m = (ENVELOPE_OVERSAMPLING * (2 * span_bins + 1)).next_power_of_two();
        let ifft = FftPlanner::new().plan_fft_inverse(m);
        let settle = self.settle_s() / record_s;
        let valid: Vec<usize> =
            (0..m).filter(|&j| (j as f64 / m as f64 - 0.5).abs() <= 0.5 - settle).collect();
        let sigma = self.sigma_hz();
        let scale = 2.0 / n as f64 / std::f64::consts::SQRT_2 / 1e-6;
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        let mut scratch = vec![Complex64::new(0.0, 0.0); ifft.get_inplace_scratch_len()];
        let mut scan = Scan { f_hz: tuning.clone(), ..Scan::default() };
        for f_c in tuning {
            let centre = (f_c / df).round() as usize;
            let first = centre.saturating_sub(span_bins);
            let last = (centre + span_bins).min(bins.len().saturating_sub(1));
            buf.fill(Complex64::new(0.0, 0.0));
            for k in first..=last {
                let offset = k as f64 * df - f_c;
                let weight = (-offset * offset / (2.0 * sigma * sigma)).exp();
                buf[k - first] = bins[k] * weight;
            }
            ifft.process_with_scratch(&mut buf, &mut scratch);
            let (peak, sum) = valid.iter().fold((0.0f64, 0.0), |(p, s), &j| {
                let e = buf[j].norm();
                (p.max(e), s + e)
            });
            scan.peak_dbuv.push(dbuv(peak * scale));
            scan.average_dbuv.push(dbuv(sum / valid.len().max(1) as f64 * scale));
        }
        scan
    }
}

/// `20·log10(x)` for `x` in µV.
fn dbuv(x_uv: f64) -> f64 {
    20.0 * x_uv.log10()
}
