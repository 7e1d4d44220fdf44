//! Efficiency estimates (slow path, integer only).
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
//!
//! The parameters are given in SI units ([`LossConfig`]) and folded into
//! fixed-point coefficients once ([`LossModel::new`], a `const fn`); each
//! evaluation is then integer arithmetic: powers in [`Watts`] (`I16F16`),
//! the core loss's non-integer exponents through fixed-point `log₂` and
//! `2^x` ([`crate::math::log2`]).

use super::phases::Phases;
use crate::error::{attempt, non_negative, positive, ConfigError};
use crate::math::config::log2;
use crate::math::log2::{exp2_q32, log2_q16};
use crate::scale::TimerClock;
use crate::units::{clamp_i32, mul, q16, ratio, to_fixed_i32, Amps, Fraction, Ohms, Volts, Watts};

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
    /// Core loss, W, for peak-to-peak ripple `delta_i_a` in `l_h` at `f_hz`
    /// (configuration and host checks: floating point).
    pub fn power_w(&self, l_h: f32, delta_i_a: f32, f_hz: f32) -> f32 {
        let b_peak = l_h * delta_i_a / (2.0 * self.turns * self.area_m2);
        self.k * libm::powf(f_hz, self.alpha) * libm::powf(b_peak, self.beta) * self.volume_m3
    }

    /// Check every value (configuration): `k`, `turns`, `area_m2` and
    /// `volume_m3` positive, the exponents finite.
    pub const fn check(&self) -> Result<(), ConfigError> {
        attempt!(positive("core.k", self.k as f64));
        attempt!(crate::error::finite("core.alpha", self.alpha as f64));
        attempt!(crate::error::finite("core.beta", self.beta as f64));
        attempt!(positive("core.turns", self.turns as f64));
        attempt!(positive("core.area_m2", self.area_m2 as f64));
        attempt!(positive("core.volume_m3", self.volume_m3 as f64));
        Ok(())
    }
}

/// Steinmetz's equation folded for a given inductance:
/// `P = C · f^α · Δi^β` with `C = k·V_e·(L/(2·N·A_e))^β`, evaluated as
/// `2^(log₂C + α·log₂f + β·log₂Δi)`. Exponents and `log₂C` in `Q16.16`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct CoreLoss {
    log2_c: i32,
    alpha: i32,
    beta: i32,
}

impl CoreLoss {
    const fn new(core: &Steinmetz, l_h: f64) -> Self {
        let b_per_amp = l_h / (2.0 * core.turns as f64 * core.area_m2 as f64);
        let c = core.k as f64 * core.volume_m3 as f64;
        let log2_c = log2(c) + core.beta as f64 * log2(b_per_amp);
        Self {
            log2_c: crate::units::to_fixed_i32(log2_c, 16),
            alpha: crate::units::to_fixed_i32(core.alpha as f64, 16),
            beta: crate::units::to_fixed_i32(core.beta as f64, 16),
        }
    }

    /// Core loss at `f_hz` with ripple `delta`; zero without either.
    fn power(&self, f_hz: u32, delta: Amps) -> Watts {
        if f_hz == 0 || delta <= Amps::ZERO {
            return Watts::ZERO;
        }
        let lf = i64::from(log2_q16(u64::from(f_hz), 0));
        let ld = i64::from(log2_q16(delta.to_bits() as u64, 16));
        let y = i64::from(self.log2_c)
            + ((i64::from(self.alpha) * lf) >> 16)
            + ((i64::from(self.beta) * ld) >> 16);
        let q32 = exp2_q32(clamp_i32(y));
        Watts::from_bits(clamp_i32((q32 >> 16).min(i32::MAX as u64) as i64))
    }
}

/// The loss model's parameters, SI units (configuration).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct LossConfig {
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

