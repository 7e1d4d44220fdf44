//! Efficiency estimates (slow path, `f32`).
//!
//! Two ways:
//!
//! - [`MeasuredEfficiency`]: from input and output voltage and current
//!   channels, `η = V_out·I_out / (V_in·I_in)`, each filtered by a first-order
//!   low-pass.
//! - [`LossModel`]: from the current estimate's window sums
//!   ([`Phases`]) and the measured voltages, a loss breakdown:
//!   conduction in the switch (`I²_rms,on·R_on`), the inductor (`I²_rms·DCR`)
//!   and the diode (`V_f·I_avg,off + I²_rms,off·R_d`: for a triangular CCM
//!   current this is the familiar `V_f·I·(1 − D)`), switching
//!   `½·V_in·I·(t_r + t_f)·f_sw` evaluated with the valley current at turn-on
//!   and the peak at turn-off (the usual hard-switching approximation:
//!   common practice), gate charge `Q_g·V_drv·f_sw`, capacitor ESR
//!   `I²_ac·ESR`, and core loss by Steinmetz's equation
//!   `P_v = k·f^α·B̂^β` with `B̂ = L·Δi/(2·N·A_e)` (C. P. Steinmetz, "On the
//!   law of hysteresis", 1892).

use super::current::Phases;

/// Steinmetz coefficients and core geometry.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct Steinmetz {
    /// Coefficient k (W/m³ for f in Hz, B in T).
    pub k: f32,
    /// Frequency exponent α.
    pub alpha: f32,
    /// Flux-density exponent β.
    pub beta: f32,
    /// Turns.
    pub turns: f32,
    /// Effective area, m².
    pub area_m2: f32,
    /// Effective volume, m³.
    pub volume_m3: f32,
}

impl Steinmetz {
    /// Core loss, W, for peak-to-peak ripple `delta_i_a` in `l_h` at `f_hz`.
    pub fn power_w(&self, l_h: f32, delta_i_a: f32, f_hz: f32) -> f32 {
        let b_peak = l_h * delta_i_a / (2.0 * self.turns * self.area_m2);
        self.k * libm::powf(f_hz, self.alpha) * libm::powf(b_peak, self.beta) * self.volume_m3
    }
}

/// The loss model's parameters, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct LossModel {
    /// Inductance, H.
    pub l_h: f32,
    /// High-side on-resistance (plus wiring in series while on), Ω.
    pub r_on_ohm: f32,
    /// Inductor DCR, Ω.
    pub dcr_ohm: f32,
    /// Diode forward voltage, V (0 for a synchronous stage).
    pub diode_vf_v: f32,
    /// Diode (or low-side) resistance while off, Ω.
    pub off_r_ohm: f32,
    /// Output capacitor ESR, Ω.
    pub esr_ohm: f32,
    /// Rise time, s.
    pub t_rise_s: f32,
    /// Fall time, s.
    pub t_fall_s: f32,
    /// Gate charge, C.
    pub gate_charge_c: f32,
    /// Gate-drive voltage, V.
    pub gate_drive_v: f32,
    /// Core loss, if known.
    pub core: Option<Steinmetz>,
}

/// Losses over a window, W.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize))]
pub struct LossBreakdown {
    /// Output power, W.
    pub output_w: f32,
    /// High-side conduction.
    pub switch_w: f32,
    /// Diode (or low-side) conduction.
    pub diode_w: f32,
    /// Inductor DCR.
    pub dcr_w: f32,
    /// Capacitor ESR.
    pub esr_w: f32,
    /// Switching transitions.
    pub switching_w: f32,
    /// Gate drive.
    pub gate_w: f32,
    /// Core.
    pub core_w: f32,
}

impl LossBreakdown {
    /// Sum of the losses, W.
    pub fn losses_w(&self) -> f32 {
        self.switch_w
            + self.diode_w
            + self.dcr_w
            + self.esr_w
            + self.switching_w
            + self.gate_w
            + self.core_w
    }

    /// `P_out / (P_out + losses)`; 0 with no output.
    pub fn efficiency(&self) -> f32 {
        let p_in = self.output_w + self.losses_w();
        if p_in <= 0.0 {
            0.0
        } else {
            self.output_w / p_in
        }
    }
}

impl LossModel {
    /// The breakdown for one window of the current estimate's phases at
    /// measured `vin_v` and `vout_v`.
    pub fn evaluate(&self, w: &Phases, vin_v: f32, vout_v: f32) -> LossBreakdown {
        let t = w.time_s;
        if t <= 0.0 || w.cycles == 0 {
            return LossBreakdown::default();
        }
        let i_avg = w.average_a();
        let i2_avg = (w.charge_sq_on + w.charge_sq_off) / t;
        let f_sw = w.f_sw_hz();
        let (peak, valley) = (w.peak_a, w.valley_a);
        let ripple = (peak - valley).max(0.0);
        let ac_sq = (i2_avg - i_avg * i_avg).max(0.0);
        LossBreakdown {
            output_w: vout_v * i_avg,
            switch_w: w.charge_sq_on / t * self.r_on_ohm,
            diode_w: (self.diode_vf_v * w.charge_off + self.off_r_ohm * w.charge_sq_off) / t,
            dcr_w: i2_avg * self.dcr_ohm,
            esr_w: ac_sq * self.esr_ohm,
            switching_w: 0.5
                * vin_v
                * (valley.max(0.0) * self.t_rise_s + peak.max(0.0) * self.t_fall_s)
                * f_sw,
            gate_w: self.gate_charge_c * self.gate_drive_v * f_sw,
            core_w: self.core.map_or(0.0, |c| c.power_w(self.l_h, ripple, f_sw)),
        }
    }
}

/// Efficiency from measured channels, each filtered by
/// `y ← y + a·(x − y)`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MeasuredEfficiency {
    alpha: f32,
    p_in: f32,
    p_out: f32,
    primed: bool,
}

impl MeasuredEfficiency {
    /// Filter coefficient `alpha` in (0, 1]: `1 − e^{−h/τ}` for update period
    /// `h` and time constant `τ`.
    pub fn new(alpha: f32) -> Self {
        Self { alpha: alpha.clamp(f32::MIN_POSITIVE, 1.0), p_in: 0.0, p_out: 0.0, primed: false }
    }

    /// One set of averaged readings, SI units; returns the filtered η.
    pub fn update(&mut self, vin_v: f32, iin_a: f32, vout_v: f32, iout_a: f32) -> f32 {
        let (p_in, p_out) = (vin_v * iin_a, vout_v * iout_a);
        if self.primed {
            self.p_in += self.alpha * (p_in - self.p_in);
            self.p_out += self.alpha * (p_out - self.p_out);
        } else {
            (self.p_in, self.p_out, self.primed) = (p_in, p_out, true);
        }
        self.efficiency()
    }

    /// The filtered η; 0 before any input power.
    pub fn efficiency(&self) -> f32 {
        if self.p_in <= 0.0 {
            0.0
        } else {
            self.p_out / self.p_in
        }
    }
}
