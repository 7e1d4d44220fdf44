//! The emission estimate recomputed with numpy and scipy
//! (`tests/emission_crosscheck.py`) from the switch current `simulate`
//! writes: numpy's FFT of the point-sampled waveform, nodal analysis of the
//! input network with both line networks, and a time-domain receiver (mix
//! down, Gaussian FIR by scipy) against ripplectl's frequency-domain one.
//!
//! Needs a Python 3.11+ with numpy and scipy (Debian: python3-numpy,
//! python3-scipy); `RIPPLECTL_PYTHON` names the interpreter, else `python3`
//! and then Debian's `/usr/bin/python3` are tried. Without one the check is
//! skipped with a message, unless `RIPPLECTL_REQUIRE_SCIPY` is set (CI sets
//! it), when it fails.

use crate::common;

use common::tools;
use std::path::{Path, PathBuf};
use std::process::Command;

fn python_with_scipy() -> Option<String> {
    let found = std::env::var("RIPPLECTL_PYTHON")
        .into_iter()
        .chain(["python3".to_string(), "/usr/bin/python3".to_string()])
        .find(|p| tools::runs(p, &["-c", "import numpy, scipy, tomllib"]));
    tools::found_or_skipped(
        found,
        "RIPPLECTL_REQUIRE_SCIPY",
        "a python3 with numpy and scipy",
        "apt-get install python3-numpy python3-scipy",
    )
}

fn manifest(path: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(path)
}

/// Simulate `scenario` into a temporary directory and run the cross-check.
fn cross_check(python: &str, scenario: &Path) {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let run = Command::new(env!("CARGO_BIN_EXE_ripplectl"))
        .args(["simulate", "--scenario"])
        .arg(scenario)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(run.status.success(), "{}", String::from_utf8_lossy(&run.stderr));
    let check = Command::new(python)
        .arg(manifest("tests/emission_crosscheck.py"))
        .arg(scenario)
        .arg(&out)
        .output()
        .unwrap();
    let report = String::from_utf8_lossy(&check.stdout);
    println!("{report}");
    assert!(check.status.success(), "{report}{}", String::from_utf8_lossy(&check.stderr));
}

#[test]
fn demo_with_its_filter_agrees_with_numpy_and_scipy() {
    // On the sampled fixture (its spectrum as before the default moved to
    // comparator edges): on the default scenario the peak detector reads
    // up to 1.0 dB under numpy's at 300-350 kHz, 27 dB below the highest
    // reading (the average detector agrees within 0.01 dB); not yet
    // resolved.
    let Some(python) = python_with_scipy() else { return };
    cross_check(&python, &manifest("tests/fixtures/sampled-1mhz.toml"));
}

#[test]
fn demo_without_a_filter_agrees_with_numpy_and_scipy() {
    let Some(python) = python_with_scipy() else { return };
    let text = std::fs::read_to_string(manifest("examples/scenarios/hysteretic.toml")).unwrap();
    let bare: String =
        text.lines().filter(|l| !l.starts_with("filter = ")).map(|l| format!("{l}\n")).collect();
    assert_ne!(bare, text, "the demo has a filter line to take out");
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("bare.toml");
    std::fs::write(&file, bare).unwrap();
    cross_check(&python, &file);
}
