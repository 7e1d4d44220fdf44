//! Running the `ripplectl` program and reading the shipped scenarios.

use std::path::Path;
use std::process::{Command, Output};

/// Run `ripplectl` with `args`, wait, return its output.
pub fn ripplectl(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_ripplectl")).args(args).output().unwrap()
}

/// The text of the built-in default scenario.
pub fn default_toml() -> String {
    std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios/hysteretic.toml"),
    )
    .unwrap()
}

/// Write `text` as a scenario, run `simulate` on it, return (exit code, stderr).
pub fn simulate_text(text: &str) -> (i32, String) {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("s.toml");
    std::fs::write(&file, text).unwrap();
    let out_dir = dir.path().join("out");
    let out = ripplectl(&[
        "simulate",
        "--scenario",
        file.to_str().unwrap(),
        "--out",
        out_dir.to_str().unwrap(),
    ]);
    assert!(!out_dir.exists(), "nothing may be written on bad input");
    (out.status.code().unwrap(), String::from_utf8(out.stderr).unwrap())
}

/// `simulate` refuses `text` with exit code 2 and one line mentioning each
/// of `expect`.
pub fn assert_one_line_error(text: &str, expect: &[&str]) {
    let (code, err) = simulate_text(text);
    assert_eq!(code, 2, "exit code; stderr: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    for e in expect {
        assert!(err.contains(e), "{err:?} should mention {e:?}");
    }
}
