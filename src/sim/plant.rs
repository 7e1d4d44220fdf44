//! Switched buck converter, solved exactly between events.
//!
//! Circuit: ideal source `V_in` with series resistance `R_s`; high-side
//! switch `R_on`; freewheeling diode (`V_f` + `R_d`) or, in a synchronous
//! stage, a low-side switch `R_on,low` with a dead time during which the body
//! diodes conduct; inductor `L` with `DCR` and an optional saturation curve;
//! output capacitor `C` with `ESR`; a load that is a conductance `G` in
//! parallel with a current sink `I₀` (either may be zero).
//!
//! State `x = [i_L, v_C]`. With `α = 1/(1 + ESR·G)` the output is
//! `v_o = α·(v_C + ESR·(i_L − I₀))`, and in each conduction mode, whose
//! switch node is `v_sw = e − r·i_L`:
//!
//! ```text
//! L·di/dt  = e + α·ESR·I₀ − (r + DCR + α·ESR)·i − α·v_C
//! C·dv_C/dt = α·i − α·G·v_C − α·I₀
//! ```
//!
//! This is linear with constant coefficients while the mode, the saturation
//! band and the load conductance hold, and `e` and `I₀` are at most linear in
//! time, so [`super::linear`] solves it in closed form. Events inside a
//! segment are found on that closed form: the inductor current reaching zero
//! in a diode (DCM), a saturation-band edge, a comparator threshold.
//!
//! Saturation is modelled by the incremental inductance `dλ/di`, constant
//! within current bands: `L₀` up to `I_sat`, then falling linearly to
//! `floor·L₀` over `roll_off` amperes in 20 bands, and `floor·L₀` beyond. The
//! magnetic energy is `∫ i·L(i) di`, exact for that curve.
//!
//! Energy is accounted term by term (Simpson's rule over each segment, whose
//! state is smooth): source energy, load energy, and each loss. Switching
//! transitions, gate charge and core loss (Steinmetz's equation) are not part
//! of the circuit's state; they are drawn from the source as energy per edge
//! or per cycle so the true efficiency includes them.

use super::linear::{expm, mul_vec, propagate, Mat4, Vec4};
use rustc_hash::FxHashMap;
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

/// Inductor saturation: incremental inductance falling above `i_sat_a`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Saturation {
    /// Current where the inductance starts to fall, A.
    pub i_sat_a: f64,
    /// Current span over which it falls to the floor, A.
    pub roll_off_a: f64,
    /// Inductance at and beyond `i_sat + roll_off`, as a fraction of `L₀`.
    pub floor: f64,
}

/// Number of bands the roll-off is divided into.
const ROLL_OFF_BANDS: u16 = 20;

impl Saturation {
    fn band_width(&self) -> f64 {
        self.roll_off_a / f64::from(ROLL_OFF_BANDS)
    }

    /// Band index of a current magnitude: 0 below `i_sat`, 1..=20 in the
    /// roll-off, 21 beyond.
    fn band(&self, i_abs: f64) -> u16 {
        if i_abs < self.i_sat_a {
            return 0;
        }
        let k = ((i_abs - self.i_sat_a) / self.band_width()).floor() as u32 + 1;
        k.min(u32::from(ROLL_OFF_BANDS) + 1) as u16
    }

    /// Current magnitude at the lower edge of `band` (band ≥ 1).
    fn lower_edge(&self, band: u16) -> f64 {
        self.i_sat_a + f64::from(band.saturating_sub(1)) * self.band_width()
    }

