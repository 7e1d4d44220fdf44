//! A whole firmware (builds for `thumbv6m-none-eabi` and
//! `thumbv7em-none-eabihf`; `run.sh` measures its flash, RAM and float
//! routines on both):
//! the greenhouse valve rail of the crate's demo (24 V bus, 18–32 V, to
//! 5 V / 2 A) under the constant on-time law with input feed-forward, a
//! frequency trim, DC correction and the averaged-model observer: the
//! stack the simulator runs, wired the same way
//! ([`ripplectl::stack::Handlers`]), at the simulator's housekeeping rate.
//!
//! ```text
//!   ADC conversion done (output and input scanned) ─▶ adc_done()
//!       handlers.conversion_done → stack.on_conversion → driver.apply
//!   timer compare ─▶ timer_compare()
//!       handlers.compare_fired → driver.compare_fired, stack.on_timer → driver.apply
//!   SysTick,  5 kHz ─▶ SysTick()
//!       handlers.housekeeping → stack.housekeeping (UVLO, soft-start,
//!       hiccup, losses, feed-forward and trim, DC correction, observer)
//! ```
//!
//! The configuration is `const`: the compiler converts volts and seconds
//! into codes, ticks and fixed-point coefficients, and refuses a bad value
//! at build time naming it. No floating-point code runs on the target.
//!
//! A board's peripheral access crate puts the two peripheral handlers in
//! its vector table (`#[interrupt]` on its ADC and timer interrupts, the
//! timer's at the highest priority) and implements [`OutputPin`] and
//! [`OneShot`] on its GPIO and timer. The stand-ins below keep the example
//! free of any one vendor's registers: the default handler dispatches
//! interrupts 0 (ADC) and 1 (timer) by number, the pin and the compare are
//! words in RAM, and so are the ADC's result registers.
//!
//! The firmware's state lives in `.bss` (a `cortex_m::singleton!`, reached
//! through a pointer under a critical section), so it costs no flash for an
//! initial image.
//!
//! Caution: a power stage under firmware control can burn, shock and
//! destroy loads. Bring a board up from a current-limited bench supply and
//! keep a hardware current limit that does not depend on this code.
#![no_std]
#![no_main]

use core::cell::RefCell;
use core::sync::atomic::{AtomicBool, AtomicU32, Ordering};
use cortex_m::interrupt::{self, Mutex};
use cortex_m::peripheral::syst::SystClkSource;
use cortex_m_rt::{entry, exception};
use embedded_hal::digital::{ErrorType, OutputPin};
use panic_halt as _;
use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::law::{FrequencyTrim, OnTime, OnTimeConfig, OnTimeFeedForward};
use ripplectl::stack::{Handlers, Sensing, SlowPathConfig, Stack, StackConfig, StackParts};
use ripplectl::{unwrap_config, Instant};

/// The board: the crate's demo, with the on-time law on ADC samples and
/// DC correction on. A field out of range fails the build with its name.
const CONFIG: StackConfig = StackConfig {
    sensing: Sensing::Sampled,
    slow: SlowPathConfig { dc_correction: true, ..StackConfig::demo().slow },
    ..StackConfig::demo()
};
const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
const LAW: OnTime = unwrap_config(OnTime::new(
    &OnTimeConfig { setpoint_v: CONFIG.setpoint_v, on_time_s: 2.08e-6 },
    &CONFIG.output_adc,
    &CONFIG.clock,
))
.with_feed_forward(unwrap_config(OnTimeFeedForward::new(CONFIG.setpoint_v, 100e3, &CONFIG.clock)))
.with_trim(unwrap_config(FrequencyTrim::new(100e3, 0.05, 0.5, 1.5, &CONFIG.clock)));

/// SysTick reload for the housekeeping rate (SysTick counts the core clock,
/// here the timer's).
const SYSTICK_RELOAD: u32 = (CONFIG.clock.hz() as f32 / CONFIG.slow.housekeeping_hz) as u32;

