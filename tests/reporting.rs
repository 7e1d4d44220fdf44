//! What a new user meets: the report's figures where the converter is not
//! regulating, refused nonsense, file modes, progress and interruption.

use crate::common;

use common::program::{default_toml, ripplectl};
use ripplectl::sim::{self, Scenario, Summary};
use std::path::Path;
use std::process::{Command, Output};

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
    let (code, err) = simulate_edited("conversion_s = 0.2e-6", "conversion_s = 30e-6");
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

#[test]
fn sweep_says_why_a_point_did_not_switch() {
    let out = ripplectl(&["sweep", "--vin", "10,24,40", "--load", "1", "--duration", "0.002"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(!text.contains("NaN"), "{text}");
    let line = |vin: &str| text.lines().find(|l| l.trim_start().starts_with(vin)).unwrap();
    assert!(line("10.0").contains("below UVLO (16 V)"), "{text}");
    assert!(line("40.0").contains("above the input limit (36 V)"), "{text}");
    assert!(!line("24.0").contains("not switching"), "{text}");
    let json = ripplectl(&["sweep", "--vin", "10", "--load", "1", "--duration", "0.002", "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    assert!(v[0]["not_switching"].as_str().unwrap().contains("UVLO"), "{v}");
}

#[test]
fn sweep_says_why_a_switching_point_has_no_efficiency() {
    // 4 A is beyond what the demo's current limit lets through: the loop
    // switches, the output sags out of the ±2 % band, and the efficiency
    // is not available. The table says why instead of a bare "n/a".
    let out = ripplectl(&["sweep", "--vin", "24", "--load", "1,4", "--duration", "0.008"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8(out.stdout).unwrap();
    let line = |load: &str| {
        text.lines().find(|l| l.split_whitespace().nth(1) == Some(load)).unwrap().to_string()
    };
    let heavy = line("4.00");
    assert!(!heavy.contains("not switching"), "{text}");
    assert!(heavy.contains("n/a") && heavy.contains("not in regulation: mean output"), "{text}");
    assert!(heavy.contains("outside 5.000 V ± 100.0 mV"), "{text}");
    assert!(!line("1.00").contains("not in regulation"), "{text}");
}

/// Run `ripplectl args` under `sh` with the given umask.
#[cfg(unix)]
fn with_umask(umask: &str, args: &str) -> Output {
    let line = format!("umask {umask}; exec '{}' {args}", env!("CARGO_BIN_EXE_ripplectl"));
    Command::new("sh").args(["-c", &line]).output().unwrap()
}

#[cfg(unix)]
#[test]
fn written_files_follow_the_umask() {
    use std::os::unix::fs::PermissionsExt;
    for (umask, mode) in [("022", 0o644), ("002", 0o664)] {
        let dir = tempfile::tempdir().unwrap();
        let out_dir = dir.path().join("run");
        let out = with_umask(umask, &format!("simulate --out '{}'", out_dir.display()));
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        for entry in std::fs::read_dir(&out_dir).unwrap() {
            let entry = entry.unwrap();
            let got = entry.metadata().unwrap().permissions().mode() & 0o777;
            // open(2) gives a new file 0666 less the umask (POSIX open()).
            assert_eq!(got, mode, "{:?} under umask {umask}: {got:o}", entry.file_name());
        }
    }
}

/// The default scenario lasting 10⁹ s.
fn endless_scenario(dir: &Path) -> std::path::PathBuf {
    let file = dir.join("long.toml");
    let text = default_toml().replace("duration_s = 0.010", "duration_s = 1e9");
    std::fs::write(&file, text).unwrap();
    file
}

#[cfg(unix)]
#[test]
fn a_long_run_shows_progress_and_ctrl_c_leaves_nothing_behind() {
    use std::io::{BufRead, BufReader};
    use std::process::Stdio;
    let dir = tempfile::tempdir().unwrap();
    let scenario = endless_scenario(dir.path());
    let out_dir = dir.path().join("out");
    let mut child = Command::new(env!("CARGO_BIN_EXE_ripplectl"))
        .args(["simulate", "--scenario", scenario.to_str().unwrap(), "--out"])
        .arg(&out_dir)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Progress comes after about a second, with the time left; read on a
    // thread so that a run that never reports fails here instead of hanging.
    let stderr = child.stderr.take().unwrap();
    let (tx, rx) = std::sync::mpsc::channel();
    let reader = std::thread::spawn(move || {
        let mut lines = BufReader::new(stderr).lines();
        let first = lines.next().and_then(Result::ok).unwrap_or_default();
        let _ = tx.send(first);
        lines.map_while(Result::ok).collect::<Vec<_>>().join("\n")
    });
    let first = rx.recv_timeout(std::time::Duration::from_secs(30));
    let status = Command::new("kill").args(["-INT", &child.id().to_string()]).status().unwrap();
    assert!(status.success());
    let status = child.wait().unwrap();
    let rest = reader.join().unwrap();
    let first = first.expect("no progress line within 30 s");
    assert!(first.contains("simulated") && first.contains("to go"), "{first:?}");
    assert_eq!(status.code(), Some(130), "{rest}");
    assert!(rest.contains("interrupted"), "{rest}");
    let written: Vec<_> = std::fs::read_dir(&out_dir).map(|d| d.collect()).unwrap_or_default();
    assert!(written.is_empty(), "left behind: {written:?}");
}
