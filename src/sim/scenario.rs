//! Scenarios: everything one simulation run needs, loadable from TOML.
//!
//! The schema is documented in the README ("Scenario files"). Parsing errors
//! come from the TOML reader with the line and key; the checks here add
//! physical consistency (a negative inductance, an output the input can
//! never reach), and [`ScenarioError`] names the key and its line.

use super::cpu::Core;
use super::emission::EmissionParams;
use super::plant::{PlantParams, Stage};
use super::profile::{InputProfile, Load, LoadChange, Profile};
use super::tolerance::ToleranceParams;
use super::transient::TransientParams;
use crate::estimate::InductorModel;
use crate::guard::WindowConfig;
use crate::law::HystereticConfig;
use crate::supervisor::ProtectionConfig;
use serde::{Deserialize, Serialize};
use std::fmt;

/// The microcontroller around the firmware.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct McuParams {
    /// Timer clock, Hz: gate edges and ISR times are quantized to it.
    pub clock_hz: u32,
    /// ADC resolution, bits.
    pub adc_bits: u8,
    /// ADC reference, V.
    pub adc_reference_v: f64,
    /// Output divider ratio (ADC-pin volts per output volt).
    pub divider_ratio: f64,
    /// ADC offset at the pin, V.
    #[serde(default)]
    pub adc_offset_v: f64,
    /// Output-voltage sample rate, Hz (sampled laws).
    pub sample_rate_hz: f64,
    /// Conversion time from sampling instant to result, s.
    pub conversion_s: f64,
    /// Noise at the ADC input, RMS, in LSB.
    #[serde(default)]
    pub noise_lsb_rms: f64,
    /// Seed of the noise generator.
    #[serde(default)]
    pub seed: u64,
    /// Interrupt entry latency, s.
    pub isr_latency_s: f64,
    /// Analog comparator propagation delay, s (edge and retrofit modes).
    #[serde(default)]
    pub comparator_delay_s: f64,
    /// Timer reading at t = 0 (set near `u32::MAX` to exercise the wrap).
    #[serde(default)]
    pub start_tick: u32,
    /// Input divider ratio (ADC-pin volts per input volt); same ADC.
    pub vin_divider_ratio: f64,
    /// From this time on the output divider reads as open (0 V at the
    /// pin): a fault to test against.
    #[serde(default)]
    pub feedback_open_at_s: Option<f64>,
    /// Gain error of the real ADC and divider against what the firmware was
    /// configured with, a fraction (0.01: reads 1 % high); applied by the
    /// simulated ADC only ([`super::hardware`]).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub adc_gain_error: f64,
    /// Offset error of the real ADC at the pin, V; applied by the simulated
    /// ADC only.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub adc_offset_error_v: f64,
    /// Error of the real timer clock against `clock_hz`, ppm (+: runs
    /// fast); applied by the simulated timer only.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub clock_error_ppm: f64,
    /// The core the firmware runs on; omitted: handlers take no time (an
    /// ideal CPU). See [`super::cpu`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub core: Option<Core>,
    /// The core's clock, Hz; omitted: `clock_hz` (the timer counts the
    /// core clock).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cpu_clock_hz: Option<f64>,
    /// Cycles per instruction, overriding the core's factor (a part with
    /// flash wait states, say).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cpi: Option<f64>,
    /// Interrupt entry and exit, cycles, overriding the core's factor.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub irq_overhead_cycles: Option<f64>,
}

fn is_zero(x: &f64) -> bool {
    *x == 0.0
}

/// What the firmware believes about the stage, and its slow path.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FirmwareParams {
    /// Housekeeping (slow path) rate, Hz.
    pub housekeeping_hz: f64,
    /// The estimator's model of the stage; omitted: the plant's own values.
    #[serde(default)]
    pub model: Option<InductorModel>,
    /// The output capacitance the firmware is configured with (its charge
    /// current and light-load start sizing), F; omitted: `plant.c_f`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub c_f: Option<f64>,
    /// The output capacitor's ESR the firmware is configured with (its
    /// loss model and ripple check), Ω; omitted: `plant.esr_ohm`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub esr_ohm: Option<f64>,
    /// Observer bandwidth, Hz; omitted: no observer.
    #[serde(default)]
    pub observer_bandwidth_hz: Option<f64>,
    /// Protection settings.
    pub protection: ProtectionConfig,
}

