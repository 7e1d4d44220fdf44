//! Size probe `supervisor`: the supervisor around the guarded on-time law
//! (with the current estimator it owns), its fast path and its own
//! housekeeping; not the stack's slow path. A four-entry fault log
//! ([`FAULT_LOG`]).
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::law::OnTime;
use ripplectl::supervisor::Supervisor;
use ripplectl::{FrequencyGuard, Law};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, output};
use ripplectl_target::singleton;
use ripplectl_target::{COT_PARTS, FAULT_LOG, ON_TIME};

#[entry]
fn main() -> ! {
    let Some(sup) = singleton!(: Supervisor<FrequencyGuard<OnTime>, FAULT_LOG> = Supervisor::with_fault_log(
        FrequencyGuard::new(ON_TIME, COT_PARTS.window),
        COT_PARTS.estimator,
        COT_PARTS.limits,
    )) else {
        halt()
    };
    loop {
        let e = event();
        let command = match e.which & 3 {
            0 => {
                sup.on_input_reading(e.input, e.now);
                Some(sup.on_sample(e.output, e.now))
            }
            1 => Some(sup.on_edge(e.level, e.now)),
            2 => Some(sup.on_timer(e.now)),
            _ => sup.housekeeping(e.input, e.now),
        };
        output(command.map_or(2, |c| u32::from(c.gate.is_on())) ^ sup.fault_log().len() as u32);
    }
}
