//! Size probe `stack`: the whole firmware as the firmware example wires it
//! (`Handlers`: the on-time stack with feed-forward, trim, DC correction
//! and the observer, driving a gate driver), every interrupt handler's
//! body, the comparator's code and telemetry; a four-entry fault log
//! ([`FAULT_LOG`], the firmware example's choice). Placed as
//! `size_stack_minimal` places it: a `static` the compiler initialises,
//! no constructor at start-up.
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::drive::{GateDriver, Polarity, PulseEnd};
use ripplectl::law::OnTime;
use ripplectl::stack::{Handlers, Stack};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, output, Compare, Pin};
use ripplectl_target::singleton;
use ripplectl_target::{COT_PARTS, FAULT_LOG, ON_TIME};

#[entry]
fn main() -> ! {
    let Some(fw) = singleton!(: Handlers<OnTime, Pin, Compare, FAULT_LOG> = const
    Handlers::new(
        Stack::with_reference(ON_TIME, COT_PARTS, ON_TIME.reference_code()),
        GateDriver::before_start(Pin, Compare, Polarity::ActiveLow, PulseEnd::Hardware),
    )) else {
        halt()
    };
    let Ok(()) = fw.shut_down();
    loop {
        let e = event();
        let Ok(()) = match e.which & 3 {
            0 => fw.conversion_done(e.output, e.input, e.now),
            1 => fw.comparator_edge(e.level, e.now),
            2 => fw.compare_fired(e.now),
            _ => fw.housekeeping(e.now, Some(e.level)),
        };
        output(u32::from(fw.comparator_code().unwrap_or(0)) ^ fw.stack().telemetry().efficiency);
    }
}
