//! The firmware configuration `ripplectl design` wrote for the demo board
//! (`examples/designed/greenhouse-5v/`), compiled here as `const` items and
//! run in the simulator on the scenario written beside it: the same stack a
//! firmware flashes (built by [`Stack::new`] from `LAW` and `PARTS`, its
//! driver ending pulses as `PULSE_END` says), on the simulated peripherals.
//!
//! ```sh
//! cargo run --release -- design --vin 18:32 --vout 5 --iout 2 --l 47e-6 --c 220e-6 --esr 0.04 --out examples/designed/greenhouse-5v
//! cargo run --release --example designed_firmware
//! ```
//!
//! Caution: a simulation is not a measurement. Bring a board up from a
//! current-limited bench supply, with a hardware current limit that does
//! not depend on the firmware, and check its switch node, output and
//! inductor current with a scope.

use ripplectl::sim::{self, report, RunError, Scenario, StackFirmware, Summary};
use ripplectl::stack::Stack;

include!("designed/greenhouse-5v/config.rs");

fn main() -> Result<(), RunError> {
    let scenario = Scenario::from_toml(include_str!("designed/greenhouse-5v/scenario.toml"))?;
    let out = sim::run_firmware(&scenario, |p| {
        StackFirmware::with_pulse_end(Stack::new(LAW, PARTS), p, PULSE_END)
    })?;
    let summary = Summary::of(&out, &scenario.name, 0.0);
    print!("{}", report::table(&summary, &scenario.control.window));
    Ok(())
}
