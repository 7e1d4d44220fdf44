//! Switched buck converter, solved exactly between events.
//!
//! Circuit: ideal source `V_in` with series resistance `R_s`; high-side
//! switch `R_on`; freewheeling diode (`V_f` + `R_d`) or, in a synchronous
//! stage, a low-side switch `R_on,low` with a dead time during which the body
//! diodes conduct; inductor `L` with `DCR` and an optional saturation curve;
//! output capacitor `C` with `ESR`; a load that is a conductance `G` in
//! parallel with a current sink `I₀` (either may be zero).
//!
//! State `x = [i_L, v_C]`; the output is `v_o = α·(v_C + ESR·(i_L − I₀))`
//! with `α = 1/(1 + ESR·G)`. The stage is linear with constant coefficients
//! while the conduction mode, the saturation band and the load conductance
//! hold, and its drive is at most linear in time, so each segment is solved
//! in closed form ([`crate::sim::linear`]) at a cost that does not depend on
//! its length.
//!
//! | module | what |
//! |---|---|
//! | `params` | the stage's parameters and its drive ([`Environment`]) |
//! | `saturation` | the inductance's current bands and magnetic energy |
//! | `conduction` | conduction modes and the linear system of each |
//! | `energy` | the energy ledger and its loss table |
//! | `events` | DCM zero-crossings, band edges, output levels, on the closed form |
//! | `scan` | the first of them in an interval ahead, without moving the plant |
//! | `interval` | a point ahead of the plant ([`Ahead`]); one level over an interval ahead: whether, and where, it is first reached |
//! | `hermite` | the cubic through a level's ends: turns ruled out, crossings started |

mod conduction;
mod energy;
mod events;
mod hermite;
mod interval;
mod params;
mod saturation;
mod scan;

pub use conduction::Conduction;
pub use energy::{EnergyLedger, Loss};
pub use events::{Stop, Watch};
pub use interval::Ahead;
pub use params::{CoreLoss, Environment, InputCapacitor, PlantParams, Stage};
pub use saturation::Saturation;
pub use scan::{Event, Scan, SCAN_OF_FASTEST};

use crate::sim::linear::{Affine, Trajectory, Vec2};
use conduction::{output_map, Solutions};
use energy::{Integrals, PowerModel};
use events::Segment;
use saturation::TOP_BAND;

/// The longest panel of [`Plant::advance_to`], as a fraction of the time
/// constant of the fastest response (`1/ρ`, `ρ` the larger eigenvalue
/// magnitude; about `√(L·C)` for a lightly damped stage, 100 µs for the
/// demo stage's 47 µH and 220 µF, so its panels are at most 25 µs; less in
/// a saturated band). The energies' corrected Simpson
/// rule errs as the panel's seventh power, the record's quadratics as its
/// third (see [`crate::sim::quadratic`]).
pub const PANEL_OF_FASTEST: f64 = 0.25;

/// A stretch of the plant's motion, for the recorder: where it starts (`τ`
/// since the environment was set), how long it is, the states
/// `[i_L, v_C]` at its start, middle and end, and the output voltage there.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Panel {
    /// Start, s of `τ`.
    pub tau0: f64,
    /// Length, s.
    pub h: f64,
    /// States at the start, middle and end.
    pub states: [Vec2; 3],
    /// Output voltage at the start, middle and end, V.
    pub vo: [f64; 3],
    /// Where the output turns inside the panel (its rate changes sign
    /// between the ends), on the closed form: time after the panel's
    /// start, s, and value, V.
    pub vo_turn: Option<(f64, f64)>,
}

/// The converter's power stage.
#[derive(Clone, Debug)]
pub struct Plant {
    params: PlantParams,
    /// State `[i_L, v_C]`, A and V (kept whole: each step writes and
    /// reads it as one vector).
    x: Vec2,
    /// Time since the environment was set, s.
    tau: f64,
    mode: Conduction,
    band: u16,
    env: Environment,
    solutions: Solutions,
    /// Where the present mode, band and environment's solution is.
    solution: usize,
    energy: EnergyLedger,
    /// The integrands at the end of the last segment: the next segment's
    /// start, unless a setter changed mode, environment or state in between
    /// (each clears it).
    end_integrands: Option<Integrals>,
    /// The output voltage's map from the state, for the present
    /// environment.
    output: Affine,
    /// Current-magnitude range `[lo, hi)` of the present saturation band.
    band_range: (f64, f64),
}

