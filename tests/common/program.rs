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
