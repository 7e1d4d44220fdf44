//! The parameters a tolerance study varies, their default spreads, and how
//! a drawn value is put into a scenario.
//!
//! | key | nominal | default spread |
//! |---|---|---|
//! | `l_h` | `plant.l_h` | uniform ±20 % (power inductors: common practice) |
//! | `c_f` | `plant.c_f` × (1 − `dc_bias_loss`) | uniform ±20 % (capacitance class M: common practice) |
//! | `esr_ohm` | `plant.esr_ohm` | uniform ±30 % (from memory) |
//! | `dcr_ohm` | `plant.dcr_ohm` | uniform ±10 % (from memory) |
//! | `r_on_ohm`, `r_on_low_ohm` | the switches' on-resistance | uniform ±30 % (from memory: it rises with temperature) |
//! | `diode_vf_v` | `plant.diode_vf_v` | uniform ±10 % (from memory) |
//! | `diode_rd_ohm` | `plant.diode_rd_ohm` | uniform ±20 % (from memory) |
//! | `adc_gain_error` | `mcu.adc_gain_error` | uniform ±0.01 (1 % divider resistors: common practice) |
//! | `adc_offset_error_v` | `mcu.adc_offset_error_v` | uniform ±2 mV (from memory of MCU datasheets) |
//! | `clock_error_ppm` | `mcu.clock_error_ppm` | uniform ±10 000 ppm (a trimmed RC oscillator, from memory) |
//! | `vin` | the first input point, V | none (the profile carries the range); scales the whole profile |
//! | `load` | 1 (a factor on every load current) | none |
//!
//! The firmware keeps what it was configured with: a scenario without
//! `[firmware.model]`, `firmware.c_f` or `firmware.esr_ohm` gets the
//! nominal stage's values there as its parts are varied (a drawn
//! capacitor is a part the firmware was not told about); its capacitance
//! is the nominal after any `dc_bias_loss`, what a designer who read the
//! DC-bias curve configures.

pub use super::settings::Spreads;
use super::spread::Spread;
use crate::sim::plant::Stage;
use crate::sim::profile::Load;
use crate::sim::Scenario;

/// One varied parameter.
pub struct Param {
    /// Key in `[tolerance.spread]`.
    pub name: &'static str,
    /// Whether the value must stay above zero (a relative limit below 1).
    pub positive: bool,
    /// Its spread.
    pub spread: fn(&Spreads) -> &Spread,
    /// Its nominal value in a scenario; none where it does not apply.
    pub nominal: fn(&Scenario) -> Option<f64>,
    /// Put a value into a scenario whose nominal value is `nominal`.
    pub set: fn(&mut Scenario, nominal: f64, value: f64),
}

fn r_on_low(s: &Scenario) -> Option<f64> {
    match s.plant.stage {
        Stage::Synchronous { r_on_low_ohm, .. } => Some(r_on_low_ohm),
        Stage::NonSynchronous => None,
    }
}

fn set_r_on_low(s: &mut Scenario, _: f64, value: f64) {
    if let Stage::Synchronous { r_on_low_ohm, .. } = &mut s.plant.stage {
        *r_on_low_ohm = value;
    }
}

fn scale_input(s: &mut Scenario, nominal: f64, value: f64) {
    let k = value / nominal;
    for p in &mut s.input.points {
        p[1] *= k;
    }
}

fn scale_load(s: &mut Scenario, _: f64, k: f64) {
    for change in &mut s.load {
        match &mut change.load {
            Load::Resistive { ohms } => *ohms /= k,
            Load::Current { amps } => *amps *= k,
            Load::Ramp { from_a, to_a, .. } => {
                *from_a *= k;
                *to_a *= k;
            }
            Load::Short => {}
        }
    }
}

/// The output capacitor's parts, drawn in the plant; the firmware keeps
/// its configured value, or the nominal (for `c_f`, after any DC-bias
/// loss) when it had none.
fn set_c_f(s: &mut Scenario, nominal: f64, value: f64) {
    s.firmware.c_f.get_or_insert(nominal);
    s.plant.c_f = value;
}

fn set_esr(s: &mut Scenario, nominal: f64, value: f64) {
    s.firmware.esr_ohm.get_or_insert(nominal);
    s.plant.esr_ohm = value;
}

/// A parameter that is one field of the scenario, set to the drawn value
/// (or by `set`, which also does what the draw implies elsewhere).
macro_rules! field {
    ($name:ident, positive: $positive:expr, $($path:ident).+) => {
        field!($name, positive: $positive, $($path).+, set: |s, _, v| s.$($path).+ = v)
    };
    ($name:ident, positive: $positive:expr, $($path:ident).+, set: $set:expr) => {
        Param {
            name: stringify!($name),
            positive: $positive,
            spread: |t| &t.$name,
            nominal: |s| Some(s.$($path).+),
            set: $set,
        }
    };
}

/// Every parameter, in the order draws are taken (fixed: a seed's draws
/// depend on it).
pub const PARAMS: [Param; 13] = [
    field!(l_h, positive: true, plant.l_h),
    field!(c_f, positive: true, plant.c_f, set: set_c_f),
    field!(esr_ohm, positive: true, plant.esr_ohm, set: set_esr),
    field!(dcr_ohm, positive: true, plant.dcr_ohm),
    field!(r_on_ohm, positive: true, plant.r_on_ohm),
    Param {
        name: "r_on_low_ohm",
        positive: true,
        spread: |t| &t.r_on_low_ohm,
        nominal: r_on_low,
        set: set_r_on_low,
    },
    field!(diode_vf_v, positive: true, plant.diode_vf_v),
    field!(diode_rd_ohm, positive: true, plant.diode_rd_ohm),
    field!(adc_gain_error, positive: false, mcu.adc_gain_error),
    field!(adc_offset_error_v, positive: false, mcu.adc_offset_error_v),
    field!(clock_error_ppm, positive: false, mcu.clock_error_ppm),
    Param {
        name: "vin",
        positive: true,
        spread: |t| &t.vin,
        nominal: |s| s.input.points.first().map(|p| p[1]),
        set: scale_input,
    },
    Param {
        name: "load",
        positive: true,
        spread: |t| &t.load,
        nominal: |_| Some(1.0),
        set: scale_load,
    },
];