    /// Incremental inductance in `band`, as a fraction of `L₀`.
    fn fraction(&self, band: u16) -> f64 {
        match band {
            0 => 1.0,
            b if b > ROLL_OFF_BANDS => self.floor,
            b => 1.0 - (f64::from(b) - 0.5) / f64::from(ROLL_OFF_BANDS) * (1.0 - self.floor),
        }
    }
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
    pub fn power_w(&self, l_h: f64, delta_i_a: f64, f_hz: f64) -> f64 {
        let b_peak = l_h * delta_i_a / (2.0 * self.turns * self.area_m2);
        self.k * f_hz.powf(self.alpha) * b_peak.powf(self.beta) * self.volume_m3
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
    pub input_capacitor: Option<super::emission::InputCapacitor>,
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

/// Energies since the start, joules.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct EnergyLedger {
    /// Delivered by the source (including energy drawn for switching, gate
    /// drive and core loss).
    pub input_j: f64,
    /// Delivered to the load.
    pub output_j: f64,
    /// Lost in the source resistance.
    pub source_j: f64,
    /// Lost in the high-side switch's on-resistance.
    pub high_side_j: f64,
    /// Lost in diodes (freewheeling or body).
    pub diode_j: f64,
    /// Lost in the low-side switch's on-resistance.
    pub low_side_j: f64,
    /// Lost in the inductor's DCR.
    pub dcr_j: f64,
    /// Lost in the capacitor's ESR.
    pub esr_j: f64,
    /// Lost in switching transitions.
    pub switching_j: f64,
    /// Lost charging gates.
    pub gate_j: f64,
    /// Lost in the core.
    pub core_j: f64,
}

impl EnergyLedger {
    /// Sum of every loss.
    pub fn losses_j(&self) -> f64 {
        self.source_j
            + self.high_side_j
            + self.diode_j
            + self.low_side_j
            + self.dcr_j
            + self.esr_j
            + self.switching_j
            + self.gate_j
            + self.core_j
    }

    /// Apply `f` field by field.
    fn combine(&self, other: &EnergyLedger, f: impl Fn(f64, f64) -> f64) -> EnergyLedger {
        EnergyLedger {
            input_j: f(self.input_j, other.input_j),
            output_j: f(self.output_j, other.output_j),
            source_j: f(self.source_j, other.source_j),
            high_side_j: f(self.high_side_j, other.high_side_j),
            diode_j: f(self.diode_j, other.diode_j),
            low_side_j: f(self.low_side_j, other.low_side_j),
            dcr_j: f(self.dcr_j, other.dcr_j),
            esr_j: f(self.esr_j, other.esr_j),
            switching_j: f(self.switching_j, other.switching_j),
            gate_j: f(self.gate_j, other.gate_j),
            core_j: f(self.core_j, other.core_j),
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
}

/// A level crossing of the output voltage to stop at (comparator input).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Watch {
    /// Output voltage threshold, V.
    pub level_v: f64,
    /// Stop when the output rises through the level (else: falls).
    pub rising: bool,
}

/// Why [`Plant::advance`] stopped.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Stop {
    /// The whole interval was simulated.
    Reached,
    /// The diode current reached zero after this many seconds (DCM).
    CurrentZero(f64),
    /// The current crossed a saturation-band edge after this many seconds.
    BandEdge(f64),
    /// The watched level was crossed after this many seconds.
    Crossing(f64),
}

#[derive(Clone, Copy, Debug)]
struct Propagators {
    full: Mat4,
    half: Mat4,
}

/// Instantaneous powers at one state, watts.
#[derive(Clone, Copy, Debug, Default)]
struct Powers {
    input: f64,
    output: f64,
    source: f64,
    high_side: f64,
    diode: f64,
    low_side: f64,
    dcr: f64,
    esr: f64,
}

/// The converter's power stage.
#[derive(Clone, Debug)]
pub struct Plant {
    params: PlantParams,
    i_l: f64,
    v_c: f64,
    tau: f64,
    mode: Conduction,
    band: u16,
    env: Environment,
    cache: FxHashMap<(Conduction, u16, u64), Propagators>,
    energy: EnergyLedger,
    /// Powers at the end of the last segment: the next segment's start,
    /// unless a setter changed mode, environment or state in between (each
    /// clears it).
    end_powers: Option<Powers>,
    /// `1/(1 + ESR·G)` for the current environment.
    alpha: f64,
    /// Current-magnitude range `[lo, hi)` of the current saturation band.
    band_range: (f64, f64),
}

impl Plant {
    /// A plant at rest (no current, capacitor at `v_c0`), idle.
    pub fn new(params: PlantParams, v_c0: f64) -> Self {
        Self {
            params,
            i_l: 0.0,
            v_c: v_c0,
            tau: 0.0,
            mode: Conduction::Idle,
            band: 0,
            env: Environment::default(),
            cache: FxHashMap::default(),
            energy: EnergyLedger::default(),
            end_powers: None,
            alpha: 1.0,
            band_range: (f64::NEG_INFINITY, f64::INFINITY),
        }
        .with_band(0)
    }

    /// Enter saturation band `band`.
    fn with_band(mut self, band: u16) -> Self {
        self.set_band(band);
        self
    }

