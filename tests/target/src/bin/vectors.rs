//! Target side: replay the host's vectors and compare bit for bit.
#![no_std]
#![no_main]

use ripplectl_target::arch::{entry, CORE};
use semihosting::{println, process};

static VECTORS: &[u8] = include_bytes!("../../vectors.bin");

#[entry]
fn main() -> ! {
    let (ok, count) = match ripplectl_target::replay(VECTORS) {
        Some((count, 0)) => (true, count),
        Some((count, bad)) => {
            println!("vectors core={} mismatches={}", CORE, bad);
            (false, count)
        }
        None => (false, 0),
    };
    println!("vectors core={} match={} count={}", CORE, ok, count);
    process::exit(if ok { 0 } else { 1 })
}
