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
//!
//! | module | what |
//! |---|---|
//! | `schedule` | the pending events, each a small struct |
//! | `interrupts` | the core: handlers by priority, their outputs, housekeeping, ADC samples |
//! | `analog` | the plant solved between events, the comparator, the gate's edges, profile breakpoints and window boundaries |
//! | `estimate` | the firmware's current estimate handed to the record: its value around each handler, and the kink between |

mod analog;
mod estimate;
mod interrupts;
mod schedule;

use super::cpu::{Cpu, CpuUsage};
use super::firmware::Firmware;
use super::hardware::{sensed_input_channel, sensed_output_channel, true_clock_hz};
use super::mcu::{Adc, Comparator, ComparatorSource};
use super::peripherals::Peripherals;
use super::plant::{Ahead, EnergyLedger, Event, Plant, Stage};
use super::profile::Profile;
use super::record::Recorder;
use super::run_control::{RunControl, CHECK_EVERY};
use super::scenario::{keyed, Scenario, ScenarioError};
use super::transient::TransientTracker;
use crate::guard::ClampCounts;
use crate::supervisor::FaultKind;
use crate::tick::Instant;
use estimate::TickEstimate;
use schedule::{Breakpoint, Schedule, WindowEdge};

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
    /// the microcontroller: it is moved where an event falls or something
    /// changes it.
    plant_tick: u64,
    frac: f64,
    /// How far ahead of the plant it has been scanned for events, and its
    /// state there.
    scanned: Ahead,
    /// The first event ahead of the plant a scan found beyond `scanned`,
    /// not yet reached.
    found: Option<Event>,
    /// The DAC code the comparator's level was last settled for.
    synced_dac: Option<u16>,
    /// The firmware's estimate at this tick, as given to the recorder.
    tick_estimate: TickEstimate,
    /// The last tick the estimate was given at, with its value after the
    /// handlers there.
    last_knot: Option<(u64, f64)>,
    /// The compare's hardware ended a pulse whose interrupt has not run:
    /// until it does, the firmware's estimate runs on along the pulse.
    edge_unseen: bool,
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
    /// Set when a handler's outputs are first followed, and kept: from
    /// then on the gate, compare and comparator are what the peripherals
    /// last set, as each later write is followed. False before, for a
    /// firmware that armed them while it was built; housekeeping at tick 0
    /// runs first and sets it, so no fast handler sees it false today.
    outputs_followed: bool,
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
    if let Some(every) = control.probe_every_ticks.filter(|&p| p > 0) {
        engine.schedule.probe_every(every);
    }
    let stored_start = engine.plant.stored_j();
    engine.start_up();
    let mut events = 0u32;
    while engine.tick < engine.schedule.end {
        events = events.wrapping_add(1);
        if events.is_multiple_of(CHECK_EVERY) && control.check(engine.tick as f64 * engine.tick_s) {
            return Err(RunError::Cancelled);
        }
        let others = engine.next_but_sample();
        let target = others.min(engine.schedule.next_sample);
        engine.tick = if engine.comparator.exists() {
            // A comparator may fire inside the interval: look ahead first.
            engine.watch_until(target)
        } else {
            target
        };
        // Before `others` nothing is due but an ADC sample (the tick lies
        // past the last pass's, which took the samples due, and before the
        // next probe stop), or a comparator interrupt the look-ahead found
        // on the way: without one the core may take, the tick's only event
        // is the sample, or none (the look-ahead stopped short at a
        // crossing's interrupt that waits for the core).
        let sample_alone = engine.tick < others && !engine.edge_interrupt_due();
        engine.dispatch(sample_alone);
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
        let key = |e| keyed(sc, e);
        let profile = sc.profile();
        let recorder = Recorder::new(sc.duration_s, &profile.disturbances(), SLICES)
            .with_transients(TransientTracker::for_scenario(sc));
        let window_edges = recorder
            .window_edges()
            .into_iter()
            .map(|e| WindowEdge {
                tick: ticks(e.t_s, hz_true),
                window: e.window,
                is_start: e.is_start,
            })
            .collect();
        let mut breaks: Vec<Breakpoint> = profile
            .breakpoints()
            .iter()
            .map(|&t| Breakpoint { tick: ticks(t, hz_true), at_s: t })
            .collect();
        // Breakpoints on one tick are one, at the latest's time.
        breaks.dedup_by(|later, kept| {
            let same = later.tick == kept.tick;
            kept.at_s = if same { later.at_s } else { kept.at_s };
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
            scanned: Ahead { t: 0.0, x: [sc.initial_inductor_a, sc.initial_output_v] },
            found: None,
            synced_dac: None,
            tick_estimate: TickEstimate::NotGiven,
            last_knot: None,
            edge_unseen: false,
            gate: false,
            sample_period: ticks(1.0 / sc.mcu.sample_rate_hz, hz).max(1),
            conversion_ticks: ticks(sc.mcu.conversion_s, hz),
            latency_ticks: ticks(sc.mcu.isr_latency_s, hz),
            comparator_delay_s: sc.mcu.comparator_delay_s,
            dead_ticks,
            t_rise_s: sc.plant.t_rise_s,
            t_fall_s: sc.plant.t_fall_s,
            schedule: Schedule::new(breaks, window_edges, ticks(sc.duration_s, hz_true)),
            recorder,
            cpu,
            effects_at: None,
            outputs_followed: false,
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
            recorder: self.recorder.finished(),
        }
    }

    /// The next tick something other than an ADC sampling instant happens
    /// (see [`Schedule::next_but_sample`]).
    #[inline]
    fn next_but_sample(&self) -> u64 {
        let mut next = self.schedule.next_but_sample(self.cpu.busy_until());
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
        self.seconds(self.plant_tick) + self.frac
    }

    /// `ticks` of the true clock in seconds. Through i64: one instruction
    /// where u64 takes several, and the same value (a run's ticks stay far
    /// below 2⁵³, where both conversions are exact).
    #[inline]
    fn seconds(&self, ticks: u64) -> f64 {
        ticks as i64 as f64 * self.tick_s
    }

    /// Handle every event due at the current tick; `sample_alone`: none
    /// is, but for an ADC sample (the other checks skipped).
    #[inline]
    fn dispatch(&mut self, sample_alone: bool) {
        self.tick_estimate = TickEstimate::NotGiven;
        let unseen = self.edge_unseen;
        if !sample_alone {
            self.dispatch_events();
        }
        // The last of the tick's events.
        self.sample();
        if self.tick_estimate != TickEstimate::NotGiven {
            self.knot_after(unseen && !self.edge_unseen);
        }
    }

    fn dispatch_events(&mut self) {
        if self.schedule.next_rare_tick() <= self.tick {
            if self.schedule.take_probe(self.tick) {
                self.catch_up();
            }
            self.profile_breakpoints();
            self.window_edges();
        }
        self.dead_time();
        self.compare();
        self.handler_outputs();
        self.interrupts();
        self.housekeeping();
    }
}
