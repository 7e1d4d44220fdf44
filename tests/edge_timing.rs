//! A switching edge is timed at its pin write, not at the instant the
//! handler was given.
//!
//! An interrupt handler decides at its event's instant but writes the gate
//! pin after its own work; on a small core that is microseconds later.
//! `stack::Handlers` reads the timer after each write and moves the edge
//! there. Checked here against the same handlers with a timer that reads
//! the event's own instant (a handler that takes no time):
//!
//! - a turn-on's deadline (the pulse's end) moves by exactly the delay, so
//!   the pulse keeps its length;
//! - the estimator's segment starts at the write, and the current there is
//!   the event's current less the off-slope over the delay (the inductor
//!   went on freewheeling: v = L di/dt, from the estimator's own slope);
//! - a turn-off written after the hardware compare has ended the pulse is
//!   timed at the compare;
//! - a handler without delay changes nothing.

use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::law::{OnTime, OnTimeConfig};
use ripplectl::stack::{Handlers, Sensing, Stack, StackConfig, StackParts};
use ripplectl::{unwrap_config, Instant};
use std::cell::Cell;
use std::rc::Rc;

/// The demo's configuration with the law on ADC samples.
const CONFIG: StackConfig = StackConfig { sensing: Sensing::Sampled, ..StackConfig::demo() };
const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
/// The demo's on-time law, 2.08 µs (133 ticks at 64 MHz).
const LAW: OnTime = unwrap_config(OnTime::new(
    &OnTimeConfig { setpoint_v: CONFIG.setpoint_v, on_time_s: 2.08e-6 },
    &CONFIG.output_adc,
    &CONFIG.clock,
));

/// A pin that accepts every write.
struct Pin;
impl embedded_hal::digital::ErrorType for Pin {
    type Error = core::convert::Infallible;
}
impl embedded_hal::digital::OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
}

/// A compare whose counter reads what the test sets.
#[derive(Clone, Default)]
struct Timer {
    counter: Rc<Cell<u32>>,
    armed: Rc<Cell<Option<u32>>>,
}
impl OneShot for Timer {
    fn arm(&mut self, at: Instant, _ends_pulse: bool) {
        self.armed.set(Some(at.0));
    }
    fn disarm(&mut self) {
        self.armed.set(None);
    }
    fn now(&self) -> Instant {
        Instant(self.counter.get())
    }
}

/// The on-time stack, regulating on a 5 V output (codes 1984) at 24 V
/// (2461), its gate off, and its timer.
fn firmware() -> (Handlers<OnTime, Pin, Timer>, Timer) {
    let timer = Timer::default();
    let Ok(driver) = GateDriver::new(Pin, timer.clone(), Polarity::ActiveHigh, PulseEnd::Hardware);
    let mut fw = Handlers::new(Stack::new(LAW, PARTS), driver);
    // Start, soft-start over 1 ms, settle: output held above the valley.
    for k in 0..=2_000u32 {
        let now = Instant(64 * k);
        timer.counter.set(now.0);
        let Ok(()) = fw.conversion_done(2_100, 2461, now);
        if k % 6 == 0 {
            let Ok(()) = fw.housekeeping(now, None);
        }
    }
    assert_eq!(fw.stack().supervisor().state(), ripplectl::supervisor::State::Regulating);
    assert!(!fw.driver().gate().is_on());
    (fw, timer)
}

/// A reading below the valley at `now`, the pin written `late` ticks on.
fn turn_on(late: u32) -> (Handlers<OnTime, Pin, Timer>, Timer, Instant) {
    let (mut fw, timer) = firmware();
    let now = Instant(64 * 2_001);
    timer.counter.set(now.0 + late);
    let Ok(()) = fw.conversion_done(1_900, 2461, now);
    assert!(fw.driver().gate().is_on());
    (fw, timer, now)
}

#[test]
fn a_late_turn_on_keeps_its_pulse_length() {
    let (on_time, _, now) = turn_on(0);
    let (late, timer, _) = turn_on(300);
    let (a, b) = (on_time.driver().timer().armed.get(), timer.armed.get());
    let (a, b) = (a.expect("a deadline"), b.expect("a deadline"));
    assert_eq!(b.wrapping_sub(a), 300, "the deadline moves with the write");
    assert_eq!(on_time.stack().supervisor().estimator().segment_start(), now);
    assert_eq!(
        late.stack().supervisor().estimator().segment_start(),
        now.after(300),
        "the on-segment starts at the write"
    );
}

#[test]
fn the_estimate_freewheels_until_the_write() {
    let (on_time, _, now) = turn_on(0);
    let (late, _, _) = turn_on(300);
    let est = on_time.stack().supervisor().estimator();
    // v = L di/dt: over the delay the current fell at the off-slope the
    // estimator itself holds (A/tick), clamped at zero for a diode stage.
    let slope = est.slope_off().to_num::<f64>();
    let expected = (est.current_at(now).to_num::<f64>() + slope * 300.0).max(0.0);
    let got = late.stack().supervisor().estimator().current().to_num::<f64>();
    assert!((got - expected).abs() < 1e-3, "{got} vs {expected}");
}

#[test]
fn a_turn_off_after_the_hardware_end_is_timed_there() {
    let (mut fw, timer, _) = turn_on(0);
    let end = Instant(timer.armed.get().expect("the on-time's end"));
    // A reading 100 ticks after the compare passed, before its interrupt:
    // the output above the valley; the handler ends the pulse itself (the
    // law's on-time is over) and writes the pin 40 ticks later.
    let now = end.after(100);
    timer.counter.set(now.0 + 40);
    let Ok(()) = fw.conversion_done(2_100, 2461, now);
    assert!(!fw.driver().gate().is_on());
    assert_eq!(
        fw.stack().supervisor().estimator().segment_start(),
        end,
        "the off-segment starts where the timer ended the pulse"
    );
}
