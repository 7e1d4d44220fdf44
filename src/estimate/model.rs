//! What the current estimator assumes about the power stage
//! ([`InductorModel`]): inductance and the resistive and diode drops, in SI
//! units, checked once at configuration.
//!
//! `L` sets the ripple's amplitude (a 10 % error in `L` is a 10 % error in
//! the ripple, and in the DCM current); the drops set the DC level in CCM
//! (see [`current`](super::current)).

use crate::error::{attempt, non_negative, positive, ConfigError};

/// What the estimator assumes about the power stage, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct InductorModel {
    /// Inductance, H (> 0).
    pub l_h: f32,
    /// High-side switch on-resistance, Ω.
    pub r_on_ohm: f32,
    /// Inductor DCR, Ω.
    pub dcr_ohm: f32,
    /// Freewheeling diode forward voltage, V.
    pub diode_vf_v: f32,
    /// Freewheeling diode dynamic resistance, Ω.
    pub diode_rd_ohm: f32,
    /// Low-side switch on-resistance, Ω, for a synchronous stage (forced
    /// CCM: no clamp at zero); `None` for a diode.
    pub r_low_ohm: Option<f32>,
}

impl InductorModel {
    /// The crate demo's stage: 47 µH with 30 mΩ DCR, a 60 mΩ switch plus
    /// 50 mΩ of wiring, a Schottky diode (0.45 V, 30 mΩ). Demo values.
    pub const fn demo() -> Self {
        Self {
            l_h: 47e-6,
            r_on_ohm: 0.11,
            dcr_ohm: 0.03,
            diode_vf_v: 0.45,
            diode_rd_ohm: 0.03,
            r_low_ohm: None,
        }
    }

    /// Resistance in the current's path while on, Ω.
    pub const fn on_resistance(&self) -> f32 {
        self.r_on_ohm + self.dcr_ohm
    }

    /// Resistance in the current's path while off, Ω.
    pub const fn off_resistance(&self) -> f32 {
        let path = match self.r_low_ohm {
            Some(r) => r,
            None => self.diode_rd_ohm,
        };
        path + self.dcr_ohm
    }

    /// Freewheeling drop while off, V (0 for a synchronous stage).
    pub const fn freewheel_v(&self) -> f32 {
        if self.r_low_ohm.is_some() {
            0.0
        } else {
            self.diode_vf_v
        }
    }

    /// Check every value (configuration).
    ///
    /// Errors: `l_h` not positive; `r_on_ohm`, `dcr_ohm`, `diode_vf_v`,
    /// `diode_rd_ohm` or `r_low_ohm` negative; any of them not finite.
    pub const fn check(&self) -> Result<(), ConfigError> {
        attempt!(positive("l_h", self.l_h as f64));
        attempt!(non_negative("r_on_ohm", self.r_on_ohm as f64));
        attempt!(non_negative("dcr_ohm", self.dcr_ohm as f64));
        attempt!(non_negative("diode_vf_v", self.diode_vf_v as f64));
        attempt!(non_negative("diode_rd_ohm", self.diode_rd_ohm as f64));
        if let Some(r) = self.r_low_ohm {
            attempt!(non_negative("r_low_ohm", r as f64));
        }
        Ok(())
    }
}
