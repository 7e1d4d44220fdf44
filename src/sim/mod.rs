//! Host simulation (feature `std`): the crate's firmware objects in closed
//! loop with a switched buck converter.
//!
//! | module | what |
//! |---|---|
//! | [`linear`] | closed-form solution of linear segments, same cost for any step |
//! | [`plant`] | the power stage, its conduction modes and energy ledger |
//! | [`profile`] | input-voltage and load profiles |
//! | [`scenario`] | one run's description, from TOML |
//! | [`firmware`] | the [`Firmware`] trait the simulator runs, and the crate's stack on it |
//! | [`peripherals`] | simulated gate pin, compare timer, comparator and DAC |
//! | [`build`] | the crate's stack configured from a scenario, and run on it ([`run`], [`run_with`]) |
//! | [`mcu`] | the microcontroller model: ADC, comparator |
//! | [`cores`] | the named cores: cycles per instruction, interrupt entry and exit |
//! | [`cpu`] | the core: each handler's cost, and how handlers share it |
//! | [`engine`] | the event loop: plant, peripherals, interrupts |
//! | [`hardware`] | the simulated peripherals' errors against the firmware's configuration |
//! | [`run_control`] | progress and cancellation of a run |
//! | [`record`] | cycles, envelope and steady windows collected during a run |
//! | [`quadratic`] | a quantity over one panel of the plant's motion: integral, extremes, crossings |
//! | [`metrics`] | the summary of a run |
//! | [`accounting`] | the true efficiency over the windows in regulation |
//! | [`cells`] | uniform cell averages of piecewise-linear or quadratic signals |
//! | [`emission`] | the conducted-emission estimate: LISN, receiver, CISPR 32 limits |
//! | [`audible`] | audible-band figures: sub-20 kHz content, long periods |
//! | [`netlist`] | SPICE netlists of the stage for external cross-checks |
//! | [`open_loop`] | fixed-duty runs of the power stage alone |
//! | [`notation`] | values as the reports print them (engineering notation) |
//! | [`report`] | terminal table, CSV |
//! | [`plot`] | SVG plots |
//! | [`zoom`] | plots of one or more runs on shared axes, and around a time |
//! | [`html`] | a self-contained HTML report |
//! | [`pages`] | the HTML reports of `simulate` and `compare` |
//! | [`compare`] | two runs' figures side by side |
//! | [`sweep`] | input × load grids in parallel |
//! | [`tolerance`] | many runs with parts and conditions drawn within their spreads, yield |
//! | [`transient`] | undershoot, overshoot and recovery at each disturbance |

pub mod accounting;
pub mod audible;
pub mod build;
pub mod cells;
pub mod compare;
pub mod cores;
pub mod cpu;
pub mod emission;
pub mod engine;
pub mod firmware;
pub mod hardware;
pub mod html;
pub mod linear;
pub mod mcu;
pub mod metrics;
pub mod netlist;
pub mod notation;
pub mod open_loop;
pub mod pages;
pub mod peripherals;
pub mod plant;
pub mod plot;
pub mod profile;
pub mod quadratic;
pub mod record;
pub mod report;
pub mod run_control;
pub mod scenario;
pub mod sweep;
pub mod tolerance;
pub mod transient;
pub mod zoom;

pub use build::{run, run_with};
pub use engine::{run_firmware, RunError, RunOutput};
pub use firmware::{Firmware, StackFirmware};
pub use metrics::Summary;
pub use peripherals::Peripherals;
pub use run_control::RunControl;
pub use scenario::{Scenario, ScenarioError};