/// How the hysteretic law gets its input.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum HystereticInput {
    /// Every ADC result.
    Sampled,
    /// An analog comparator against a DAC threshold the law arms.
    Edge,
}

/// Which switching law runs.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case", deny_unknown_fields)]
pub enum LawParams {
    /// The crate's hysteretic law.
    Hysteretic {
        /// Output setpoint, V.
        setpoint_v: f32,
        /// Hysteresis band at the output, V.
        band_v: f32,
        /// Sampled or comparator-edge input.
        input: HystereticInput,
        /// Lock the mean switching frequency to this target by scaling the
        /// band, Hz; omitted: a fixed band.
        #[serde(default)]
        lock_hz: Option<f32>,
        /// Dither the band by up to ± this fraction of its width once per
        /// housekeeping window (spread spectrum, 0–0.5); omitted: none.
        #[serde(default)]
        dither_depth: Option<f32>,
    },
    /// The crate's constant on-time law.
    OnTime {
        /// Output reference (valley), V.
        setpoint_v: f32,
        /// On-time without feed-forward (the starting one with it), s.
        on_time_s: f32,
        /// Sampled, or a comparator against the reference (edge).
        input: HystereticInput,
        /// Input feed-forward to this frequency, Hz; omitted: fixed on-time.
        #[serde(default)]
        feed_forward_hz: Option<f32>,
        /// Trim the on-time so the mean frequency locks to
        /// `feed_forward_hz`.
        #[serde(default)]
        trim: bool,
        /// Emulated ripple amplitude at the output, V (sampled input only);
        /// omitted: none.
        #[serde(default)]
        emulated_ripple_v: Option<f32>,
        /// Run even when the plain loop fails the ripple stability check
        /// (to see the failure).
        #[serde(default)]
        skip_stability_check: bool,
    },
    /// A board's existing analog comparator loop (Schmitt trigger on the
    /// output) whose edges pass through the firmware guard.
    AnalogRetrofit {
        /// Comparator turns the gate on below this output voltage, V.
        lower_v: f64,
        /// ... and off above this one, V.
        upper_v: f64,
    },
}

impl LawParams {
    /// The hysteretic law's configuration, if this is it.
    pub fn hysteretic(&self) -> Option<HystereticConfig> {
        match *self {
            Self::Hysteretic { setpoint_v, band_v, .. } => {
                Some(HystereticConfig { setpoint_v, band_v })
            }
            _ => None,
        }
    }

    /// The output voltage the law regulates to, V.
    pub fn setpoint_v(&self) -> f64 {
        match self {
            Self::Hysteretic { setpoint_v, .. } | Self::OnTime { setpoint_v, .. } => {
                f64::from(*setpoint_v)
            }
            Self::AnalogRetrofit { lower_v, upper_v } => 0.5 * (lower_v + upper_v),
        }
    }

    /// The hysteresis band at the output, V.
    pub fn band_v(&self) -> f64 {
        match self {
            Self::Hysteretic { band_v, .. } => f64::from(*band_v),
            Self::OnTime { .. } => 0.0,
            Self::AnalogRetrofit { lower_v, upper_v } => upper_v - lower_v,
        }
    }
}

/// The firmware configuration.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ControlParams {
    /// The law.
    pub law: LawParams,
    /// The frequency window.
    pub window: WindowConfig,
    /// Trim the reference so the mean output sits at the setpoint.
    #[serde(default)]
    pub dc_correction: bool,
}

