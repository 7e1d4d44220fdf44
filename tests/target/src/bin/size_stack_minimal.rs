//! Size probe `stack`, minimal feature set: what a hysteretic firmware
//! needs and nothing more. The crate without any optional part
//! (`default-features = false`: no loss model, observer, DC correction,
//! light-load sizer, feed-forward, frequency lock, dither or emulated
//! ripple): `Handlers` around the hysteretic stack (law and guard,
//! supervisor, current estimator) driving a gate driver, every interrupt
//! handler's body, the comparator's code and telemetry; a four-entry fault
//! log ([`FAULT_LOG`]). The firmware is a `static` the compiler
//! initialises (`Stack::with_reference`, `GateDriver::before_start`): no
//! constructor runs at start-up, the runtime copies its image with the
//! rest of `.data`, and the firmware drives the gate off once before the
//! first event. Built with `--features minimal` alone (`run.sh`).
#![no_std]
#![no_main]

#[cfg(feature = "parts")]
compile_error!("size_stack_minimal measures the stack without optional parts: build it with `--features minimal` alone");

use panic_halt as _;
use ripplectl::drive::{GateDriver, Polarity, PulseEnd};
use ripplectl::guard::LightLoad;
use ripplectl::law::Hysteretic;
use ripplectl::stack::{Handlers, SlowPathConfig, Stack, StackConfig, StackParts};
use ripplectl::{unwrap_config, WindowConfig};
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, output, Compare, Pin};
use ripplectl_target::singleton;
use ripplectl_target::{CONFIG, FAULT_LOG, HYSTERETIC};

/// The demo board without an optional part: no observer, no DC
/// correction; a long period is reported, not answered with smaller
/// pulses (the demo's stage is not synchronous).
const PARTS: StackParts = unwrap_config(StackParts::new(&StackConfig {
    window: WindowConfig { light_load: LightLoad::ReportOnly, ..CONFIG.window },
    slow: SlowPathConfig { observer_bandwidth_hz: None, dc_correction: false, ..CONFIG.slow },
    ..CONFIG
}));

#[entry]
fn main() -> ! {
    let Some(fw) = singleton!(: Handlers<Hysteretic, Pin, Compare, FAULT_LOG> = const
    Handlers::new(
        Stack::with_reference(HYSTERETIC, PARTS, HYSTERETIC.reference_code()),
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
        let t = fw.stack().telemetry();
        output(
            u32::from(fw.comparator_code().unwrap_or(0)) ^ t.current.to_bits() as u32 ^ t.f_sw_hz,
        );
    }
}
