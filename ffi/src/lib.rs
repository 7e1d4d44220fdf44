//! # ripplectl-ffi: the firmware stack from C
//!
//! A static library (`libripplectl_ffi.a`) and its header
//! (`ffi/include/ripplectl.h`, generated from this crate by cbindgen) that
//! give a C firmware the crate's whole stack ([`ripplectl::stack`]): the
//! supervisor, the guarded law, the current estimator and the slow path,
//! wired to the board's gate pin and compare timer
//! ([`Handlers`]), one call per interrupt.
//!
//! ```text
//!   static ripplectl fw;                       state, in the C side's .bss
//!   ripplectl_init(&fw, &config, &board, &e)   once: SI config checked and converted
//!   ADC conversion done ─▶ ripplectl_conversion_done(&fw, out, in, now)
//!   comparator edge     ─▶ ripplectl_comparator_edge(&fw, level, now)
//!   timer compare       ─▶ ripplectl_compare_fired(&fw, now)
//!   housekeeping tick   ─▶ ripplectl_housekeeping(&fw, now, -1)
//!   gate pin, compare   ◀─ board.set_gate / arm / disarm / now (callbacks)
//!   telemetry, faults   ◀─ ripplectl_read_telemetry / ripplectl_read_faults
//! ```
//!
//! The state is owned by the caller in static memory: [`Ripplectl`]
//! (`ripplectl` in C) is an opaque block whose size, `RIPPLECTL_STATE_WORDS`
//! 64-bit words, is a constant of the header, checked against the Rust type
//! at compile time. Nothing is allocated. Configuration runs once, at
//! start-up, through the crate's own checks: a refusal returns a kind and
//! the refused parameter's name. The entry points are the crate's fast and
//! slow paths: integer arithmetic only, no floating point.
//!
//! **Panics.** None is reachable, start-up included (`tests/target/run.sh`
//! fails when a C image links a panic path); a no_std library still needs
//! a panic handler. It spins forever, so a watchdog resets the part; with
//! the feature `panic-hook` it first calls the firmware's
//! `void ripplectl_panic(void)` (drive the gate off, record, reset).
//!
//! **Safety.** Firmware control of a power stage can burn, shock and destroy
//! loads: bring a board up from a current-limited bench supply and keep a
//! hardware current limit that does not depend on this code (the crate's
//! README, "Safety").
// `no_std` on a bare-metal target; a hosted build (the workspace's host
// checks and unit tests) links std for its unwinding panic runtime.
#![cfg_attr(target_os = "none", no_std)]
#![deny(missing_docs)]

mod board;
mod config;
mod error;
mod law;
mod telemetry;
#[cfg(test)]
mod tests;

pub use board::Board;
pub use config::{
    AdcSettings, Config, CoreSettings, LawSettings, ModelSettings, ProtectionSettings,
    SlowSettings, WindowSettings, RIPPLECTL_LAW_COMPARATOR, RIPPLECTL_LAW_HYSTERETIC,
    RIPPLECTL_LAW_ON_TIME, RIPPLECTL_LIGHT_LOAD_FORCED_PULSE, RIPPLECTL_LIGHT_LOAD_REPORT_ONLY,
    RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES, RIPPLECTL_SENSING_EDGE, RIPPLECTL_SENSING_SAMPLED,
};
pub use error::{ConfigErrorInfo, Error, RIPPLECTL_NAME_LEN};
pub use law::AnyLaw;
pub use telemetry::{Clamps, Fault, FaultKind, Losses, State, Telemetry};

use board::{Pin, PinRefused, Timer};
use core::mem::{align_of, size_of, MaybeUninit};
use ripplectl::stack::{Handlers, Stack};
use ripplectl::supervisor::FAULT_LOG_LEN;
use ripplectl::Instant;

/// The whole firmware: the stack around the configured law, wired to the
/// board's pin and timer, keeping the crate's default fault log.
///
/// cbindgen:ignore
type Firmware = Handlers<AnyLaw, Pin, Timer>;

/// What the opaque storage holds: the firmware, valid once `ready` is
/// [`READY`] (zero bytes, as a `static` starts, are "not initialised").
#[repr(C)]
struct Slot {
    ready: u32,
    firmware: MaybeUninit<Firmware>,
}

