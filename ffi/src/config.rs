//! The configuration a C firmware fills, SI units, and its conversion into
//! the crate's [`StackConfig`] and law.
//!
//! The structs mirror the crate's configuration field for field, with C's
//! types: an optional value is 0 for "none" where 0 is not a valid value
//! (`observer_bandwidth_hz`, `feed_forward_hz`, `trim_gain`,
//! `emulated_ripple_v`, `core.k`), a flag where it is (`synchronous`), and
//! a choice is a one-byte code (`RIPPLECTL_LAW_*`, `RIPPLECTL_SENSING_*`,
//! `RIPPLECTL_LIGHT_LOAD_*`). The loss model's stage values come from
//! `model`, as the simulator takes them. Every check is the crate's own:
//! [`StackParts::new`] and the laws' constructors, run at start-up.

use crate::law::AnyLaw;
use ripplectl::estimate::{InductorModel, LossConfig, Steinmetz};
use ripplectl::law::{
    ComparatorPassThrough, EmulatedRipple, FrequencyTrim, Hysteretic, HystereticConfig, OnTime,
    OnTimeConfig, OnTimeFeedForward,
};
use ripplectl::stack::{Sensing, SlowPathConfig, StackConfig, StackParts};
use ripplectl::supervisor::ProtectionConfig;
use ripplectl::{AdcChannel, ConfigError, ErrorKind, LightLoad, TimerClock, WindowConfig};

/// `law.kind`: the hysteretic law (`band_v`).
pub const RIPPLECTL_LAW_HYSTERETIC: u8 = 0;
/// `law.kind`: the constant on-time law (`on_time_s`, optionally
/// feed-forward, trim and emulated ripple).
pub const RIPPLECTL_LAW_ON_TIME: u8 = 1;
/// `law.kind`: the board's analog comparator passed through
/// (`active_high`; requires `RIPPLECTL_SENSING_EDGE`).
pub const RIPPLECTL_LAW_COMPARATOR: u8 = 2;

/// `sensing`: every ADC conversion's output reading goes to the law.
pub const RIPPLECTL_SENSING_SAMPLED: u8 = 0;
/// `sensing`: an analog comparator's edges go to the law
/// (`ripplectl_comparator_edge`); the ADC's output readings serve the
/// protections only.
pub const RIPPLECTL_SENSING_EDGE: u8 = 1;

/// `window.light_load`: below `f_min_hz`, count long periods only.
pub const RIPPLECTL_LIGHT_LOAD_REPORT_ONLY: u8 = 0;
/// `window.light_load`: below `f_min_hz`, also force a minimum pulse (the
/// output needs a minimum load or a synchronous stage).
pub const RIPPLECTL_LIGHT_LOAD_FORCED_PULSE: u8 = 1;
/// `window.light_load`: make each pulse smaller as the load falls, forced
/// pulses only at the smallest.
pub const RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES: u8 = 2;

/// One ADC channel and the signal conditioning in front of it.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct AdcSettings {
    /// Resolution, bits, 1 to 16.
    pub adc_bits: u8,
    /// ADC reference (full scale), V, > 0.
    pub adc_reference_v: f32,
    /// Volts at the ADC pin per volt of the sensed signal (a divider
    /// `R2/(R1+R2)`), > 0.
    pub divider_ratio: f32,
    /// Volts added at the pin (level shift, measured offset),
    /// `|adc_offset_v| < adc_reference_v`.
    pub adc_offset_v: f32,
}

/// The switching law and its settings (fields of the other laws are
/// ignored).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct LawSettings {
    /// `RIPPLECTL_LAW_HYSTERETIC`, `_ON_TIME` or `_COMPARATOR`.
    pub kind: u8,
    /// Hysteretic: the band around the setpoint, V (at least one ADC code).
    pub band_v: f32,
    /// On-time: the initial on-time, s (at least one timer tick).
    pub on_time_s: f32,
    /// On-time: input feed-forward of the on-time to this switching
    /// frequency, Hz; 0: none.
    pub feed_forward_hz: f32,
    /// On-time with feed-forward: the frequency trim's gain per
    /// housekeeping window, (0, 1]; 0: no trim.
    pub trim_gain: f32,
    /// The trim's lowest factor, (0, 1].
    pub trim_min: f32,
    /// The trim's highest factor, [1, 4].
    pub trim_max: f32,
    /// On-time: emulated ripple's amplitude at the sensed output, V, for a
    /// ceramic-only output; 0: none (the output's own ESR ripple must then
    /// satisfy `ESR·C > T_on/2`, which `ripplectl_init` checks).
    pub emulated_ripple_v: f32,
    /// Emulated ripple: the nominal duty `V_out/V_in`, (0, 1).
    pub emulated_ripple_duty: f32,
    /// Emulated ripple: the ADC's sampling period, s (a crossing predicted
    /// within it is timed by the compare).
    pub sample_period_s: f32,
    /// Comparator: a high comparator output means "gate on".
    pub active_high: bool,
}

