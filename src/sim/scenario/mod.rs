//! Scenarios: everything one simulation run needs, loadable from TOML.
//!
//! The schema is documented in the README ("Scenario files"). Parsing errors
//! come from the TOML reader with the line and key; the checks add physical
//! consistency (a negative inductance, an output the input can never
//! reach), and [`ScenarioError`] names the key and its line.
//!
//! | module | what |
//! |---|---|
//! | this one | the scenario's tables, what the firmware is configured with, loading; the transient tracker a scenario asks for |
//! | `validate` | each value in its range, each refusal on its key |
//! | `keys` | which key a firmware configuration parameter comes from (`keyed`, `scenario_key`) |
//! | `locate` | the line a key is set on; a TOML reader's error as one line |

use super::cores::Core;
use super::emission::params::EmissionParams;
use super::plant::{PlantParams, Stage};
use super::profile::{InputProfile, LoadChange, Profile};
use super::tolerance::settings::ToleranceParams;
use super::transient::{disturbances, TransientParams, TransientTracker};
use crate::estimate::InductorModel;
use crate::guard::WindowConfig;
use crate::law::HystereticConfig;
use crate::supervisor::ProtectionConfig;
use serde::{Deserialize, Serialize};
use std::fmt;

mod keys;
mod locate;
mod validate;

pub use keys::{keyed, scenario_key};
pub use locate::locate_key;
use locate::parse_error;

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
    /// Cycles per instruction, overriding the core's factor
    /// ([`super::cores`]; a part with flash wait states, say).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cpi: Option<f64>,
    /// Interrupt entry and exit, cycles, overriding the core's factor
    /// ([`super::cores`]).
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
pub const DEFAULT_SCENARIO_TOML: &str = include_str!("../../../examples/scenarios/hysteretic.toml");

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
}

impl TransientTracker {
    /// The tracker a scenario asks for: its disturbances, setpoint and
    /// recovery band.
    pub fn for_scenario(s: &Scenario) -> Self {
        let setpoint_v = s.control.law.setpoint_v();
        let band_v = s.transient.unwrap_or_default().band_v(setpoint_v);
        Self::new(disturbances(&s.input, &s.load, s.duration_s), s.duration_s, setpoint_v, band_v)
    }
}
