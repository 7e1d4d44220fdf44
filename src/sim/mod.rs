//! Host simulation (feature `std`): the crate's firmware objects in closed
//! loop with a switched buck converter.
//!
//! | module | what |
//! |---|---|
//! | [`linear`] | closed-form solution of linear segments (matrix exponential) |
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
//! | [`cells`] | uniform cell averages of piecewise-linear signals |
//! | [`emission`] | conducted-emission estimate (LISN, receiver, CISPR 32 limits) |
//! | [`audible`] | audible-band figures of the inductor current |
//! | [`zoom`] | plots of one or more runs on shared axes, whole run or around a time |
//! | [`html`] | the self-contained HTML report |
//! | [`pages`] | the HTML reports of `simulate` and `compare` |
//! | [`compare`] | two runs' figures side by side |

pub mod audible;
pub mod cells;
pub mod compare;
pub mod emission;
pub mod engine;
pub mod firmware;
pub mod html;
pub mod linear;
pub mod metrics;
pub mod netlist;
pub mod open_loop;
pub mod pages;
pub mod plant;
pub mod plot;
pub mod profile;
pub mod record;
pub mod report;
pub mod scenario;
pub mod sweep;
pub mod zoom;

pub use engine::{run, RunError, RunOutput};
pub use metrics::Summary;
pub use scenario::{Scenario, ScenarioError};
