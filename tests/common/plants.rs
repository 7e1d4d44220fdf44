//! Power stages used by the plant tests.

use ripplectl::sim::plant::{PlantParams, Stage};

/// A non-synchronous stage with nearly ideal parts: the given L, C, ESR and
/// DCR, and no other loss.
pub fn near_ideal(l_h: f64, c_f: f64, esr_ohm: f64, dcr_ohm: f64) -> PlantParams {
    PlantParams {
        l_h,
        dcr_ohm,
        c_f,
        esr_ohm,
        r_on_ohm: 0.0,
        r_source_ohm: 0.0,
        diode_vf_v: 0.0,
        diode_rd_ohm: 0.0,
        stage: Stage::NonSynchronous,
        saturation: None,
        t_rise_s: 0.0,
        t_fall_s: 0.0,
        gate_charge_c: 0.0,
        gate_drive_v: 0.0,
        core: None,
        input_capacitor: None,
    }
}