    /// Set the state: inductor current (A) and capacitor voltage (V).
    pub fn set_state(&mut self, i_l: f64, v_c: f64) {
        self.end_powers = None;
        self.i_l = i_l;
        self.v_c = v_c;
    }

    /// The parameters.
    pub fn params(&self) -> &PlantParams {
        &self.params
    }

    /// Inductor current, A.
    pub fn i_l(&self) -> f64 {
        self.i_l
    }

    /// Capacitor voltage, V.
    pub fn v_c(&self) -> f64 {
        self.v_c
    }

    /// Conduction mode.
    pub fn mode(&self) -> Conduction {
        self.mode
    }

    /// Energies so far.
    pub fn energy(&self) -> &EnergyLedger {
        &self.energy
    }

    /// Source voltage now, V.
    pub fn vin_v(&self) -> f64 {
        self.env.vin_v + self.env.vin_slope * self.tau
    }

    /// Load current sink now, A (the conductance part excluded).
    fn load_i(&self, tau: f64) -> f64 {
        self.env.load_i_a + self.env.load_i_slope * tau
    }

    /// `α = 1/(1 + ESR·G)`, cached per environment.
    fn alpha(&self) -> f64 {
        self.alpha
    }

    /// Output voltage for a state, V.
    fn v_out_of(&self, i_l: f64, v_c: f64, tau: f64) -> f64 {
        self.alpha() * (v_c + self.params.esr_ohm * (i_l - self.load_i(tau)))
    }

    /// Output voltage now, V.
    pub fn v_out(&self) -> f64 {
        self.v_out_of(self.i_l, self.v_c, self.tau)
    }

    /// Total load current now, A.
    pub fn i_out(&self) -> f64 {
        self.env.load_g_s * self.v_out() + self.load_i(self.tau)
    }

    /// Incremental inductance now, H.
    pub fn inductance_h(&self) -> f64 {
        self.inductance_in(self.band)
    }

    fn inductance_in(&self, band: u16) -> f64 {
        self.params.l_h * self.params.saturation.map_or(1.0, |s| s.fraction(band))
    }

    /// Energy stored in the inductor and capacitor, J.
    pub fn stored_j(&self) -> f64 {
        self.magnetic_j(self.i_l.abs()) + 0.5 * self.params.c_f * self.v_c * self.v_c
    }

    /// `∫₀^|i| i·L(i) di` for the band-wise constant incremental inductance.
    fn magnetic_j(&self, i_abs: f64) -> f64 {
        let l0 = self.params.l_h;
        let Some(sat) = self.params.saturation else { return 0.5 * l0 * i_abs * i_abs };
        let mut energy = 0.5 * l0 * i_abs.min(sat.i_sat_a).powi(2);
        let top = sat.band(i_abs);
        for band in 1..=top {
            let lo = sat.lower_edge(band);
            let hi = if band > ROLL_OFF_BANDS { i_abs } else { (lo + sat.band_width()).min(i_abs) };
            energy += 0.5 * l0 * sat.fraction(band) * (hi * hi - lo * lo);
        }
        energy
    }

    /// Set the drive (input and load) from now on; restarts `τ`.
    pub fn set_environment(&mut self, env: Environment) {
        // The cached propagators depend on the system matrix alone, which
        // the environment (with mode and band) fixes; τ is state.
        if env != self.env {
            self.cache.clear();
        }
        self.env = env;
        self.alpha = 1.0 / (1.0 + self.params.esr_ohm * env.load_g_s);
        self.tau = 0.0;
        self.end_powers = None;
    }

    /// Put the stage into `mode` (the engine decides it from gate and dead
    /// time); a diode mode against the current's sign becomes idle.
    pub fn set_mode(&mut self, mode: Conduction) {
        self.end_powers = None;
        self.mode = match mode {
            Conduction::Diode if self.i_l <= 0.0 => Conduction::Idle,
            Conduction::HighBody if self.i_l >= 0.0 => Conduction::Idle,
            m => m,
        };
        if self.mode == Conduction::Idle {
            self.i_l = 0.0;
        }
    }

    /// The body-diode mode for the current's sign (dead time).
    pub fn freewheel_mode(&self) -> Conduction {
        if self.i_l > 0.0 {
            Conduction::Diode
        } else if self.i_l < 0.0 {
            Conduction::HighBody
        } else {
            Conduction::Idle
        }
    }

