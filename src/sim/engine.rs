//! The closed loop: the plant, the microcontroller's peripherals and the
//! firmware, advanced from event to event.
//!
//! Microcontroller events fall on ticks of the timer clock: ADC sampling
//! instants, conversion-complete interrupts (sample + conversion time +
//! interrupt latency), timer compares at the firmware's `wake` deadlines
//! (at the compare tick itself: the gate edge a deadline asks for is made by
//! the timer's output-compare hardware, as a one-pulse on-time would be, not
//! by an interrupt handler after its entry latency), comparator interrupts
//! (crossing + propagation
//! delay, synchronised to the next tick, + latency), dead-time ends, profile
//! breakpoints. Between them the plant is solved in closed form; a
//! comparator crossing, a DCM zero-crossing or a saturation-band edge stops
//! it inside an interval.

use super::firmware::{input_channel, output_channel, ComparatorSource, Firmware};
use super::plant::{Conduction, EnergyLedger, Plant, Stage, Stop, Watch};
use super::profile::Profile;
use super::record::{Observation, Recorder};
use super::scenario::Scenario;
use crate::guard::ClampCounts;
use crate::law::{Command, Law};
use crate::scale::AdcChannel;
use crate::supervisor::FaultKind;
use crate::tick::Instant;
use crate::ConfigError;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use rand_xoshiro::Xoshiro256PlusPlus;

/// Envelope slices kept for plots and CSV (20 µs each over a 10 ms run,
/// about one switching cycle of the demo).
const SLICES: usize = 500;

/// Everything a run produced.
#[derive(Clone, Debug)]
pub struct RunOutput {
    /// Cycles, envelope and steady windows.
    pub recorder: Recorder,
    /// Energies over the whole run.
    pub energy: EnergyLedger,
    /// Guard clamp counters at the end.
    pub clamps: ClampCounts,
    /// Energy stored in L and C at the start and end, J.
    pub stored_j: (f64, f64),
    /// Simulated time, s.
    pub simulated_s: f64,
    /// The regulated setpoint, V.
    pub setpoint_v: f64,
    /// Faults the firmware logged: kind and time since t = 0, s.
    pub faults: Vec<(FaultKind, f64)>,
}

/// The analog comparator feeding edge interrupts.
#[derive(Clone, Copy, Debug)]
struct Comparator {
    source: ComparatorSource,
    /// Output level now (DAC: signal above threshold; Schmitt: "on" request).
    level: bool,
    /// DAC threshold in output volts (DAC mode).
    threshold_v: f64,
}

impl Comparator {
    fn watch(&self) -> Option<Watch> {
        match self.source {
            ComparatorSource::None => None,
            ComparatorSource::Dac => Some(Watch { level_v: self.threshold_v, rising: !self.level }),
            ComparatorSource::Schmitt { lower_v, upper_v } => Some(if self.level {
                Watch { level_v: upper_v, rising: true }
            } else {
                Watch { level_v: lower_v, rising: false }
            }),
        }
    }
}

/// Pending microcontroller events, in absolute ticks since t = 0.
#[derive(Clone, Debug)]
struct Schedule {
    next_sample: u64,
    next_housekeeping: u64,
    conversion: Option<(u64, u16, u16)>,
    timer: Option<u64>,
    edge: Option<(u64, bool)>,
    dead_time_end: Option<u64>,
    breaks: Vec<u64>,
    next_break: usize,
    window_edges: Vec<(u64, usize, bool)>,
    next_window_edge: usize,
    end: u64,
}

impl Schedule {
    fn next_event(&self) -> u64 {
        let mut next = self.end.min(self.next_sample).min(self.next_housekeeping);
        let mut consider = |t: Option<u64>| {
            if let Some(t) = t {
                next = next.min(t);
            }
        };
        consider(self.conversion.map(|c| c.0));
        consider(self.timer);
        consider(self.edge.map(|e| e.0));
        consider(self.dead_time_end);
        consider(self.breaks.get(self.next_break).copied());
        consider(self.window_edges.get(self.next_window_edge).map(|w| w.0));
        next
    }
}

