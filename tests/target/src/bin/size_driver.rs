//! Size probe `driver`: the gate driver on a RAM-word pin and compare,
//! carrying out commands, the compare's pulse end and a shut-down.
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::drive::GateDriver;
use ripplectl::{Command, Gate};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{driver, event, halt, output, Compare, Pin};
use ripplectl_target::singleton;

#[entry]
fn main() -> ! {
    let Some(driver) = singleton!(: GateDriver<Pin, Compare> = driver()) else { halt() };
    loop {
        let e = event();
        let gate = Gate::from_bool(e.level);
        let Ok(()) = match e.which & 3 {
            0 => driver.apply(Command::hold(gate)),
            1 => driver.apply(Command::until(gate, e.now)),
            2 => {
                output(driver.compare_fired(e.now).map_or(0, |at| at.0));
                Ok(())
            }
            _ => driver.shut_down(),
        };
    }
}
