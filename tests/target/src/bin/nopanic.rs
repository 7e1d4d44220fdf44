//! Target side: every run-time entry point (the fast path, the slow path's
//! housekeeping, telemetry, the handlers of a whole firmware) linked with
//! `panic-never`, whose panic handler does not link: if any panic is
//! reachable from them (an index, an unwrap, an overflow check, a division
//! by a possible zero), the build fails. Inputs come through volatile reads
//! so nothing folds away.
#![no_std]
#![no_main]

use panic_never as _;
use ripplectl::stack::{Handlers, Stack};
use ripplectl::{Gate, Instant, Law};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{driver, input, output};
use ripplectl_target::{Rig, COT_PARTS, ON_TIME};

#[entry]
fn main() -> ! {
    let mut rig = Rig::demo();
    // The whole firmware, as the example wires it: every handler, the slow
    // path included.
    let mut firmware = Handlers::new(Stack::new(ON_TIME, COT_PARTS), driver());
    loop {
        let (code, now, level) = (input(0) as u16, Instant(input(1)), input(2) & 1 != 0);
        let gate = if level { Gate::On } else { Gate::Off };
        output(u32::from(rig.guard.on_sample(code, now).gate.is_on()));
        output(u32::from(rig.guard.on_edge(level, now).gate.is_on()));
        output(u32::from(rig.guard.on_timer(now).gate.is_on()));
        output(u32::from(rig.edge.on_edge(level, now).gate.is_on()));
        output(u32::from(rig.on_time.on_sample(code, now).gate.is_on()));
        output(u32::from(rig.on_time.on_edge(level, now).gate.is_on()));
        output(u32::from(rig.on_time.on_timer(now).gate.is_on()));
        output(rig.estimator.on_gate(gate, now).map_or(0, |c| c.on_ticks));
        output(rig.estimator.current_at(now).to_bits() as u32);
        rig.estimator.on_output_code(code, now);
        output(
            rig.estimator
                .ticks_to_reach(ripplectl::estimate::Amps::from_bits(input(3) as i32))
                .unwrap_or(0),
        );
        output(
            rig.stack
                .on_conversion(code, input(3) as u16, now)
                .map_or(0, |c| u32::from(c.gate.is_on())),
        );
        output(u32::from(rig.stack.on_edge(level, now).gate.is_on()));
        output(u32::from(rig.stack.on_timer(now).gate.is_on()));
        output(rig.stack.housekeeping(now).map_or(0, |c| u32::from(c.gate.is_on())));
        output(rig.stack.telemetry().efficiency);
        rig.estimator.on_input_code(code, now);
        let Ok(()) = firmware.conversion_done(code, input(3) as u16, now);
        let Ok(()) = firmware.comparator_edge(level, now);
        let Ok(()) = firmware.compare_fired(now);
        let Ok(()) = firmware.housekeeping(now, Some(level));
        output(u32::from(firmware.comparator_code().unwrap_or(0)));
        if input(2) & 2 != 0 {
            firmware.stack_mut().clear_faults(now);
            let Ok(()) = firmware.shut_down();
        }
    }
}
