//! Target side: replay the host's vectors and compare bit for bit.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use panic_semihosting as _;

static VECTORS: &[u8] = include_bytes!("../../vectors.bin");

fn core_name() -> &'static str {
    if cfg!(target_abi = "eabihf") {
        "m4"
    } else {
        "m0"
    }
}

#[entry]
fn main() -> ! {
    let (ok, count) = match ripplectl_target::replay(VECTORS) {
        Some((count, 0)) => (true, count),
        Some((count, bad)) => {
            hprintln!("vectors core={} mismatches={}", core_name(), bad);
            (false, count)
        }
        None => (false, 0),
    };
    hprintln!("vectors core={} match={} count={}", core_name(), ok, count);
    debug::exit(if ok { debug::EXIT_SUCCESS } else { debug::EXIT_FAILURE });
    loop {
        cortex_m::asm::wfi();
    }
}