/// The frequency window.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct WindowSettings {
    /// Lowest switching frequency, Hz (> 0).
    pub f_min_hz: f32,
    /// Highest switching frequency, Hz (> `f_min_hz`).
    pub f_max_hz: f32,
    /// Minimum on-time, s (at least one tick).
    pub min_on_s: f32,
    /// Minimum off-time, s (at least one tick).
    pub min_off_s: f32,
    /// Maximum on-time, s (≥ `min_on_s`).
    pub max_on_s: f32,
    /// `RIPPLECTL_LIGHT_LOAD_REPORT_ONLY`, `_FORCED_PULSE` or
    /// `_SMALLER_PULSES`.
    pub light_load: u8,
}

/// What the current estimator and the loss model assume of the stage.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ModelSettings {
    /// Inductance, H (> 0).
    pub l_h: f32,
    /// High-side switch on-resistance plus wiring, Ω.
    pub r_on_ohm: f32,
    /// Inductor DCR, Ω.
    pub dcr_ohm: f32,
    /// Freewheeling diode's forward voltage, V (ignored when
    /// `synchronous`).
    pub diode_vf_v: f32,
    /// Freewheeling diode's dynamic resistance, Ω.
    pub diode_rd_ohm: f32,
    /// A low-side switch instead of the diode (forced CCM).
    pub synchronous: bool,
    /// The low-side switch's on-resistance, Ω (when `synchronous`).
    pub r_low_ohm: f32,
}

/// Protections, SI units (voltages at the sensed node).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ProtectionSettings {
    /// Input voltage to start at, V.
    pub uvlo_on_v: f32,
    /// Input voltage to stop below, V (< `uvlo_on_v`).
    pub uvlo_off_v: f32,
    /// Input voltage to stop above, V.
    pub vin_max_v: f32,
    /// The input must fall this far below `vin_max_v` to restart, V.
    pub vin_max_hysteresis_v: f32,
    /// Output over-voltage threshold, V (above the setpoint).
    pub ovp_v: f32,
    /// Cycle-by-cycle peak current limit, A.
    pub current_limit_a: f32,
    /// Consecutive limited cycles taken as a short circuit (≥ 1).
    pub short_cycles: u16,
    /// Off-time of the hiccup after a short or an over-voltage, s.
    pub hiccup_s: f32,
    /// Soft-start ramp time, s.
    pub soft_start_s: f32,
    /// An output reading below this counts as "near zero", V.
    pub stuck_low_v: f32,
    /// ... and is implausible while `D·V_in` is at least this, V.
    pub stuck_implied_v: f32,
    /// Consecutive implausible cycles before the sensor fault (≥ 1).
    pub stuck_cycles: u16,
    /// Hiccup restarts in a row without reaching regulation before the
    /// stage latches off (≥ 1).
    pub max_retries: u16,
}

/// Core loss by Steinmetz's equation (`k = 0`: no core loss term).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct CoreSettings {
    /// Coefficient k, W/m³ for f in Hz and B in T; 0: no core model.
    pub k: f32,
    /// Frequency exponent α.
    pub alpha: f32,
    /// Flux-density exponent β.
    pub beta: f32,
    /// Turns.
    pub turns: f32,
    /// Effective area, m².
    pub area_m2: f32,
    /// Effective volume, m³.
    pub volume_m3: f32,
}

