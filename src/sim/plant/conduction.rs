//! Conduction modes and the linear system each one obeys.
//!
//! In each mode the switch node is `v_sw = e − r·i_L`, with `e` affine in
//! `τ`. With `α = 1/(1 + ESR·G)`:
//!
//! ```text
//! L·di/dt   = e + α·ESR·I₀ − (r + DCR + α·ESR)·i − α·v_C
//! C·dv_C/dt = α·i − α·G·v_C − α·I₀
//! ```
//!
//! In the idle mode no path carries current: the inductor row is zero and
//! the current is held (at zero).

use super::params::{Environment, PlantParams, Stage};
use super::saturation::TOP_BAND;
use crate::sim::linear::{Affine, Solution, System};

/// Which path carries the inductor current.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Conduction {
    /// High-side switch closed.
    HighSide,
    /// Freewheeling diode or low-side body diode (current > 0).
    Diode,
    /// Low-side switch closed.
    LowSide,
    /// High-side body diode, current returning to the source (current < 0).
    HighBody,
    /// No path: the inductor current is zero (DCM idle, or dead time at 0 A).
    Idle,
}

impl Conduction {
    const COUNT: usize = 5;

    fn index(self) -> usize {
        self as usize
    }
}

/// Switch-node source `(e₀, e₁, r)`: `v_sw = e₀ + e₁·τ − r·i`.
fn switch_node(p: &PlantParams, env: &Environment, mode: Conduction) -> (f64, f64, f64) {
    match mode {
        Conduction::HighSide => (env.vin_v, env.vin_slope, p.r_source_ohm + p.r_on_ohm),
        Conduction::Diode => (-p.diode_vf_v, 0.0, p.diode_rd_ohm),
        Conduction::LowSide => match p.stage {
            Stage::Synchronous { r_on_low_ohm, .. } => (0.0, 0.0, r_on_low_ohm),
            Stage::NonSynchronous => (-p.diode_vf_v, 0.0, p.diode_rd_ohm),
        },
        Conduction::HighBody => {
            (env.vin_v + p.diode_vf_v, env.vin_slope, p.r_source_ohm + p.diode_rd_ohm)
        }
        Conduction::Idle => (0.0, 0.0, 0.0),
    }
}

/// `α = 1/(1 + ESR·G)`: the share of the capacitor branch in the output.
fn alpha(p: &PlantParams, env: &Environment) -> f64 {
    1.0 / (1.0 + p.esr_ohm * env.load_g_s)
}

/// The output voltage as an affine function of the state and `τ`:
/// `v_o = α·(v_C + ESR·(i_L − I₀ − I₁·τ))`, V.
pub fn output_map(p: &PlantParams, env: &Environment) -> Affine {
    let (a, esr) = (alpha(p, env), p.esr_ohm);
    Affine { c: [a * esr, a], k0: -a * esr * env.load_i_a, k1: -a * esr * env.load_i_slope }
}

/// The system `x' = A·x + b₀ + b₁·τ`, `x = [i_L, v_C]`, of a mode and band.
fn system(p: &PlantParams, env: &Environment, mode: Conduction, band: u16) -> System {
    let a = alpha(p, env);
    let (l, c) = (p.inductance_in(band), p.c_f);
    let (i0, i1, g) = (env.load_i_a, env.load_i_slope, env.load_g_s);
    let cap = ([a / c, -a * g / c], -a * i0 / c, -a * i1 / c);
    if mode == Conduction::Idle {
        return System { a: [[0.0, 0.0], cap.0], b0: [0.0, cap.1], b1: [0.0, cap.2] };
    }
    let (e0, e1, r) = switch_node(p, env, mode);
    System {
        a: [[-(r + p.dcr_ohm + a * p.esr_ohm) / l, -a / l], cap.0],
        b0: [(e0 + a * p.esr_ohm * i0) / l, cap.1],
        b1: [(e1 + a * p.esr_ohm * i1) / l, cap.2],
    }
}

/// The solutions of every mode and band for one environment, each
/// prepared when first needed.
#[derive(Clone, Debug)]
pub struct Solutions {
    bands: usize,
    table: Vec<Option<Solution>>,
}

impl Solutions {
    /// An empty table for `p` (one band without saturation).
    pub fn new(p: &PlantParams) -> Self {
        let bands = if p.saturation.is_some() { usize::from(TOP_BAND) + 1 } else { 1 };
        Self { bands, table: vec![None; bands * Conduction::COUNT] }
    }

    /// Forget every solution (the environment changed).
    pub fn clear(&mut self) {
        self.table.fill(None);
    }

    /// Prepare the solution of `mode` in `band` under `env`, if not yet
    /// done; returns its place for [`Solutions::at`].
    pub fn prepare(
        &mut self,
        p: &PlantParams,
        env: &Environment,
        mode: Conduction,
        band: u16,
    ) -> usize {
        let index = mode.index() * self.bands + usize::from(band);
        if self.table[index].is_none() {
            // A coupled mode's det A = [(r + DCR + α·ESR)·α·G + α²]/(L·C) > 0
            // for positive L and C; the idle mode is of the held form.
            let solution = Solution::new(system(p, env, mode, band));
            self.table[index] = Some(solution.expect("det A > 0 in every conducting mode"));
        }
        index
    }

    /// The solution prepared at `index`.
    pub fn at(&self, index: usize) -> &Solution {
        self.table[index].as_ref().expect("prepared before use")
    }
}
