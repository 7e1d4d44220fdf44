//! The microcontroller around the firmware: the ADC (resolution,
//! saturation, noise, an open feedback divider) and the analog comparator
//! (a DAC threshold the firmware arms, or the board's own Schmitt trigger).

use super::plant::Watch;
use super::scenario::{HystereticInput, LawParams, Scenario};
use crate::scale::AdcChannel;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use rand_xoshiro::Xoshiro256PlusPlus;

/// The ADC: both channels, its noise, and a fault at the output divider.
#[derive(Clone, Debug)]
pub(super) struct Adc {
    output: Converter,
    input: Converter,
    rng: Xoshiro256PlusPlus,
    noise: Option<Normal<f64>>,
    /// From this tick on the output divider reads as open (0 V).
    open_from: Option<u64>,
}

impl Adc {
    pub(super) fn new(
        output: AdcChannel,
        input: AdcChannel,
        sc: &Scenario,
        open_from: Option<u64>,
    ) -> Self {
        let m = &sc.mcu;
        Self {
            output: Converter::new(output),
            input: Converter::new(input),
            rng: Xoshiro256PlusPlus::seed_from_u64(m.seed),
            noise: (m.noise_lsb_rms > 0.0)
                .then(|| Normal::new(0.0, m.noise_lsb_rms).ok())
                .flatten(),
            open_from,
        }
    }

    /// The output voltage an output code stands for (a DAC threshold on
    /// the output's scale), V.
    pub(super) fn output_volts(&self, code: u16) -> f32 {
        self.output.volts(code)
    }

    /// The result for the output at `tick`: ideal converter plus noise,
    /// saturating at the rails; an open divider reads 0 V. Inline, as
    /// [`convert_input`](Self::convert_input): one call each per sample,
    /// and the calls cost a good part of the arithmetic.
    #[inline]
    pub(super) fn convert_output(&mut self, v_out: f64, tick: u64) -> u16 {
        let open = self.open_from.is_some_and(|t| tick >= t);
        let exact = self.output.exact_code(if open { 0.0 } else { v_out });
        let noisy = exact + self.noise();
        self.output.saturate(round_half_away(noisy))
    }

    /// The result for the input.
    #[inline]
    pub(super) fn convert_input(&mut self, v_in: f64) -> u16 {
        let noisy = self.input.exact_code(v_in) + self.noise();
        self.input.saturate(round_half_away(noisy))
    }

    /// One draw of the noise, LSB.
    fn noise(&mut self) -> f64 {
        self.noise.map_or(0.0, |n| n.sample(&mut self.rng))
    }
}

/// A channel's conversion with its factors taken out once:
/// [`AdcChannel::exact_code`] and [`AdcChannel::to_volts`] without
/// recomputing the LSB (a division) each time, the same arithmetic
/// otherwise.
#[derive(Clone, Copy, Debug)]
struct Converter {
    ratio: f64,
    offset_v: f64,
    lsb_v: f64,
    full_scale: f64,
}

impl Converter {
    fn new(channel: AdcChannel) -> Self {
        Self {
            ratio: f64::from(channel.ratio()),
            offset_v: f64::from(channel.offset_v()),
            lsb_v: channel.lsb_pin_v(),
            full_scale: f64::from(channel.full_scale_code()),
        }
    }

    /// The exact (unrounded) code for a signal voltage.
    fn exact_code(&self, signal_v: f64) -> f64 {
        (signal_v * self.ratio + self.offset_v) / self.lsb_v
    }

    /// The signal voltage a code stands for.
    fn volts(&self, code: u16) -> f32 {
        ((f64::from(code) * self.lsb_v - self.offset_v) / self.ratio) as f32
    }

    /// A rounded code, held within the rails.
    fn saturate(&self, code: f64) -> u16 {
        code.clamp(0.0, self.full_scale) as u16
    }
}

/// `x.round()` (halves away from zero) without the library call the
/// baseline x86-64 target makes for it: the integer part through i64, and
/// the fraction left, both exact below 2⁵² in magnitude; beyond, and for NaN,
/// the library's.
fn round_half_away(x: f64) -> f64 {
    const EXACT: f64 = 4_503_599_627_370_496.0; // 2⁵²
    if x.is_nan() || x.abs() >= EXACT {
        return x.round();
    }
    let whole = x as i64 as f64;
    let fraction = x - whole;
    // Without branches: with noise the fraction is random, and a branch on
    // it would be mispredicted half the time.
    let away = f64::from(u8::from(fraction >= 0.5)) - f64::from(u8::from(fraction <= -0.5));
    whole + away
}

