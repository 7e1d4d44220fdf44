//! Size probe `slow_path`: the on-time stack's housekeeping tick (the
//! supervisor's housekeeping, the estimator's window, losses, feed-forward
//! and trim, DC correction, observer) and its telemetry; no fast path. A
//! four-entry fault log ([`FAULT_LOG`]).
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::law::OnTime;
use ripplectl::stack::Stack;
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, output};
use ripplectl_target::singleton;
use ripplectl_target::{COT_PARTS, FAULT_LOG, ON_TIME};

#[entry]
fn main() -> ! {
    let Some(stack) =
        singleton!(: Stack<OnTime, FAULT_LOG> = Stack::with_fault_log(ON_TIME, COT_PARTS))
    else {
        halt()
    };
    loop {
        let stop = stack.housekeeping(event().now);
        let t = stack.telemetry();
        output(u32::from(stop.is_some()) ^ t.efficiency ^ t.losses.output.to_bits() as u32);
    }
}