/// Losses over a window, [`Watts`] (`I16F16`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LossBreakdown {
    /// Output power.
    pub output: Watts,
    /// High-side conduction.
    pub switch: Watts,
    /// Diode (or low-side) conduction.
    pub diode: Watts,
    /// Inductor DCR.
    pub dcr: Watts,
    /// Capacitor ESR.
    pub esr: Watts,
    /// Switching transitions.
    pub switching: Watts,
    /// Gate drive.
    pub gate: Watts,
    /// Core.
    pub core: Watts,
}

impl LossBreakdown {
    /// Sum of the losses (saturating).
    pub fn losses(&self) -> Watts {
        [self.diode, self.dcr, self.esr, self.switching, self.gate, self.core]
            .iter()
            .fold(self.switch, |sum, w| sum.saturating_add(*w))
    }

    /// Input power: output plus losses.
    pub fn input(&self) -> Watts {
        self.output.saturating_add(self.losses())
    }

    /// `P_out / (P_out + losses)` as a [`Fraction`]; 0 with no input power.
    pub fn efficiency(&self) -> Fraction {
        let (out, input) = (self.output.to_bits(), self.input().to_bits());
        if input <= 0 || out <= 0 {
            0
        } else {
            ratio(out as u64, input as u64)
        }
    }
}

/// The loss model in fixed point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LossModel {
    r_on: Ohms,
    dcr: Ohms,
    off_r: Ohms,
    esr: Ohms,
    vf: Volts,
    // Half the rise and fall times, seconds × 2⁴⁰ (below 1 ms).
    rise_half: i32,
    fall_half: i32,
    // Gate energy per cycle, joules × 2⁴⁰ (below 1 mJ).
    gate_j: i32,
    core: Option<CoreLoss>,
}

/// `x · 2⁴⁰ · f_sw` as a `Q16` share (`t·f` dimensionless, or `E·f` in
/// watts), held within `i32`: one 32 × 32-bit multiply.
#[inline(never)]
fn per_cycle(x_q40: i32, f_sw_hz: u32) -> i32 {
    clamp_i32((i64::from(x_q40) * i64::from(f_sw_hz)) >> 24)
}

/// A mean square (A², 16 fraction bits, held within 2³¹) through a
/// resistance, watts.
#[inline(never)]
fn joule(mean_square: i64, r: Ohms) -> Watts {
    Watts::from_bits(clamp_i32((i64::from(clamp_i32(mean_square)) * i64::from(r.to_bits())) >> 16))
}

impl LossModel {
    /// Fold the parameters into fixed point (a `const fn`: a firmware does
    /// it at compile time). `clock` is unused today but fixes the timer the
    /// windows are counted in.
    ///
    /// Errors: `l_h` not positive; a resistance, voltage, time or charge
    /// negative or not finite; the core's values ([`Steinmetz::check`]).
    pub const fn new(cfg: &LossConfig, clock: &TimerClock) -> Result<Self, ConfigError> {
        let _ = clock;
        let l_h = attempt!(positive("l_h", cfg.l_h as f64));
        let fields = [
            ("r_on_ohm", cfg.r_on_ohm),
            ("dcr_ohm", cfg.dcr_ohm),
            ("diode_vf_v", cfg.diode_vf_v),
            ("off_r_ohm", cfg.off_r_ohm),
            ("esr_ohm", cfg.esr_ohm),
            ("t_rise_s", cfg.t_rise_s),
            ("t_fall_s", cfg.t_fall_s),
            ("gate_charge_c", cfg.gate_charge_c),
            ("gate_drive_v", cfg.gate_drive_v),
        ];
        let mut k = 0;
        while k < fields.len() {
            attempt!(non_negative(fields[k].0, fields[k].1 as f64));
            k += 1;
        }
        let core = match cfg.core {
            Some(c) => {
                attempt!(c.check());
                Some(CoreLoss::new(&c, l_h))
            }
            None => None,
        };
        Ok(Self {
            r_on: q16(cfg.r_on_ohm as f64),
            dcr: q16(cfg.dcr_ohm as f64),
            off_r: q16(cfg.off_r_ohm as f64),
            esr: q16(cfg.esr_ohm as f64),
            vf: q16(cfg.diode_vf_v as f64),
            rise_half: to_fixed_i32(0.5 * cfg.t_rise_s as f64, 40),
            fall_half: to_fixed_i32(0.5 * cfg.t_fall_s as f64, 40),
            gate_j: to_fixed_i32(cfg.gate_charge_c as f64 * cfg.gate_drive_v as f64, 40),
            core,
        })
    }

