//! What a new user meets: the report's figures where the converter is not
//! regulating, refused nonsense, file modes, progress and interruption.

use ripplectl::sim::{self, Scenario, Summary};
use std::path::Path;
use std::process::{Command, Output};

fn ripplectl(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_ripplectl")).args(args).output().unwrap()
}

fn default_toml() -> String {
    std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios/hysteretic.toml"),
    )
    .unwrap()
}

/// The default scenario with its input ramping down through UVLO (16 V)
/// from 6 ms: the supervisor stops at about 9.1 ms, inside the last steady
/// window, and the output capacitor feeds the load from there on.
fn sagging_below_uvlo() -> Scenario {
    let text = default_toml()
        .replace(
            "points = [[0.0, 24.0], [6.0e-3, 24.0], [6.0e-3, 18.0], [8.0e-3, 18.0], [9.0e-3, 32.0]]",
            "points = [[0.0, 24.0], [6.0e-3, 24.0], [10.0e-3, 12.0]]",
        )
        .replace("ohms = 2.5", "ohms = 10.0");
    Scenario::from_toml(&text).unwrap()
}

#[test]
fn efficiency_of_a_run_that_stopped_is_not_above_one() {
    let s = sagging_below_uvlo();
    let out = sim::run(&s).unwrap();
    let summary = Summary::of(&out, &s.name, 0.0);
    assert!(summary.faults.iter().any(|f| f.kind == "input-undervoltage"), "{:?}", summary.faults);
    // Energy conservation: output ≤ output + losses. Counting the energy the
    // capacitor released after the stop as delivered gave 100.4 % here.
    assert!(summary.efficiency_true <= 1.0, "efficiency {}", summary.efficiency_true);
    // The window where the supervisor stopped is left out, and the report
    // says so.
    let note = summary.efficiency_note.as_deref().unwrap_or_default();
    assert!(note.contains("2 of 3"), "{note:?}");
    // The windows that regulated give the efficiency of the regulating
    // converter, within a point of the default run's (same stage, lighter
    // load).
    let nominal = Summary::of(&sim::run(&Scenario::default_demo()).unwrap(), "", 0.0);
    assert!((summary.efficiency_true - nominal.efficiency_true).abs() < 0.01);
}

#[test]
fn efficiency_is_output_over_output_plus_losses() {
    // Energy balance: input = output + losses + Δstored (the plant's ledger
    // is checked to 0.1 % in plant_handbook.rs), so the stored energy's
    // change at the windows' ends does not enter.
    let s = Scenario::default_demo();
    let out = sim::run(&s).unwrap();
    let summary = Summary::of(&out, &s.name, 0.0);
    let e = sim::metrics::steady_energy(&out);
    let expected = e.output_j / (e.output_j + e.losses_j());
    assert!(summary.efficiency_note.is_none());
    assert!((summary.efficiency_true - expected).abs() < 1e-12);
}

/// Run `simulate` on the default scenario with `from` replaced by `to`;
/// returns (exit code, stderr).
fn simulate_edited(from: &str, to: &str) -> (Option<i32>, String) {
    let text = default_toml();
    assert!(text.contains(from), "{from}");
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("s.toml");
    std::fs::write(&file, text.replace(from, to)).unwrap();
    let out = ripplectl(&["simulate", "--scenario", file.to_str().unwrap()]);
    (out.status.code(), String::from_utf8(out.stderr).unwrap())
}

fn line_of(key_line_start: &str) -> usize {
    default_toml().lines().position(|l| l.starts_with(key_line_start)).unwrap() + 1
}

#[test]
fn interrupt_latency_beyond_the_sample_period_is_refused() {
    let (code, err) = simulate_edited("isr_latency_s = 0.25e-6", "isr_latency_s = 1.0");
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("mcu.isr_latency_s"), "{err}");
    assert!(err.contains(&format!("line {}", line_of("isr_latency_s"))), "{err}");
}

#[test]
fn conversion_time_beyond_the_sample_period_is_refused() {
    let (code, err) = simulate_edited("conversion_s = 0.2e-6", "conversion_s = 2e-6");
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("mcu.conversion_s") && err.contains("sample period"), "{err}");
}

#[test]
fn noise_beyond_the_adc_range_is_refused() {
    let (code, err) = simulate_edited("noise_lsb_rms = 0.7", "noise_lsb_rms = 1e9");
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("mcu.noise_lsb_rms"), "{err}");
    assert!(err.contains(&format!("line {}", line_of("noise_lsb_rms"))), "{err}");
}
