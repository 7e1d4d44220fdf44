//! Size probe `estimator`: the current estimator, its fast path (edges,
//! readings, the current now and the limit's prediction) and its slow path
//! (window, voltages, correction).
#![no_std]
#![no_main]

use panic_halt as _;
use ripplectl::estimate::{Amps, CurrentEstimator};
use ripplectl::Gate;
use ripplectl_target::arch::entry;
use ripplectl_target::board::{event, halt, input, output};
use ripplectl_target::singleton;
use ripplectl_target::COT_PARTS;

#[entry]
fn main() -> ! {
    let Some(est) = singleton!(: CurrentEstimator = COT_PARTS.estimator) else { halt() };
    loop {
        let e = event();
        let amps = Amps::from_bits(input(2) as i32);
        let x = match e.which & 7 {
            0 => est.on_gate(Gate::from_bool(e.level), e.now).map_or(0, |c| c.on_ticks),
            1 => {
                est.on_output_code(e.output, e.now);
                est.on_input_code(e.input, e.now);
                0
            }
            2 => est.current_at(e.now).to_bits() as u32,
            3 => est.ticks_to_reach(amps).unwrap_or(0),
            4 => est.take_window().f_sw_hz,
            5 => {
                est.set_voltage_codes(e.input, e.output);
                0
            }
            6 => {
                est.update(e.now);
                0
            }
            _ => {
                est.shift(amps);
                0
            }
        };
        output(x ^ est.current().to_bits() as u32);
    }
}