    /// The breakdown for one window of the current estimate's phases at
    /// measured `vin` and `vout` (slow path, integer only).
    pub fn evaluate(&self, w: &Phases, vin: Volts, vout: Volts) -> LossBreakdown {
        if w.cycles == 0 || w.period_ticks == 0 {
            return LossBreakdown::default();
        }
        let i_avg = w.average();
        let ms = w.mean_square();
        let dc_sq = (i64::from(i_avg.to_bits()) * i64::from(i_avg.to_bits())) >> 16;
        let edges = |i: Amps, t_half: i32| {
            let vi = i64::from(mul(vin, i.max(Amps::ZERO)).to_bits());
            Watts::from_bits(clamp_i32((vi * i64::from(per_cycle(t_half, w.f_sw_hz))) >> 16))
        };
        LossBreakdown {
            output: mul(vout, i_avg),
            switch: joule(w.mean_square_on(), self.r_on),
            diode: mul(self.vf, w.average_off())
                .saturating_add(joule(w.mean_square_off(), self.off_r)),
            dcr: joule(ms, self.dcr),
            esr: joule((ms - dc_sq).max(0), self.esr),
            switching: edges(w.valley, self.rise_half)
                .saturating_add(edges(w.peak, self.fall_half)),
            gate: Watts::from_bits(per_cycle(self.gate_j, w.f_sw_hz)),
            core: match self.core {
                Some(c) => c.power(w.f_sw_hz, w.ripple()),
                None => Watts::ZERO,
            },
        }
    }
}

/// Efficiency from measured channels, each power filtered by
/// `y ← y + a·(x − y)` (slow path, integer only).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MeasuredEfficiency {
    alpha: Fraction,
    p_in: Watts,
    p_out: Watts,
    primed: bool,
}

impl MeasuredEfficiency {
    /// Filter coefficient `alpha` in (0, 1] as a [`Fraction`] (`1 − e^{−h/τ}`
    /// for update period `h` and time constant `τ`; 0 is taken as the
    /// smallest step, above 1 as 1).
    pub const fn new(alpha: Fraction) -> Self {
        let alpha = if alpha == 0 {
            1
        } else if alpha > crate::units::ONE {
            crate::units::ONE
        } else {
            alpha
        };
        Self { alpha, p_in: Watts::ZERO, p_out: Watts::ZERO, primed: false }
    }

    /// One set of averaged readings; returns the filtered η.
    pub fn update(&mut self, vin: Volts, iin: Amps, vout: Volts, iout: Amps) -> Fraction {
        let (p_in, p_out) = (mul(vin, iin), mul(vout, iout));
        if self.primed {
            self.p_in = step(self.p_in, p_in, self.alpha);
            self.p_out = step(self.p_out, p_out, self.alpha);
        } else {
            (self.p_in, self.p_out, self.primed) = (p_in, p_out, true);
        }
        self.efficiency()
    }

    /// The filtered η; 0 before any input power.
    pub fn efficiency(&self) -> Fraction {
        let (out, input) = (self.p_out.to_bits(), self.p_in.to_bits());
        if input <= 0 || out <= 0 {
            0
        } else {
            ratio(out as u64, input as u64)
        }
    }
}

/// One step of the first-order filter.
fn step(y: Watts, x: Watts, alpha: Fraction) -> Watts {
    let delta = i64::from(x.to_bits()) - i64::from(y.to_bits());
    y.saturating_add(Watts::from_bits(clamp_i32((delta * i64::from(alpha)) >> 16)))
}
