//! The energy ledger: source and load energy and one table of losses.
//!
//! Conduction losses are integrated by Simpson's rule over each segment,
//! whose state is smooth: five integrands (source and load power, `i_L²`,
//! `|i_L|`, `i_C²`) that the conducting mode's parameters turn into the
//! table's terms. Switching transitions, gate charge and core loss
//! (Steinmetz's equation) are not part of the circuit's state; they are
//! drawn from the source as energy per edge or per cycle, so the true
//! efficiency includes them.

use super::conduction::Conduction;
use super::params::{Environment, PlantParams, Stage};
use crate::sim::linear::{Affine, Vec2};
use serde::Serialize;

/// A loss term.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Loss {
    /// The source resistance.
    Source,
    /// The high-side switch's on-resistance.
    HighSide,
    /// Diodes (freewheeling or body).
    Diode,
    /// The low-side switch's on-resistance.
    LowSide,
    /// The inductor's DCR.
    Dcr,
    /// The capacitor's ESR.
    Esr,
    /// Switching transitions.
    Switching,
    /// Charging gates.
    Gate,
    /// The core.
    Core,
}

impl Loss {
    /// Number of terms.
    pub const COUNT: usize = 9;

    /// Every term, in table order.
    pub const ALL: [Loss; Loss::COUNT] = [
        Loss::Source,
        Loss::HighSide,
        Loss::Diode,
        Loss::LowSide,
        Loss::Dcr,
        Loss::Esr,
        Loss::Switching,
        Loss::Gate,
        Loss::Core,
    ];

    /// The term's key (snake case, as in JSON).
    pub const fn key(self) -> &'static str {
        match self {
            Loss::Source => "source",
            Loss::HighSide => "high_side",
            Loss::Diode => "diode",
            Loss::LowSide => "low_side",
            Loss::Dcr => "dcr",
            Loss::Esr => "esr",
            Loss::Switching => "switching",
            Loss::Gate => "gate",
            Loss::Core => "core",
        }
    }
}

/// Energies since the start, joules.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct EnergyLedger {
    /// Delivered by the source (including energy drawn for switching, gate
    /// drive and core loss).
    pub input_j: f64,
    /// Delivered to the load.
    pub output_j: f64,
    /// Each loss, indexed by [`Loss`] (`loss_j[Loss::Dcr as usize]`).
    pub loss_j: [f64; Loss::COUNT],
}

impl EnergyLedger {
    /// One loss term, J.
    pub fn loss(&self, term: Loss) -> f64 {
        self.loss_j[term as usize]
    }

    /// Sum of every loss, J.
    pub fn losses_j(&self) -> f64 {
        self.loss_j.iter().sum()
    }

    /// Apply `f` term by term.
    fn combine(&self, other: &EnergyLedger, f: impl Fn(f64, f64) -> f64) -> EnergyLedger {
        EnergyLedger {
            input_j: f(self.input_j, other.input_j),
            output_j: f(self.output_j, other.output_j),
            loss_j: core::array::from_fn(|k| f(self.loss_j[k], other.loss_j[k])),
        }
    }

    /// `self − earlier`, term by term.
    pub fn since(&self, earlier: &EnergyLedger) -> EnergyLedger {
        self.combine(earlier, |a, b| a - b)
    }

    /// `self + other`, term by term.
    pub fn plus(&self, other: &EnergyLedger) -> EnergyLedger {
        self.combine(other, |a, b| a + b)
    }

    /// Draw `joules` from the source, lost in `term`.
    #[inline]
    pub(super) fn draw(&mut self, term: Loss, joules: f64) {
        self.loss_j[term as usize] += joules;
        self.input_j += joules;
    }

    /// Add a segment's energies: its [`Integrals`] weighted by the
    /// parameters of the mode that conducted.
    #[inline]
    pub(super) fn add(&mut self, model: &PowerModel<'_>, s: &Integrals) {
        let p = model.params;
        let diode = p.diode_vf_v * s.abs_i + p.diode_rd_ohm * s.i2;
        let mut lose = |term: Loss, joules: f64| self.loss_j[term as usize] += joules;
        lose(Loss::Dcr, p.dcr_ohm * s.i2);
        lose(Loss::Esr, p.esr_ohm * s.ic2);
        match model.mode {
            Conduction::HighSide => lose(Loss::HighSide, p.r_on_ohm * s.i2),
            Conduction::HighBody => lose(Loss::Diode, diode),
            Conduction::Diode => lose(Loss::Diode, diode),
            Conduction::LowSide => match p.stage {
                Stage::Synchronous { r_on_low_ohm, .. } => lose(Loss::LowSide, r_on_low_ohm * s.i2),
                Stage::NonSynchronous => lose(Loss::Diode, diode),
            },
            Conduction::Idle => {}
        }
        if matches!(model.mode, Conduction::HighSide | Conduction::HighBody) {
            lose(Loss::Source, p.r_source_ohm * s.i2);
            self.input_j += s.vin_i;
        }
        self.output_j += s.output;
    }
}

