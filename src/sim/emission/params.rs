//! The `[emission]` table of a scenario: the limits' class and the input
//! filter, if fitted.

use super::limits::Class;
use super::network::InputFilter;
use serde::{Deserialize, Serialize};

/// The `[emission]` table of a scenario.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EmissionParams {
    /// Limit class (default B).
    #[serde(default)]
    pub class: Class,
    /// Input filter between the networks and the input capacitor, if fitted.
    #[serde(default)]
    pub filter: Option<InputFilter>,
}
