//! Failures of a command and the exit codes they map to, and loading the
//! scenario a command runs.

use crate::progress::INTERRUPTED_EXIT;
use ripplectl::sim::{RunError, Scenario};
use std::path::Path;

/// A failure and the exit code it maps to.
pub struct Failure {
    /// Exit code: 2 bad input, 1 anything else.
    pub code: u8,
    /// One line for stderr.
    pub message: String,
}

pub fn bad_input(message: impl std::fmt::Display) -> Failure {
    Failure { code: 2, message: message.to_string() }
}

pub fn failed(message: impl std::fmt::Display) -> Failure {
    Failure { code: 1, message: message.to_string() }
}

pub fn load_scenario(path: Option<&Path>) -> Result<Scenario, Failure> {
    let Some(path) = path else { return Ok(Scenario::default_demo()) };
    let text =
        std::fs::read_to_string(path).map_err(|e| bad_input(format!("{}: {e}", path.display())))?;
    Scenario::from_toml(&text).map_err(|e| bad_input(format!("{}: {e}", path.display())))
}

/// Ctrl-C ended the command before anything was written.
pub fn interrupted() -> Failure {
    Failure { code: INTERRUPTED_EXIT, message: "interrupted; nothing written".to_string() }
}

/// A run that did not complete.
pub fn run_failure(e: RunError) -> Failure {
    match e {
        RunError::Cancelled => interrupted(),
        RunError::Config(_) | RunError::CpuOverload { .. } => bad_input(e),
    }
}