impl Plant {
    /// A plant at rest (no current, capacitor at `v_c0`), idle.
    ///
    /// Panics if `l_h` or `c_f` is not positive (a scenario refuses those).
    pub fn new(params: PlantParams, v_c0: f64) -> Self {
        let env = Environment::default();
        let mut solutions = Solutions::new(&params);
        let solution = solutions.prepare(&params, &env, Conduction::Idle, 0);
        let mut plant = Self {
            params,
            x: [0.0, v_c0],
            tau: 0.0,
            mode: Conduction::Idle,
            band: 0,
            env,
            solutions,
            solution,
            energy: EnergyLedger::default(),
            end_integrands: None,
            output: output_map(&params, &env),
            band_range: (f64::NEG_INFINITY, f64::INFINITY),
        };
        plant.set_band(0);
        plant
    }

    /// Set the state: inductor current (A) and capacitor voltage (V).
    pub fn set_state(&mut self, i_l: f64, v_c: f64) {
        self.end_integrands = None;
        self.x = [i_l, v_c];
    }

    /// The parameters.
    pub fn params(&self) -> &PlantParams {
        &self.params
    }

    /// Inductor current, A.
    pub fn i_l(&self) -> f64 {
        self.x[0]
    }

    /// Capacitor voltage, V.
    pub fn v_c(&self) -> f64 {
        self.x[1]
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
        self.env.vin_at(self.tau)
    }

    /// Output voltage now, V.
    pub fn v_out(&self) -> f64 {
        self.output.value(&self.x, self.tau)
    }

    /// Total load current now, A.
    pub fn i_out(&self) -> f64 {
        self.env.load_g_s * self.v_out() + self.env.load_i_at(self.tau)
    }

    /// Incremental inductance now, H.
    pub fn inductance_h(&self) -> f64 {
        self.params.inductance_in(self.band)
    }

    /// Energy stored in the inductor and capacitor, J.
    pub fn stored_j(&self) -> f64 {
        let i_abs = self.x[0].abs();
        let magnetic = match self.params.saturation {
            Some(sat) => sat.magnetic_j(self.params.l_h, i_abs),
            None => 0.5 * self.params.l_h * i_abs * i_abs,
        };
        magnetic + 0.5 * self.params.c_f * self.x[1] * self.x[1]
    }

    /// Set the drive (input and load) from now on; restarts `τ`.
    pub fn set_environment(&mut self, env: Environment) {
        // The solutions depend on the system alone, which the environment
        // (with mode and band) fixes; τ is state.
        if env != self.env {
            self.solutions.clear();
        }
        self.env = env;
        self.output = output_map(&self.params, &env);
        self.tau = 0.0;
        self.end_integrands = None;
        self.prepare();
    }

    /// Put the stage into `mode` (the engine decides it from gate and dead
    /// time); a diode mode against the current's sign becomes idle.
    pub fn set_mode(&mut self, mode: Conduction) {
        self.end_integrands = None;
        self.mode = match mode {
            Conduction::Diode if self.x[0] <= 0.0 => Conduction::Idle,
            Conduction::HighBody if self.x[0] >= 0.0 => Conduction::Idle,
            m => m,
        };
        if self.mode == Conduction::Idle {
            self.x[0] = 0.0;
        }
        self.prepare();
    }

    /// The body-diode mode for the current's sign (dead time).
    pub fn freewheel_mode(&self) -> Conduction {
        if self.x[0] > 0.0 {
            Conduction::Diode
        } else if self.x[0] < 0.0 {
            Conduction::HighBody
        } else {
            Conduction::Idle
        }
    }

    /// Draw a switching-transition loss of `½·V_in·|i|·t` from the source.
    pub fn switching_edge(&mut self, transition_s: f64) {
        let e = 0.5 * self.vin_v() * self.x[0].abs() * transition_s;
        self.energy.draw(Loss::Switching, e);
    }

    /// Draw the gate-charge loss `Q_g·V_drv` of one cycle from the source.
    pub fn gate_cycle(&mut self) {
        self.energy.draw(Loss::Gate, self.params.gate_charge_c * self.params.gate_drive_v);
    }

