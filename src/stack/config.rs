//! The stack's whole configuration in SI units, and its parts in raw units.
//!
//! [`StackConfig`] gathers every setting besides the law; [`StackParts::new`]
//! (a `const fn`) checks and converts them once. A firmware writes both as
//! `const` items, so the compiler does the arithmetic and the image carries
//! only codes, ticks and fixed-point coefficients:
//!
//! ```
//! use ripplectl::law::{Hysteretic, HystereticConfig};
//! use ripplectl::stack::{Stack, StackConfig, StackParts};
//! use ripplectl::unwrap_config;
//!
//! const CONFIG: StackConfig = StackConfig::demo();
//! const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
//! const LAW: Hysteretic = unwrap_config(Hysteretic::new(
//!     &HystereticConfig { setpoint_v: CONFIG.setpoint_v, band_v: 0.04 },
//!     &CONFIG.output_adc,
//! ));
//! let stack = Stack::new(LAW, PARTS);
//! # assert_eq!(stack.telemetry().state, ripplectl::supervisor::State::Off);
//! ```

use super::slow::{LightLoadSettings, SlowPath, SlowPathConfig};
use crate::error::{attempt, ConfigError};
use crate::estimate::{Amps, CurrentEstimator, InductorModel, LossConfig, SlopeScale, Steinmetz};
use crate::guard::{Window, WindowConfig};
use crate::scale::{AdcChannel, TimerClock};
use crate::supervisor::{Limits, ProtectionConfig};
use crate::units::to_fixed_i32;
use crate::unwrap_config;

/// How the law gets the output.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(rename_all = "kebab-case"))]
pub enum Sensing {
    /// Every ADC result goes to the law.
    Sampled,
    /// An analog comparator's edges go to the law; the ADC's output
    /// readings serve the protections only.
    Edge,
}

/// Every setting of the stack besides the law, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StackConfig {
    /// The timer that timestamps events and times gate edges.
    pub clock: TimerClock,
    /// The channel that senses the output.
    pub output_adc: AdcChannel,
    /// The channel that senses the input (the same ADC, scanned with the
    /// output).
    pub input_adc: AdcChannel,
    /// The regulated output, V (the law's setpoint).
    pub setpoint_v: f32,
    /// Sampled or edge-driven law.
    pub sensing: Sensing,
    /// The frequency window.
    pub window: WindowConfig,
    /// What the estimator believes of the stage.
    pub model: InductorModel,
    /// Protections.
    pub protection: ProtectionConfig,
    /// Housekeeping, observer, DC correction, losses.
    pub slow: SlowPathConfig,
}

impl StackConfig {
    /// The crate's demo board: the greenhouse valve rail (24 V bus, 18–32 V,
    /// to 5 V / 2 A) on a 64 MHz timer with a 12-bit, 3.3 V ADC, as the
    /// shipped `examples/scenarios/hysteretic.toml` describes it. Demo
    /// values throughout.
    pub const fn demo() -> Self {
        let model = InductorModel::demo();
        Self {
            clock: unwrap_config(TimerClock::new(64_000_000)),
            // 10 k over 4.7 k, and 100 k over 9.1 k (40 V full scale).
            output_adc: unwrap_config(AdcChannel::new(12, 3.3, 0.319_728, 0.0)),
            input_adc: unwrap_config(AdcChannel::new(12, 3.3, 0.0826, 0.0)),
            setpoint_v: 5.0,
            // An analog comparator's edges drive the law; the ADC reads
            // the output and the input at 50 kHz for the protections and
            // the estimates.
            sensing: Sensing::Edge,
            // A pulse the current limit ends waits 3 µs for the
            // comparator's report of the re-armed threshold.
            window: WindowConfig { min_off_s: 3e-6, ..WindowConfig::demo() },
            model,
            protection: ProtectionConfig { soft_start_s: 1.5e-3, ..ProtectionConfig::demo() },
            slow: SlowPathConfig {
                housekeeping_hz: 5_000.0,
                observer_bandwidth_hz: Some(1_000.0),
                output_capacitance_f: 220e-6,
                dc_correction: false,
                losses: LossConfig {
                    l_h: model.l_h,
                    r_on_ohm: model.r_on_ohm,
                    dcr_ohm: model.dcr_ohm,
                    diode_vf_v: model.diode_vf_v,
                    off_r_ohm: model.diode_rd_ohm,
                    esr_ohm: 0.040,
                    t_rise_s: 20e-9,
                    t_fall_s: 20e-9,
                    gate_charge_c: 10e-9,
                    gate_drive_v: 10.0,
                    // Typical of a MnZn power ferrite (from memory, not a
                    // datasheet) on a small drum core.
                    core: Some(Steinmetz {
                        k: 4.0,
                        alpha: 1.4,
                        beta: 2.6,
                        turns: 20.0,
                        area_m2: 20e-6,
                        volume_m3: 1.5e-6,
                    }),
                },
            },
        }
    }
}

/// The stack's parts in raw units, checked: what [`Stack::new`](super::Stack::new)
/// assembles around a law.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StackParts {
    /// Sampled or edge-driven law.
    pub sensing: Sensing,
    /// The frequency window, ticks.
    pub window: Window,
    /// The current estimator, following both channels.
    pub estimator: CurrentEstimator,
    /// Protection limits, codes, ticks and amperes.
    pub limits: Limits,
    /// The slow path.
    pub slow: SlowPath,
}

impl StackParts {
    /// Check and convert (a `const fn`).
    ///
    /// Errors: those of [`Window::new`], [`CurrentEstimator::new`],
    /// [`Limits::new`] and the slow path's (`SlowPath::new`), each naming
    /// its field; `setpoint_v` outside the output channel's range.
    pub const fn new(cfg: &StackConfig) -> Result<Self, ConfigError> {
        let (clock, vout, vin) = (&cfg.clock, &cfg.output_adc, &cfg.input_adc);
        let setpoint = attempt!(vout.code_for("setpoint_v", cfg.setpoint_v as f64)).raw;
        let window = attempt!(Window::new(&cfg.window, clock));
        let vin_full = vin.to_volts(vin.full_scale_code());
        let mut estimator = attempt!(CurrentEstimator::new(&cfg.model, clock, vin_full));
        let scale = SlopeScale::of(&cfg.model, clock);
        estimator.follow_output(vout, scale);
        estimator.follow_input(vin, scale);
        let limits = attempt!(Limits::new(&cfg.protection, vout, vin, clock, setpoint));
        let light = LightLoadSettings {
            policy: cfg.window.light_load,
            f_min_hz: cfg.window.f_min_hz,
            current_limit: limits.current_limit,
            start_charge: Amps::from_bits(to_fixed_i32(
                cfg.slow.output_capacitance_f as f64 * cfg.setpoint_v as f64
                    / cfg.protection.soft_start_s as f64,
                16,
            )),
        };
        let slow =
            attempt!(SlowPath::new(&cfg.slow, &cfg.model, vout, vin, clock, setpoint, light));
        Ok(Self { sensing: cfg.sensing, window, estimator, limits, slow })
    }
}
