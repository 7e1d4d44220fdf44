//! The wiring of a complete firmware loop on a Cortex-M4 (builds for
//! `thumbv7em-none-eabihf`): the greenhouse valve rail of the crate's demo
//! (24 V bus, 18–32 V, to 5 V / 2 A) under the constant on-time law.
//!
//! ```text
//!   ADC conversion done (output and input scanned) ─▶ adc_done()
//!       supervisor.on_input_reading → supervisor.on_sample → driver.apply
//!   timer compare ─▶ timer_compare()
//!       driver.compare_fired → supervisor.on_timer → driver.apply
//!   SysTick, 1 kHz ─▶ SysTick()
//!       supervisor.housekeeping (UVLO, soft-start, hiccup, estimator voltages)
//! ```
//!
//! The two peripheral handlers are plain functions here: a board's
//! peripheral access crate puts them in its vector table (`#[interrupt]`
//! on its ADC and timer interrupts) and implements [`OutputPin`] and
//! [`OneShot`] on its GPIO and timer. The stand-ins below keep the example
//! free of any one vendor's registers: the pin and the compare are words in
//! RAM, the ADC results arrive as arguments.
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
use panic_semihosting as _;
use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::estimate::{CurrentEstimator, InductorModel};
use ripplectl::law::{OnTime, OnTimeConfig};
use ripplectl::supervisor::{Limits, ProtectionConfig, Supervisor};
use ripplectl::{
    AdcChannel, ConfigError, FrequencyGuard, Instant, Law, TimerClock, Window, WindowConfig,
};

/// Timer clock of the free-running counter, Hz.
const CLOCK_HZ: u32 = 64_000_000;

/// Stand-in for the gate pin's output register.
static GATE_LEVEL: AtomicBool = AtomicBool::new(false);
/// Stand-in for the timer's compare register (and its enable).
static COMPARE: AtomicU32 = AtomicU32::new(0);
static COMPARE_ARMED: AtomicBool = AtomicBool::new(false);
/// Stand-in for the free-running counter (a board reads its timer's
/// count register).
static COUNTER: AtomicU32 = AtomicU32::new(0);

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
}

fn now() -> Instant {
    Instant(COUNTER.load(Ordering::Relaxed))
}

type Stack = Supervisor<FrequencyGuard<OnTime>>;

struct Firmware {
    stack: Stack,
    driver: GateDriver<GatePin, OnTimeTimer>,
    vout_adc: AdcChannel,
    vin_adc: AdcChannel,
    last_vin: u16,
}

static FIRMWARE: Mutex<RefCell<Option<Firmware>>> = Mutex::new(RefCell::new(None));

/// Configuration, once, on the slow path: SI units in, codes and ticks out.
/// Every value is checked; a bad one is a named error, not a panic.
fn configure() -> Result<Firmware, ConfigError> {
    let clock = TimerClock::new(CLOCK_HZ)?;
    let vout_adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0)?; // 10 k over 4.7 k
    let vin_adc = AdcChannel::new(12, 3.3, 0.0826, 0.0)?; // 100 k over 9.1 k
    let law =
        OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.08e-6 }, &vout_adc, &clock)?;
    let window = Window::new(&WindowConfig::demo(), &clock)?;
    let mut estimator = CurrentEstimator::new(&InductorModel::demo(), &clock, 40.0)?;
    estimator.follow_output(&vout_adc);
    estimator.follow_input(&vin_adc);
    let limits = Limits::new(
        &ProtectionConfig::demo(),
        &vout_adc,
        &vin_adc,
        &clock,
        ripplectl::law::Regulate::reference_code(&law),
    )?;
    let stack = Supervisor::new(FrequencyGuard::new(law, window), estimator, limits);
    let Ok(driver) =
        GateDriver::new(GatePin, OnTimeTimer, Polarity::ActiveHigh, PulseEnd::Hardware);
    Ok(Firmware { stack, driver, vout_adc, vin_adc, last_vin: 0 })
}

/// Conversion-complete interrupt: the output and input readings of one scan.
pub fn adc_done(out_code: u16, in_code: u16) {
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            let t = now();
            fw.last_vin = in_code;
            fw.stack.on_input_reading(in_code, t);
            let command = fw.stack.on_sample(out_code, t);
            let Ok(()) = fw.driver.apply(command);
        }
    });
}

/// Compare interrupt of the one-shot timer.
pub fn timer_compare() {
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            fw.driver.compare_fired();
            let command = fw.stack.on_timer(now());
            let Ok(()) = fw.driver.apply(command);
        }
    });
}

/// Housekeeping at 1 kHz: protections on the input, soft-start, hiccup
/// timing and the estimator's voltages.
#[exception]
fn SysTick() {
    interrupt::free(|cs| {
        if let Some(fw) = FIRMWARE.borrow(cs).borrow_mut().as_mut() {
            let vin = fw.stack.take_input_average().unwrap_or(fw.last_vin);
            let (vin_adc, vout_adc) = (fw.vin_adc, fw.vout_adc);
            fw.stack.housekeeping(vin, &vin_adc, &vout_adc, now());
        }
    });
}

#[entry]
fn main() -> ! {
    let Some(mut core) = cortex_m::Peripherals::take() else { panic!("peripherals taken") };
    match configure() {
        Ok(fw) => interrupt::free(|cs| *FIRMWARE.borrow(cs).borrow_mut() = Some(fw)),
        // Leave the gate off (its pull-down holds it) and report.
        Err(e) => panic!("configuration refused: {:?}", e),
    }
    core.SYST.set_clock_source(SystClkSource::Core);
    core.SYST.set_reload(CLOCK_HZ / 1_000 - 1);
    core.SYST.clear_current();
    core.SYST.enable_interrupt();
    core.SYST.enable_counter();
    loop {
        cortex_m::asm::wfi();
    }
}
