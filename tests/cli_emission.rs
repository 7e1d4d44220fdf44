//! The program's emission, audible and comparison outputs: JSON keys, files,
//! the estimate's absence without an input capacitor, and `compare`.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn ripplectl(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_ripplectl")).args(args).output().unwrap()
}

fn scenario(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios").join(name)
}

fn json(out: &Output) -> serde_json::Value {
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn demo_json_has_the_emission_margin_and_audible_figures() {
    let dir = tempfile::tempdir().unwrap();
    let out_dir = dir.path().join("run");
    let v = json(&ripplectl(&["simulate", "--json", "--out", out_dir.to_str().unwrap()]));
    let e = &v["emission"];
    assert_eq!(e["status"], "estimated", "{e}");
    assert_eq!(e["class"], "B");
    let margin = e["margin_db"].as_f64().unwrap();
    let at = e["margin_hz"].as_f64().unwrap();
    assert!((150e3..=30e6).contains(&at), "{e}");
    let a = &v["audible"];
    for key in ["strongest_hz", "strongest_dbc", "fundamental_hz", "slow_period_share"] {
        assert!(a[key].as_f64().is_some(), "audible.{key}: {a}");
    }
    assert!(a["strongest_hz"].as_f64().unwrap() < 20e3);
    // The margin is the smallest (limit − reading) of the written spectrum.
    let csv = std::fs::read_to_string(out_dir.join("emission.csv")).unwrap();
    let smallest = csv
        .lines()
        .skip(1)
        .map(|l| {
            let x: Vec<f64> = l.split(',').map(|c| c.parse().unwrap()).collect();
            (x[3] - x[1]).min(x[4] - x[2])
        })
        .fold(f64::INFINITY, f64::min);
    assert!((smallest - margin).abs() < 0.01, "csv {smallest} against json {margin}");
    for file in ["emission.svg", "emission.csv", "switch_current.csv", "report.html"] {
        assert!(std::fs::metadata(out_dir.join(file)).unwrap().len() > 1000, "{file}");
    }
}

#[test]
fn without_an_input_capacitor_the_estimate_says_why_not() {
    let path = scenario("on-time.toml");
    let v = json(&ripplectl(&["simulate", "--json", "--scenario", path.to_str().unwrap()]));
    assert_eq!(v["emission"]["status"], "not-available");
    let reason = v["emission"]["reason"].as_str().unwrap();
    assert!(reason.contains("plant.input_capacitor"), "{reason}");
    let text = ripplectl(&["simulate", "--scenario", path.to_str().unwrap()]);
    let text = String::from_utf8(text.stdout).unwrap();
    assert!(text.contains("emission      not available: no `plant.input_capacitor`"), "{text}");
}

#[test]
fn a_bad_filter_value_is_named_with_its_key() {
    let text = std::fs::read_to_string(scenario("hysteretic.toml"))
        .unwrap()
        .replace("damping_r_ohm = 1.0", "damping_r_ohm = 0.0");
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("s.toml");
    std::fs::write(&file, text).unwrap();
    let out = ripplectl(&["simulate", "--scenario", file.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("emission.filter.damping_r_ohm"), "{err}");
}

#[test]
fn compare_runs_both_and_prints_the_differences() {
    let (a, b) = (scenario("analog-retrofit.toml"), scenario("hysteretic.toml"));
    let (a, b) = (a.to_str().unwrap(), b.to_str().unwrap());
    let both = json(&ripplectl(&["compare", a, b, "--json"]));
    let alone = json(&ripplectl(&["simulate", "--json", "--scenario", b]));
    for key in ["vout_mean_v", "fsw_mean_hz", "efficiency_true", "emission", "audible"] {
        assert_eq!(both["second"][key], alone[key], "{key}");
    }
    let out = ripplectl(&["compare", a, b]);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    let margin = |v: &serde_json::Value| v["emission"]["margin_db"].as_f64().unwrap();
    let difference = format!("{:+.1} dB", margin(&both["second"]) - margin(&both["first"]));
    let row = text.lines().find(|l| l.trim_start().starts_with("emission margin")).unwrap();
    assert!(row.ends_with(&difference), "{row:?} should end with {difference}");
    for label in
        ["regulation error", "ripple p-p", "frequency min", "efficiency", "audible strongest"]
    {
        assert!(text.contains(label), "{label} missing:\n{text}");
    }
    // The transients: each run's worst figure over its disturbances, as
    // its own summary lists them, and the difference.
    let worst = |v: &serde_json::Value, key: &str| {
        let list = v["transients"].as_array().unwrap();
        assert!(!list.is_empty(), "{v}");
        list.iter().map(|t| t[key].as_f64().unwrap()).fold(f64::NEG_INFINITY, f64::max)
    };
    for (label, key) in [("worst undershoot", "undershoot_v"), ("worst overshoot", "overshoot_v")] {
        let (a, b) = (worst(&both["first"], key), worst(&both["second"], key));
        let row = text.lines().find(|l| l.trim_start().starts_with(label)).unwrap();
        let cells: Vec<&str> = row.split("  ").filter(|c| !c.trim().is_empty()).collect();
        let mv = |c: &str| -> f64 {
            let c = c.trim();
            let (x, unit) = c.split_once(' ').unwrap();
            x.parse::<f64>().unwrap() * if unit == "mV" { 1e-3 } else { 1.0 }
        };
        // Three significant digits at least.
        assert!((mv(cells[1]) - a).abs() <= 5e-4 * a.abs().max(1e-3), "{row:?}: {a}");
        assert!((mv(cells[2]) - b).abs() <= 5e-4 * b.abs().max(1e-3), "{row:?}: {b}");
        assert!((mv(cells[3]) - (b - a)).abs() <= 1e-3 * (b - a).abs().max(1e-3), "{row:?}");
    }
    assert!(text.contains("longest recovery"), "{text}");
}