/// One simulation run.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Name shown in reports.
    pub name: String,
    /// Simulated time, s.
    pub duration_s: f64,
    /// Output capacitor voltage at t = 0, V.
    #[serde(default)]
    pub initial_output_v: f64,
    /// Inductor current at t = 0, A (the firmware's estimate starts at 0).
    #[serde(default)]
    pub initial_inductor_a: f64,
    /// Power stage.
    pub plant: PlantParams,
    /// Microcontroller.
    pub mcu: McuParams,
    /// Firmware: law and window.
    pub control: ControlParams,
    /// Firmware: estimator, observer, protection.
    pub firmware: FirmwareParams,
    /// Source voltage over time.
    pub input: InputProfile,
    /// Load changes over time.
    pub load: Vec<LoadChange>,
    /// The recovery band of the transient figures; omitted: the default.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub transient: Option<TransientParams>,
    /// Spreads and pass criteria of `ripplectl tolerance`; omitted: the
    /// defaults.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<ToleranceParams>,
    /// Conducted-emission estimate: limit class and input filter.
    #[serde(default)]
    pub emission: EmissionParams,
}

/// Largest ADC gain error a scenario may give (±50 %): beyond it the
/// reading is no longer the signal it stands for.
pub const MAX_ADC_GAIN_ERROR: f64 = 0.5;

/// Largest timer clock error a scenario may give, ppm (±10 %: an untrimmed
/// RC oscillator stays well inside it, from memory of MCU datasheets).
pub const MAX_CLOCK_ERROR_PPM: f64 = 100_000.0;

/// The built-in default scenario's file.
pub const DEFAULT_SCENARIO_TOML: &str = include_str!("../../examples/scenarios/hysteretic.toml");

/// A scenario that cannot run, with the key and (when read from a file) its
/// line.
#[derive(Clone, Debug, PartialEq)]
pub struct ScenarioError {
    /// Dotted key, e.g. `plant.l_h`.
    pub key: String,
    /// 1-based line of the key in the file, when known.
    pub line: Option<usize>,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(line) = self.line {
            write!(f, "line {line}: ")?;
        }
        if !self.key.is_empty() {
            write!(f, "`{}`: ", self.key)?;
        }
        f.write_str(&self.message)
    }
}

impl std::error::Error for ScenarioError {}

fn invalid(key: &str, message: impl Into<String>) -> ScenarioError {
    ScenarioError { key: key.to_string(), line: None, message: message.into() }
}

/// Require `x > 0` (and finite).
fn positive(key: &str, x: f64) -> Result<(), ScenarioError> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(invalid(key, format!("must be a positive number, got {x}")))
    }
}

/// Require `x ≥ 0` (and finite).
fn non_negative(key: &str, x: f64) -> Result<(), ScenarioError> {
    if x.is_finite() && x >= 0.0 {
        Ok(())
    } else {
        Err(invalid(key, format!("must not be negative, got {x}")))
    }
}

impl Scenario {
    /// The output capacitance the firmware is configured with:
    /// `firmware.c_f`, or the plant's, F.
    pub fn firmware_c_f(&self) -> f64 {
        self.firmware.c_f.unwrap_or(self.plant.c_f)
    }

    /// The output capacitor's ESR the firmware is configured with:
    /// `firmware.esr_ohm`, or the plant's, Ω.
    pub fn firmware_esr_ohm(&self) -> f64 {
        self.firmware.esr_ohm.unwrap_or(self.plant.esr_ohm)
    }

    /// The model the firmware's estimator uses: the scenario's, or the
    /// plant's own values.
    pub fn firmware_model(&self) -> InductorModel {
        self.firmware.model.unwrap_or_else(|| {
            let p = &self.plant;
            let r_low_ohm = match p.stage {
                Stage::Synchronous { r_on_low_ohm, .. } => Some(r_on_low_ohm as f32),
                Stage::NonSynchronous => None,
            };
            InductorModel {
                l_h: p.l_h as f32,
                r_on_ohm: (p.r_on_ohm + p.r_source_ohm) as f32,
                dcr_ohm: p.dcr_ohm as f32,
                diode_vf_v: p.diode_vf_v as f32,
                diode_rd_ohm: p.diode_rd_ohm as f32,
                r_low_ohm,
            }
        })
    }

    /// The built-in default scenario (the shipped `hysteretic.toml`).
    pub fn default_demo() -> Self {
        Self::from_toml(DEFAULT_SCENARIO_TOML).expect("the shipped default scenario is valid")
    }