/// Where the comparator that feeds edge interrupts gets its threshold.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ComparatorSource {
    /// No comparator: the law runs on ADC samples.
    None,
    /// A DAC the firmware programs (edge wiring).
    Dac,
    /// A Schmitt trigger with fixed thresholds at the output, volts (the
    /// board's analog loop, kept).
    Schmitt {
        /// Output level below which the comparator asks for "on", V.
        lower_v: f64,
        /// Output level above which it asks for "off", V.
        upper_v: f64,
    },
}

impl ComparatorSource {
    /// The wiring a scenario's law describes.
    pub fn of(sc: &Scenario) -> Self {
        match sc.control.law {
            LawParams::Hysteretic { input: HystereticInput::Sampled, .. }
            | LawParams::OnTime { input: HystereticInput::Sampled, .. } => Self::None,
            LawParams::Hysteretic { .. } | LawParams::OnTime { .. } => Self::Dac,
            LawParams::AnalogRetrofit { lower_v, upper_v } => Self::Schmitt { lower_v, upper_v },
        }
    }
}

/// The analog comparator.
#[derive(Clone, Copy, Debug)]
pub(super) struct Comparator {
    source: ComparatorSource,
    /// Output level now (DAC: signal above threshold; Schmitt: "on" request).
    /// Private, as the source and threshold: each change must refresh
    /// `watch`.
    level: bool,
    /// DAC threshold in output volts (DAC wiring).
    threshold_v: f64,
    /// The crossing watched for now, kept with the level and threshold it
    /// follows: the scans and the syncs ask for it several times per
    /// switching cycle, and the choice among the wirings cost more than
    /// keeping it.
    watch: Option<Watch>,
}

impl Comparator {
    pub(super) fn new(source: ComparatorSource) -> Self {
        let mut comparator = Self { source, level: false, threshold_v: 0.0, watch: None };
        comparator.watch = comparator.watched();
        comparator
    }

    /// Its output level now.
    pub(super) fn level(&self) -> bool {
        self.level
    }

    /// Whether there is one.
    pub(super) fn exists(&self) -> bool {
        !matches!(self.source, ComparatorSource::None)
    }

    /// The crossing the plant must stop at.
    pub(super) fn watch(&self) -> Option<Watch> {
        self.watch
    }

    /// [`watch`](Self::watch) from the wiring, the level and the threshold.
    fn watched(&self) -> Option<Watch> {
        match self.source {
            ComparatorSource::None => None,
            ComparatorSource::Dac => Some(Watch { level_v: self.threshold_v, rising: !self.level }),
            ComparatorSource::Schmitt { lower_v, upper_v } => Some(if self.level {
                Watch { level_v: upper_v, rising: true }
            } else {
                Watch { level_v: lower_v, rising: false }
            }),
        }
    }

    /// The level for output `v` with the DAC at `dac_code`; true when it
    /// changed (an edge interrupt follows).
    pub(super) fn settle(&mut self, v: f64, dac_code: u16, adc: &Adc) -> bool {
        let level = match self.source {
            ComparatorSource::None => return false,
            ComparatorSource::Dac => {
                self.threshold_v = f64::from(adc.output_volts(dac_code));
                v > self.threshold_v
            }
            ComparatorSource::Schmitt { lower_v, upper_v } => {
                if v < lower_v {
                    true
                } else if v > upper_v {
                    false
                } else {
                    self.level
                }
            }
        };
        let changed = level != self.level;
        self.level = level;
        self.watch = self.watched();
        changed
    }

    /// The output crossed the watched level.
    pub(super) fn flip(&mut self) {
        self.level = !self.level;
        self.watch = self.watched();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_converter_gives_the_channels_exact_code() {
        let channel = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.002).unwrap();
        let converter = Converter::new(channel);
        for v in [-1.0, 0.0, 1.234_567, 4.98, 5.02, 11.0] {
            assert_eq!(converter.exact_code(v), channel.exact_code(v), "{v}");
        }
        for code in 0..=channel.full_scale_code() {
            assert_eq!(converter.volts(code).to_bits(), channel.to_volts(code).to_bits(), "{code}");
        }
    }

    #[test]
    fn rounds_as_the_standard_library_does() {
        // `f64::round` is the reference; the neighbours of every half, the
        // largest value below a half, and values past 2⁵² included.
        let below_half = 0.5 - f64::EPSILON / 4.0;
        let mut cases = vec![0.0, -0.0, below_half, -below_half, 1e300, -1e300, 4.6e15, -4.6e15];
        for k in -5000..5000 {
            let half = f64::from(k) + 0.5;
            cases.extend([half, half.next_up(), half.next_down(), f64::from(k) + 0.25]);
        }
        for x in cases {
            let (got, want) = (round_half_away(x), x.round());
            assert!(got == want, "{x:e}: {got} vs {want}");
        }
        assert!(round_half_away(f64::NAN).is_nan());
    }
}
