//! The closed loop: the plant, the microcontroller's peripherals and the
//! firmware, advanced from event to event.
//!
//! Microcontroller events fall on ticks of the timer clock: ADC sampling
//! instants, conversion-complete interrupts (sample + conversion time +
//! interrupt latency), compares at the deadlines the firmware armed (at the
//! compare tick the timer's hardware ends a pulse armed to end there; the
//! compare interrupt follows after the latency), comparator interrupts
//! (crossing + propagation delay, synchronised to the next tick, +
//! latency), housekeeping ticks, dead-time ends, profile breakpoints.
//! Between them the plant is solved in closed form; a comparator crossing,
//! a DCM zero-crossing or a saturation-band edge stops it inside an
//! interval.
//!
//! The firmware is any [`Firmware`]: its handlers are called when the
//! simulated microcontroller would enter them, and it acts through the
//! simulated [`Peripherals`]; after each handler the engine reads the gate
//! pin, the armed compare and the comparator's DAC.

use super::cpu::{Cpu, CpuUsage, Handler};
use super::firmware::Firmware;
use super::hardware::{sensed_input_channel, sensed_output_channel, true_clock_hz};
use super::mcu::{Adc, Comparator, ComparatorSource};
use super::peripherals::Peripherals;
use super::plant::{Conduction, EnergyLedger, Plant, Stage, Stop};
use super::profile::Profile;
use super::record::{Observation, Recorder};
use super::run_control::{RunControl, CHECK_EVERY};
use super::scenario::{Scenario, ScenarioError};
use super::transient::TransientTracker;
use crate::guard::ClampCounts;
use crate::supervisor::FaultKind;
use crate::tick::Instant;

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
    /// What the handlers cost the named core (none without a core).
    pub cpu: Option<CpuUsage>,
}

/// Why a scenario could not run.
#[derive(Clone, Debug, PartialEq)]
pub enum RunError {
    /// The firmware refused its configuration (the scenario key says
    /// which value).
    Config(ScenarioError),
    /// The caller cancelled the run.
    Cancelled,
    /// The handlers needed more than the whole CPU.
    CpuOverload {
        /// Their share of the CPU's time.
        load: f64,
        /// The scenario key of the rate that asks the most of it.
        key: String,
    },
}

impl std::fmt::Display for RunError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "firmware configuration refused: {e}"),
            Self::Cancelled => f.write_str("interrupted"),
            Self::CpuOverload { load, key } => write!(
                f,
                "`{key}`: the firmware's handlers need {:.0} % of the CPU: no core can run them; lower the rate or name a faster core",
                100.0 * load
            ),
        }
    }
}

impl std::error::Error for RunError {}

impl From<ScenarioError> for RunError {
    fn from(e: ScenarioError) -> Self {
        Self::Config(e)
    }
}

/// Pending microcontroller events, in absolute ticks since t = 0.
#[derive(Clone, Debug)]
struct Schedule {
    next_sample: u64,
    next_housekeeping: u64,
    /// Conversion-complete interrupt: (tick, output code, input code).
    conversion: Option<(u64, u16, u16)>,
    /// The armed compare's tick.
    compare: Option<u64>,
    /// The compare interrupt's entry.
    compare_irq: Option<u64>,
    /// Comparator interrupt: (tick, level).
    edge: Option<(u64, bool)>,
    dead_time_end: Option<u64>,
    /// Profile breakpoints: tick, and the exact time (the tick may round
    /// to just before it).
    breaks: Vec<(u64, f64)>,
    next_break: usize,
    window_edges: Vec<(u64, usize, bool)>,
    next_window_edge: usize,
    end: u64,
}

impl Schedule {
    /// The next tick something happens; interrupts wait for the core while
    /// it is busy until `busy_until`.
    fn next_event(&self, busy_until: u64) -> u64 {
        let entry = |t: u64| t.max(busy_until);
        // The housekeeping tick, too, waits for a handler in progress.
        let mut next = self.end.min(self.next_sample).min(entry(self.next_housekeeping));
        let mut consider = |t: Option<u64>| {
            if let Some(t) = t {
                next = next.min(t);
            }
        };
        consider(self.conversion.map(|c| entry(c.0)));
        consider(self.compare);
        consider(self.compare_irq.map(entry));
        consider(self.edge.map(|e| entry(e.0)));
        consider(self.dead_time_end);
        consider(self.breaks.get(self.next_break).map(|b| b.0));
        consider(self.window_edges.get(self.next_window_edge).map(|w| w.0));
        next
    }
}

