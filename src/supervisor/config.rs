//! Protection settings: SI units in ([`ProtectionConfig`]), raw codes,
//! ticks and amperes out ([`Limits`]), once, at configuration.

use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::estimate::Amps;
use crate::scale::{AdcChannel, TimerClock};
use crate::units::q16;

/// Protection settings, SI units (voltages at the sensed node: output or
/// input).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct ProtectionConfig {
    /// Input voltage to start at, V.
    pub uvlo_on_v: f32,
    /// Input voltage to stop below, V (< `uvlo_on_v`).
    pub uvlo_off_v: f32,
    /// Input voltage to stop above, V.
    pub vin_max_v: f32,
    /// Input must fall this far below `vin_max_v` to restart, V.
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
    /// Hiccup restarts in a row that never reach regulation before the
    /// supervisor latches off (≥ 1).
    pub max_retries: u16,
}

impl ProtectionConfig {
    /// The crate demo's settings (a 24 V bus, 18–32 V, to a 5 V / 2 A
    /// rail): demo values, to be replaced by a board's own.
    pub const fn demo() -> Self {
        Self {
            uvlo_on_v: 16.0,
            uvlo_off_v: 15.0,
            vin_max_v: 36.0,
            vin_max_hysteresis_v: 1.0,
            ovp_v: 5.5,
            current_limit_a: 4.0,
            short_cycles: 8,
            hiccup_s: 2e-3,
            soft_start_s: 1e-3,
            stuck_low_v: 0.3,
            stuck_implied_v: 2.0,
            stuck_cycles: 3,
            max_retries: 3,
        }
    }
}

/// Protection limits in raw units.
///
/// Voltages: `u16` ADC codes of their channel (format of its
/// [`AdcChannel`]); current: [`Amps`]; times: `u32` timer ticks.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Limits {
    /// UVLO start threshold, input code.
    pub uvlo_on: u16,
    /// UVLO stop threshold, input code.
    pub uvlo_off: u16,
    /// Input stop threshold, input code.
    pub vin_max: u16,
    /// Input restart threshold, input code.
    pub vin_resume: u16,
    /// Output over-voltage, output code.
    pub ovp: u16,
    /// Current limit.
    pub current_limit: Amps,
    /// Short-circuit cycle count.
    pub short_cycles: u16,
    /// Hiccup time, ticks.
    pub hiccup: u32,
    /// Soft-start time, ticks (≥ 1).
    pub soft_start: u32,
    /// "Near zero" output, output code.
    pub stuck_low: u16,
    /// Implied switch-node average for the sensor check, input code.
    pub stuck_implied: u16,
    /// Sensor-fault cycle count.
    pub stuck_cycles: u16,
    /// Hiccup restarts before latching.
    pub max_retries: u16,
    /// Output code at or above which the reading is implausible.
    pub out_rail: u16,
    /// Input code at or above which the reading is implausible.
    pub in_rail: u16,
}

/// A count that must be at least one.
const fn count(parameter: &'static str, n: u16) -> Result<u16, ConfigError> {
    if n == 0 {
        Err(ConfigError::new(parameter, ErrorKind::NotPositive))
    } else {
        Ok(n)
    }
}

/// `a < b`, or `a` refused as not below `b`.
const fn below(a: (&'static str, u16), b: (&'static str, u16)) -> Result<(), ConfigError> {
    if a.1 < b.1 {
        Ok(())
    } else {
        Err(ConfigError::new(a.0, ErrorKind::NotBelow(b.0)))
    }
}

impl Limits {
    /// Convert and check (a `const fn`). `vout` and `vin` are the output
    /// and input channels; `setpoint_code` the regulated output code.
    ///
    /// Errors name the field: a voltage outside its channel's range; the
    /// thresholds out of order (`uvlo_off_v` not below `uvlo_on_v`, which
    /// is not below `vin_max_v` − `vin_max_hysteresis_v`; `setpoint_v` not
    /// below `ovp_v`; `stuck_low_v` not below `setpoint_v`); a
    /// non-positive current limit; a zero count; the timer's duration
    /// errors.
    pub const fn new(
        cfg: &ProtectionConfig,
        vout: &AdcChannel,
        vin: &AdcChannel,
        clock: &TimerClock,
        setpoint_code: u16,
    ) -> Result<Self, ConfigError> {
        let uvlo_on = attempt!(vin.code_for("uvlo_on_v", cfg.uvlo_on_v as f64)).raw;
        let uvlo_off = attempt!(vin.code_for("uvlo_off_v", cfg.uvlo_off_v as f64)).raw;
        let vin_max = attempt!(vin.code_for("vin_max_v", cfg.vin_max_v as f64)).raw;
        let resume_v = cfg.vin_max_v as f64 - cfg.vin_max_hysteresis_v as f64;
        let vin_resume = attempt!(vin.code_for("vin_max_hysteresis_v", resume_v)).raw;
        let ovp = attempt!(vout.code_for("ovp_v", cfg.ovp_v as f64)).raw;
        attempt!(below(("uvlo_off_v", uvlo_off), ("uvlo_on_v", uvlo_on)));
        attempt!(below(("uvlo_on_v", uvlo_on), ("vin_max_v - vin_max_hysteresis_v", vin_resume)));
        if vin_resume > vin_max {
            return Err(ConfigError::new("vin_max_hysteresis_v", ErrorKind::Negative));
        }
        attempt!(below(("setpoint_v", setpoint_code), ("ovp_v", ovp)));
        let limit = attempt!(positive("current_limit_a", cfg.current_limit_a as f64));
        let stuck_low = attempt!(vout.code_for("stuck_low_v", cfg.stuck_low_v as f64)).raw;
        let stuck_implied =
            attempt!(vin.code_for("stuck_implied_v", cfg.stuck_implied_v as f64)).raw;
        attempt!(below(("stuck_low_v", stuck_low), ("setpoint_v", setpoint_code)));
        Ok(Self {
            uvlo_on,
            uvlo_off,
            vin_max,
            vin_resume,
            ovp,
            current_limit: q16(limit),
            short_cycles: attempt!(count("short_cycles", cfg.short_cycles)),
            hiccup: attempt!(clock.ticks_for("hiccup_s", cfg.hiccup_s as f64)).raw,
            soft_start: attempt!(clock.ticks_nonzero_for("soft_start_s", cfg.soft_start_s as f64))
                .raw,
            stuck_low,
            stuck_implied,
            stuck_cycles: attempt!(count("stuck_cycles", cfg.stuck_cycles)),
            max_retries: attempt!(count("max_retries", cfg.max_retries)),
            out_rail: vout.full_scale_code(),
            in_rail: vin.full_scale_code(),
        })
    }
}
