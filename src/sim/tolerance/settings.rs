//! The `[tolerance]` settings as a scenario file writes them: the spreads
//! (`[tolerance.spread]`, the parameters in [`super::params`]) and the
//! pass criteria (`[tolerance.criteria]`, judged in [`super::criteria`]).
//! They are checked, each on its key, by [`ToleranceParams::validate`].

use super::spread::Spread;
use serde::{Deserialize, Serialize};

/// The optional `[tolerance]` table of a scenario.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ToleranceParams {
    /// Spreads (`[tolerance.spread]`).
    pub spread: Spreads,
    /// Pass criteria (`[tolerance.criteria]`).
    pub criteria: Criteria,
}

/// The `[tolerance.spread]` table; a key left out keeps its default
/// (defaults and their sources: [`super::params`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
#[allow(missing_docs)] // each key is the parameter of the same name, see [`super::params`]'s table
pub struct Spreads {
    pub l_h: Spread,
    pub c_f: Spread,
    pub esr_ohm: Spread,
    pub dcr_ohm: Spread,
    pub r_on_ohm: Spread,
    pub r_on_low_ohm: Spread,
    pub diode_vf_v: Spread,
    pub diode_rd_ohm: Spread,
    pub adc_gain_error: Spread,
    pub adc_offset_error_v: Spread,
    pub clock_error_ppm: Spread,
    pub vin: Spread,
    pub load: Spread,
}

impl Default for Spreads {
    fn default() -> Self {
        Self {
            l_h: Spread::uniform_rel(0.20),
            c_f: Spread::uniform_rel(0.20),
            esr_ohm: Spread::uniform_rel(0.30),
            dcr_ohm: Spread::uniform_rel(0.10),
            r_on_ohm: Spread::uniform_rel(0.30),
            r_on_low_ohm: Spread::uniform_rel(0.30),
            diode_vf_v: Spread::uniform_rel(0.10),
            diode_rd_ohm: Spread::uniform_rel(0.20),
            adc_gain_error: Spread::uniform_abs(0.01),
            adc_offset_error_v: Spread::uniform_abs(0.002),
            clock_error_ppm: Spread::uniform_abs(10_000.0),
            vin: Spread::none(),
            load: Spread::none(),
        }
    }
}

impl Spreads {
    /// Every spread zero: each run is the nominal one.
    pub fn zero() -> Self {
        let z = Spread::none();
        Self {
            l_h: z,
            c_f: z,
            esr_ohm: z,
            dcr_ohm: z,
            r_on_ohm: z,
            r_on_low_ohm: z,
            diode_vf_v: z,
            diode_rd_ohm: z,
            adc_gain_error: z,
            adc_offset_error_v: z,
            clock_error_ppm: z,
            vin: z,
            load: z,
        }
    }
}

/// The `[tolerance.criteria]` table (defaults and when a run passes:
/// [`super::criteria`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Criteria {
    /// Regulation band, ± % of the setpoint (default 2).
    pub regulation_pct: f64,
    /// The frequency window must hold.
    pub window: bool,
    /// Largest steady ripple, V peak to peak (default 2 % of the setpoint).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ripple_max_v: Option<f64>,
    /// Largest inductor peak current, A (default: saturation current, else
    /// the current limit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub il_peak_max_a: Option<f64>,
    /// No fault may be logged.
    pub no_fault: bool,
    /// Largest undershoot at any disturbance, V.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub undershoot_max_v: Option<f64>,
    /// Largest overshoot at any disturbance, V.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub overshoot_max_v: Option<f64>,
    /// Longest recovery at any disturbance, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub recovery_max_s: Option<f64>,
}

impl Default for Criteria {
    fn default() -> Self {
        Self {
            regulation_pct: 2.0,
            window: true,
            ripple_max_v: None,
            il_peak_max_a: None,
            no_fault: true,
            undershoot_max_v: None,
            overshoot_max_v: None,
            recovery_max_s: None,
        }
    }
}
