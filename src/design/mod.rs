//! Design: closed-form predictions, and (with `std`) a first configuration
//! proposed from a few board facts.
//!
//! | module | what |
//! |---|---|
//! | [`closed_form`] | CCM/DCM relations, ripple, the laws' frequencies (re-exported here) |
//! | [`delayed`] | the hysteretic loop's steady cycle with a loop delay and capacitor ripple |
//! | `facts` | (std) the board and MCU facts a design starts from, checked, each refusal on its option |
//! | `divider` | (std) resistor dividers from the E24 series |
//! | `values` | (std) how a proposal writes its values: rounded, with prefixes, as percentages |
//! | `budget` | (std) what the firmware's handlers cost on the named core |
//! | `context` | (std) what every loop shares: dividers, housekeeping, window; a choice with its reason |
//! | `laws` | (std) what a loop's plan holds, and the helpers both plans use |
//! | `hysteretic_plan` | (std) the hysteretic law on comparator edges: its band, or why it does not fit |
//! | `on_time_plan` | (std) the on-time law on edges or samples: frequency, samples, emulated ripple, or why not |
//! | `protect` | (std) the protections and the soft-start, and the shared choices' reasons |
//! | `proposal` | (std) the whole proposal, each choice with its reason |
//! | `range` | (std) the predictions over the input × load range |
//! | `report` | (std) the proposal as printed |
//! | `scenario_file` | (std) the proposal as a commented scenario file |
//! | `check` | (std) the proposal run in the simulator over its input × load range before it is offered |
//! | `const_block` | (std) the proposal as a firmware's `const` configuration (Rust source) |
//!
//! The flow (with `std`): board facts → `proposal::propose` → checked in
//! the simulator over the input × load range (`check`) → a scenario
//! (`scenario_file`) and a `const` block → `simulate`.

pub mod closed_form;
pub mod delayed;

pub use closed_form::*;
pub use delayed::{ccm_output_ripple, hysteretic_cycle_ccm, HystereticCycle, NoCycle};

#[cfg(feature = "std")]
pub mod budget;
#[cfg(feature = "std")]
pub mod check;
#[cfg(feature = "std")]
pub mod const_block;
#[cfg(feature = "std")]
pub mod context;
#[cfg(feature = "std")]
pub mod divider;
#[cfg(feature = "std")]
pub mod facts;
#[cfg(feature = "std")]
pub mod hysteretic_plan;
#[cfg(feature = "std")]
pub mod laws;
#[cfg(feature = "std")]
pub mod on_time_plan;
#[cfg(feature = "std")]
pub mod proposal;
#[cfg(feature = "std")]
pub mod protect;
#[cfg(feature = "std")]
pub mod range;
#[cfg(feature = "std")]
pub mod report;
#[cfg(feature = "std")]
pub mod scenario_file;
#[cfg(feature = "std")]
pub mod values;