/// `Slot::ready` of an initialised state ("RPLC").
const READY: u32 = 0x434c_5052;

/// Entries of the fault log (the oldest is dropped when full): the crate's
/// default length.
pub const RIPPLECTL_FAULT_LOG_LEN: usize = 16;
const _: () = assert!(RIPPLECTL_FAULT_LOG_LEN == FAULT_LOG_LEN);

/// Size of the state, 64-bit words, on a target with 32-bit pointers
/// (Cortex-M, RV32).
#[cfg(target_pointer_width = "32")]
pub const RIPPLECTL_STATE_WORDS: usize = 122;
/// Size of the state, 64-bit words, on a target with 64-bit pointers (a
/// host build).
#[cfg(target_pointer_width = "64")]
pub const RIPPLECTL_STATE_WORDS: usize = 125;

/// The firmware's state: declare one per power stage, in static memory
/// (`static ripplectl fw;`), and hand its address to every call. Opaque:
/// only the library reads or writes it. Zero bytes (a `static` before
/// `ripplectl_init`) mean "not initialised": every entry point then does
/// nothing and returns `RIPPLECTL_STATUS_NOT_READY`.
///
/// The functions taking a `ripplectl *` are not reentrant on one state:
/// run them at one interrupt priority, or with interrupts masked around
/// a call made from another level (as the crate's Rust firmware does with a
/// critical section around each handler). Different states are
/// independent.
#[repr(C)]
pub struct Ripplectl {
    opaque: [u64; RIPPLECTL_STATE_WORDS],
}

// The storage is exactly the state's size (an error here shows both sizes
// as array lengths: set RIPPLECTL_STATE_WORDS to the state's size over 8)
// and aligned at least as the state is.
const _: [(); size_of::<Ripplectl>()] = [(); size_of::<Slot>()];
const _: () = assert!(align_of::<Slot>() <= align_of::<Ripplectl>());

/// What an entry point did (one byte).
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Status {
    /// Done.
    Ok = 0,
    /// The board's `set_gate` refused a level; the library then drove the
    /// gate off (best effort) and disarmed the compare.
    PinFailed = 1,
    /// The state is not initialised (NULL, or `ripplectl_init` has not
    /// accepted a configuration): nothing was done.
    NotReady = 2,
}

impl Status {
    fn of(result: Option<Result<(), PinRefused>>) -> Self {
        match result {
            Some(Ok(())) => Status::Ok,
            Some(Err(PinRefused)) => Status::PinFailed,
            None => Status::NotReady,
        }
    }
}

/// The firmware in `state`, if initialised.
///
/// # Safety
/// `state` is NULL or points to a `Ripplectl` that no other call is using.
unsafe fn firmware<'a>(state: *mut Ripplectl) -> Option<&'a mut Firmware> {
    // SAFETY: the caller's contract; the storage holds a `Slot` (size and
    // alignment checked above), any bytes of which are a valid `Slot`.
    let slot = unsafe { state.cast::<Slot>().as_mut()? };
    // SAFETY: only `init` sets `ready`, after writing the firmware.
    (slot.ready == READY).then(|| unsafe { slot.firmware.assume_init_mut() })
}

/// [`firmware`], shared.
///
/// # Safety
/// As for [`firmware`].
unsafe fn firmware_ref<'a>(state: *const Ripplectl) -> Option<&'a Firmware> {
    // SAFETY: as for `firmware`.
    let slot = unsafe { state.cast::<Slot>().as_ref()? };
    // SAFETY: as for `firmware`.
    (slot.ready == READY).then(|| unsafe { slot.firmware.assume_init_ref() })
}