/// The slow path: housekeeping rate, observer, DC correction and the loss
/// model's values beyond `model`.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SlowSettings {
    /// Rate at which the firmware calls `ripplectl_housekeeping`, Hz
    /// (1–20 kHz is typical).
    pub housekeeping_hz: f32,
    /// The averaged-model observer's bandwidth, Hz; 0: no observer.
    pub observer_bandwidth_hz: f32,
    /// Output capacitance, F (the observer's model; with `esr_ohm` the
    /// on-time law's ripple check).
    pub output_capacitance_f: f32,
    /// Trim the reference so the mean output, not the ripple's edge, sits
    /// at the setpoint.
    pub dc_correction: bool,
    /// Output capacitor's ESR, Ω.
    pub esr_ohm: f32,
    /// Switch-node rise time, s.
    pub t_rise_s: f32,
    /// Switch-node fall time, s.
    pub t_fall_s: f32,
    /// Switch gate charge, C.
    pub gate_charge_c: f32,
    /// Gate-drive voltage, V.
    pub gate_drive_v: f32,
    /// Core loss.
    pub core: CoreSettings,
}

/// The whole configuration, SI units: fill it (a `static const`
/// initializer, or at start-up from stored values) and hand it to
/// `ripplectl_init`, which checks and converts it once.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Config {
    /// The free-running timer's rate, ticks per second (> 0): the unit of
    /// every `now`, deadline and tick count.
    pub clock_hz: u32,
    /// The channel that senses the output.
    pub output_adc: AdcSettings,
    /// The channel that senses the input (scanned with the output).
    pub input_adc: AdcSettings,
    /// The regulated output, V.
    pub setpoint_v: f32,
    /// `RIPPLECTL_SENSING_SAMPLED` or `RIPPLECTL_SENSING_EDGE`.
    pub sensing: u8,
    /// The switching law.
    pub law: LawSettings,
    /// The frequency window.
    pub window: WindowSettings,
    /// The power stage as the estimator sees it.
    pub model: ModelSettings,
    /// Protections.
    pub protection: ProtectionSettings,
    /// Housekeeping, observer, DC correction, losses.
    pub slow: SlowSettings,
}

/// What `ripplectl_init` assembles: the parts and the law, checked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Checked {
    /// The stack's parts, raw units.
    pub parts: StackParts,
    /// The law.
    pub law: AnyLaw,
}

impl Config {
    /// Check and convert, through the crate's constructors.
    ///
    /// Errors: the first refused value, named.
    pub fn check(&self) -> Result<Checked, ConfigError> {
        let stack = self.stack_config()?;
        let parts = StackParts::new(&stack)?;
        let law = self.law.build(&stack, &self.slow)?;
        Ok(Checked { parts, law })
    }

    /// The crate's configuration of everything but the law.
    pub fn stack_config(&self) -> Result<StackConfig, ConfigError> {
        let model = self.model.to_crate();
        Ok(StackConfig {
            clock: TimerClock::new(self.clock_hz)?,
            output_adc: self.output_adc.channel(OUTPUT_NAMES)?,
            input_adc: self.input_adc.channel(INPUT_NAMES)?,
            setpoint_v: self.setpoint_v,
            sensing: match self.sensing {
                RIPPLECTL_SENSING_SAMPLED => Sensing::Sampled,
                RIPPLECTL_SENSING_EDGE => Sensing::Edge,
                _ => return Err(code_range("sensing", RIPPLECTL_SENSING_EDGE)),
            },
            window: self.window.to_crate()?,
            model,
            protection: self.protection.to_crate(),
            slow: self.slow.to_crate(&model),
        })
    }
}

