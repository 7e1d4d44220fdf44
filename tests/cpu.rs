//! The CPU model against cases with a known answer.
//!
//! A firmware that declares what each handler costs (`Firmware::
//! instructions`), on a core with stated factors (CPI, entry and exit),
//! must (1) load the core by exactly `calls · cycles / (clock · time)`,
//! (2) act on the gate when its handler ends, which adds the handler's time
//! to the loop delay: the ESR-dominated hysteretic frequency then follows
//! the closed form with that delay, and (3) be refused when the handlers
//! need more than the whole core. A scenario naming a core without
//! declaring its firmware's costs is charged the counts `tests/target/
//! run.sh` measured on that core (checked here for RV32).

use crate::common;

use common::open_window;
use common::plants::near_ideal;
use ripplectl::law::{Law, Regulate};
use ripplectl::sim::build::{self, ScenarioLaw};
use ripplectl::sim::cores::Core;
use ripplectl::sim::cpu::{self, Handler, COUNTS_CSV};
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, Firmware, Peripherals, RunError, Scenario, StackFirmware, Summary};
use ripplectl::stack::Stack;
use ripplectl::supervisor::FaultRecord;
use ripplectl::{ClampCounts, Instant};

/// The crate's stack with stated instruction counts per handler.
struct Counted<L> {
    inner: StackFirmware<L>,
    counts: [u32; 4],
}

impl<L: Law + Regulate> Firmware for Counted<L> {
    fn adc_done(&mut self, output: u16, input: u16, now: Instant) {
        self.inner.adc_done(output, input, now);
    }
    fn comparator_edge(&mut self, level: bool, now: Instant) {
        self.inner.comparator_edge(level, now);
    }
    fn timer_compare(&mut self, now: Instant) {
        self.inner.timer_compare(now);
    }
    fn housekeeping(&mut self, now: Instant) {
        self.inner.housekeeping(now);
    }
    fn estimated_current_a(&self, now: Instant) -> Option<f64> {
        self.inner.estimated_current_a(now)
    }
    fn clamps(&self) -> ClampCounts {
        self.inner.clamps()
    }
    fn faults(&self) -> Vec<FaultRecord> {
        self.inner.faults()
    }
    fn instructions(&self, handler: Handler, _core: Core) -> Option<u32> {
        let k = Handler::ALL.iter().position(|&h| h == handler)?;
        self.counts.get(k).copied()
    }
}

/// Run `sc` with the scenario's own stack, its handlers declared to cost
/// `counts` instructions (conversion, comparator, compare, housekeeping).
fn run_counted(sc: &Scenario, counts: [u32; 4]) -> Result<sim::RunOutput, RunError> {
    fn go<L: Law + Regulate>(
        sc: &Scenario,
        law: L,
        counts: [u32; 4],
    ) -> Result<sim::RunOutput, RunError> {
        let parts = build::stack_parts(sc)?;
        sim::run_firmware(sc, |p: &Peripherals| Counted {
            inner: StackFirmware::new(Stack::new(law, parts), p),
            counts,
        })
    }
    match build::law(sc)? {
        ScenarioLaw::Hysteretic(l) => go(sc, l, counts),
        ScenarioLaw::OnTime(l) => go(sc, l, counts),
        ScenarioLaw::Retrofit(l) => go(sc, l, counts),
    }
}

/// A Cortex-M4 at `cpu_hz` with CPI 1 and `overhead` cycles of entry and
/// exit (stated factors, not the core's defaults).
fn on_core(sc: &mut Scenario, cpu_hz: f64, overhead: f64) {
    sc.mcu.core = Some(Core::CortexM4);
    sc.mcu.cpu_clock_hz = Some(cpu_hz);
    sc.mcu.cpi = Some(1.0);
    sc.mcu.irq_overhead_cycles = Some(overhead);
}