/// Check and convert `config`, take the board's pin and timer (driving the
/// gate off and disarming the compare), and make `state` ready. Call once
/// at start-up, before enabling the interrupts that call the entry points;
/// calling it again restarts the stack from "off".
///
/// Returns `RIPPLECTL_ERROR_OK`, or why it refused; `error`, when not NULL,
/// receives the details (the refused parameter's name, the range). On a
/// refusal `state` is left not initialised (the entry points do nothing),
/// and the gate was driven off if the board's callbacks were all given.
///
/// Runs the crate's configuration at run time, once: floating point (in
/// software routines on a core without a double-precision FPU) and
/// several KiB of call stack (the crate's README gives the figures, which
/// `tests/target/run.sh` measures: `stack core=m4-c op=init`).
///
/// # Safety
/// `state`, `config` and `board` point to valid objects (or are NULL, which
/// is refused); `error` is NULL or writable; the board's callbacks are valid
/// C functions of the types declared, safe to call from the interrupts
/// that call the entry points. No other call may use `state` meanwhile.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_init(
    state: *mut Ripplectl,
    config: *const Config,
    board: *const Board,
    error: *mut ConfigErrorInfo,
) -> Error {
    // SAFETY: the caller's contract.
    let result = unsafe { init(state, config, board) };
    let info = result.err().unwrap_or_else(|| ConfigErrorInfo::new(Error::Ok, ""));
    // SAFETY: the caller's contract.
    if let Some(out) = unsafe { error.as_mut() } {
        *out = info;
    }
    info.kind
}

/// [`ripplectl_init`]'s work.
///
/// # Safety
/// As for [`ripplectl_init`].
unsafe fn init(
    state: *mut Ripplectl,
    config: *const Config,
    board: *const Board,
) -> Result<(), ConfigErrorInfo> {
    let missing = |name| ConfigErrorInfo::new(Error::Missing, name);
    // SAFETY: the caller's contract; any bytes are a valid `Slot`.
    let slot = unsafe { state.cast::<Slot>().as_mut() }.ok_or_else(|| missing("state"))?;
    slot.ready = 0;
    // SAFETY: the caller's contract.
    let (config, board) = unsafe { (config.as_ref(), board.as_ref()) };
    let board = board.ok_or_else(|| missing("board"))?;
    let driver = board.driver()?;
    let config = config.ok_or_else(|| missing("config"))?;
    let checked = config.check().map_err(|e| ConfigErrorInfo::from_config(&e))?;
    slot.firmware.write(Handlers::new(Stack::new(checked.law, checked.parts), driver));
    slot.ready = READY;
    Ok(())
}

/// Interrupt: an ADC conversion of the output and the input (one scan)
/// completed; `output` and `input` are their raw codes, `now` the timer's
/// reading at the sampling instant (or at the handler's entry). Drives the
/// gate and arms the compare as the stack decides.
///
/// # Safety
/// `state` is NULL or a state no other call is using.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_conversion_done(
    state: *mut Ripplectl,
    output: u16,
    input: u16,
    now: u32,
) -> Status {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.conversion_done(output, input, Instant(now))))
}

/// Interrupt: the comparator's output is now `level` (true: the sensed
/// output above the armed threshold), at timer reading `now`. With
/// `RIPPLECTL_SENSING_EDGE`, re-arm the comparator at
/// `ripplectl_comparator_code` afterwards.
///
/// # Safety
/// As for `ripplectl_conversion_done`.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_comparator_edge(
    state: *mut Ripplectl,
    level: bool,
    now: u32,
) -> Status {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.comparator_edge(level, Instant(now))))
}

/// Interrupt: the one-shot compare fired; `now` is the timer's reading in
/// the handler. Give this interrupt the highest priority of the four (it
/// ends pulses), and the same masking as the others.
///
/// # Safety
/// As for `ripplectl_conversion_done`.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_compare_fired(state: *mut Ripplectl, now: u32) -> Status {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.compare_fired(Instant(now))))
}

/// Housekeeping tick, at `slow.housekeeping_hz`: input protections,
/// soft-start and hiccup, the estimates, feed-forward, trim, DC correction,
/// observer and losses. `comparator_level`: with `RIPPLECTL_SENSING_EDGE`,
/// the comparator's output read now (0 low, 1 high), so a start after the
/// soft-start sees the level no edge reported; -1 otherwise.
///
/// # Safety
/// As for `ripplectl_conversion_done`.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_housekeeping(
    state: *mut Ripplectl,
    now: u32,
    comparator_level: i32,
) -> Status {
    let level = (comparator_level >= 0).then_some(comparator_level != 0);
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.housekeeping(Instant(now), level)))
}