struct Engine {
    plant: Plant,
    firmware: Firmware,
    vin_adc: AdcChannel,
    housekeeping_period: u64,
    feedback_open_tick: Option<u64>,
    comparator: Comparator,
    profile: Profile,
    adc: AdcChannel,
    rng: Xoshiro256PlusPlus,
    noise: Option<Normal<f64>>,
    tick_s: f64,
    start: u32,
    /// Microcontroller time: the tick being dispatched.
    tick: u64,
    /// Plant time: `plant_tick` ticks plus `frac` seconds. The plant lags
    /// the microcontroller when nothing needed it (sampled mode), and is
    /// caught up before it is read or switched.
    plant_tick: u64,
    frac: f64,
    gate: bool,
    sample_period: u64,
    conversion_ticks: u64,
    latency_ticks: u64,
    comparator_delay_s: f64,
    dead_ticks: u64,
    t_rise_s: f64,
    t_fall_s: f64,
    schedule: Schedule,
    recorder: Recorder,
}

/// Why a scenario could not run.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum RunError {
    /// The firmware refused its configuration.
    Config(ConfigError),
}

impl std::fmt::Display for RunError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "firmware configuration refused: {e}"),
        }
    }
}

impl std::error::Error for RunError {}

impl From<ConfigError> for RunError {
    fn from(e: ConfigError) -> Self {
        Self::Config(e)
    }
}

/// Run a scenario to its end.
pub fn run(scenario: &Scenario) -> Result<RunOutput, RunError> {
    let mut engine = Engine::new(scenario)?;
    let stored_start = engine.plant.stored_j();
    engine.start_up();
    while engine.tick < engine.schedule.end {
        let target = engine.schedule.next_event();
        engine.tick = if engine.comparator.source == ComparatorSource::None {
            target
        } else {
            // A comparator may fire inside the interval: solve eagerly.
            engine.advance_plant(target)
        };
        engine.dispatch();
    }
    engine.catch_up();
    Ok(RunOutput {
        energy: *engine.plant.energy(),
        clamps: engine.firmware.clamps(),
        stored_j: (stored_start, engine.plant.stored_j()),
        simulated_s: engine.schedule.end as f64 * engine.tick_s,
        setpoint_v: scenario.control.law.setpoint_v(),
        faults: engine
            .firmware
            .faults()
            .map(|f| (f.kind, f64::from(f.at.ticks_since(Instant(engine.start))) * engine.tick_s))
            .collect(),
        recorder: engine.recorder,
    })
}

fn ticks(seconds: f64, hz: f64) -> u64 {
    (seconds * hz).round().max(0.0) as u64
}

impl Engine {
    fn new(sc: &Scenario) -> Result<Self, RunError> {
        let hz = f64::from(sc.mcu.clock_hz);
        let (firmware, source) = Firmware::build(sc)?;
        let profile = sc.profile();
        let recorder = Recorder::new(sc.duration_s, &profile.disturbances(), SLICES);
        let window_edges =
            recorder.window_edges().into_iter().map(|(t, k, s)| (ticks(t, hz), k, s)).collect();
        let mut breaks: Vec<u64> = profile.breakpoints().iter().map(|&t| ticks(t, hz)).collect();
        breaks.dedup();
        let dead_ticks = match sc.plant.stage {
            Stage::Synchronous { dead_time_s, .. } => ticks(dead_time_s, hz),
            Stage::NonSynchronous => 0,
        };
        let noise = (sc.mcu.noise_lsb_rms > 0.0)
            .then(|| Normal::new(0.0, sc.mcu.noise_lsb_rms).ok())
            .flatten();
        Ok(Self {
            plant: {
                let mut plant = Plant::new(sc.plant, sc.initial_output_v);
                plant.set_state(sc.initial_inductor_a, sc.initial_output_v);
                // Gate off at t = 0: the current freewheels (idle at 0 A).
                let freewheel = plant.freewheel_mode();
                plant.set_mode(freewheel);
                plant
            },
            firmware,
            comparator: Comparator { source, level: false, threshold_v: 0.0 },
            profile,
            adc: output_channel(&sc.mcu)?,
            vin_adc: input_channel(&sc.mcu)?,
            housekeeping_period: ticks(1.0 / sc.firmware.housekeeping_hz, hz).max(1),
            feedback_open_tick: sc.mcu.feedback_open_at_s.map(|t| ticks(t, hz)),
            rng: Xoshiro256PlusPlus::seed_from_u64(sc.mcu.seed),
            noise,
            tick_s: 1.0 / hz,
            start: sc.mcu.start_tick,
            tick: 0,
            plant_tick: 0,
            frac: 0.0,
            gate: false,
            sample_period: ticks(1.0 / sc.mcu.sample_rate_hz, hz).max(1),
            conversion_ticks: ticks(sc.mcu.conversion_s, hz),
            latency_ticks: ticks(sc.mcu.isr_latency_s, hz),
            comparator_delay_s: sc.mcu.comparator_delay_s,
            dead_ticks,
            t_rise_s: sc.plant.t_rise_s,
            t_fall_s: sc.plant.t_fall_s,
            schedule: Schedule {
                next_sample: 0,
                next_housekeeping: 0,
                conversion: None,
                timer: None,
                edge: None,
                dead_time_end: None,
                breaks,
                next_break: 0,
                window_edges,
                next_window_edge: 0,
                end: ticks(sc.duration_s, hz),
            },
            recorder,
        })
    }