    /// Draw one cycle's core loss from the source.
    pub fn core_cycle(&mut self, delta_i_a: f64, period_s: f64) {
        if let (Some(core), true) = (self.params.core, period_s > 0.0) {
            let e = core.power_w(self.params.l_h, delta_i_a, 1.0 / period_s) * period_s;
            self.energy.draw(Loss::Core, e);
        }
    }

    /// Simulate `dt` seconds, or less if an event comes first; `watch`: an
    /// output level crossing to stop at.
    pub fn advance(&mut self, dt: f64, watch: Option<Watch>) -> Stop {
        if dt <= 0.0 {
            return Stop::Reached;
        }
        let x0 = self.x;
        let trajectory = self.solutions.at(self.solution).start_at(x0, self.tau);
        let (mid, end) = trajectory.midpoint_and_end(dt);
        let seg = Segment {
            trajectory: &trajectory,
            tau0: self.tau,
            dt,
            start: &x0,
            mid: &mid,
            end: &end,
        };
        let i_heading = end[0];
        let (t, stop, mid, end) = match self.first_event(&seg, watch) {
            Some((t, stop)) => {
                let (mid, end) = trajectory.midpoint_and_end(t);
                (t, stop, mid, end)
            }
            None => (dt, Stop::Reached, mid, end),
        };
        self.accumulate(t, &x0, &mid, &end);
        self.x = end;
        self.tau += t;
        match stop {
            Stop::CurrentZero(_) => self.set_mode(Conduction::Idle),
            Stop::BandEdge(_) => self.enter_band_past_edge(i_heading.abs() > self.x[0].abs()),
            _ => {}
        }
        stop
    }

    /// Move the plant `dt` on, an interval [`scan`](Self::scan) found free
    /// of events: the energies by Simpson's rule on panels of at most
    /// [`PANEL_OF_FASTEST`] of the fastest response's time constant, each
    /// panel handed to `record`.
    pub fn advance_to(&mut self, dt: f64, record: &mut impl FnMut(&Panel)) {
        if dt <= 0.0 {
            return;
        }
        let longest = PANEL_OF_FASTEST * self.time_constant_s();
        // One panel as a rule (the moves between events are short): no
        // `ceil`, a library call, for it (`dt ≤ longest` gives a quotient of
        // at most one, rounded or not).
        let n =
            if dt <= longest { 1.0 } else { (dt / longest).ceil().clamp(1.0, f64::from(u32::MAX)) };
        let h = dt / n;
        let mut done = 0.0;
        for k in 1..=n as u32 {
            // The last panel ends exactly at `dt`.
            let step = if f64::from(k) == n { dt - done } else { h };
            let (x0, tau0) = (self.x, self.tau);
            let solution = self.solutions.at(self.solution);
            let trajectory = solution.start_at(x0, tau0);
            let (mid, end) = trajectory.midpoint_and_end(step);
            // The state's rates at the ends, for the output's turn and the
            // energies' end corrections alike.
            let rates =
                [solution.system().rate(&x0, tau0), solution.system().rate(&end, tau0 + step)];
            let vo = [
                self.output.value(&x0, tau0),
                self.output.value(&mid, tau0 + 0.5 * step),
                self.output.value(&end, tau0 + step),
            ];
            let vo_rates = [self.output.rate(&rates[0]), self.output.rate(&rates[1])];
            // The rates' signs first, here: most panels have no turn, and
            // need no call to find that.
            let vo_turn = (vo_rates[0] * vo_rates[1] < 0.0)
                .then(|| self.output_turn(&trajectory, step, [vo[0], vo[2]], vo_rates));
            let panel = Panel { tau0, h: step, states: [x0, mid, end], vo, vo_turn };
            self.accumulate_panel(&panel, &rates, vo_rates);
            record(&panel);
            self.x = end;
            self.tau += step;
            done += step;
        }
    }

    /// Where the output turns on `trajectory` over `h` (its values `ends`
    /// and its rates `[r0, r1]` at its start and end, of opposite signs):
    /// time after the start, s, and value, V.
    fn output_turn(
        &self,
        trajectory: &Trajectory<'_>,
        h: f64,
        ends: [f64; 2],
        [r0, r1]: [f64; 2],
    ) -> (f64, f64) {
        interval::turn(&trajectory.follow(&self.output), (0.0, ends[0], r0), (h, ends[1], r1))
    }