/// The comparator threshold an edge-driven law wants armed, in output ADC
/// codes (scale it to the comparator's DAC). Returns false, leaving `code`
/// alone, for a law without one or a state not initialised.
///
/// # Safety
/// `state` is NULL or a state no other call is writing; `code` is writable.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_comparator_code(
    state: *const Ripplectl,
    code: *mut u16,
) -> bool {
    // SAFETY: the caller's contract.
    let (fw, out) = unsafe { (firmware_ref(state), code.as_mut()) };
    match (fw.and_then(Handlers::comparator_code), out) {
        (Some(c), Some(out)) => {
            *out = c;
            true
        }
        _ => false,
    }
}

/// Gate off now and compare disarmed, whatever the law says (a fault
/// input, a watchdog warning). The next entry point call may switch again:
/// keep the stage's enable off too if it must stay off.
///
/// # Safety
/// As for `ripplectl_conversion_done`.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_shut_down(state: *mut Ripplectl) -> Status {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.shut_down()))
}

/// The supervisor's state (`RIPPLECTL_STATE_OFF` for a state not
/// initialised). Cheap: a load.
///
/// # Safety
/// `state` is NULL or a state no other call is writing.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_read_state(state: *const Ripplectl) -> State {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware_ref(state) };
    fw.map_or(State::Off, |fw| fw.stack().supervisor().state().into())
}

/// A telemetry snapshot into `out` (slow path: computes the efficiency).
/// Returns false, leaving `out` alone, for a state not initialised.
///
/// # Safety
/// `state` is NULL or a state no other call is writing; `out` is writable.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_read_telemetry(
    state: *const Ripplectl,
    out: *mut Telemetry,
) -> bool {
    // SAFETY: the caller's contract.
    let (fw, out) = unsafe { (firmware_ref(state), out.as_mut()) };
    match (fw, out) {
        (Some(fw), Some(out)) => {
            *out = Telemetry::of(fw.stack());
            true
        }
        _ => false,
    }
}

/// Copy the fault log, oldest first, into `out[0..capacity]`; returns the
/// number copied (at most `RIPPLECTL_FAULT_LOG_LEN`; 0 for a state not
/// initialised).
///
/// # Safety
/// `state` is NULL or a state no other call is writing; `out` points to
/// `capacity` writable records (or `capacity` is 0).
#[no_mangle]
pub unsafe extern "C" fn ripplectl_read_faults(
    state: *const Ripplectl,
    out: *mut Fault,
    capacity: usize,
) -> usize {
    // SAFETY: the caller's contract.
    let Some(fw) = (unsafe { firmware_ref(state) }) else {
        return 0;
    };
    if out.is_null() {
        return 0;
    }
    let mut n = 0;
    for (k, record) in fw.stack().faults().take(capacity).enumerate() {
        // SAFETY: `k < capacity`, the caller's contract.
        unsafe { out.add(k).write(record.into()) };
        n = k + 1;
    }
    n
}

/// Clear the fault log and leave a latched fault (`RIPPLECTL_STATE_FAULT`):
/// the stage starts again from "off" at the next housekeeping tick with a
/// good input. `now`: the timer's reading.
///
/// # Safety
/// As for `ripplectl_conversion_done`.
#[no_mangle]
pub unsafe extern "C" fn ripplectl_clear_faults(state: *mut Ripplectl, now: u32) -> Status {
    // SAFETY: the caller's contract.
    let fw = unsafe { firmware(state) };
    Status::of(fw.map(|fw| fw.stack_mut().clear_faults(Instant(now))).map(Ok))
}

#[cfg(all(target_os = "none", not(feature = "panic-hook")))]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    loop {
        core::hint::spin_loop();
    }
}

#[cfg(all(target_os = "none", feature = "panic-hook"))]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    extern "C" {
        fn ripplectl_panic();
    }
    // SAFETY: the firmware defines it (the feature's contract).
    unsafe { ripplectl_panic() };
    loop {
        core::hint::spin_loop();
    }
}
