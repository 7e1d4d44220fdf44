//! What the simulator checks is what ships: the default scenario run two
//! ways gives bit-identical summaries.
//!
//! 1. `sim::run`: the crate's stack configured from the scenario file.
//! 2. `sim::run_firmware` with a firmware written here against the public
//!    API alone, as a board's would be: the stack configured from the
//!    crate's `const` demo configuration (`StackConfig::demo()`, what the
//!    target proof flashes) and the hysteretic law locked to 35 kHz,
//!    wired to a `GateDriver` on the simulated pin and compare by
//!    `stack::Handlers`, its comparator's DAC armed after each call, its
//!    handlers the `sim::Firmware` trait.
//!
//! Equal summaries (every figure, every fault, to the last bit; only the
//! wall time differs) show that the scenario file and the `const`
//! configuration describe the same firmware, and that a firmware outside
//! the crate runs through the trait exactly as the crate's own does.

use embedded_hal::digital::InputPin;
use ripplectl::drive::{GateDriver, Polarity, PulseEnd};
use ripplectl::law::{FrequencyTrim, Hysteretic, HystereticConfig};
use ripplectl::sim::peripherals::{SimComparator, SimDac, SimPin, SimTimer};
use ripplectl::sim::{self, Firmware, Peripherals, Scenario, Summary};
use ripplectl::stack::{Handlers, Stack, StackConfig, StackParts};
use ripplectl::supervisor::FaultRecord;
use ripplectl::{unwrap_config, ClampCounts, Instant};

const CONFIG: StackConfig = StackConfig::demo();
const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
const LAW: Hysteretic = unwrap_config(Hysteretic::new(
    &HystereticConfig { setpoint_v: CONFIG.setpoint_v, band_v: 0.040 },
    &CONFIG.output_adc,
))
.with_lock(unwrap_config(FrequencyTrim::band_lock(35_000.0, &CONFIG.clock)));

/// A board's firmware: the handlers, the pin and the compare, the
/// comparator and its DAC.
struct Board {
    handlers: Handlers<Hysteretic, SimPin, SimTimer>,
    dac: SimDac,
    comparator: SimComparator,
}

impl Board {
    fn new(p: &Peripherals) -> Self {
        let Ok(driver) = GateDriver::new(
            p.gate_pin(),
            p.compare_timer(),
            Polarity::ActiveHigh,
            PulseEnd::Hardware,
        );
        let mut board = Self {
            handlers: Handlers::new(Stack::new(LAW, PARTS), driver),
            dac: p.dac(),
            comparator: p.comparator(),
        };
        board.arm();
        board
    }

    /// Arm the comparator's DAC where the law wants it.
    fn arm(&mut self) {
        if let Some(code) = self.handlers.comparator_code() {
            self.dac.write(code);
        }
    }
}

impl Firmware for Board {
    fn adc_done(&mut self, output: u16, input: u16, now: Instant) {
        let Ok(()) = self.handlers.conversion_done(output, input, now);
        self.arm();
    }

    fn comparator_edge(&mut self, level: bool, now: Instant) {
        let Ok(()) = self.handlers.comparator_edge(level, now);
        self.arm();
    }

    fn timer_compare(&mut self, now: Instant) {
        let Ok(()) = self.handlers.compare_fired(now);
        self.arm();
    }

    fn housekeeping(&mut self, now: Instant) {
        let Ok(level) = self.comparator.is_high();
        let Ok(()) = self.handlers.housekeeping(now, Some(level));
        self.arm();
    }

    fn estimated_current_a(&self, now: Instant) -> Option<f64> {
        // While a handler runs, a turn-on it made is timed at its end: the
        // estimate holds its value until then.
        let stack = self.handlers.stack();
        Some(stack.current_at(stack.not_before_last_event(now)).to_num())
    }

    fn power_estimate(&self) -> Option<(f64, f64)> {
        let losses = self.handlers.stack().slow_report().losses;
        Some((losses.output.to_num(), losses.input().to_num()))
    }

    fn clamps(&self) -> ClampCounts {
        self.handlers.stack().telemetry().clamps
    }

    fn faults(&self) -> Vec<FaultRecord> {
        self.handlers.stack().faults().copied().collect()
    }
}

fn summary_json(out: &sim::RunOutput, sc: &Scenario) -> String {
    serde_json::to_string(&Summary::of(out, &sc.name, 0.0)).unwrap()
}

#[test]
fn the_scenario_and_the_public_trait_run_the_same_firmware() {
    let sc = Scenario::default_demo();
    let from_scenario = sim::run(&sc).unwrap();
    let through_trait = sim::run_firmware(&sc, Board::new).unwrap();
    assert_eq!(summary_json(&from_scenario, &sc), summary_json(&through_trait, &sc));
    assert!(from_scenario.recorder.cycles.len() > 400, "the run switched");
    assert_eq!(from_scenario.recorder.cycles, through_trait.recorder.cycles);
}

#[test]
fn the_demo_configuration_is_the_default_scenario() {
    let sc = Scenario::default_demo();
    assert_eq!(ripplectl::sim::build::stack_config(&sc).unwrap(), CONFIG);
    assert_eq!(ripplectl::sim::build::stack_parts(&sc).unwrap(), PARTS);
}
