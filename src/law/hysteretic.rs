//! Hysteretic (bang-bang) law: switch on below the lower threshold, off above
//! the upper one.
//!
//! The thresholds are `setpoint ± band/2` referred to the sensed output, held
//! as raw ADC codes, so each decision is two integer compares. The law serves
//! two wirings:
//!
//! - **sampled**: call [`Law::on_sample`] with every ADC result;
//! - **edge**: an analog comparator watches the output against a DAC
//!   threshold; call [`Law::on_edge`] on each comparator interrupt, then
//!   program the DAC with [`Hysteretic::armed_code`] (and
//!   [`Hysteretic::armed`] tells which of the two it is).

use super::{Command, Gate, Law, Regulate};
use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::scale::AdcChannel;
use crate::tick::Instant;

/// Hysteretic law settings in SI units, referred to the sensed output (before
/// the divider).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct HystereticConfig {
    /// Output setpoint, volts; the centre of the band.
    pub setpoint_v: f32,
    /// Full width of the hysteresis band, volts (upper − lower threshold).
    pub band_v: f32,
}

/// Which threshold the comparator watches in edge mode.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Threshold {
    /// `setpoint − band/2`: armed while the gate is off; crossing it downward
    /// turns the gate on.
    Lower,
    /// `setpoint + band/2`: armed while the gate is on; crossing it upward
    /// turns the gate off.
    Upper,
}

/// The hysteretic law with thresholds in raw ADC codes.
///
/// Thresholds: `u16` ADC codes, format of the configured channel,
/// `code = round((V·ratio + offset) / (V_ref / 2^N))`, range
/// `0..=2^N − 1`. The reference code moves on the slow path
/// ([`set_reference`](Self::set_reference)); the thresholds saturate at 0 and
/// at full scale there.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Hysteretic {
    lower: u16,
    upper: u16,
    reference: u16,
    below_reference: u16,
    above_reference: u16,
    full_scale: u16,
    demand: Gate,
    armed: Threshold,
}

impl Hysteretic {
    /// Build the law for an output sensed through `adc` (a `const fn`).
    ///
    /// Errors: `setpoint_v` or `band_v` not positive or not finite;
    /// `band_v` narrower than one code at the ADC pin
    /// ([`ErrorKind::BelowResolution`]); `setpoint_v` ± `band_v`/2 outside
    /// the channel's range (reported on `setpoint_v` for the upper
    /// threshold, on `band_v` for the lower).
    pub const fn new(config: &HystereticConfig, adc: &AdcChannel) -> Result<Self, ConfigError> {
        let setpoint = attempt!(positive("setpoint_v", config.setpoint_v as f64));
        let band = attempt!(positive("band_v", config.band_v as f64));
        if adc.span_codes(band) < 1.0 {
            return Err(ConfigError::new("band_v", ErrorKind::BelowResolution));
        }
        let half = band / 2.0;
        let upper = attempt!(adc.code_for("setpoint_v", setpoint + half)).raw;
        let lower = attempt!(adc.code_for("band_v", setpoint - half)).raw;
        // The setpoint lies between two valid codes, so it converts too.
        let reference = attempt!(adc.code_for("setpoint_v", setpoint)).raw;
        Ok(Self {
            lower,
            upper,
            reference,
            below_reference: reference - lower,
            above_reference: upper - reference,
            full_scale: adc.full_scale_code(),
            demand: Gate::Off,
            armed: Threshold::Lower,
        })
    }

    /// Lower threshold, ADC code.
    pub const fn lower_code(&self) -> u16 {
        self.lower
    }

    /// Upper threshold, ADC code.
    pub const fn upper_code(&self) -> u16 {
        self.upper
    }

    /// The reference (band centre), ADC code.
    pub const fn reference_code(&self) -> u16 {
        self.reference
    }

    /// Which threshold edge mode watches now.
    pub const fn armed(&self) -> Threshold {
        self.armed
    }

    /// The DAC code to program for edge mode: the armed threshold, in ADC
    /// codes (scale it if the DAC's resolution differs).
    pub const fn armed_code(&self) -> u16 {
        match self.armed {
            Threshold::Lower => self.lower,
            Threshold::Upper => self.upper,
        }
    }

    /// What the law asks for now.
    pub const fn demand(&self) -> Gate {
        self.demand
    }

    /// Slow path: move the band centre to `reference` (ADC code), keeping the
    /// band. Used by soft-start and by DC-error correction. Thresholds
    /// saturate at code 0 and at full scale.
    pub fn set_reference(&mut self, reference: u16) {
        let reference = reference.min(self.full_scale);
        self.reference = reference;
        self.lower = reference.saturating_sub(self.below_reference);
        self.upper = reference.saturating_add(self.above_reference).min(self.full_scale);
    }

    #[inline(always)]
    fn decide_sample(&mut self, code: u16) {
        if code <= self.lower {
            self.demand = Gate::On;
        } else if code >= self.upper {
            self.demand = Gate::Off;
        }
    }

    #[inline(always)]
    fn decide_edge(&mut self, above: bool) {
        match (self.armed, above) {
            (Threshold::Upper, true) => {
                self.demand = Gate::Off;
                self.armed = Threshold::Lower;
            }
            (Threshold::Lower, false) => {
                self.demand = Gate::On;
                self.armed = Threshold::Upper;
            }
            _ => {}
        }
    }
}

impl Law for Hysteretic {
    #[inline]
    fn on_sample(&mut self, code: u16, _now: Instant) -> Command {
        self.decide_sample(code);
        Command::hold(self.demand)
    }

    #[inline]
    fn on_edge(&mut self, level: bool, _now: Instant) -> Command {
        self.decide_edge(level);
        Command::hold(self.demand)
    }

    #[inline]
    fn on_timer(&mut self, _now: Instant) -> Command {
        Command::hold(self.demand)
    }

    fn comparator_code(&self) -> Option<u16> {
        Some(self.armed_code())
    }
}

impl Regulate for Hysteretic {
    fn reference_code(&self) -> u16 {
        Hysteretic::reference_code(self)
    }

    fn set_reference(&mut self, code: u16) {
        Hysteretic::set_reference(self, code);
    }
}