    /// Parse and check a TOML scenario.
    pub fn from_toml(text: &str) -> Result<Self, ScenarioError> {
        let scenario: Scenario = toml::from_str(text).map_err(|e| parse_error(text, &e))?;
        scenario.validate().map_err(|mut e| {
            e.line = locate_key(text, &e.key);
            e
        })?;
        Ok(scenario)
    }

    /// The input and load profile.
    pub fn profile(&self) -> Profile {
        Profile::new(self.input.clone(), self.load.clone())
    }

    /// Check physical consistency.
    pub fn validate(&self) -> Result<(), ScenarioError> {
        positive("duration_s", self.duration_s)?;
        non_negative("initial_output_v", self.initial_output_v)?;
        self.validate_plant()?;
        self.validate_mcu()?;
        self.validate_profile()?;
        if let Some(band_v) = self.transient.and_then(|t| t.band_v) {
            positive("transient.band_v", band_v)?;
        }
        if let Some(c_f) = self.firmware.c_f {
            positive("firmware.c_f", c_f)?;
        }
        if let Some(esr_ohm) = self.firmware.esr_ohm {
            non_negative("firmware.esr_ohm", esr_ohm)?;
        }
        if let Some(t) = &self.tolerance {
            t.validate()?;
        }
        self.validate_control()?;
        self.validate_emission()?;
        // The firmware's own checks, each refusal on its key.
        super::build::check(self)
    }

    fn validate_emission(&self) -> Result<(), ScenarioError> {
        if let Some(c) = self.plant.input_capacitor {
            positive("plant.input_capacitor.c_f", c.c_f)?;
            non_negative("plant.input_capacitor.esr_ohm", c.esr_ohm)?;
            non_negative("plant.input_capacitor.esl_h", c.esl_h)?;
        }
        if let Some(f) = self.emission.filter {
            positive("emission.filter.l_h", f.l_h)?;
            positive("emission.filter.c_f", f.c_f)?;
            positive("emission.filter.damping_r_ohm", f.damping_r_ohm)?;
            positive("emission.filter.damping_c_f", f.damping_c_f)?;
            non_negative("emission.filter.c_esl_h", f.c_esl_h)?;
            non_negative("emission.filter.l_epc_f", f.l_epc_f)?;
        }
        Ok(())
    }

    fn validate_plant(&self) -> Result<(), ScenarioError> {
        let p = &self.plant;
        positive("plant.l_h", p.l_h)?;
        positive("plant.c_f", p.c_f)?;
        for (key, x) in [
            ("plant.dcr_ohm", p.dcr_ohm),
            ("plant.esr_ohm", p.esr_ohm),
            ("plant.r_on_ohm", p.r_on_ohm),
            ("plant.r_source_ohm", p.r_source_ohm),
            ("plant.diode_vf_v", p.diode_vf_v),
            ("plant.diode_rd_ohm", p.diode_rd_ohm),
            ("plant.t_rise_s", p.t_rise_s),
            ("plant.t_fall_s", p.t_fall_s),
            ("plant.gate_charge_c", p.gate_charge_c),
            ("plant.gate_drive_v", p.gate_drive_v),
        ] {
            non_negative(key, x)?;
        }
        if let Stage::Synchronous { r_on_low_ohm, dead_time_s } = p.stage {
            non_negative("plant.stage.r_on_low_ohm", r_on_low_ohm)?;
            non_negative("plant.stage.dead_time_s", dead_time_s)?;
        }
        if let Some(s) = p.saturation {
            positive("plant.saturation.i_sat_a", s.i_sat_a)?;
            positive("plant.saturation.roll_off_a", s.roll_off_a)?;
            if !(s.floor > 0.0 && s.floor <= 1.0) {
                return Err(invalid("plant.saturation.floor", "must be in (0, 1]"));
            }
        }
        if let Some(c) = p.core {
            for (key, x) in [
                ("plant.core.k", c.k),
                ("plant.core.turns", c.turns),
                ("plant.core.area_m2", c.area_m2),
                ("plant.core.volume_m3", c.volume_m3),
            ] {
                positive(key, x)?;
            }
        }
        Ok(())
    }

