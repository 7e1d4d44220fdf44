//! What differs between the target cores, for the binaries to name once:
//! the runtime's entry attribute (`cortex-m-rt` on the Cortex-M cores,
//! `riscv-rt` on RV32), waiting for an interrupt, and the core's name in
//! `run.sh`'s lines and `counts.csv`; and a `static` created once at run
//! time in `.bss` on every core ([`singleton!`](crate::singleton)).

#[cfg(target_arch = "arm")]
pub use cortex_m_rt::entry;
#[doc(hidden)]
pub use critical_section;
#[cfg(target_arch = "riscv32")]
pub use riscv_rt::entry;

/// `singleton!(: T = expr)`: a `&'static mut T` holding `expr`, made once
/// (`None` when this call site already made it), in a critical section
/// (each core's runtime crate provides it).
///
/// `singleton!(: T = const expr)`: the same for an `expr` the compiler
/// evaluates: the value is the static's initial image in `.data`, which
/// the runtime copies at reset with the rest of `.data`; nothing is built
/// at run time.
///
/// The state is a `MaybeUninit` and a flag, all zeros before the first
/// call, so it lives in `.bss`, as `cortex_m::singleton!` (which this
/// follows) has it. The `riscv` crate's `singleton!` keeps an `Option`,
/// and where the type has a niche `None` is not all zeros: the whole state
/// moved to `.data`, costing flash for its initial image (816 B for the
/// `stack` probe) and a copy at start-up.
#[macro_export]
macro_rules! singleton {
    (: $ty:ty = const $expr:expr) => {
        $crate::arch::critical_section::with(|_| {
            static mut VAR: ($ty, bool) = ($expr, false);
            // SAFETY: inside the critical section nothing else reaches
            // `VAR`, and the flag hands its value out once.
            let var = unsafe { &mut *::core::ptr::addr_of_mut!(VAR) };
            if var.1 {
                None
            } else {
                var.1 = true;
                Some(&mut var.0)
            }
        })
    };
    (: $ty:ty = $expr:expr) => {
        $crate::arch::critical_section::with(|_| {
            static mut VAR: (::core::mem::MaybeUninit<$ty>, bool) =
                (::core::mem::MaybeUninit::uninit(), false);
            // SAFETY: inside the critical section nothing else reaches
            // `VAR`, and the flag hands its value out once.
            let var = unsafe { &mut *::core::ptr::addr_of_mut!(VAR) };
            if var.1 {
                None
            } else {
                let value = $expr;
                var.1 = true;
                Some(var.0.write(value))
            }
        })
    };
}

/// The core's name: `m0` (thumbv6m), `m4` (thumbv7em, hard float) or
/// `rv32` (riscv32imc and riscv32imac).
pub const CORE: &str = if cfg!(target_arch = "riscv32") {
    "rv32"
} else if cfg!(target_abi = "eabihf") {
    "m4"
} else {
    "m0"
};

/// Sleep until an interrupt.
pub fn wait_for_interrupt() {
    #[cfg(target_arch = "arm")]
    cortex_m::asm::wfi();
    #[cfg(target_arch = "riscv32")]
    riscv::asm::wfi();
}