    fn now(&self) -> Instant {
        Instant(self.start.wrapping_add(self.tick as u32))
    }

    /// Plant time, s.
    fn t_s(&self) -> f64 {
        self.plant_tick as f64 * self.tick_s + self.frac
    }

    /// Bring the plant up to the microcontroller's tick.
    fn catch_up(&mut self) {
        if self.plant_tick < self.tick {
            self.advance_plant(self.tick);
        }
    }

    fn observation(&self) -> Observation {
        Observation {
            t_s: self.t_s(),
            vo_v: self.plant.v_out(),
            il_a: self.plant.i_l(),
            il_est_a: self.firmware.estimated_current_a(self.now()),
            gate_on: self.gate,
        }
    }

    fn observe(&mut self) {
        let o = self.observation();
        self.recorder.observe(o);
    }

    /// Set the environment for t = 0 and let an edge-driven law see the
    /// comparator's initial level.
    fn start_up(&mut self) {
        self.plant.set_environment(self.profile.environment_at(0.0));
        if self.comparator.source != ComparatorSource::None {
            self.sync_comparator();
            let cmd = self.firmware.on_edge(self.comparator.level, self.now());
            self.apply(cmd);
            self.sync_comparator();
        }
        self.observe();
    }

    /// Recompute the comparator's level from the output (after the DAC was
    /// re-armed); a change raises an edge interrupt.
    fn sync_comparator(&mut self) {
        let v = self.plant.v_out();
        let level = match self.comparator.source {
            ComparatorSource::None => return,
            ComparatorSource::Dac => {
                let code = self.firmware.dac_code().unwrap_or(0);
                self.comparator.threshold_v = f64::from(self.adc.to_volts(code));
                v > self.comparator.threshold_v
            }
            ComparatorSource::Schmitt { lower_v, upper_v } => {
                if v < lower_v {
                    true
                } else if v > upper_v {
                    false
                } else {
                    self.comparator.level
                }
            }
        };
        if level != self.comparator.level {
            self.comparator.level = level;
            self.schedule_edge_interrupt();
        }
    }

    fn schedule_edge_interrupt(&mut self) {
        let ready = ((self.t_s() + self.comparator_delay_s) / self.tick_s).ceil() as u64;
        let at = ready.max(self.plant_tick + 1) + self.latency_ticks;
        self.schedule.edge = Some((at, self.comparator.level));
    }

    /// Solve the plant up to `target`, or up to an earlier comparator
    /// interrupt; returns the tick reached.
    fn advance_plant(&mut self, mut target: u64) -> u64 {
        while self.plant_tick < target {
            let dt = (target - self.plant_tick) as f64 * self.tick_s - self.frac;
            match self.plant.advance(dt, self.comparator.watch()) {
                Stop::Reached => {
                    self.plant_tick = target;
                    self.frac = 0.0;
                }
                Stop::CurrentZero(tau) | Stop::BandEdge(tau) => self.frac += tau,
                Stop::Crossing(tau) => {
                    self.frac += tau;
                    self.comparator.level = !self.comparator.level;
                    self.schedule_edge_interrupt();
                    if let Some((at, _)) = self.schedule.edge {
                        target = target.min(at);
                    }
                }
            }
            self.observe();
        }
        target
    }

