//! Size probe `base`: the runtime alone (vector table, reset, RAM set-up,
//! panic-halt) and the probes' input/output words, for reading the other
//! probes' figures as what their part adds.
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl_target::arch::entry;
use ripplectl_target::board::{input, output};

#[entry]
fn main() -> ! {
    loop {
        output(input(0));
    }
}