struct Engine<F> {
    plant: Plant,
    firmware: F,
    peripherals: Peripherals,
    adc: Adc,
    comparator: Comparator,
    profile: Profile,
    housekeeping_period: u64,
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
    cpu: Cpu,
    /// A fast handler's outputs take effect at this tick (when it ends).
    effects_at: Option<u64>,
}

/// Run a scenario to its end with the crate's stack, configured as the
/// scenario says.
pub fn run(scenario: &Scenario) -> Result<RunOutput, RunError> {
    run_with(scenario, &RunControl::default())
}

/// [`run`], reporting progress to `control` and stopping with
/// [`RunError::Cancelled`] when it asks.
pub fn run_with(scenario: &Scenario, control: &RunControl) -> Result<RunOutput, RunError> {
    super::build::run_stack(scenario, control)
}

/// Run a scenario with a firmware of your own: `build` receives the
/// simulated peripherals and returns the firmware wired to them. The
/// scenario gives the plant, the microcontroller (clock, ADC, latencies,
/// comparator wiring by its law's `input`), the housekeeping rate, and the
/// input and load over time.
pub fn run_firmware<F: Firmware>(
    scenario: &Scenario,
    build: impl FnOnce(&Peripherals) -> F,
) -> Result<RunOutput, RunError> {
    run_firmware_with(scenario, &RunControl::default(), build)
}

/// [`run_firmware`] with progress and cancellation.
pub fn run_firmware_with<F: Firmware>(
    scenario: &Scenario,
    control: &RunControl,
    build: impl FnOnce(&Peripherals) -> F,
) -> Result<RunOutput, RunError> {
    let peripherals = Peripherals::new();
    let firmware = build(&peripherals);
    let mut engine = Engine::new(scenario, firmware, peripherals)?;
    let stored_start = engine.plant.stored_j();
    engine.start_up();
    let mut events = 0u32;
    while engine.tick < engine.schedule.end {
        events = events.wrapping_add(1);
        if events.is_multiple_of(CHECK_EVERY) && control.check(engine.tick as f64 * engine.tick_s) {
            return Err(RunError::Cancelled);
        }
        let target = engine.next_event();
        engine.tick = if engine.comparator.exists() {
            // A comparator may fire inside the interval: solve eagerly.
            engine.advance_plant(target)
        } else {
            target
        };
        engine.dispatch();
    }
    engine.catch_up();
    let out = engine.finish(stored_start, scenario);
    match &out.cpu {
        Some(cpu) if cpu.load > 1.0 => {
            Err(RunError::CpuOverload { load: cpu.load, key: overload_key(cpu).to_string() })
        }
        _ => Ok(out),
    }
}

/// The scenario key of the rate behind the handler that takes the most of
/// the CPU.
fn overload_key(cpu: &CpuUsage) -> &'static str {
    let heaviest = cpu.handlers.iter().max_by(|a, b| a.load.total_cmp(&b.load));
    match heaviest.map(|h| h.handler.as_str()) {
        Some("housekeeping") => "firmware.housekeeping_hz",
        Some("conversion") => "mcu.sample_rate_hz",
        _ => "mcu.cpu_clock_hz",
    }
}

fn ticks(seconds: f64, hz: f64) -> u64 {
    (seconds * hz).round().max(0.0) as u64
}