    fn validate_mcu(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        if m.clock_hz == 0 {
            return Err(invalid("mcu.clock_hz", "must be above 0"));
        }
        if let Some(hz) = m.cpu_clock_hz {
            positive("mcu.cpu_clock_hz", hz)?;
        }
        if let Some(cpi) = m.cpi {
            positive("mcu.cpi", cpi)?;
        }
        if let Some(cycles) = m.irq_overhead_cycles {
            non_negative("mcu.irq_overhead_cycles", cycles)?;
        }
        positive("mcu.sample_rate_hz", m.sample_rate_hz)?;
        if m.sample_rate_hz > f64::from(m.clock_hz) {
            return Err(invalid("mcu.sample_rate_hz", "exceeds the timer clock"));
        }
        non_negative("mcu.conversion_s", m.conversion_s)?;
        non_negative("mcu.noise_lsb_rms", m.noise_lsb_rms)?;
        non_negative("mcu.isr_latency_s", m.isr_latency_s)?;
        self.validate_mcu_timing()?;
        self.validate_mcu_errors()?;
        non_negative("mcu.comparator_delay_s", m.comparator_delay_s)?;
        positive("mcu.vin_divider_ratio", m.vin_divider_ratio)?;
        if let Some(t) = m.feedback_open_at_s {
            non_negative("mcu.feedback_open_at_s", t)?;
        }
        positive("firmware.housekeeping_hz", self.firmware.housekeeping_hz)?;
        if self.firmware.housekeeping_hz > m.sample_rate_hz.max(f64::from(m.clock_hz) / 64.0) {
            return Err(invalid("firmware.housekeeping_hz", "faster than the fast path"));
        }
        Ok(())
    }

    /// Refuse timings no converter has: a result that arrives after the
    /// next sample was taken never reaches the law (and noise wider than the
    /// converter's whole range is no measurement).
    fn validate_mcu_timing(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        let period_s = 1.0 / m.sample_rate_hz;
        for (key, x) in
            [("mcu.conversion_s", m.conversion_s), ("mcu.isr_latency_s", m.isr_latency_s)]
        {
            if x >= period_s {
                return Err(invalid(
                    key,
                    format!("{x} s is not shorter than the sample period {period_s} s"),
                ));
            }
        }
        if m.conversion_s + m.isr_latency_s >= period_s {
            return Err(invalid(
                "mcu.isr_latency_s",
                format!(
                    "conversion_s + isr_latency_s = {} s is not shorter than the sample period {period_s} s: every result would arrive after the next sample",
                    m.conversion_s + m.isr_latency_s
                ),
            ));
        }
        let codes = f64::from(1u32 << m.adc_bits.min(16));
        if m.noise_lsb_rms > codes {
            return Err(invalid(
                "mcu.noise_lsb_rms",
                format!("{} LSB rms is beyond the ADC's range of {codes} codes", m.noise_lsb_rms),
            ));
        }
        Ok(())
    }

    /// The simulated hardware's departures from the configuration.
    fn validate_mcu_errors(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        if !(m.adc_gain_error.is_finite() && m.adc_gain_error.abs() < MAX_ADC_GAIN_ERROR) {
            return Err(invalid(
                "mcu.adc_gain_error",
                format!("must lie within ±{MAX_ADC_GAIN_ERROR}, got {}", m.adc_gain_error),
            ));
        }
        let pin_offset = m.adc_offset_v + m.adc_offset_error_v;
        if !(pin_offset.is_finite() && pin_offset.abs() < m.adc_reference_v) {
            return Err(invalid(
                "mcu.adc_offset_error_v",
                format!("the offset at the pin, {pin_offset} V, must stay within ± the reference"),
            ));
        }
        if !(m.clock_error_ppm.is_finite() && m.clock_error_ppm.abs() < MAX_CLOCK_ERROR_PPM) {
            return Err(invalid(
                "mcu.clock_error_ppm",
                format!("must lie within ±{MAX_CLOCK_ERROR_PPM} ppm, got {}", m.clock_error_ppm),
            ));
        }
        Ok(())
    }

