//! Pick the memory map for the target core: the micro:bit's nRF51 for the
//! Cortex-M0, the MPS2 AN386 image for the Cortex-M4, QEMU's `virt` board
//! for RV32. Each map keeps the first 64 bytes of the machine's RAM out of
//! the linker's `RAM` region (`PERIPH`): the board's stand-in registers
//! (`src/board.rs`) live there, outside the images' RAM figures.
use std::{env, fs, path::PathBuf};

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let out = PathBuf::from(env::var("OUT_DIR").unwrap());
    let memory = if target.starts_with("thumbv6m") {
        // nRF51822: 256 KiB flash at 0, 16 KiB RAM at 0x2000_0000.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 256K\n PERIPH : ORIGIN = 0x20000000, LENGTH = 64\n RAM : ORIGIN = 0x20000040, LENGTH = 16K - 64 }\n"
    } else if target.starts_with("riscv32") {
        // QEMU virt: DRAM from 0x8000_0000, where `-bios none` starts the
        // hart. Its first 4 MiB stand for flash (code, constants, the
        // initial image of .data), the next 4 MiB for RAM (.data, .bss,
        // the stack at its top), as on a microcontroller.
        "MEMORY { FLASH : ORIGIN = 0x80000000, LENGTH = 4M\n PERIPH : ORIGIN = 0x80400000, LENGTH = 64\n RAM : ORIGIN = 0x80400040, LENGTH = 4M - 64 }\n\
         REGION_ALIAS(\"REGION_TEXT\", FLASH);\n\
         REGION_ALIAS(\"REGION_RODATA\", FLASH);\n\
         REGION_ALIAS(\"REGION_DATA\", RAM);\n\
         REGION_ALIAS(\"REGION_BSS\", RAM);\n\
         REGION_ALIAS(\"REGION_HEAP\", RAM);\n\
         REGION_ALIAS(\"REGION_STACK\", RAM);\n"
    } else {
        // MPS2 AN386: SSRAM1 at 0 (code), SSRAM2/3 at 0x2000_0000 (data).
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 4M\n PERIPH : ORIGIN = 0x20000000, LENGTH = 64\n RAM : ORIGIN = 0x20000040, LENGTH = 4M - 64 }\n"
    };
    fs::write(out.join("memory.x"), memory).unwrap();
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-changed=vectors.bin");
}