    /// Draw a switching-transition loss of `½·V_in·|i|·t` from the source.
    pub fn switching_edge(&mut self, transition_s: f64) {
        let e = 0.5 * self.vin_v() * self.i_l.abs() * transition_s;
        self.energy.switching_j += e;
        self.energy.input_j += e;
    }

    /// Draw the gate-charge loss `Q_g·V_drv` of one cycle from the source.
    pub fn gate_cycle(&mut self) {
        let e = self.params.gate_charge_c * self.params.gate_drive_v;
        self.energy.gate_j += e;
        self.energy.input_j += e;
    }

    /// Draw one cycle's core loss from the source.
    pub fn core_cycle(&mut self, delta_i_a: f64, period_s: f64) {
        if let Some(core) = self.params.core {
            if period_s > 0.0 {
                let e = core.power_w(self.params.l_h, delta_i_a, 1.0 / period_s) * period_s;
                self.energy.core_j += e;
                self.energy.input_j += e;
            }
        }
    }

    /// Switch-node source `(e₀, e₁, r)`: `v_sw = e₀ + e₁·τ − r·i`.
    fn switch_node(&self, mode: Conduction) -> (f64, f64, f64) {
        let p = &self.params;
        match mode {
            Conduction::HighSide => {
                (self.env.vin_v, self.env.vin_slope, p.r_source_ohm + p.r_on_ohm)
            }
            Conduction::Diode => (-p.diode_vf_v, 0.0, p.diode_rd_ohm),
            Conduction::LowSide => match p.stage {
                Stage::Synchronous { r_on_low_ohm, .. } => (0.0, 0.0, r_on_low_ohm),
                Stage::NonSynchronous => (-p.diode_vf_v, 0.0, p.diode_rd_ohm),
            },
            Conduction::HighBody => {
                (self.env.vin_v + p.diode_vf_v, self.env.vin_slope, p.r_source_ohm + p.diode_rd_ohm)
            }
            Conduction::Idle => (0.0, 0.0, 0.0),
        }
    }

    /// The augmented system matrix `M` for a mode and band.
    fn system(&self, mode: Conduction, band: u16) -> Mat4 {
        let p = &self.params;
        let a = self.alpha();
        let (l, c) = (self.inductance_in(band), p.c_f);
        let (i0, i1, g) = (self.env.load_i_a, self.env.load_i_slope, self.env.load_g_s);
        let cap_row = [a / c, -a * g / c, -a * i0 / c, -a * i1 / c];
        let ind_row = if mode == Conduction::Idle {
            [0.0; 4]
        } else {
            let (e0, e1, r) = self.switch_node(mode);
            [
                -(r + p.dcr_ohm + a * p.esr_ohm) / l,
                -a / l,
                (e0 + a * p.esr_ohm * i0) / l,
                (e1 + a * p.esr_ohm * i1) / l,
            ]
        };
        [ind_row, cap_row, [0.0; 4], [0.0, 0.0, 1.0, 0.0]]
    }

    /// The state at the end and at the middle of a step of `dt` from `z0`.
    fn step_states(&mut self, dt: f64, key: Option<u64>, z0: &Vec4) -> (Vec4, Vec4) {
        let build = |plant: &Self| {
            let m = plant.system(plant.mode, plant.band);
            Propagators { full: expm(&m, dt), half: expm(&m, dt / 2.0) }
        };
        let eval = |p: &Propagators| (propagate(&p.full, z0, dt), propagate(&p.half, z0, dt / 2.0));
        match key {
            Some(k) => {
                let id = (self.mode, self.band, k);
                if let Some(p) = self.cache.get(&id) {
                    return eval(p);
                }
                let p = build(self);
                let states = eval(&p);
                self.cache.insert(id, p);
                states
            }
            None => eval(&build(self)),
        }
    }

    fn state(&self) -> Vec4 {
        [self.i_l, self.v_c, 1.0, self.tau]
    }

