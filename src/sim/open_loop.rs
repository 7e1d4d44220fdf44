//! Open-loop, fixed-duty operation of the power stage: for characterising a
//! stage, and for checking the plant against handbook relations and an
//! external circuit simulator.

use super::plant::{Conduction, Environment, Plant, PlantParams, Stage, Stop};

/// A fixed-duty run's settings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FixedDuty {
    /// Duty cycle, 0..1.
    pub duty: f64,
    /// Switching frequency, Hz.
    pub f_sw_hz: f64,
    /// Cycles simulated in all.
    pub cycles: u32,
    /// Trailing cycles measured.
    pub measured_cycles: u32,
    /// Samples per cycle for the mean output.
    pub samples_per_cycle: u32,
}

/// What a fixed-duty run measured over its trailing cycles.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SteadyState {
    /// Mean output voltage, V.
    pub vout_mean_v: f64,
    /// Output ripple, peak to peak, V.
    pub vout_pp_v: f64,
    /// Inductor current ripple, peak to peak, A.
    pub il_pp_a: f64,
    /// Lowest inductor current, A.
    pub il_min_a: f64,
    /// Highest inductor current, A.
    pub il_max_a: f64,
    /// Mean inductor current, A.
    pub il_mean_a: f64,
}

/// Run `params` at a constant environment with a fixed duty from an
/// initial state `(i_L, v_C)`.
pub fn run_fixed_duty(
    params: PlantParams,
    env: Environment,
    initial: (f64, f64),
    run: &FixedDuty,
) -> SteadyState {
    let mut plant = Plant::new(params, initial.1);
    plant.set_state(initial.0, initial.1);
    plant.set_environment(env);
    let period = 1.0 / run.f_sw_hz;
    let n = run.samples_per_cycle.max(2);
    let on_steps = ((run.duty * f64::from(n)).round() as u32).clamp(1, n - 1);
    let step = period / f64::from(n);
    let off_mode = match params.stage {
        Stage::Synchronous { .. } => Conduction::LowSide,
        Stage::NonSynchronous => Conduction::Diode,
    };
    let mut acc = Accumulator::default();
    for cycle in 0..run.cycles {
        let measuring = cycle + run.measured_cycles >= run.cycles;
        for k in 0..n {
            if k == 0 {
                plant.set_mode(Conduction::HighSide);
            } else if k == on_steps {
                plant.set_mode(off_mode);
            }
            advance_through_events(&mut plant, step);
            if measuring {
                acc.add(plant.v_out(), plant.i_l());
            }
        }
    }
    acc.finish()
}

/// The effective duty [`run_fixed_duty`] applies (rounded to whole samples).
pub fn applied_duty(run: &FixedDuty) -> f64 {
    let n = run.samples_per_cycle.max(2);
    f64::from(((run.duty * f64::from(n)).round() as u32).clamp(1, n - 1)) / f64::from(n)
}

/// Advance `dt` exactly, stepping over DCM and saturation events.
fn advance_through_events(plant: &mut Plant, dt: f64) {
    let mut left = dt;
    while left > 0.0 {
        match plant.advance(left, None) {
            Stop::Reached => break,
            Stop::CurrentZero(tau) | Stop::BandEdge(tau) | Stop::Crossing(tau) => left -= tau,
        }
    }
}

#[derive(Default)]
struct Accumulator {
    n: u32,
    v_sum: f64,
    i_sum: f64,
    v_min: Option<f64>,
    v_max: Option<f64>,
    i_min: Option<f64>,
    i_max: Option<f64>,
}

impl Accumulator {
    fn add(&mut self, v: f64, i: f64) {
        self.n += 1;
        self.v_sum += v;
        self.i_sum += i;
        self.v_min = Some(self.v_min.map_or(v, |m| m.min(v)));
        self.v_max = Some(self.v_max.map_or(v, |m| m.max(v)));
        self.i_min = Some(self.i_min.map_or(i, |m| m.min(i)));
        self.i_max = Some(self.i_max.map_or(i, |m| m.max(i)));
    }

    fn finish(&self) -> SteadyState {
        let n = f64::from(self.n.max(1));
        let (v_min, v_max) = (self.v_min.unwrap_or(f64::NAN), self.v_max.unwrap_or(f64::NAN));
        let (i_min, i_max) = (self.i_min.unwrap_or(f64::NAN), self.i_max.unwrap_or(f64::NAN));
        SteadyState {
            vout_mean_v: self.v_sum / n,
            vout_pp_v: v_max - v_min,
            il_pp_a: i_max - i_min,
            il_min_a: i_min,
            il_max_a: i_max,
            il_mean_a: self.i_sum / n,
        }
    }
}