/// The names of an ADC channel's fields, as errors report them.
type ChannelNames = [&'static str; 4];
const OUTPUT_NAMES: ChannelNames = [
    "output_adc.adc_bits",
    "output_adc.adc_reference_v",
    "output_adc.divider_ratio",
    "output_adc.adc_offset_v",
];
const INPUT_NAMES: ChannelNames = [
    "input_adc.adc_bits",
    "input_adc.adc_reference_v",
    "input_adc.divider_ratio",
    "input_adc.adc_offset_v",
];

/// A one-byte code above `max`.
fn code_range(parameter: &'static str, max: u8) -> ConfigError {
    ConfigError::new(parameter, ErrorKind::OutOfRange { min: 0.0, max: f32::from(max) })
}

impl AdcSettings {
    /// The channel; a refusal names the field under `names`' member.
    fn channel(&self, names: ChannelNames) -> Result<AdcChannel, ConfigError> {
        let (bits, reference, ratio, offset) =
            (self.adc_bits, self.adc_reference_v, self.divider_ratio, self.adc_offset_v);
        AdcChannel::new(bits, reference, ratio, offset).map_err(|e| {
            let fields = ["adc_bits", "adc_reference_v", "divider_ratio", "adc_offset_v"];
            match fields.iter().position(|&f| f == e.parameter) {
                Some(i) => e.renamed(names[i]),
                None => e,
            }
        })
    }
}

impl WindowSettings {
    fn to_crate(self) -> Result<WindowConfig, ConfigError> {
        let light_load = match self.light_load {
            RIPPLECTL_LIGHT_LOAD_REPORT_ONLY => LightLoad::ReportOnly,
            RIPPLECTL_LIGHT_LOAD_FORCED_PULSE => LightLoad::ForcedPulse,
            RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES => LightLoad::SmallerPulses,
            _ => return Err(code_range("light_load", RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES)),
        };
        Ok(WindowConfig {
            f_min_hz: self.f_min_hz,
            f_max_hz: self.f_max_hz,
            min_on_s: self.min_on_s,
            min_off_s: self.min_off_s,
            max_on_s: self.max_on_s,
            light_load,
        })
    }
}

impl ModelSettings {
    fn to_crate(self) -> InductorModel {
        InductorModel {
            l_h: self.l_h,
            r_on_ohm: self.r_on_ohm,
            dcr_ohm: self.dcr_ohm,
            diode_vf_v: self.diode_vf_v,
            diode_rd_ohm: self.diode_rd_ohm,
            r_low_ohm: self.synchronous.then_some(self.r_low_ohm),
        }
    }
}

impl ProtectionSettings {
    fn to_crate(self) -> ProtectionConfig {
        ProtectionConfig {
            uvlo_on_v: self.uvlo_on_v,
            uvlo_off_v: self.uvlo_off_v,
            vin_max_v: self.vin_max_v,
            vin_max_hysteresis_v: self.vin_max_hysteresis_v,
            ovp_v: self.ovp_v,
            current_limit_a: self.current_limit_a,
            short_cycles: self.short_cycles,
            hiccup_s: self.hiccup_s,
            soft_start_s: self.soft_start_s,
            stuck_low_v: self.stuck_low_v,
            stuck_implied_v: self.stuck_implied_v,
            stuck_cycles: self.stuck_cycles,
            max_retries: self.max_retries,
        }
    }
}

impl SlowSettings {
    /// The slow path's configuration; the loss model's stage values are
    /// `model`'s (the freewheeling drop and off-path resistance of a diode
    /// or a low-side switch).
    fn to_crate(self, model: &InductorModel) -> SlowPathConfig {
        let core = self.core;
        SlowPathConfig {
            housekeeping_hz: self.housekeeping_hz,
            observer_bandwidth_hz: (self.observer_bandwidth_hz != 0.0)
                .then_some(self.observer_bandwidth_hz),
            output_capacitance_f: self.output_capacitance_f,
            dc_correction: self.dc_correction,
            losses: LossConfig {
                l_h: model.l_h,
                r_on_ohm: model.r_on_ohm,
                dcr_ohm: model.dcr_ohm,
                diode_vf_v: model.freewheel_v(),
                off_r_ohm: model.r_low_ohm.unwrap_or(model.diode_rd_ohm),
                esr_ohm: self.esr_ohm,
                t_rise_s: self.t_rise_s,
                t_fall_s: self.t_fall_s,
                gate_charge_c: self.gate_charge_c,
                gate_drive_v: self.gate_drive_v,
                core: (core.k != 0.0).then_some(Steinmetz {
                    k: core.k,
                    alpha: core.alpha,
                    beta: core.beta,
                    turns: core.turns,
                    area_m2: core.area_m2,
                    volume_m3: core.volume_m3,
                }),
            },
        }
    }
}

impl LawSettings {
    /// The chosen law at `stack`'s setpoint, channel and clock.
    fn build(&self, stack: &StackConfig, slow: &SlowSettings) -> Result<AnyLaw, ConfigError> {
        let (adc, setpoint_v) = (&stack.output_adc, stack.setpoint_v);
        match self.kind {
            RIPPLECTL_LAW_HYSTERETIC => {
                let cfg = HystereticConfig { setpoint_v, band_v: self.band_v };
                Ok(AnyLaw::Hysteretic(Hysteretic::new(&cfg, adc)?))
            }
            RIPPLECTL_LAW_ON_TIME => Ok(AnyLaw::OnTime(self.on_time(stack, slow)?)),
            RIPPLECTL_LAW_COMPARATOR => {
                // The comparator's edges are the law's only input.
                if stack.sensing != Sensing::Edge {
                    let edge = f32::from(RIPPLECTL_SENSING_EDGE);
                    let range = ErrorKind::OutOfRange { min: edge, max: edge };
                    return Err(ConfigError::new("sensing", range));
                }
                let code = adc.to_code(setpoint_v).map_err(|e| e.renamed("setpoint_v"))?.raw;
                let law = ComparatorPassThrough::new(self.active_high).with_setpoint(code);
                Ok(AnyLaw::Comparator(law))
            }
            _ => Err(code_range("law.kind", RIPPLECTL_LAW_COMPARATOR)),
        }
    }

    /// The on-time law with what the settings add to it.
    fn on_time(&self, stack: &StackConfig, slow: &SlowSettings) -> Result<OnTime, ConfigError> {
        let (adc, clock, setpoint_v) = (&stack.output_adc, &stack.clock, stack.setpoint_v);
        let cfg = OnTimeConfig { setpoint_v, on_time_s: self.on_time_s };
        let mut law = OnTime::new(&cfg, adc, clock)?;
        if self.emulated_ripple_v != 0.0 {
            let sample = clock.to_ticks(self.sample_period_s);
            let sample = sample.map_err(|e| e.renamed("sample_period_s"))?.raw;
            let (amplitude, duty) = (self.emulated_ripple_v, self.emulated_ripple_duty);
            let ripple = EmulatedRipple::new(amplitude, law.on_ticks(), duty, adc, sample);
            let ripple = ripple.map_err(|e| match e.parameter {
                "duty" => e.renamed("emulated_ripple_duty"),
                _ => e,
            })?;
            law = law.with_emulated_ripple(ripple);
        }
        if self.feed_forward_hz != 0.0 {
            let f = self.feed_forward_hz;
            law = law.with_feed_forward(OnTimeFeedForward::new(setpoint_v, f, clock)?);
            if self.trim_gain != 0.0 {
                let (gain, min, max) = (self.trim_gain, self.trim_min, self.trim_max);
                law = law.with_trim(FrequencyTrim::new(f, gain, min, max, clock)?);
            }
        } else if self.trim_gain != 0.0 {
            // The trim adjusts the feed-forward on-time: none to adjust.
            return Err(ConfigError::new("feed_forward_hz", ErrorKind::NotPositive));
        }
        law.check_ripple(slow.esr_ohm, slow.output_capacitance_f, self.on_time_s)?;
        Ok(law)
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use ripplectl::unwrap_config;

    /// The crate's demo board (`StackConfig::demo()`) with its law on ADC
    /// samples (the target proof's sampled stacks), as a C firmware writes
    /// it: the same values as that function's source.
    pub(crate) fn demo() -> Config {
        Config {
            clock_hz: 64_000_000,
            output_adc: AdcSettings {
                adc_bits: 12,
                adc_reference_v: 3.3,
                divider_ratio: 0.319_728,
                adc_offset_v: 0.0,
            },
            input_adc: AdcSettings {
                adc_bits: 12,
                adc_reference_v: 3.3,
                divider_ratio: 0.0826,
                adc_offset_v: 0.0,
            },
            setpoint_v: 5.0,
            sensing: RIPPLECTL_SENSING_SAMPLED,
            law: LawSettings { kind: RIPPLECTL_LAW_HYSTERETIC, band_v: 0.04, ..Default::default() },
            window: WindowSettings {
                f_min_hz: 20_000.0,
                f_max_hz: 140_000.0,
                min_on_s: 150e-9,
                min_off_s: 3e-6,
                max_on_s: 40e-6,
                light_load: RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES,
            },
            model: ModelSettings {
                l_h: 47e-6,
                r_on_ohm: 0.11,
                dcr_ohm: 0.03,
                diode_vf_v: 0.45,
                diode_rd_ohm: 0.03,
                synchronous: false,
                r_low_ohm: 0.0,
            },
            protection: ProtectionSettings {
                uvlo_on_v: 16.0,
                uvlo_off_v: 15.0,
                vin_max_v: 36.0,
                vin_max_hysteresis_v: 1.0,
                ovp_v: 5.5,
                current_limit_a: 4.0,
                short_cycles: 8,
                hiccup_s: 2e-3,
                soft_start_s: 1.5e-3,
                stuck_low_v: 0.3,
                stuck_implied_v: 2.0,
                stuck_cycles: 3,
                max_retries: 3,
            },
            slow: SlowSettings {
                housekeeping_hz: 5_000.0,
                observer_bandwidth_hz: 1_000.0,
                output_capacitance_f: 220e-6,
                dc_correction: false,
                esr_ohm: 0.040,
                t_rise_s: 20e-9,
                t_fall_s: 20e-9,
                gate_charge_c: 10e-9,
                gate_drive_v: 10.0,
                core: CoreSettings {
                    k: 4.0,
                    alpha: 1.4,
                    beta: 2.6,
                    turns: 20.0,
                    area_m2: 20e-6,
                    volume_m3: 1.5e-6,
                },
            },
        }
    }

    #[test]
    fn the_demo_in_c_is_the_crates_demo() {
        let sampled = StackConfig { sensing: Sensing::Sampled, ..StackConfig::demo() };
        assert_eq!(demo().stack_config().unwrap(), sampled);
        let parts = unwrap_config(StackParts::new(&sampled));
        assert_eq!(demo().check().unwrap().parts, parts);
    }

    #[test]
    fn builds_the_on_time_law_as_a_rust_firmware_does() {
        let mut c = demo();
        c.law = LawSettings {
            kind: RIPPLECTL_LAW_ON_TIME,
            on_time_s: 2.08e-6,
            feed_forward_hz: 100e3,
            trim_gain: 0.05,
            trim_min: 0.5,
            trim_max: 1.5,
            ..Default::default()
        };
        let cfg = StackConfig::demo();
        let law = unwrap_config(OnTime::new(
            &OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.08e-6 },
            &cfg.output_adc,
            &cfg.clock,
        ))
        .with_feed_forward(unwrap_config(OnTimeFeedForward::new(5.0, 100e3, &cfg.clock)))
        .with_trim(unwrap_config(FrequencyTrim::new(100e3, 0.05, 0.5, 1.5, &cfg.clock)));
        assert_eq!(c.check().unwrap().law, AnyLaw::OnTime(law));
    }

    #[test]
    fn refusals_name_the_field() {
        let name = |c: Config| c.check().unwrap_err().parameter;
        let mut c = demo();
        c.input_adc.divider_ratio = 0.0;
        assert_eq!(name(c), "input_adc.divider_ratio");
        let mut c = demo();
        c.output_adc.adc_bits = 17;
        assert_eq!(name(c), "output_adc.adc_bits");
        let mut c = demo();
        c.law.band_v = -1.0;
        assert_eq!(name(c), "band_v");
        let mut c = demo();
        c.law.kind = 3;
        assert_eq!(name(c), "law.kind");
        let mut c = demo();
        c.law.kind = RIPPLECTL_LAW_COMPARATOR;
        assert_eq!(name(c), "sensing");
        c.sensing = RIPPLECTL_SENSING_EDGE;
        assert!(c.check().is_ok());
        let mut c = demo();
        c.window.f_max_hz = 10_000.0;
        assert_eq!(name(c), "f_min_hz");
        let mut c = demo();
        c.law =
            LawSettings { kind: RIPPLECTL_LAW_ON_TIME, on_time_s: 2e-6, trim_gain: 0.1, ..c.law };
        assert_eq!(name(c), "feed_forward_hz");
    }

    /// ESR·C > T_on/2 (the valley loop's ripple condition the crate
    /// checks, from memory of the ripple-based control literature, as
    /// `OnTime::check_ripple` says): 2 mΩ · 220 µF = 0.44 µs is below half
    /// of 2.08 µs.
    #[test]
    fn a_ceramic_output_needs_emulated_ripple() {
        let mut c = demo();
        c.slow.esr_ohm = 0.002;
        c.law = LawSettings { kind: RIPPLECTL_LAW_ON_TIME, on_time_s: 2.08e-6, ..c.law };
        let e = c.check().unwrap_err();
        assert_eq!(e.kind, ErrorKind::RippleTooSmall);
        c.law.emulated_ripple_v = 0.02;
        c.law.emulated_ripple_duty = 5.0 / 24.0;
        c.law.sample_period_s = 1e-6;
        assert!(c.check().is_ok());
    }
}