    fn powers(&self, z: &Vec4) -> Powers {
        let p = &self.params;
        let (i, tau) = (z[0], z[3]);
        let v_o = self.v_out_of(i, z[1], tau);
        let i_load = self.env.load_g_s * v_o + self.load_i(tau);
        let i_c = i - i_load;
        let vin = self.env.vin_v + self.env.vin_slope * tau;
        let i2 = i * i;
        let mut pw = Powers {
            output: v_o * i_load,
            dcr: p.dcr_ohm * i2,
            esr: p.esr_ohm * i_c * i_c,
            ..Powers::default()
        };
        match self.mode {
            Conduction::HighSide => {
                pw.input = vin * i;
                pw.source = p.r_source_ohm * i2;
                pw.high_side = p.r_on_ohm * i2;
            }
            Conduction::HighBody => {
                pw.input = vin * i;
                pw.source = p.r_source_ohm * i2;
                pw.diode = p.diode_vf_v * i.abs() + p.diode_rd_ohm * i2;
            }
            Conduction::Diode => pw.diode = p.diode_vf_v * i.abs() + p.diode_rd_ohm * i2,
            Conduction::LowSide => match p.stage {
                Stage::Synchronous { r_on_low_ohm, .. } => pw.low_side = r_on_low_ohm * i2,
                Stage::NonSynchronous => pw.diode = p.diode_vf_v * i.abs() + p.diode_rd_ohm * i2,
            },
            Conduction::Idle => {}
        }
        pw
    }

    fn accumulate(&mut self, dt: f64, z0: &Vec4, zm: &Vec4, z1: &Vec4) {
        // The previous segment's end is this one's start unless the mode,
        // environment or state was changed in between.
        let a = match self.end_powers.take() {
            Some(p) => p,
            None => self.powers(z0),
        };
        let (m, b) = (self.powers(zm), self.powers(z1));
        self.end_powers = Some(b);
        let w = dt / 6.0;
        let simpson = |f: fn(&Powers) -> f64| w * (f(&a) + 4.0 * f(&m) + f(&b));
        let e = &mut self.energy;
        e.input_j += simpson(|p| p.input);
        e.output_j += simpson(|p| p.output);
        e.source_j += simpson(|p| p.source);
        e.high_side_j += simpson(|p| p.high_side);
        e.diode_j += simpson(|p| p.diode);
        e.low_side_j += simpson(|p| p.low_side);
        e.dcr_j += simpson(|p| p.dcr);
        e.esr_j += simpson(|p| p.esr);
    }

    fn commit(&mut self, z: &Vec4) {
        self.i_l = z[0];
        self.v_c = z[1];
        self.tau = z[3];
    }

    /// Simulate `dt` seconds, or less if an event comes first.
    ///
    /// `key`: a cache key identifying `dt` exactly (its length in simulation
    /// ticks) when the interval is tick-aligned; `None` computes afresh.
    /// `watch`: an output level crossing to stop at.
    pub fn advance(&mut self, dt: f64, key: Option<u64>, watch: Option<Watch>) -> Stop {
        if dt <= 0.0 {
            return Stop::Reached;
        }
        let z0 = self.state();
        let (z1, zm) = self.step_states(dt, key, &z0);
        if let Some((tau, stop)) = self.first_event(dt, &z0, &zm, &z1, watch) {
            self.advance_exact(tau);
            match stop {
                Stop::CurrentZero(_) => self.set_mode(Conduction::Idle),
                Stop::BandEdge(_) => self.enter_band_at_edge(z1[0]),
                _ => {}
            }
            return stop;
        }
        self.accumulate(dt, &z0, &zm, &z1);
        self.commit(&z1);
        Stop::Reached
    }

    /// Advance exactly `tau` (< the checked interval), no event checks.
    fn advance_exact(&mut self, tau: f64) {
        let z0 = self.state();
        let (z1, zm) = self.step_states(tau, None, &z0);
        self.accumulate(tau, &z0, &zm, &z1);
        self.commit(&z1);
    }

    /// After stopping at a band edge, step into the band the current was
    /// heading for.
    fn enter_band_at_edge(&mut self, i_end: f64) {
        if self.params.saturation.is_some() {
            let rising = i_end.abs() > self.i_l.abs();
            let band = if rising {
                (self.band + 1).min(ROLL_OFF_BANDS + 1)
            } else {
                self.band.saturating_sub(1)
            };
            self.set_band(band);
        }
    }

    fn set_band(&mut self, band: u16) {
        self.band = band;
        self.band_range = match self.params.saturation {
            None => (f64::NEG_INFINITY, f64::INFINITY),
            Some(sat) => {
                let lo = if band == 0 { f64::NEG_INFINITY } else { sat.lower_edge(band) };
                let hi =
                    if band > ROLL_OFF_BANDS { f64::INFINITY } else { sat.lower_edge(band + 1) };
                (lo, hi)
            }
        };
    }

    fn outside_band(&self, i: f64) -> bool {
        let a = i.abs();
        a < self.band_range.0 || a >= self.band_range.1
    }

