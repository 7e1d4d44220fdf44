//! Which scenario key a firmware configuration parameter comes from, so a
//! refusal by the crate's constructors names the key to change.

use super::{Scenario, ScenarioError};
use crate::ConfigError;

/// The scenario key a configuration parameter comes from.
pub fn scenario_key(sc: &Scenario, parameter: &str) -> String {
    let model = if sc.firmware.model.is_some() { "firmware.model" } else { "plant" };
    let table = match parameter {
        "clock_hz" | "adc_bits" | "adc_reference_v" | "divider_ratio" | "adc_offset_v"
        | "vin_divider_ratio" => "mcu",
        "vin_full_scale_v" => return "mcu.vin_divider_ratio".into(),
        "f_min_hz" | "f_max_hz" | "min_on_s" | "min_off_s" | "max_on_s" => "control.window",
        "setpoint_v" | "band_v" | "on_time_s" | "emulated_ripple_v" | "feed_forward_hz"
        | "lower_v" | "upper_v" | "lock_hz" | "dither_depth" => "control.law",
        "duty" => return "input.points".into(),
        "trim_gain" | "trim_min" | "trim_max" => return "control.law.trim".into(),
        "dc_gain" | "dc_limit_codes" => return "control.dc_correction".into(),
        "l_h" | "r_on_ohm" | "dcr_ohm" | "diode_vf_v" | "diode_rd_ohm" => model,
        "r_low_ohm" => {
            return format!("{model}.r_low_ohm")
                .replace("plant.r_low_ohm", "plant.stage.r_on_low_ohm")
        }
        "off_r_ohm" => return format!("{model}.diode_rd_ohm"),
        "esr_ohm" if sc.firmware.esr_ohm.is_some() => "firmware",
        "t_rise_s" | "t_fall_s" | "gate_charge_c" | "gate_drive_v" | "esr_ohm" => "plant",
        "c_f" | "output_capacitance_f" if sc.firmware.c_f.is_some() => {
            return "firmware.c_f".into()
        }
        "c_f" | "output_capacitance_f" => return "plant.c_f".into(),
        p if p.starts_with("core.") => "plant",
        "housekeeping_hz" | "observer_bandwidth_hz" => "firmware",
        "poles" | "r_ohm" | "period_s" => return "firmware.observer_bandwidth_hz".into(),
        "vin_max_v - vin_max_hysteresis_v" => {
            return "firmware.protection.vin_max_hysteresis_v".into()
        }
        _ => "firmware.protection",
    };
    format!("{table}.{parameter}")
}

/// A configuration refusal as a scenario error on its key.
pub fn keyed(sc: &Scenario, e: ConfigError) -> ScenarioError {
    ScenarioError { key: scenario_key(sc, e.parameter), line: None, message: e.kind.to_string() }
}