impl<F: Firmware> Engine<F> {
    fn new(sc: &Scenario, firmware: F, peripherals: Peripherals) -> Result<Self, RunError> {
        // Everything the microcontroller counts keeps its tick count; the
        // plant's time runs on the true clock (see `hardware`).
        let hz = f64::from(sc.mcu.clock_hz);
        let hz_true = true_clock_hz(&sc.mcu);
        let key = |e| super::build::keyed(sc, e);
        let profile = sc.profile();
        let recorder = Recorder::new(sc.duration_s, &profile.disturbances(), SLICES)
            .with_transients(TransientTracker::for_scenario(sc));
        let window_edges = recorder
            .window_edges()
            .into_iter()
            .map(|(t, k, s)| (ticks(t, hz_true), k, s))
            .collect();
        let mut breaks: Vec<(u64, f64)> =
            profile.breakpoints().iter().map(|&t| (ticks(t, hz_true), t)).collect();
        breaks.dedup_by(|later, kept| {
            let same = later.0 == kept.0;
            kept.1 = if same { later.1 } else { kept.1 };
            same
        });
        let dead_ticks = match sc.plant.stage {
            Stage::Synchronous { dead_time_s, .. } => ticks(dead_time_s, hz),
            Stage::NonSynchronous => 0,
        };
        let costs = super::cpu::scenario_costs(sc, |h, core| firmware.instructions(h, core));
        let cpu = Cpu::new(costs.map(|(c, _)| c), hz_true);
        let adc = Adc::new(
            sensed_output_channel(&sc.mcu).map_err(key)?,
            sensed_input_channel(&sc.mcu).map_err(key)?,
            sc,
            sc.mcu.feedback_open_at_s.map(|t| ticks(t, hz_true)),
        );
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
            peripherals,
            adc,
            comparator: Comparator::new(ComparatorSource::of(sc)),
            profile,
            housekeeping_period: ticks(1.0 / sc.firmware.housekeeping_hz, hz).max(1),
            tick_s: 1.0 / hz_true,
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
                compare: None,
                compare_irq: None,
                edge: None,
                dead_time_end: None,
                breaks,
                next_break: 0,
                window_edges,
                next_window_edge: 0,
                end: ticks(sc.duration_s, hz_true),
            },
            recorder,
            cpu,
            effects_at: None,
        })
    }

    fn finish(self, stored_start: f64, sc: &Scenario) -> RunOutput {
        let since_start =
            |at: Instant| f64::from(at.ticks_since(Instant(self.start))) * self.tick_s;
        RunOutput {
            energy: *self.plant.energy(),
            clamps: self.firmware.clamps(),
            stored_j: (stored_start, self.plant.stored_j()),
            simulated_s: self.schedule.end as f64 * self.tick_s,
            setpoint_v: sc.control.law.setpoint_v(),
            faults: self.firmware.faults().iter().map(|f| (f.kind, since_start(f.at))).collect(),
            cpu: self.cpu.usage(self.schedule.end as f64 * self.tick_s),
            recorder: self.recorder,
        }
    }

    /// The next tick something happens.
    fn next_event(&self) -> u64 {
        let mut next = self.schedule.next_event(self.cpu.busy_until());
        if let Some(t) = self.effects_at {
            next = next.min(t);
        }
        next
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
            il_est_a: self.firmware.estimated_current_a(self.plant_instant()).unwrap_or(f64::NAN),
            gate_on: self.gate,
        }
    }

    /// The timer's reading at the plant's time (the tick at or before it),
    /// which runs ahead of or behind the event loop's while it solves an
    /// interval.
    fn plant_instant(&self) -> Instant {
        let within = (self.frac / self.tick_s) as u64;
        Instant(self.start.wrapping_add((self.plant_tick + within) as u32))
    }

    fn observe(&mut self) {
        let o = self.observation();
        self.recorder.observe(o);
    }

    /// Set the environment for t = 0 and the comparator's initial level.
    fn start_up(&mut self) {
        self.plant.set_environment(self.profile.environment_at(0.0));
        self.sync_comparator();
        self.schedule.edge = None;
        self.observe();
    }

    /// Recompute the comparator's level from the output (after the DAC was
    /// re-armed); a change raises an edge interrupt.
    fn sync_comparator(&mut self) {
        let v = self.plant.v_out();
        let dac = self.peripherals.dac_code();
        if self.comparator.settle(v, dac, self.adc.output_channel()) {
            self.schedule_edge_interrupt();
        }
        self.peripherals.set_comparator(self.comparator.level);
    }

    fn schedule_edge_interrupt(&mut self) {
        let ready = ((self.t_s() + self.comparator_delay_s) / self.tick_s).ceil() as u64;
        let at = ready.max(self.plant_tick + 1) + self.latency_ticks;
        if self.schedule.edge.is_some() {
            self.cpu.merge(Handler::Comparator);
        }
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
                    self.comparator.flip();
                    self.peripherals.set_comparator(self.comparator.level);
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
        self.profile_breakpoints();
        self.window_edges();
        self.dead_time();
        self.compare();
        self.handler_outputs();
        self.interrupts();
        self.housekeeping();
        self.sample();
    }

    fn profile_breakpoints(&mut self) {
        while let Some(&(b, at_s)) = self.schedule.breaks.get(self.schedule.next_break) {
            if b > self.tick {
                break;
            }
            self.catch_up();
            self.schedule.next_break += 1;
            // At the breakpoint's own time when the tick rounded to before
            // it: the change must not be lost.
            self.plant.set_environment(self.profile.environment_at(self.t_s().max(at_s)));
            // A step moves the output at once (through the ESR): see it,
            // and let a comparator see it too (no crossing to find there).
            self.observe();
            if self.comparator.exists() {
                self.sync_comparator();
            }
        }
    }

    fn window_edges(&mut self) {
        while let Some(&(t, k, is_start)) =
            self.schedule.window_edges.get(self.schedule.next_window_edge)
        {
            if t > self.tick {
                break;
            }
            self.catch_up();
            self.recorder.window_edge(k, is_start, self.plant.energy());
            self.schedule.next_window_edge += 1;
        }
    }

    fn dead_time(&mut self) {
        if self.schedule.dead_time_end.is_some_and(|t| t <= self.tick) {
            self.catch_up();
            self.schedule.dead_time_end = None;
            self.plant.set_mode(if self.gate { Conduction::HighSide } else { Conduction::LowSide });
        }
    }

    /// The interrupts due now, by priority, while the core is free: the
    /// compare first (it ends pulses; and a compare that fired while
    /// another interrupt was being entered is taken first, as a
    /// higher-priority late arrival is on a Cortex-M), then the
    /// comparator, then the conversion. Each runs to its end before the
    /// next starts (see `cpu`).
    fn interrupts(&mut self) {
        while self.cpu.free_at(self.tick) {
            let due = |t: Option<u64>| t.is_some_and(|t| t <= self.tick);
            let entering = due(self.schedule.conversion.map(|c| c.0))
                || due(self.schedule.edge.map(|e| e.0))
                || due(self.schedule.compare_irq);
            if entering && self.schedule.compare_irq.is_some() {
                self.schedule.compare_irq = Some(self.tick);
            }
            let ran =
                self.compare_interrupt() || self.edge_interrupt() || self.conversion_interrupt();
            if !ran {
                return;
            }
        }
    }

    /// A fast handler starts now: the core is busy until it ends, and the
    /// timer read at its pin write reads that end (its outputs take effect
    /// then). Returns the end, for [`handler_ran`](Self::handler_ran).
    fn start_handler(&mut self, handler: Handler) -> u64 {
        let end = self.cpu.run_fast(handler, self.tick);
        self.set_handler_clock(end);
        self.peripherals.stage();
        end
    }

    /// What the timer reads while a handler ending at tick `end` runs.
    fn set_handler_clock(&mut self, end: u64) {
        self.peripherals.set_clock(Instant(self.start.wrapping_add(end as u32)));
    }

    /// A fast handler ending at `end` just ran: its outputs take effect
    /// then.
    fn handler_ran(&mut self, end: u64) {
        if end <= self.tick {
            self.peripherals.commit();
            self.after_handler();
        } else {
            self.effects_at = Some(end);
        }
    }

    /// Outputs of handlers that have ended by now.
    fn handler_outputs(&mut self) {
        if self.effects_at.is_some_and(|t| t <= self.tick) {
            self.effects_at = None;
            self.peripherals.commit();
            self.after_handler();
        }
    }

    fn conversion_interrupt(&mut self) -> bool {
        let Some((t, output, input)) = self.schedule.conversion else { return false };
        if t > self.tick {
            return false;
        }
        self.schedule.conversion = None;
        let now = self.now();
        let end = self.start_handler(Handler::Conversion);
        self.firmware.adc_done(output, input, now);
        self.handler_ran(end);
        true
    }

    fn edge_interrupt(&mut self) -> bool {
        let Some((t, level)) = self.schedule.edge else { return false };
        if t > self.tick {
            return false;
        }
        self.schedule.edge = None;
        let now = self.now();
        let end = self.start_handler(Handler::Comparator);
        self.firmware.comparator_edge(level, now);
        self.handler_ran(end);
        true
    }

    /// The compare fires: the timer ends a pulse armed to end here, and
    /// raises its interrupt.
    fn compare(&mut self) {
        if self.schedule.compare.is_none_or(|t| t > self.tick) {
            return;
        }
        self.schedule.compare = None;
        if let Some(c) = self.peripherals.compare_taken() {
            if c.ends_pulse {
                self.peripherals.clear_gate_in_hardware();
                self.follow_pin();
            }
        }
        if self.schedule.compare_irq.is_some() {
            self.cpu.merge(Handler::Compare);
        }
        self.schedule.compare_irq = Some(self.tick + self.latency_ticks);
    }

    fn compare_interrupt(&mut self) -> bool {
        if self.schedule.compare_irq.is_none_or(|t| t > self.tick) {
            return false;
        }
        self.schedule.compare_irq = None;
        let now = self.now();
        let end = self.start_handler(Handler::Compare);
        self.firmware.timer_compare(now);
        self.handler_ran(end);
        true
    }

    /// The housekeeping tick: the lowest priority, preempted by the other
    /// handlers; a tick while the last one still runs is merged with it.
    fn housekeeping(&mut self) {
        if self.schedule.next_housekeeping > self.tick || !self.cpu.free_at(self.tick) {
            return;
        }
        // A compare that has fired is served first (its priority is higher,
        // and its pulse end has happened: the firmware must learn of it
        // before the slow path reads the estimate).
        if self.schedule.compare_irq.is_some() {
            self.schedule.compare_irq = Some(self.tick);
            self.interrupts();
            if !self.cpu.free_at(self.tick) {
                return;
            }
        }
        self.schedule.next_housekeeping += self.housekeeping_period;
        if self.cpu.housekeeping_running(self.tick) {
            self.cpu.merge(Handler::Housekeeping);
            return;
        }
        self.catch_up();
        let now = self.now();
        // The core is the tick's until it ends, preempted by the fast
        // handlers; its pin writes (a stop, a start on the comparator's
        // level) act at once: a firmware makes them first, in a critical
        // section, as the stack's state they follow is shared with the
        // fast handlers.
        self.cpu.run_housekeeping(self.tick);
        self.set_handler_clock(self.tick);
        self.firmware.housekeeping(now);
        self.after_handler();
        if let Some((output_w, input_w)) = self.firmware.power_estimate() {
            self.recorder.estimate(self.t_s(), output_w, input_w);
        }
    }

    /// An ADC sampling instant: both channels now, the interrupt after the
    /// conversion and the latency.
    fn sample(&mut self) {
        if self.schedule.next_sample > self.tick {
            return;
        }
        self.schedule.next_sample += self.sample_period;
        self.catch_up();
        let output = self.adc.convert_output(self.plant.v_out(), self.tick);
        // The input is scanned in the same sequence.
        let input = self.adc.convert_input(self.plant.vin_v());
        let done = self.tick + self.conversion_ticks + self.latency_ticks;
        if self.schedule.conversion.is_some() {
            // The last result was never read: overwritten.
            self.cpu.merge(Handler::Conversion);
        }
        self.schedule.conversion = Some((done, output, input));
    }

    /// After a handler: the gate pin, the armed compare, the comparator's
    /// DAC.
    fn after_handler(&mut self) {
        self.follow_pin();
        self.schedule.compare = self.peripherals.compare().map(|c| {
            // A deadline already due fires at once (next tick).
            let ahead = c.at.ticks_since(self.now());
            let ahead = if ahead > crate::tick::MAX_DURATION_TICKS { 0 } else { ahead };
            (self.tick + u64::from(ahead)).max(self.tick + 1)
        });
        if self.comparator.exists() {
            self.sync_comparator();
        }
    }

    /// Switch the plant when the gate pin changed.
    fn follow_pin(&mut self) {
        let on = self.peripherals.gate();
        if on != self.gate {
            self.catch_up();
            self.switch_gate(on);
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