    /// The earliest event inside `(0, dt]`, if any, found on the closed form.
    fn first_event(
        &self,
        dt: f64,
        z0: &Vec4,
        zm: &Vec4,
        z1: &Vec4,
        watch: Option<Watch>,
    ) -> Option<(f64, Stop)> {
        let mut best: Option<(f64, Stop)> = None;
        let mut consider = |tau: Option<f64>, make: fn(f64) -> Stop| {
            if let Some(tau) = tau {
                if best.is_none_or(|(b, _)| tau < b) {
                    best = Some((tau, make(tau)));
                }
            }
        };
        let current = [1.0, 0.0, 0.0, 0.0];
        let ends_wrong_sign = match self.mode {
            Conduction::Diode => z1[0] <= 0.0 || zm[0] <= 0.0,
            Conduction::HighBody => z1[0] >= 0.0 || zm[0] >= 0.0,
            _ => false,
        };
        if ends_wrong_sign {
            consider(self.root(dt, z0, &current, 0.0), Stop::CurrentZero);
        }
        if let (Some(sat), true) =
            (self.params.saturation, self.outside_band(z1[0]) || self.outside_band(zm[0]))
        {
            {
                let rising = sat.band(z1[0].abs().max(zm[0].abs())) > self.band;
                let edge =
                    if rising { sat.lower_edge(self.band + 1) } else { sat.lower_edge(self.band) };
                let sign = if z1[0] < 0.0 { -1.0 } else { 1.0 };
                consider(self.root(dt, z0, &current, sign * edge), Stop::BandEdge);
            }
        }
        if let Some(w) = watch {
            let v = |z: &Vec4| self.v_out_of(z[0], z[1], z[3]) - w.level_v;
            let crossed = |z: &Vec4| if w.rising { v(z) >= 0.0 } else { v(z) <= 0.0 };
            if crossed(zm) || crossed(z1) {
                let a = self.alpha();
                let es = self.params.esr_ohm;
                // v_o is linear in z: α·(i·ESR + v_C − ESR·I₀ − ESR·I₁·τ).
                let row = [a * es, a, -a * es * self.env.load_i_a, -a * es * self.env.load_i_slope];
                consider(self.root(dt, z0, &row, w.level_v), Stop::Crossing);
            }
        }
        best
    }

    /// First `τ ∈ (0, dt]` with `row·z(τ) = level`, by safeguarded Newton
    /// iteration on the closed-form solution.
    fn root(&self, dt: f64, z0: &Vec4, row: &Vec4, level: f64) -> Option<f64> {
        let m = self.system(self.mode, self.band);
        let f = |tau: f64| -> (f64, f64) {
            let z = mul_vec(&expm(&m, tau), z0);
            let dz = mul_vec(&m, &z);
            let dot = |v: &Vec4| row.iter().zip(v).map(|(a, b)| a * b).sum::<f64>();
            (dot(&z) - level, dot(&dz))
        };
        let (f_lo, _) = f(0.0);
        // Bracket the first sign change by scanning a few points.
        let mut lo = 0.0;
        let mut hi = None;
        for k in 1..=8 {
            let tau = dt * f64::from(k) / 8.0;
            let (fv, _) = f(tau);
            if fv == 0.0 || fv.signum() != f_lo.signum() {
                hi = Some(tau);
                break;
            }
            lo = tau;
        }
        let mut hi = hi?;
        let mut tau = 0.5 * (lo + hi);
        for _ in 0..60 {
            let (fv, dfv) = f(tau);
            if fv == 0.0 || fv.signum() != f_lo.signum() {
                hi = tau;
            } else {
                lo = tau;
            }
            let newton = tau - fv / dfv;
            tau = if dfv != 0.0 && newton > lo && newton < hi { newton } else { 0.5 * (lo + hi) };
            if hi - lo < 1e-15 {
                break;
            }
            if (fv / dfv).abs() < 1e-16 {
                // Converged from one side: step just across the root.
                let mut probe = (fv / dfv).abs().max(1e-16);
                while lo + probe < hi {
                    let (fp, _) = f(lo + probe);
                    if fp == 0.0 || fp.signum() != f_lo.signum() {
                        hi = lo + probe;
                        break;
                    }
                    probe *= 4.0;
                }
                break;
            }
        }
        // `hi` lies past the crossing: the caller lands on its far side.
        Some(hi)
    }
}
