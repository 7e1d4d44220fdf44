//! The counter the counts read, on each core, and a loop of known length
//! to calibrate it.
//!
//! Cortex-M: SysTick, clocked by the core. Under `qemu-system-arm -icount
//! shift=0` every guest instruction advances virtual time by the same step
//! and SysTick counts virtual time, so its ticks are proportional to
//! instructions (40–63 instructions a tick).
//!
//! RV32: `minstret`, the instructions-retired counter. Under
//! `qemu-system-riscv32 -icount shift=0` it reads QEMU's instruction count
//! (a CSR read ends its translation block, so the count is exact at the
//! read): one tick per instruction.
//!
//! Either way the ratio is measured, not assumed: [`known_loop`] runs a
//! loop of two instructions a turn, and `calibrate` in `main.rs` divides.

/// Start the counter.
pub fn start() {
    #[cfg(target_arch = "arm")]
    {
        use cortex_m::peripheral::{syst::SystClkSource, Peripherals};
        let Some(mut p) = Peripherals::take() else { return };
        p.SYST.set_clock_source(SystClkSource::Core);
        p.SYST.set_reload(0x00ff_ffff);
        p.SYST.clear_current();
        p.SYST.enable_counter();
    }
    // RV32: `minstret` counts from reset (`mcountinhibit` is clear).
}

/// The counter's present reading.
pub fn ticks() -> u32 {
    #[cfg(target_arch = "arm")]
    return cortex_m::peripheral::SYST::get_current();
    #[cfg(target_arch = "riscv32")]
    return riscv::register::minstret::read() as u32;
}

/// Ticks since the reading `start`: SysTick counts down from 2²⁴ − 1,
/// `minstret` up (its low 32 bits).
pub fn since(start: u32) -> u32 {
    #[cfg(target_arch = "arm")]
    return start.wrapping_sub(ticks()) & 0x00ff_ffff;
    #[cfg(target_arch = "riscv32")]
    return ticks().wrapping_sub(start);
}

/// Exactly `2·n` instructions: a decrement and a branch per turn (`n` ≥ 1).
#[inline(never)]
pub fn known_loop(n: u32) {
    // SAFETY: a register-only countdown loop.
    #[cfg(target_arch = "arm")]
    unsafe {
        core::arch::asm!("2:", "subs {0}, {0}, #1", "bne 2b", inout(reg) n => _, options(nomem, nostack));
    }
    // SAFETY: a register-only countdown loop.
    #[cfg(target_arch = "riscv32")]
    unsafe {
        core::arch::asm!("2:", "addi {0}, {0}, -1", "bnez {0}, 2b", inout(reg) n => _, options(nomem, nostack));
    }
}
