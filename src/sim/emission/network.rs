//! The input side as the emission estimate sees it: the line impedance
//! stabilisation networks, an optional filter and the converter's input
//! capacitor, driven by the high-side switch current.
//!
//! ```text
//!        line side                                      converter side
//!  LISN + ──┬────────────┬───── L_f ─────┬──────────────┐
//!           │            │               │              │
//!          C_f          R_d            C_in           i_sw (switch current,
//!           │            │           ESR, ESL           drawn from the node)
//!           │           C_d              │              │
//!  LISN − ──┴────────────┴───────────────┴──────────────┘
//! ```
//!
//! Each supply line runs through its own LISN, 50 Ω in parallel with 50 µH
//! at the equipment port (the 50 Ω/50 µH network CISPR 16-1-2 specifies for
//! 150 kHz to 30 MHz; its mains side is shorted for radio frequencies by the
//! network's own capacitor). The switch current's AC part is differential:
//! it leaves on one line and returns on the other, so the two networks are in
//! series in its loop (2·Z_LISN) and each reads `I_line·Z_LISN`. Common-mode
//! current (through stray capacitance of the switch node to earth) is not
//! modelled.
//!
//! The optional filter is one L section in front of the input capacitor:
//! `L_f` in series, `C_f` across the line side with a parallel damping branch
//! `R_d` + `C_d`, so with the input capacitor it forms a π. Without a filter
//! the input capacitor faces the networks directly. The filter's parts are
//! ideal unless given the shunt capacitor's ESL and the inductor's winding
//! capacitance: ideal parts make the upper megahertz decade optimistic.
//!
//! The network is linear and time-invariant, so it is solved in the
//! frequency domain: [`InputNetwork::transfer`] is the exact ratio of the
//! LISN voltage to the switch current. The converter's time-domain plant
//! keeps its ideal source with `r_source_ohm`; this network serves the
//! estimate only.

use crate::sim::plant::InputCapacitor;
use realfft::num_complex::Complex64;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// Resistance of the LISN's measuring branch, Ω (CISPR 16-1-2,
/// 50 Ω/50 µH network).
pub const LISN_R_OHM: f64 = 50.0;
/// Inductance of the LISN, H (CISPR 16-1-2, 50 Ω/50 µH network).
pub const LISN_L_H: f64 = 50e-6;

impl InputCapacitor {
    /// Impedance at angular frequency `w` (rad/s, > 0), Ω.
    pub fn impedance(&self, w: f64) -> Complex64 {
        Complex64::new(self.esr_ohm, w * self.esl_h) + capacitor(self.c_f, w)
    }
}

/// An input filter (`[emission] filter`): series inductor, shunt capacitor
/// on the line side with a damping branch across it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputFilter {
    /// Series inductance, H (> 0).
    pub l_h: f64,
    /// Shunt capacitance, F (> 0).
    pub c_f: f64,
    /// Damping resistor, Ω (> 0), in series with `damping_c_f`.
    pub damping_r_ohm: f64,
    /// Damping capacitor, F (> 0).
    pub damping_c_f: f64,
    /// Series inductance of the shunt capacitor, H (≥ 0; default 0).
    #[serde(default)]
    pub c_esl_h: f64,
    /// Winding capacitance across the inductor, F (≥ 0; default 0): it sets
    /// the inductor's self-resonance, above which the inductor stops
    /// blocking.
    #[serde(default)]
    pub l_epc_f: f64,
}

impl InputFilter {
    /// Impedance of the shunt capacitor and its damping branch in parallel,
    /// at angular frequency `w` (rad/s, > 0), Ω.
    pub fn shunt_impedance(&self, w: f64) -> Complex64 {
        let damping = Complex64::new(self.damping_r_ohm, 0.0) + capacitor(self.damping_c_f, w);
        let shunt = capacitor(self.c_f, w) + Complex64::new(0.0, w * self.c_esl_h);
        parallel(shunt, damping)
    }

    /// Impedance of the series inductor with its winding capacitance, at
    /// angular frequency `w` (rad/s, > 0), Ω.
    pub fn series_impedance(&self, w: f64) -> Complex64 {
        let inductor = Complex64::new(0.0, w * self.l_h);
        if self.l_epc_f > 0.0 {
            parallel(inductor, capacitor(self.l_epc_f, w))
        } else {
            inductor
        }
    }
}

/// Impedance of one LISN at its equipment port, `50 Ω ∥ 50 µH`, at `f_hz`.
pub fn lisn_impedance(f_hz: f64) -> Complex64 {
    parallel(Complex64::new(LISN_R_OHM, 0.0), Complex64::new(0.0, 2.0 * PI * f_hz * LISN_L_H))
}

/// The input side between the switch and the networks.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputNetwork {
    /// The converter's input capacitor.
    pub capacitor: InputCapacitor,
    /// The input filter, if fitted.
    pub filter: Option<InputFilter>,
}

impl InputNetwork {
    /// Voltage across one LISN per ampere of switch current at `f_hz`, Ω
    /// (zero at DC and below: the networks pass DC without a voltage).
    pub fn transfer(&self, f_hz: f64) -> Complex64 {
        if f_hz <= 0.0 {
            return Complex64::new(0.0, 0.0);
        }
        let w = 2.0 * PI * f_hz;
        let z_lisn = lisn_impedance(f_hz);
        let z_lines = 2.0 * z_lisn;
        let z_cap = self.capacitor.impedance(w);
        let line_current = match self.filter {
            None => divide_current(z_cap, z_lines),
            Some(filter) => {
                let z_shunt = filter.shunt_impedance(w);
                let z_beyond_l = filter.series_impedance(w) + parallel(z_shunt, z_lines);
                divide_current(z_cap, z_beyond_l) * divide_current(z_shunt, z_lines)
            }
        };
        line_current * z_lisn
    }
}

/// Impedance of a capacitor `c_f` at angular frequency `w`, Ω.
fn capacitor(c_f: f64, w: f64) -> Complex64 {
    Complex64::new(0.0, -1.0 / (w * c_f))
}

fn parallel(a: Complex64, b: Complex64) -> Complex64 {
    a * b / (a + b)
}

/// Share of a current entering a node that takes branch `b` rather than the
/// shunt `a`: `a / (a + b)`.
fn divide_current(a: Complex64, b: Complex64) -> Complex64 {
    a / (a + b)
}
