//! Pick the memory map for the target core: the micro:bit's nRF51 for the
//! Cortex-M0, the MPS2 AN386 image for the Cortex-M4.
use std::{env, fs, path::PathBuf};

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let out = PathBuf::from(env::var("OUT_DIR").unwrap());
    let memory = if target.starts_with("thumbv6m") {
        // nRF51822: 256 KiB flash at 0, 16 KiB RAM at 0x2000_0000.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 256K\n RAM : ORIGIN = 0x20000000, LENGTH = 16K }\n"
    } else {
        // MPS2 AN386: SSRAM1 at 0 (code), SSRAM2/3 at 0x2000_0000 (data).
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 4M\n RAM : ORIGIN = 0x20000000, LENGTH = 4M }\n"
    };
    fs::write(out.join("memory.x"), memory).unwrap();
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-changed=vectors.bin");
}