#[test]
fn a_handler_of_known_count_at_a_known_rate() {
    // 100 instructions + 20 cycles of entry and exit per conversion, at
    // 100 kHz, on a 64 MHz core: 120 · 100 000 / 64 000 000 = 18.75 % of
    // its time, whatever the loop does.
    let mut sc = Scenario::default_demo();
    sc.mcu.sample_rate_hz = 100e3;
    on_core(&mut sc, 64e6, 20.0);
    let out = run_counted(&sc, [100, 0, 0, 0]).unwrap();
    let cpu = out.cpu.expect("a core was named");
    let conversion = &cpu.handlers[0];
    assert_eq!(conversion.handler, "conversion");
    assert_eq!(conversion.calls + conversion.merged, 1_000, "10 ms at 100 kHz");
    assert_eq!(conversion.merged, 0);
    assert!((conversion.load - 0.1875).abs() < 1e-12, "{}", conversion.load);
    assert!((conversion.seconds_per_call - 120.0 / 64e6).abs() < 1e-18);
    // Entry and exit alone for the others: 20 cycles a call, merged events
    // included (the load is what the events demanded).
    let rest: f64 =
        cpu.handlers[1..].iter().map(|h| (h.calls + h.merged) as f64 * 20.0 / 64e6 / 0.010).sum();
    assert!((cpu.load - 0.1875 - rest).abs() < 1e-12, "{} vs {}", cpu.load, 0.1875 + rest);
}

#[test]
fn the_handlers_time_adds_to_the_loop_delay() {
    // The ESR-dominated hysteretic loop of tests/closed_loop.rs (an analog
    // comparator with exact thresholds and no delay, ripple all ESR), its
    // edges through the firmware, whose comparator handler now takes 1 µs
    // (100 instructions at CPI 1 on a 100 MHz core, no entry or exit): the
    // gate moves 1 µs after each crossing. The closed form with a loop
    // delay t_d (derived in ripplectl::design::hysteretic_frequency_esr:
    // the output runs past each threshold by its slope times t_d,
    // Δi = band/ESR + V_in·t_d/L; inductor slopes as in Erickson &
    // Maksimović ch. 2) gives the frequency.
    let (vin, vout, l, esr, band) = (24.0, 5.0, 47e-6, 0.05, 0.04);
    let mut sc = Scenario::default_demo();
    sc.control.law =
        LawParams::AnalogRetrofit { lower_v: vout - band / 2.0, upper_v: vout + band / 2.0 };
    sc.control.window = open_window();
    sc.input = InputProfile { points: vec![[0.0, vin]] };
    sc.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms: 2.5 } }];
    sc.duration_s = 4e-3;
    sc.initial_output_v = vout;
    sc.initial_inductor_a = 2.0;
    sc.plant = near_ideal(l, 4.7e-3, esr, 0.0);
    sc.firmware.observer_bandwidth_hz = None;
    sc.mcu.clock_hz = 1_000_000_000;
    sc.mcu.comparator_delay_s = 0.0;
    sc.mcu.isr_latency_s = 0.0;
    sc.mcu.noise_lsb_rms = 0.0;
    // Only the comparator handler takes time (readings, compares and
    // housekeeping none): nothing else delays the edges.
    on_core(&mut sc, 100e6, 0.0);
    let out = run_counted(&sc, [0, 100, 0, 0]).unwrap();
    let s = Summary::of(&out, &sc.name, 0.0);
    let f = ripplectl::design::hysteretic_frequency_esr(vin, vout, l, esr, band, 1e-6);
    let err = (s.fsw_mean_hz - f).abs() / f;
    eprintln!("1 µs handler: simulated {:.1} Hz, closed form {f:.1} Hz", s.fsw_mean_hz);
    assert!(err < 0.03, "simulated {} Hz vs {f} Hz", s.fsw_mean_hz);
    // Without the handler's time the loop switches 1.6 times as fast.
    let f0 = ripplectl::design::hysteretic_frequency_esr(vin, vout, l, esr, band, 0.0);
    assert!(f0 / f > 1.5);
}

#[test]
fn handlers_needing_more_than_the_core_are_refused() {
    // 100 instructions per conversion at 1 MHz (the sampled test fixture)
    // on a 64 MHz core: 1.6 times the core.
    let mut sc = common::sampled_fixture();
    on_core(&mut sc, 64e6, 0.0);
    match run_counted(&sc, [100, 0, 0, 0]) {
        Err(RunError::CpuOverload { load, key }) => {
            assert!(load > 1.0, "{load}");
            assert_eq!(key, "mcu.sample_rate_hz");
        }
        other => panic!("refused as overloaded, not {:?}", other.map(|_| ())),
    }
}

/// A shipped scenario file with `edits` (from, to) applied to its text.
fn scenario_file(name: &str, edits: &[(&str, &str)]) -> Scenario {
    let path = format!("{}/examples/scenarios/{name}", env!("CARGO_MANIFEST_DIR"));
    let mut text = std::fs::read_to_string(&path).unwrap();
    for (from, to) in edits {
        assert!(text.contains(from), "{name} has no {from:?}");
        text = text.replacen(from, to, 1);
    }
    Scenario::from_toml(&text).unwrap()
}

