//! The firmware under test: the crate's own no_std objects, built from a
//! scenario exactly as a firmware build would build them.

use super::scenario::{HystereticInput, LawParams, McuParams, Scenario};
use crate::guard::{ClampCounts, FrequencyGuard, Window};
use crate::law::{Command, ComparatorPassThrough, Gate, Hysteretic, HystereticConfig, Law};
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::Instant;
use crate::ConfigError;

/// The law and guard in use.
#[derive(Clone, Debug)]
pub enum Controller {
    /// Hysteretic law (sampled or edge input) inside the guard.
    Hysteretic(FrequencyGuard<Hysteretic>),
    /// An analog comparator's edges inside the guard.
    PassThrough(FrequencyGuard<ComparatorPassThrough>),
}

/// Where the comparator that feeds edge interrupts gets its threshold.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ComparatorSource {
    /// No comparator: the law runs on ADC samples.
    None,
    /// A DAC the firmware programs (hysteretic edge mode).
    Dac,
    /// A Schmitt trigger with fixed thresholds at the output, volts.
    Schmitt {
        /// Output level below which the comparator asks for "on", V.
        lower_v: f64,
        /// Output level above which it asks for "off", V.
        upper_v: f64,
    },
}

/// The ADC channel that senses the output.
pub fn output_channel(mcu: &McuParams) -> Result<AdcChannel, ConfigError> {
    AdcChannel::new(
        mcu.adc_bits,
        mcu.adc_reference_v as f32,
        mcu.divider_ratio as f32,
        mcu.adc_offset_v as f32,
    )
}

impl Controller {
    /// Build the firmware a scenario describes.
    pub fn build(scenario: &Scenario) -> Result<(Self, ComparatorSource), ConfigError> {
        let clock = TimerClock::new(scenario.mcu.clock_hz)?;
        let window = Window::new(&scenario.control.window, &clock)?;
        Ok(match scenario.control.law {
            LawParams::Hysteretic { setpoint_v, band_v, input } => {
                let config = HystereticConfig { setpoint_v, band_v };
                let law = Hysteretic::new(&config, &output_channel(&scenario.mcu)?)?;
                let source = match input {
                    HystereticInput::Sampled => ComparatorSource::None,
                    HystereticInput::Edge => ComparatorSource::Dac,
                };
                (Self::Hysteretic(FrequencyGuard::new(law, window)), source)
            }
            LawParams::AnalogRetrofit { lower_v, upper_v } => (
                Self::PassThrough(FrequencyGuard::new(ComparatorPassThrough::new(true), window)),
                ComparatorSource::Schmitt { lower_v, upper_v },
            ),
        })
    }

    fn law(&mut self) -> &mut dyn Law {
        match self {
            Self::Hysteretic(g) => g,
            Self::PassThrough(g) => g,
        }
    }

    /// The DAC code edge mode must arm now, if it uses one.
    pub fn dac_code(&self) -> Option<u16> {
        match self {
            Self::Hysteretic(g) => Some(g.inner().armed_code()),
            Self::PassThrough(_) => None,
        }
    }

    /// The guard's clamp counters.
    pub fn clamps(&self) -> ClampCounts {
        match self {
            Self::Hysteretic(g) => *g.counts(),
            Self::PassThrough(g) => *g.counts(),
        }
    }
}

impl Law for Controller {
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        self.law().on_sample(code, now)
    }

    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.law().on_edge(level, now)
    }

    fn on_timer(&mut self, now: Instant) -> Command {
        self.law().on_timer(now)
    }

    fn on_gate(&mut self, gate: Gate, at: Instant) {
        self.law().on_gate(gate, at)
    }
}
