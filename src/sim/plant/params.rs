//! What the power stage is made of, and what drives it.

use super::saturation::Saturation;
use serde::{Deserialize, Serialize};

/// Switching stage topology.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "kebab-case", deny_unknown_fields)]
pub enum Stage {
    /// High-side switch and freewheeling diode: DCM at light load.
    NonSynchronous,
    /// High- and low-side switches; current may reverse (forced CCM).
    Synchronous {
        /// Low-side on-resistance, Ω.
        r_on_low_ohm: f64,
        /// Dead time at each edge, s (quantized to the simulation tick);
        /// the body diodes (`diode_vf_v`, `diode_rd_ohm`) conduct during it.
        dead_time_s: f64,
    },
}

/// Core loss by Steinmetz's equation, `P_v = k·f^α·B̂^β` (W/m³), with the
/// peak flux density from the ripple, `B̂ = L·Δi/(2·N·A_e)`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoreLoss {
    /// Steinmetz coefficient k, for f in Hz and B in T, giving W/m³.
    pub k: f64,
    /// Frequency exponent α.
    pub alpha: f64,
    /// Flux-density exponent β.
    pub beta: f64,
    /// Turns.
    pub turns: f64,
    /// Effective core area, m².
    pub area_m2: f64,
    /// Effective core volume, m³.
    pub volume_m3: f64,
}

impl CoreLoss {
    /// Core loss power for a cycle of frequency `f_hz` with peak-to-peak
    /// ripple `delta_i_a` in inductance `l_h`.
    ///
    /// `f^α·B̂^β` as one exponential of the two logarithms: the loop takes
    /// it once a switching cycle, where two `powf` cost more (the result
    /// differs from theirs in its last bits only). A flux that is not
    /// positive (no ripple) keeps `powf`'s `0^β`, which the logarithm
    /// would turn into a NaN for `β = 0`.
    pub fn power_w(&self, l_h: f64, delta_i_a: f64, f_hz: f64) -> f64 {
        let b_peak = l_h * delta_i_a / (2.0 * self.turns * self.area_m2);
        let f_b = if b_peak > 0.0 {
            (self.alpha * f_hz.ln() + self.beta * b_peak.ln()).exp()
        } else {
            f_hz.powf(self.alpha) * b_peak.powf(self.beta)
        };
        self.k * f_b * self.volume_m3
    }
}

/// Power-stage parameters, SI units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlantParams {
    /// Inductance (small-signal, below saturation), H.
    pub l_h: f64,
    /// Inductor winding resistance, Ω.
    pub dcr_ohm: f64,
    /// Output capacitance, F.
    pub c_f: f64,
    /// Output capacitor equivalent series resistance, Ω.
    pub esr_ohm: f64,
    /// High-side switch on-resistance, Ω.
    pub r_on_ohm: f64,
    /// Input source resistance, Ω.
    pub r_source_ohm: f64,
    /// Diode forward voltage (freewheeling diode, or body diodes), V.
    pub diode_vf_v: f64,
    /// Diode dynamic resistance, Ω.
    pub diode_rd_ohm: f64,
    /// Topology.
    pub stage: Stage,
    /// Inductor saturation, if modelled.
    #[serde(default)]
    pub saturation: Option<Saturation>,
    /// Switch-node rise time at turn-on, s (switching loss ½·V·I·t).
    #[serde(default)]
    pub t_rise_s: f64,
    /// Switch-node fall time at turn-off, s.
    #[serde(default)]
    pub t_fall_s: f64,
    /// Total gate charge of the switches, C (loss Q_g·V_drv per cycle).
    #[serde(default)]
    pub gate_charge_c: f64,
    /// Gate-drive voltage, V.
    #[serde(default)]
    pub gate_drive_v: f64,
    /// Core loss, if modelled.
    #[serde(default)]
    pub core: Option<CoreLoss>,
    /// The input capacitor, for the conducted-emission estimate only (the
    /// time-domain stage sees the ideal source and `r_source_ohm`).
    #[serde(default)]
    pub input_capacitor: Option<InputCapacitor>,
}

impl PlantParams {
    /// Incremental inductance in saturation band `band`, H.
    pub fn inductance_in(&self, band: u16) -> f64 {
        self.l_h * self.saturation.map_or(1.0, |s| s.fraction(band))
    }
}

/// What drives the plant during a segment: input voltage and load, each
/// affine in the time `τ` since the environment was set.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Environment {
    /// Source voltage at τ = 0, V.
    pub vin_v: f64,
    /// Source voltage slope, V/s.
    pub vin_slope: f64,
    /// Load conductance, S.
    pub load_g_s: f64,
    /// Load current sink at τ = 0, A.
    pub load_i_a: f64,
    /// Load current slope, A/s.
    pub load_i_slope: f64,
}

impl Environment {
    /// Source voltage at `tau`, V.
    pub fn vin_at(&self, tau: f64) -> f64 {
        self.vin_v + self.vin_slope * tau
    }

    /// Load current sink at `tau`, A (the conductance part excluded).
    pub fn load_i_at(&self, tau: f64) -> f64 {
        self.load_i_a + self.load_i_slope * tau
    }
}

/// The converter's input capacitor (`[plant] input_capacitor`): it supplies
/// most of the pulsating switch current. Its impedance is the emission
/// estimate's ([`crate::sim::emission::InputNetwork`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputCapacitor {
    /// Capacitance, F (> 0).
    pub c_f: f64,
    /// Equivalent series resistance, Ω (≥ 0).
    pub esr_ohm: f64,
    /// Equivalent series inductance, H (≥ 0).
    pub esl_h: f64,
}

#[cfg(test)]
mod tests {
    use super::CoreLoss;

    /// Steinmetz's equation as written, `k·f^α·B̂^β·V` with
    /// `B̂ = L·Δi/(2·N·A)` (C. P. Steinmetz, "On the law of hysteresis",
    /// 1892).
    fn written(c: &CoreLoss, l_h: f64, delta_i_a: f64, f_hz: f64) -> f64 {
        let b_peak = l_h * delta_i_a / (2.0 * c.turns * c.area_m2);
        c.k * f_hz.powf(c.alpha) * b_peak.powf(c.beta) * c.volume_m3
    }

    #[test]
    fn the_core_loss_is_steinmetzs_equation_within_rounding() {
        // The shipped demo's core (coefficients from memory, demo values).
        let demo = crate::sim::Scenario::default_demo().plant;
        let (core, l_h) = (demo.core.expect("the demo has a core"), demo.l_h);
        for (delta_i_a, f_hz) in [(1.2, 35e3), (3.9, 21e3), (0.01, 140e3), (2.0, 1.0)] {
            let (got, want) =
                (core.power_w(l_h, delta_i_a, f_hz), written(&core, l_h, delta_i_a, f_hz));
            assert!(
                (got - want).abs() <= 1e-13 * want,
                "{delta_i_a} A, {f_hz} Hz: {got} against {want}"
            );
        }
        // No ripple: 0^β, whatever β.
        for beta in [core.beta, 0.0] {
            let c = CoreLoss { beta, ..core };
            assert_eq!(c.power_w(l_h, 0.0, 35e3), written(&c, l_h, 0.0, 35e3), "β = {beta}");
        }
    }
}