    /// Handle every event due at the current tick.
    fn dispatch(&mut self) {
        let tick = self.tick;
        while self.schedule.breaks.get(self.schedule.next_break).is_some_and(|&b| b <= tick) {
            self.catch_up();
            self.schedule.next_break += 1;
            self.plant.set_environment(self.profile.environment_at(self.t_s()));
        }
        while let Some(&(t, k, is_start)) =
            self.schedule.window_edges.get(self.schedule.next_window_edge)
        {
            if t > tick {
                break;
            }
            self.catch_up();
            self.recorder.window_edge(k, is_start, self.plant.energy());
            self.schedule.next_window_edge += 1;
        }
        if self.schedule.dead_time_end.is_some_and(|t| t <= tick) {
            self.catch_up();
            self.schedule.dead_time_end = None;
            self.plant.set_mode(if self.gate { Conduction::HighSide } else { Conduction::LowSide });
        }
        if let Some((t, code, vin)) = self.schedule.conversion {
            if t <= tick {
                self.schedule.conversion = None;
                self.firmware.on_input_reading(vin, self.now());
                if self.comparator.source == ComparatorSource::None {
                    let cmd = self.firmware.on_sample(code, self.now());
                    self.apply(cmd);
                } else if let Some(cmd) = self.firmware.on_output_reading(code, self.now()) {
                    self.apply(cmd);
                    self.sync_comparator();
                }
            }
        }
        if let Some((t, level)) = self.schedule.edge {
            if t <= tick {
                self.schedule.edge = None;
                let cmd = self.firmware.on_edge(level, self.now());
                self.apply(cmd);
                self.sync_comparator();
            }
        }
        if self.schedule.timer.is_some_and(|t| t <= tick) {
            self.schedule.timer = None;
            let cmd = self.firmware.on_timer(self.now());
            self.apply(cmd);
        }
        if self.schedule.next_housekeeping <= tick {
            self.schedule.next_housekeeping += self.housekeeping_period;
            self.catch_up();
            let vin = self.convert_input(self.plant.vin_v());
            self.firmware.housekeeping(vin, self.now());
            if self.comparator.source != ComparatorSource::None {
                // Edge-driven firmware re-reads the comparator's level on its
                // slow path (a start after soft-start sees no fresh edge).
                let cmd = self.firmware.on_edge(self.comparator.level, self.now());
                self.apply(cmd);
                self.sync_comparator();
            }
            let report = *self.firmware.report();
            self.recorder.estimate(
                self.t_s(),
                report.losses.output_w.into(),
                (report.losses.output_w + report.losses.losses_w()).into(),
            );
        }
        if self.schedule.next_sample <= tick {
            self.schedule.next_sample += self.sample_period;
            // Edge-driven laws still sample the output, for protection.
            self.catch_up();
            let code = self.convert(self.plant.v_out());
            // The input is scanned in the same sequence.
            let vin = self.convert_input(self.plant.vin_v());
            self.schedule.conversion =
                Some((tick + self.conversion_ticks + self.latency_ticks, code, vin));
        }
    }

    /// The ADC's result for the output: ideal converter plus noise,
    /// saturating at the rails; an open divider reads 0 V.
    fn convert(&mut self, v_out: f64) -> u16 {
        let open = self.feedback_open_tick.is_some_and(|t| self.tick >= t);
        let v = if open { 0.0 } else { v_out };
        let adc = self.adc;
        self.quantize(&adc, v)
    }

    /// The ADC's result for the input.
    fn convert_input(&mut self, v_in: f64) -> u16 {
        let adc = self.vin_adc;
        self.quantize(&adc, v_in)
    }

    fn quantize(&mut self, adc: &AdcChannel, v: f64) -> u16 {
        let noise = self.noise.map_or(0.0, |n| n.sample(&mut self.rng));
        let code = (adc.exact_code(v) + noise).round();
        code.clamp(0.0, f64::from(adc.full_scale_code())) as u16
    }

    /// Carry out a firmware command at the current tick; its deadline, if
    /// any, acts at its own tick (hardware compare: no interrupt latency).
    fn apply(&mut self, cmd: Command) {
        let now = self.now();
        self.schedule.timer =
            cmd.wake.map(|w| (self.tick + u64::from(w.ticks_since(now))).max(self.tick + 1));
        if cmd.gate.is_on() != self.gate {
            self.catch_up();
            self.switch_gate(cmd.gate.is_on());
        }
    }

    fn switch_gate(&mut self, on: bool) {
        let t = self.t_s();
        let o = self.observation();
        if on {
            if let Some(cycle) = self.recorder.rise(t, o) {
                self.plant.core_cycle(cycle.il_max_a - cycle.il_min_a, cycle.period_s);
            }
            self.plant.switching_edge(self.t_rise_s);
            self.plant.gate_cycle();
        } else {
            self.recorder.fall(t);
            self.plant.switching_edge(self.t_fall_s);
        }
        self.gate = on;
        let synchronous = matches!(self.plant.params().stage, Stage::Synchronous { .. });
        let final_mode = match (on, synchronous) {
            (true, _) => Conduction::HighSide,
            (false, true) => Conduction::LowSide,
            (false, false) => Conduction::Diode,
        };
        if synchronous && self.dead_ticks > 0 {
            self.plant.set_mode(self.plant.freewheel_mode());
            self.schedule.dead_time_end = Some(self.tick + self.dead_ticks);
        } else {
            self.plant.set_mode(final_mode);
        }
    }
}
