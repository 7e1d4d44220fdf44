//! What `ripplectl design --out` writes: the checked-in outputs for the
//! demo board and the ceramic board are what the command writes now; the
//! scenario runs as it is; the `const` block (compiled here) configures
//! exactly the stack the simulator builds from the scenario; a refused
//! input names its option.

use crate::common;

use common::program::ripplectl;
use ripplectl::sim::build::{self, ScenarioLaw};
use ripplectl::sim::{self, Scenario, StackFirmware};
use ripplectl::stack::Stack;
use std::path::{Path, PathBuf};

mod demo {
    include!("../examples/designed/greenhouse-5v/config.rs");
}

mod ceramic {
    include!("../examples/designed/greenhouse-5v-ceramic/config.rs");
}

const DEMO: [&str; 12] = [
    "design", "--vin", "18:32", "--vout", "5", "--iout", "2", "--l", "47e-6", "--c", "220e-6",
    "--esr",
];

fn checked_in(board: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/designed").join(board)
}

fn scenario(board: &str) -> Scenario {
    let text = std::fs::read_to_string(checked_in(board).join("scenario.toml")).unwrap();
    Scenario::from_toml(&text).unwrap()
}

/// Run `design` with `args` and `--out` into a fresh directory; compare
/// both files with the checked-in ones.
fn writes_the_checked_in_files(args: &[&str], board: &str) {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let mut all = args.to_vec();
    all.extend(["--out", out.to_str().unwrap()]);
    let run = ripplectl(&all);
    assert!(run.status.success(), "{}", String::from_utf8_lossy(&run.stderr));
    let stdout = String::from_utf8(run.stdout).unwrap();
    assert!(stdout.contains("simulated"), "{stdout}");
    for file in ["scenario.toml", "config.rs"] {
        let written = std::fs::read_to_string(out.join(file)).unwrap();
        let kept = std::fs::read_to_string(checked_in(board).join(file)).unwrap();
        assert!(
            written == kept,
            "examples/designed/{board}/{file} is stale: rerun `ripplectl {}` with --out there",
            args.join(" ")
        );
    }
}

#[test]
fn design_writes_the_checked_in_files() {
    let mut demo = DEMO.to_vec();
    demo.push("0.04");
    writes_the_checked_in_files(&demo, "greenhouse-5v");
    let mut ceramic = DEMO.to_vec();
    ceramic[10] = "100e-6";
    ceramic.push("0.002");
    writes_the_checked_in_files(&ceramic, "greenhouse-5v-ceramic");
}

#[test]
fn the_written_scenario_runs_as_it_is() {
    let file = checked_in("greenhouse-5v").join("scenario.toml");
    let run = ripplectl(&["simulate", "--scenario", file.to_str().unwrap(), "--json"]);
    assert!(run.status.success(), "{}", String::from_utf8_lossy(&run.stderr));
    let json: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    let load = json["cpu"]["load"].as_f64().unwrap();
    assert!(load > 0.0 && load < 0.70, "cpu load {load}");
    assert_eq!(json["faults"].as_array().unwrap().len(), 0, "{}", json["faults"]);
}

#[test]
fn the_const_block_configures_the_scenario_s_stack() {
    let sc = scenario("greenhouse-5v");
    assert_eq!(demo::PARTS, build::stack_parts(&sc).unwrap());
    assert_eq!(build::law(&sc).unwrap(), ScenarioLaw::OnTime(demo::LAW));
    let sc = scenario("greenhouse-5v-ceramic");
    assert_eq!(ceramic::PARTS, build::stack_parts(&sc).unwrap());
    assert_eq!(build::law(&sc).unwrap(), ScenarioLaw::OnTime(ceramic::LAW));
}

/// The demo's block, its driver ending pulses as its `PULSE_END` says, runs
/// exactly as the simulator runs the scenario written beside it: the same
/// cycles, to the last bit (with `PulseEnd::Software` they differ).
#[test]
fn the_const_block_runs_as_its_scenario() {
    let sc = scenario("greenhouse-5v");
    let own = sim::run_firmware(&sc, |p| {
        StackFirmware::with_pulse_end(Stack::new(demo::LAW, demo::PARTS), p, demo::PULSE_END)
    })
    .unwrap();
    assert_eq!(own.recorder.cycles, sim::run(&sc).unwrap().recorder.cycles);
    let sc = scenario("greenhouse-5v-ceramic");
    let own = sim::run_firmware(&sc, |p| {
        StackFirmware::with_pulse_end(
            Stack::new(ceramic::LAW, ceramic::PARTS),
            p,
            ceramic::PULSE_END,
        )
    })
    .unwrap();
    assert_eq!(own.recorder.cycles, sim::run(&sc).unwrap().recorder.cycles);
}

#[test]
fn a_refused_input_names_its_option() {
    let mut args = DEMO.to_vec();
    args.push("0.04");
    args[4] = "20";
    let run = ripplectl(&args);
    assert_eq!(run.status.code(), Some(2));
    let err = String::from_utf8(run.stderr).unwrap();
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains("--vout must be below --vin's minimum (18 V)"), "{err}");
    assert!(run.stdout.is_empty());
    // A malformed range names --vin; a core too slow for every loop names
    // --core and the clock from which one fits.
    args[4] = "5";
    args[2] = "18";
    let run = ripplectl(&args);
    assert_eq!(run.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&run.stderr).contains("--vin"));
    args[2] = "18:32";
    args.extend(["--core", "rv32", "--clock", "20e6"]);
    let run = ripplectl(&args);
    assert_eq!(run.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&run.stderr).contains("--core RV32 at 20.00 MHz"));
}