/// The quantities the ledger is made of, at one state (W, A², A) or
/// integrated over a segment (J, A²·s, A·s): every loss is one of them
/// times a parameter of the mode that conducts.
#[derive(Clone, Copy, Debug, Default)]
pub struct Integrals {
    /// `v_in·i_L`: source power, when a high-side path conducts.
    vin_i: f64,
    /// `v_o·i_o`: load power.
    output: f64,
    /// `i_L²`: resistive losses in the current's path.
    i2: f64,
    /// `|i_L|`: diode forward-voltage loss.
    abs_i: f64,
    /// `i_C²`: ESR loss.
    ic2: f64,
}

impl Integrals {
    /// `∫` over a segment of `dt` by Simpson's rule, from the values at its
    /// start, middle and end.
    #[inline]
    pub fn simpson(dt: f64, a: &Self, m: &Self, b: &Self) -> Self {
        let w = dt * (1.0 / 6.0);
        let rule = |fa: f64, fm: f64, fb: f64| w * (fa + 4.0 * fm + fb);
        Self {
            vin_i: rule(a.vin_i, m.vin_i, b.vin_i),
            output: rule(a.output, m.output, b.output),
            i2: rule(a.i2, m.i2, b.i2),
            abs_i: rule(a.abs_i, m.abs_i, b.abs_i),
            ic2: rule(a.ic2, m.ic2, b.ic2),
        }
    }
}

impl Integrals {
    /// `∫` over a segment of `dt` by Simpson's rule corrected with the
    /// integrands' rates at the ends:
    /// `dt/30·(7a + 16m + 7b) + dt²/60·(a' − b')`, exact for quintics (the
    /// plain rule for cubics), so its error falls as `dt⁷`, not `dt⁵`
    /// (the Euler–Maclaurin correction of the composite rule; e.g. Davis &
    /// Rabinowitz, Methods of Numerical Integration, §2.9).
    #[inline]
    pub fn corrected_simpson(dt: f64, [a, m, b]: [&Self; 3], rate_a: &Self, rate_b: &Self) -> Self {
        let (w, c) = (dt * (1.0 / 30.0), dt * dt * (1.0 / 60.0));
        let rule = |f: fn(&Self) -> f64| {
            w * (7.0 * f(a) + 16.0 * f(m) + 7.0 * f(b)) + c * (f(rate_a) - f(rate_b))
        };
        Self {
            vin_i: rule(|s| s.vin_i),
            output: rule(|s| s.output),
            i2: rule(|s| s.i2),
            abs_i: rule(|s| s.abs_i),
            ic2: rule(|s| s.ic2),
        }
    }
}

/// Where the powers at a state come from: the stage, its drive and mode.
pub struct PowerModel<'a> {
    /// The stage.
    pub params: &'a PlantParams,
    /// The drive.
    pub env: &'a Environment,
    /// The output voltage's map from the state.
    pub output: &'a Affine,
    /// The conduction mode.
    pub mode: Conduction,
}

impl PowerModel<'_> {
    /// The integrands' time derivatives at state `x`, moving at `dx`, time
    /// `tau` (the product rule on each), given the output voltage there and
    /// its rate, `(v_o, dv_o)`; `|i|` taken with the sign `sign` (the
    /// current's over the segment: at a DCM zero the segment ends just past
    /// zero, where the current's own sign would turn the rate round).
    #[inline]
    pub fn rate(
        &self,
        x: &Vec2,
        dx: &Vec2,
        (v_o, dv_o): (f64, f64),
        tau: f64,
        sign: f64,
    ) -> Integrals {
        let (i, di) = (x[0], dx[0]);
        let g = self.env.load_g_s;
        let (i_load, di_load) =
            (g * v_o + self.env.load_i_at(tau), g * dv_o + self.env.load_i_slope);
        let (i_c, di_c) = (i - i_load, di - di_load);
        Integrals {
            vin_i: self.env.vin_slope * i + self.env.vin_at(tau) * di,
            output: dv_o * i_load + v_o * di_load,
            i2: 2.0 * i * di,
            abs_i: sign * di,
            ic2: 2.0 * i_c * di_c,
        }
    }

    /// The integrands at inductor current `i`, capacitor voltage `v_c`,
    /// time `tau`.
    #[inline]
    pub fn at(&self, i: f64, v_c: f64, tau: f64) -> Integrals {
        self.at_output(i, self.output.value(&[i, v_c], tau), tau)
    }

    /// [`at`](Self::at) where the output voltage `v_o` is known already
    /// (a panel's, computed once for the record and the energies).
    #[inline]
    pub fn at_output(&self, i: f64, v_o: f64, tau: f64) -> Integrals {
        let i_load = self.env.load_g_s * v_o + self.env.load_i_at(tau);
        let i_c = i - i_load;
        Integrals {
            vin_i: self.env.vin_at(tau) * i,
            output: v_o * i_load,
            i2: i * i,
            abs_i: i.abs(),
            ic2: i_c * i_c,
        }
    }
}
