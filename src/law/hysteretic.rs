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
//!
//! Two slow-path options scale the band once per housekeeping window
//! ([`Regulate::retune`]), each half of it by the same factor, at least one
//! code a side:
//!
//! - **frequency lock** (`Hysteretic::with_lock`, feature
//!   `frequency-lock`): a [`FrequencyTrim`]
//!   narrows the band when the mean period is too long and widens it when
//!   too short, so the mean switching frequency tracks a target across
//!   input and load (quasi-fixed-frequency hysteretic control); it holds
//!   while the frequency window binds, and while pulses are cut short
//!   (the light-load cap sets the frequency then, see
//!   [`stack`](crate::stack));
//! - **dithering** (`Hysteretic::with_dither`, feature `dither`): a
//!   [`Dither`] factor moves
//!   the band pseudo-randomly around its (locked) width, spreading the
//!   switching frequency's harmonics.

use super::{Command, Conditions, Dither, FrequencyTrim, Gate, Law, LockState, Regulate};
use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::part::{self, Part};
use crate::scale::AdcChannel;
use crate::tick::Instant;
use crate::units::{Fraction, ONE};

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
/// at full scale there. The half-bands below and above the reference are
/// `u16` codes, at least 1; the configured ones are kept so that the lock
/// and the dither scale them without drifting.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Hysteretic {
    lower: u16,
    upper: u16,
    reference: u16,
    below_reference: u16,
    above_reference: u16,
    configured_below: u16,
    configured_above: u16,
    full_scale: u16,
    demand: Gate,
    armed: Threshold,
    lock: Part<FrequencyTrim, { part::FREQUENCY_LOCK }>,
    dither: Part<Dither, { part::DITHER }>,
    /// A pulse was cut short since the last retune.
    cut_since_retune: bool,
    /// One was in the window the last retune closed.
    cut_in_window: bool,
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
            configured_below: reference - lower,
            configured_above: upper - reference,
            full_scale: adc.full_scale_code(),
            demand: Gate::Off,
            armed: Threshold::Lower,
            lock: Part::none(),
            dither: Part::none(),
            cut_since_retune: false,
            cut_in_window: false,
        })
    }

    /// Lock the mean switching frequency to `lock`'s target by scaling the
    /// band within `lock`'s bounds (a `const fn`; build `lock` with
    /// [`FrequencyTrim::band_lock`], as the simulator's `lock_hz` does).
    /// Feature `frequency-lock`.
    #[cfg(feature = "frequency-lock")]
    pub const fn with_lock(mut self, lock: FrequencyTrim) -> Self {
        self.lock = Part::some(lock);
        self
    }

    /// Dither the band once per housekeeping window (a `const fn`).
    /// Feature `dither`.
    #[cfg(feature = "dither")]
    pub const fn with_dither(mut self, dither: Dither) -> Self {
        self.dither = Part::some(dither);
        self
    }

    /// The frequency lock's integrator, if any (its trim is the band's
    /// scale now; [`Regulate::frequency_lock`] gives its state).
    pub const fn frequency_trim(&self) -> Option<&FrequencyTrim> {
        self.lock.get()
    }

    /// Full width of the band now, ADC codes (upper − lower threshold
    /// before any saturation at the range's ends).
    pub const fn band_codes(&self) -> u16 {
        self.below_reference + self.above_reference
    }

    /// Slow path: set both half-bands to the configured ones times `factor`
    /// ([`Fraction`], rounded, at least one code a side) and move the
    /// thresholds with them.
    fn scale_band(&mut self, factor: Fraction) {
        let scale = |configured: u16| {
            let codes = (u64::from(configured) * u64::from(factor) + u64::from(ONE / 2)) >> 16;
            codes.clamp(1, u64::from(u16::MAX / 2)) as u16
        };
        self.below_reference = scale(self.configured_below);
        self.above_reference = scale(self.configured_above);
        self.set_reference(self.reference);
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
            self.armed = Threshold::Upper;
        } else if code >= self.upper || self.armed == Threshold::Lower {
            // Between the thresholds an on-phase holds; with the gate off,
            // after a pulse cut short, the next waits for the lower one.
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
            // Above the lower threshold while it is armed: no pulse (after
            // a pulse cut short, the re-armed comparator's report).
            (Threshold::Lower, true) => self.demand = Gate::Off,
            (Threshold::Upper, false) => {}
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

    /// A turn-on the law asked for arms the upper threshold; any turn-off
    /// the lower one. A turn-off while the law still asks for the pulse
    /// (the current limit or the maximum on-time cut it short) makes the
    /// next pulse wait for the output to fall below the lower threshold
    /// again, not for the minimum off-time only: at light load a capped
    /// pulse that ends short of the upper threshold is not followed by a
    /// second one at once (a burst, then a long pause). Sampled, the next
    /// sample above the lower threshold withdraws the demand. On edges the
    /// re-armed comparator reports a level change if the output is above
    /// the lower threshold, and that report withdraws it; if the output is
    /// already below, nothing new comes and the pulse follows at the
    /// minimum off-time's end (give that minimum the comparator's and the
    /// handler's delay).
    #[inline]
    fn on_gate(&mut self, gate: Gate, _at: Instant) {
        match gate {
            Gate::Off => {
                self.cut_since_retune |= self.demand.is_on();
                self.armed = Threshold::Lower;
            }
            Gate::On if self.demand.is_on() => self.armed = Threshold::Upper,
            Gate::On => {}
        }
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

    /// The frequency lock's update and the dither's next draw, applied to
    /// the band; nothing without either.
    fn retune(&mut self, c: &Conditions) {
        self.cut_in_window = core::mem::take(&mut self.cut_since_retune);
        if !self.lock.is_some() && !self.dither.is_some() {
            return;
        }
        let mut factor = match self.lock.get_mut() {
            // Pulses cut short: the band did not end them, hold.
            Some(lock) if self.cut_in_window => lock.trim(),
            // A period past 1/f_min: narrow the band by a full step.
            Some(lock) if c.long_period => lock.step_down(),
            Some(lock) => lock.update(c.cycles, c.period_ticks, c.window_binding),
            None => ONE,
        };
        if let Some(d) = self.dither.get_mut() {
            factor = ((u64::from(factor) * u64::from(d.draw())) >> 16) as Fraction;
        }
        self.scale_band(factor);
    }

    fn frequency_lock(&self) -> Option<LockState> {
        let pulses_cut = self.cut_in_window;
        self.lock.get().map(|lock| LockState { pulses_cut, cut_reported: true, ..lock.state() })
    }
}