/// Stand-in for the gate pin's output register.
static GATE_LEVEL: AtomicBool = AtomicBool::new(false);
/// Stand-in for the timer's compare register (and its enable).
static COMPARE: AtomicU32 = AtomicU32::new(0);
static COMPARE_ARMED: AtomicBool = AtomicBool::new(false);
/// Stand-in for the free-running counter (a board reads its timer's
/// count register).
static COUNTER: AtomicU32 = AtomicU32::new(0);
/// Stand-ins for the ADC's result registers: output and input of a scan.
static ADC_OUTPUT: AtomicU32 = AtomicU32::new(0);
static ADC_INPUT: AtomicU32 = AtomicU32::new(0);

struct GatePin;

impl ErrorType for GatePin {
    type Error = core::convert::Infallible;
}

impl OutputPin for GatePin {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        GATE_LEVEL.store(false, Ordering::Relaxed);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        GATE_LEVEL.store(true, Ordering::Relaxed);
        Ok(())
    }
}

/// A compare channel in "clear output on match" mode when asked to end a
/// pulse, interrupt only otherwise.
struct OnTimeTimer;

impl OneShot for OnTimeTimer {
    fn arm(&mut self, at: Instant, _ends_pulse: bool) {
        // A real timer: write the compare register, select the output
        // action (`_ends_pulse`: clear on match), enable the interrupt, and
        // pend it at once if the counter already passed `at`.
        COMPARE.store(at.0, Ordering::Relaxed);
        COMPARE_ARMED.store(true, Ordering::Relaxed);
    }
    fn disarm(&mut self) {
        COMPARE_ARMED.store(false, Ordering::Relaxed);
    }
    fn now(&self) -> Instant {
        now()
    }
}

fn now() -> Instant {
    Instant(COUNTER.load(Ordering::Relaxed))
}

/// The whole firmware, keeping its last four faults (8 bytes of RAM each;
/// the crate's default is sixteen): a small Cortex-M0 reports the latest
/// few, and nothing but telemetry reads the log.
type Firmware = Handlers<OnTime, GatePin, OnTimeTimer, 4>;

static FIRMWARE: Mutex<RefCell<Option<&'static mut Firmware>>> = Mutex::new(RefCell::new(None));

/// Conversion-complete interrupt: the output and input readings of one scan.
fn adc_done() {
    let out_code = ADC_OUTPUT.load(Ordering::Relaxed) as u16;
    let in_code = ADC_INPUT.load(Ordering::Relaxed) as u16;
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            let Ok(()) = fw.conversion_done(out_code, in_code, now());
        }
    });
}

/// Compare interrupt of the one-shot timer.
fn timer_compare() {
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            let Ok(()) = fw.compare_fired(now());
        }
    });
}

/// The peripheral interrupts, by number (a board's vector table has an
/// entry each instead).
#[exception]
unsafe fn DefaultHandler(irqn: i16) {
    match irqn {
        0 => adc_done(),
        1 => timer_compare(),
        _ => {}
    }
}

/// Housekeeping at 5 kHz: the whole slow path.
#[exception]
fn SysTick() {
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            let Ok(()) = fw.housekeeping(now(), None);
        }
    });
}

#[entry]
fn main() -> ! {
    let Some(mut core) = cortex_m::Peripherals::take() else {
        loop {
            cortex_m::asm::wfi();
        }
    };
    let Ok(driver) =
        GateDriver::new(GatePin, OnTimeTimer, Polarity::ActiveHigh, PulseEnd::Hardware);
    let Some(firmware) =
        cortex_m::singleton!(: Firmware = Handlers::new(Stack::with_fault_log(LAW, PARTS), driver))
    else {
        loop {
            cortex_m::asm::wfi();
        }
    };
    interrupt::free(|cs| *FIRMWARE.borrow(cs).borrow_mut() = Some(firmware));
    core.SYST.set_clock_source(SystClkSource::Core);
    core.SYST.set_reload(SYSTICK_RELOAD - 1);
    core.SYST.clear_current();
    core.SYST.enable_interrupt();
    core.SYST.enable_counter();
    loop {
        cortex_m::asm::wfi();
    }
}
