//! Host simulation (feature `std`): the crate's firmware objects in closed
//! loop with a switched buck converter.
//!
//! | module | what |
//! |---|---|
//! | [`linear`] | closed-form solution of linear segments, same cost for any step |
//! | [`plant`] | the power stage, its conduction modes and energy ledger |
//! | [`profile`] | input-voltage and load profiles |
//! | [`scenario`] | one run's description, from TOML |
//! | [`firmware`] | the firmware objects a scenario configures |
//! | [`engine`] | the event loop: plant, peripherals, interrupts |
//! | [`record`] | cycles, envelope and steady windows collected during a run |
//! | [`metrics`] | the summary of a run |
//! | [`netlist`] | SPICE netlists of the stage for external cross-checks |
//! | [`open_loop`] | fixed-duty runs of the power stage alone |
//! | [`report`] | terminal table, CSV |
//! | [`plot`] | SVG plots |
//! | [`sweep`] | input × load grids in parallel |

pub mod engine;
pub mod firmware;
pub mod linear;
pub mod metrics;
pub mod netlist;
pub mod open_loop;
pub mod plant;
pub mod plot;
pub mod profile;
pub mod record;
pub mod report;
pub mod scenario;
pub mod sweep;

pub use engine::{run, RunError, RunOutput};
pub use metrics::Summary;
pub use scenario::{Scenario, ScenarioError};
