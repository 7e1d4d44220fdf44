//! Size probe `law_guard`: the stack's law (on-time with feed-forward and
//! trim, `const`-configured) inside the frequency guard, its fast-path
//! entry points.
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::law::OnTime;
use ripplectl::{FrequencyGuard, Law};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, output};
use ripplectl_target::singleton;
use ripplectl_target::{COT_PARTS, ON_TIME};

#[entry]
fn main() -> ! {
    let Some(guard) = singleton!(: FrequencyGuard<OnTime> =
        FrequencyGuard::new(ON_TIME, COT_PARTS.window))
    else {
        halt()
    };
    loop {
        let e = event();
        let command = match e.which & 3 {
            0 => guard.on_sample(e.output, e.now),
            1 => guard.on_edge(e.level, e.now),
            _ => guard.on_timer(e.now),
        };
        output(u32::from(command.gate.is_on()) ^ command.wake.map_or(0, |w| w.0));
    }
}