#[test]
fn a_scenario_on_rv32_is_charged_the_rv32_counts() {
    // `core = "rv32"` in a scenario file: each handler of each of the
    // crate's five stacks costs the count measured on RV32IMC under
    // qemu-system-riscv32 (the rv32 rows of tests/target/counts.csv, which
    // CI regenerates), times the core's CPI, plus its entry and exit (the
    // factors of src/sim/cpu.rs, from memory). Every handler counted on
    // the Cortex-M4 is counted on RV32 too (before RV32 had counts, each
    // cost its entry and exit only).
    let rv32 = ("core = \"cortex-m4\"", "core = \"rv32\"");
    let stacks = [
        ("hysteretic.toml", "edge", vec![rv32]),
        ("hysteretic.toml", "hyst", vec![rv32, ("input = \"edge\"", "input = \"sampled\"")]),
        ("on-time-ceramic.toml", "cot", vec![rv32]),
        ("on-time.toml", "cotedge", vec![rv32]),
        ("analog-retrofit.toml", "retrofit", vec![rv32]),
    ];
    for (file, kind, edits) in stacks {
        let sc = scenario_file(file, &edits);
        assert_eq!(sc.mcu.core, Some(Core::Rv32));
        assert_eq!(cpu::stack_kind(&sc), kind);
        let (costs, missing) = cpu::scenario_costs(&sc, |_, _| None).unwrap();
        for h in Handler::ALL {
            let op = cpu::handler_op(kind, h);
            match (cpu::count(COUNTS_CSV, "rv32", &op), cpu::count(COUNTS_CSV, "m4", &op)) {
                (Some(n), Some(_)) => {
                    assert_eq!(costs.cycles(h), f64::from(n) * 1.3 + 40.0, "{op}");
                    assert!(!missing.contains(&op), "{op}");
                }
                // A handler the stack never runs (a sampled stack's
                // comparator) is counted on no core: entry and exit only.
                (None, None) => {
                    assert_eq!(costs.cycles(h), 40.0, "{op}");
                    assert!(missing.contains(&op), "{op}");
                }
                (rv32, m4) => panic!("{op}: counted on rv32 {rv32:?}, on m4 {m4:?}"),
            }
        }
    }
}

#[test]
fn a_run_on_rv32_reports_the_load_of_those_counts() {
    // The default scenario's stack on a 200 MHz RV32: the run's load is
    // each handler's calls (merged events included) times its cycles over
    // the core's cycles in the run, as the first test here checks for
    // declared counts.
    let sc = scenario_file(
        "hysteretic.toml",
        &[("core = \"cortex-m4\"\ncpu_clock_hz = 170e6", "core = \"rv32\"\ncpu_clock_hz = 200e6")],
    );
    let (costs, _) = cpu::scenario_costs(&sc, |_, _| None).unwrap();
    let out = sim::run(&sc).unwrap();
    let usage = out.cpu.expect("a core was named");
    assert_eq!(usage.core, "RV32");
    let mut load = 0.0;
    for (h, u) in Handler::ALL.iter().zip(&usage.handlers) {
        assert_eq!(u.handler, h.name());
        assert_eq!(u.seconds_per_call, costs.seconds(*h));
        load += (u.calls + u.merged) as f64 * costs.cycles(*h) / (200e6 * sc.duration_s);
    }
    assert!(usage.handlers[0].calls > 450, "10 ms of conversions at 50 kHz");
    assert!((usage.load - load).abs() < 1e-12, "{} vs {load}", usage.load);
}

/// Every shipped scenario names its core and runs on it with room to
/// spare: the fast path's load under 70 % (the level above which the
/// simulator warns; keeping a third of the core for the rest of the
/// firmware is this project's rule, not a standard's).
#[test]
fn the_shipped_scenarios_fit_their_named_core() {
    let dir = format!("{}/examples/scenarios", env!("CARGO_MANIFEST_DIR"));
    let mut seen = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        let sc = Scenario::from_toml(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let usage = sim::run(&sc).unwrap().cpu;
        let usage = usage.unwrap_or_else(|| panic!("{}: no core named", path.display()));
        eprintln!("{}: {} {:.1} %", path.display(), usage.core, 100.0 * usage.load);
        assert!(usage.load < 0.7, "{}: load {}", path.display(), usage.load);
        seen += 1;
    }
    assert!(seen >= 4, "the four shipped scenarios");
}