    /// Act on an event [`scan`](Self::scan) found, once the plant has been
    /// moved to it: idle at a DCM zero, the next band past a band edge (the
    /// one the current is heading for there). A crossing changes nothing
    /// here.
    pub fn take_event(&mut self, stop: Stop) {
        match stop {
            Stop::CurrentZero(_) => self.set_mode(Conduction::Idle),
            Stop::BandEdge(_) => {
                let rate = self.solutions.at(self.solution).system().rate(&self.x, self.tau);
                self.enter_band_past_edge(rate[0] * self.x[0] > 0.0);
            }
            Stop::Reached | Stop::Crossing(_) => {}
        }
    }

    /// The state `t` ahead of the plant's time on the present solution (the
    /// plant does not move).
    pub fn state_ahead(&self, t: f64) -> Vec2 {
        self.trajectory().at(t)
    }

    /// The source voltage `t` ahead of the plant's time, V.
    pub fn vin_ahead(&self, t: f64) -> f64 {
        self.env.vin_at(self.tau + t)
    }

    /// The output voltage in state `x`, `t` ahead of the plant's time, V.
    pub fn v_out_of(&self, x: &Vec2, t: f64) -> f64 {
        self.output.value(x, self.tau + t)
    }

    /// The trajectory from the plant's state and time.
    fn trajectory(&self) -> Trajectory<'_> {
        self.solutions.at(self.solution).start_at(self.x, self.tau)
    }

    /// The solution for the present mode, band and environment.
    fn prepare(&mut self) {
        self.solution = self.solutions.prepare(&self.params, &self.env, self.mode, self.band);
    }

    /// Integrate the energies over a segment of `dt` from `x0` through
    /// `mid` to `end`.
    fn accumulate(&mut self, dt: f64, x0: &Vec2, mid: &Vec2, end: &Vec2) {
        let model = PowerModel {
            params: &self.params,
            env: &self.env,
            output: &self.output,
            mode: self.mode,
        };
        let start = match self.end_integrands {
            Some(p) => p,
            None => model.at(x0[0], x0[1], self.tau),
        };
        let m = model.at(mid[0], mid[1], self.tau + 0.5 * dt);
        let b = model.at(end[0], end[1], self.tau + dt);
        self.energy.add(&model, &Integrals::simpson(dt, &start, &m, &b));
        self.end_integrands = Some(b);
    }

    /// [`accumulate`](Self::accumulate) by the corrected rule (its error
    /// falls as the panel's seventh power), over a panel of
    /// [`advance_to`](Self::advance_to) from the plant's state and time
    /// (its output voltages taken as they are, not computed again);
    /// `rates`: the state's at the ends, `vo_rates`: the output's.
    fn accumulate_panel(&mut self, p: &Panel, rates: &[Vec2; 2], vo_rates: [f64; 2]) {
        let model = PowerModel {
            params: &self.params,
            env: &self.env,
            output: &self.output,
            mode: self.mode,
        };
        let [x0, mid, end] = &p.states;
        let (dt, t0, t1) = (p.h, self.tau, self.tau + p.h);
        let (a, m, b) = (
            model.at_output(x0[0], p.vo[0], t0),
            model.at_output(mid[0], p.vo[1], t0 + 0.5 * dt),
            model.at_output(end[0], p.vo[2], t1),
        );
        let sign = if mid[0] < 0.0 { -1.0 } else { 1.0 };
        let rate_a = model.rate(x0, &rates[0], (p.vo[0], vo_rates[0]), t0, sign);
        let rate_b = model.rate(end, &rates[1], (p.vo[2], vo_rates[1]), t1, sign);
        self.energy.add(&model, &Integrals::corrected_simpson(dt, [&a, &m, &b], &rate_a, &rate_b));
        self.end_integrands = None;
    }

    /// After stopping at a band edge, step into the band the current was
    /// heading for: the next one up when its magnitude is `rising`.
    fn enter_band_past_edge(&mut self, rising: bool) {
        if self.params.saturation.is_some() {
            let band =
                if rising { (self.band + 1).min(TOP_BAND) } else { self.band.saturating_sub(1) };
            self.set_band(band);
        }
    }

    fn set_band(&mut self, band: u16) {
        self.band = band;
        self.band_range = match self.params.saturation {
            None => (f64::NEG_INFINITY, f64::INFINITY),
            Some(sat) => sat.range(band),
        };
        self.end_integrands = None;
        self.prepare();
    }
}
