//! SPICE netlists of the power stage, for cross-checking the plant with an
//! external circuit simulator (ngspice, in batch mode).
//!
//! The netlist uses only elements every SPICE has: voltage sources,
//! resistors, an inductor and a capacitor with initial conditions, and
//! voltage-controlled switches. The freewheeling diode is written as the
//! plant models it, `V_f` + `R_d` + an ideal switch that closes on forward
//! voltage and opens on reverse current, so both simulators solve the same
//! circuit.

use super::plant::{PlantParams, Stage};
use std::fmt::Write as _;

/// How the high-side switch is driven.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Drive {
    /// A fixed-duty pulse train.
    FixedDuty {
        /// Duty cycle.
        duty: f64,
        /// Switching frequency, Hz.
        f_sw_hz: f64,
    },
    /// An analog comparator with hysteresis on the output: on below
    /// `lower_v`, off above `upper_v`.
    Hysteretic {
        /// Lower threshold, V.
        lower_v: f64,
        /// Upper threshold, V.
        upper_v: f64,
    },
}

/// What to simulate and where ngspice writes the result.
#[derive(Clone, Debug, PartialEq)]
pub struct Netlist {
    /// Power stage (non-synchronous; saturation and loss extras ignored).
    pub params: PlantParams,
    /// Source voltage, V.
    pub vin_v: f64,
    /// Load resistance, Ω.
    pub load_ohm: f64,
    /// Initial inductor current, A.
    pub il0_a: f64,
    /// Initial capacitor voltage, V.
    pub vc0_v: f64,
    /// Drive.
    pub drive: Drive,
    /// Simulated time, s.
    pub stop_s: f64,
    /// Largest time step, s.
    pub max_step_s: f64,
    /// Output file for `wrdata` (columns: t, v(out), t, i(L)).
    pub data_path: String,
}

impl Netlist {
    /// The netlist text.
    pub fn text(&self) -> String {
        let p = &self.params;
        let tiny = 1e-6;
        let mut n = String::new();
        let _ = writeln!(n, "* buck power stage written by ripplectl");
        let _ = writeln!(n, "V1 vin 0 DC {}", self.vin_v);
        let _ = writeln!(n, "Rs vin nin {}", p.r_source_ohm.max(tiny));
        let ron = p.r_on_ohm.max(tiny);
        match self.drive {
            Drive::FixedDuty { duty, f_sw_hz } => {
                let period = 1.0 / f_sw_hz;
                let _ = writeln!(n, "S1 nin sw gate 0 hs");
                let _ = writeln!(n, ".model hs sw vt=0.5 vh=0.1 ron={ron} roff=1e9");
                let _ =
                    writeln!(n, "Vg gate 0 PULSE(0 1 0 1e-12 1e-12 {} {})", duty * period, period);
            }
            Drive::Hysteretic { lower_v, upper_v } => {
                // The switch is its own Schmitt trigger on ctrl = −v(out):
                // it closes when ctrl > vt + vh (v(out) < lower) and opens
                // when ctrl < vt − vh (v(out) > upper).
                let (vt, vh) = (-0.5 * (lower_v + upper_v), 0.5 * (upper_v - lower_v));
                let _ = writeln!(n, "Einv ctrl 0 0 out 1");
                let _ = writeln!(n, "S1 nin sw ctrl 0 cmp");
                let _ = writeln!(n, ".model cmp sw vt={vt} vh={vh} ron={ron} roff=1e9");
            }
        }
        // Freewheeling diode: ground → R_d → V_f → ideal switch → sw.
        let _ = writeln!(n, "Rd 0 d1 {}", p.diode_rd_ohm.max(tiny));
        let _ = writeln!(n, "Vf d1 d2 DC {}", p.diode_vf_v);
        let _ = writeln!(n, "Sd d2 sw d2 sw ideal");
        let _ = writeln!(n, ".model ideal sw vt=0 vh=1e-7 ron=1e-3 roff=1e9");
        let _ = writeln!(n, "Vsense sw sl DC 0");
        let _ = writeln!(n, "L1 sl nl {} IC={}", p.l_h, self.il0_a);
        let _ = writeln!(n, "Rdcr nl out {}", p.dcr_ohm.max(tiny));
        let _ = writeln!(n, "C1 out nc {} IC={}", p.c_f, self.vc0_v);
        let _ = writeln!(n, "Resr nc 0 {}", p.esr_ohm.max(tiny));
        let _ = writeln!(n, "Rload out 0 {}", self.load_ohm);
        let _ = writeln!(n, ".control");
        let _ = writeln!(n, "set wr_singlescale");
        let _ = writeln!(n, "tran {} {} 0 {} uic", self.max_step_s, self.stop_s, self.max_step_s);
        let _ = writeln!(n, "wrdata {} v(out) i(Vsense)", self.data_path);
        let _ = writeln!(n, "quit");
        let _ = writeln!(n, ".endc");
        let _ = writeln!(n, ".end");
        n
    }

    /// Whether the stage can be written (non-synchronous only).
    pub fn supported(&self) -> bool {
        matches!(self.params.stage, Stage::NonSynchronous)
    }
}

/// ngspice's `wrdata` output with `wr_singlescale`: rows of
/// `t v(out) i(L)`.
pub fn parse_wrdata(text: &str) -> Vec<[f64; 3]> {
    text.lines()
        .filter_map(|line| {
            let mut it = line.split_whitespace().map(str::parse::<f64>);
            match (it.next(), it.next(), it.next()) {
                (Some(Ok(t)), Some(Ok(v)), Some(Ok(i))) => Some([t, v, i]),
                _ => None,
            }
        })
        .collect()
}

/// Mean output (trapezoid) and inductor ripple over `t ≥ from_s`.
pub fn steady_figures(rows: &[[f64; 3]], from_s: f64) -> (f64, f64) {
    let tail: Vec<&[f64; 3]> = rows.iter().filter(|r| r[0] >= from_s).collect();
    let (mut area, mut span) = (0.0, 0.0);
    for w in tail.windows(2) {
        let dt = w[1][0] - w[0][0];
        area += 0.5 * (w[0][1] + w[1][1]) * dt;
        span += dt;
    }
    let i_max = tail.iter().map(|r| r[2]).fold(f64::NEG_INFINITY, f64::max);
    let i_min = tail.iter().map(|r| r[2]).fold(f64::INFINITY, f64::min);
    (area / span, i_max - i_min)
}