    fn validate_profile(&self) -> Result<(), ScenarioError> {
        if self.input.points.is_empty() {
            return Err(invalid("input.points", "needs at least one [t_s, volts] point"));
        }
        for w in self.input.points.windows(2) {
            if w[1][0] < w[0][0] {
                return Err(invalid("input.points", "times must not decrease"));
            }
        }
        for q in &self.input.points {
            non_negative("input.points", q[0])?;
            positive("input.points", q[1])?;
        }
        for change in &self.load {
            non_negative("load.at_s", change.at_s)?;
            match change.load {
                Load::Resistive { ohms } => positive("load.ohms", ohms)?,
                Load::Current { amps } => non_negative("load.amps", amps)?,
                Load::Ramp { from_a, to_a, over_s } => {
                    non_negative("load.from_a", from_a)?;
                    non_negative("load.to_a", to_a)?;
                    positive("load.over_s", over_s)?;
                }
                Load::Short => {}
            }
        }
        Ok(())
    }

    fn validate_control(&self) -> Result<(), ScenarioError> {
        let setpoint = self.control.law.setpoint_v();
        let (_, vin_max) = self.profile().input_range();
        if vin_max <= setpoint {
            return Err(invalid(
                "control.law.setpoint_v",
                format!("output {setpoint} V is at or above the input (at most {vin_max} V) for the whole run: a buck cannot reach it"),
            ));
        }
        match self.control.law {
            LawParams::Hysteretic { lock_hz, .. } => {
                if let Some(f) = lock_hz {
                    positive("control.law.lock_hz", f64::from(f))?;
                }
            }
            LawParams::OnTime { on_time_s, feed_forward_hz, trim, .. } => {
                positive("control.law.on_time_s", f64::from(on_time_s))?;
                if let Some(f) = feed_forward_hz {
                    positive("control.law.feed_forward_hz", f64::from(f))?;
                } else if trim {
                    return Err(invalid(
                        "control.law.trim",
                        "needs feed_forward_hz, the frequency to lock to",
                    ));
                }
            }
            LawParams::AnalogRetrofit { lower_v, upper_v } => {
                positive("control.law.lower_v", lower_v)?;
                if upper_v <= lower_v {
                    return Err(invalid("control.law.upper_v", "must be above lower_v"));
                }
            }
        }
        Ok(())
    }
}

/// A TOML error as one line with its line number.
fn parse_error(text: &str, e: &toml::de::Error) -> ScenarioError {
    let line = e.span().map(|s| text[..s.start.min(text.len())].lines().count().max(1));
    let message = e.message().trim().replace('\n', " ");
    ScenarioError { key: String::new(), line, message }
}

/// The 1-based line where a dotted key (`table.key`) is set, if found: in
/// its table, or inside an inline table on one line (`model = { l_h = ...
/// }` for `firmware.model.l_h`); failing both, the first line setting a
/// key of that name.
pub fn locate_key(text: &str, dotted: &str) -> Option<usize> {
    let key = dotted.rsplit_once('.').map_or(dotted, |(_, k)| k);
    let mut current = String::new();
    let mut fallback = None;
    for (n, raw) in text.lines().enumerate() {
        let line = raw.trim();
        if let Some(header) = line.strip_prefix('[') {
            current = header.trim_matches(|c| c == '[' || c == ']').trim().to_string();
            continue;
        }
        let Some((k, value)) = line.split_once('=') else { continue };
        let k = k.trim();
        let full = if current.is_empty() { k.to_string() } else { format!("{current}.{k}") };
        let inline = dotted
            .strip_prefix(full.as_str())
            .and_then(|rest| rest.strip_prefix('.'))
            .is_some_and(|rest| inline_table_sets(value, rest));
        if full == dotted || inline {
            return Some(n + 1);
        }
        if k == key {
            fallback.get_or_insert(n + 1);
        }
    }
    fallback
}

/// Whether an inline table's text (`{ a = 1, b = 2 }`) sets `key`.
fn inline_table_sets(value: &str, key: &str) -> bool {
    value.trim_start().starts_with('{')
        && value
            .split(['{', ',', '}'])
            .any(|item| item.split_once('=').is_some_and(|(k, _)| k.trim() == key))
}
