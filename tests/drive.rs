//! The gate driver against embedded-hal-mock pins: the pin sequence a
//! command stream produces, polarity, the hardware pulse end, and pin
//! errors. The expected sequences follow embedded-hal 1.0's `OutputPin`
//! contract (one `set_high`/`set_low` per level change).

use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction};
use embedded_hal_mock::eh1::MockError;
use ripplectl::drive::{GateDriver, OneShot, Polarity, PulseEnd};
use ripplectl::law::{Hysteretic, HystereticConfig, OnTime, OnTimeConfig};
use ripplectl::{
    AdcChannel, Command, FrequencyGuard, Gate, Instant, Law, TimerClock, Window, WindowConfig,
};

/// A one-shot timer that records what it was asked.
#[derive(Debug, Default)]
struct Timer {
    armed: Option<(Instant, bool)>,
    log: Vec<Option<(u32, bool)>>,
}

impl OneShot for Timer {
    fn arm(&mut self, at: Instant, ends_pulse: bool) {
        self.armed = Some((at, ends_pulse));
        self.log.push(Some((at.0, ends_pulse)));
    }
    fn disarm(&mut self) {
        self.armed = None;
        self.log.push(None);
    }
    fn now(&self) -> Instant {
        Instant(0)
    }
}

fn set(level: State) -> Transaction {
    Transaction::set(level)
}

/// A driver on a mock pin that expects exactly `writes`.
fn driver(writes: &[Transaction], polarity: Polarity, end: PulseEnd) -> GateDriver<PinMock, Timer> {
    GateDriver::new(PinMock::new(writes), Timer::default(), polarity, end).unwrap()
}

/// Release the driver, check every expected pin write happened, and give
/// back the timer.
fn finish(d: GateDriver<PinMock, Timer>) -> Timer {
    let (mut pin, timer) = d.release();
    pin.done();
    timer
}

/// The demo's timer clock and output channel (10 k over 4.7 k, 12 bits).
fn demo_clock_and_adc() -> (TimerClock, AdcChannel) {
    (TimerClock::new(64_000_000).unwrap(), AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap())
}

#[test]
fn commands_become_pin_changes_and_timer_arms() {
    let mut d = driver(
        &[set(State::Low), set(State::High), set(State::Low)],
        Polarity::ActiveHigh,
        PulseEnd::Software,
    );
    // Same level twice: one pin write.
    d.apply(Command::until(Gate::On, Instant(100))).unwrap();
    d.apply(Command::until(Gate::On, Instant(90))).unwrap();
    d.apply(Command::hold(Gate::Off)).unwrap();
    d.apply(Command::hold(Gate::Off)).unwrap();
    assert_eq!(d.gate(), Gate::Off);
    let timer = finish(d);
    assert_eq!(timer.log, vec![None, Some((100, false)), Some((90, false)), None, None]);
}

#[test]
fn active_low_inverts_the_levels() {
    let mut d = driver(
        &[set(State::High), set(State::Low), set(State::High)],
        Polarity::ActiveLow,
        PulseEnd::Software,
    );
    d.apply(Command::hold(Gate::On)).unwrap();
    d.shut_down().unwrap();
    assert_eq!(finish(d).armed, None);
}

#[test]
fn a_hardware_pulse_end_is_followed_and_re_driven() {
    // On, a deadline that ends the pulse in hardware; the compare fires
    // (the timer cleared the output); the law asks on again: the pin must
    // be driven high again, not assumed high.
    let mut d = driver(
        &[set(State::Low), set(State::High), set(State::High)],
        Polarity::ActiveHigh,
        PulseEnd::Hardware,
    );
    d.apply(Command::until(Gate::On, Instant(200))).unwrap();
    assert_eq!(d.timer().armed, Some((Instant(200), true)));
    // The handler runs after its entry latency: the edge was at the compare.
    assert_eq!(d.compare_fired(Instant(216)), Some(Instant(200)));
    assert_eq!(d.gate(), Gate::Off);
    d.apply(Command::hold(Gate::On)).unwrap();
    // That command armed nothing: a later compare (a stale interrupt)
    // leaves the driven gate alone.
    assert_eq!(d.compare_fired(Instant(300)), None);
    assert_eq!(d.gate(), Gate::On, "no pulse end was armed");
    finish(d);
}

#[test]
fn a_failed_turn_on_reports_and_drives_off() {
    let err = MockError::Io(std::io::ErrorKind::Other);
    let mut d = driver(
        &[set(State::Low), set(State::High).with_error(err), set(State::Low)],
        Polarity::ActiveHigh,
        PulseEnd::Software,
    );
    assert!(d.apply(Command::until(Gate::On, Instant(5))).is_err());
    assert_eq!(d.gate(), Gate::Off);
    assert_eq!(finish(d).armed, None, "no deadline survives a failed turn-on");
}

/// The on-time law through the guard, driven by a falling then rising
/// ramp of samples: the pin goes high at the valley and the timer is armed
/// at the end of the on-time (in hardware), then the compare ends it.
#[test]
fn on_time_law_through_the_driver() {
    let (clock, adc) = demo_clock_and_adc();
    let law =
        OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2e-6 }, &adc, &clock).unwrap();
    let reference = ripplectl::law::Regulate::reference_code(&law);
    let on_ticks = law.on_ticks();
    let mut stack = FrequencyGuard::new(law, Window::new(&WindowConfig::demo(), &clock).unwrap());
    // Low at start, high at the valley; the compare's hardware ends the
    // pulse, so no software write follows.
    let mut d =
        driver(&[set(State::Low), set(State::High)], Polarity::ActiveHigh, PulseEnd::Hardware);

    // Above the reference: off, nothing armed.
    d.apply(stack.on_sample(reference + 5, Instant(1_000))).unwrap();
    assert_eq!(d.gate(), Gate::Off);
    // At the valley: on, the end of the on-time armed to end in hardware.
    let t_on = Instant(1_064);
    d.apply(stack.on_sample(reference, t_on)).unwrap();
    assert_eq!(d.gate(), Gate::On);
    assert_eq!(d.timer().armed, Some((t_on.after(on_ticks), true)));
    // The compare fires: the hardware ended the pulse, and the law agrees.
    let at = d.compare_fired(t_on.after(on_ticks + 16));
    assert_eq!(at, Some(t_on.after(on_ticks)));
    let cmd = stack.on_timer(t_on.after(on_ticks));
    assert_eq!(cmd.gate, Gate::Off);
    d.apply(cmd).unwrap();
    assert_eq!(d.gate(), Gate::Off);
    // What the guard arms while off (its longest-period deadline) ends no
    // pulse.
    assert!(matches!(d.timer().armed, Some((_, false))), "{:?}", d.timer().armed);
    finish(d);
}

/// The hysteretic law keeps software pulse ends: a full band crossing gives
/// one high and one low write.
#[test]
fn hysteretic_law_through_the_driver() {
    let (clock, adc) = demo_clock_and_adc();
    let law = Hysteretic::new(&HystereticConfig { setpoint_v: 5.0, band_v: 0.04 }, &adc).unwrap();
    let (lower, upper) = (law.lower_code(), law.upper_code());
    let mut stack = FrequencyGuard::new(law, Window::new(&WindowConfig::demo(), &clock).unwrap());
    let mut d = driver(
        &[set(State::Low), set(State::High), set(State::Low)],
        Polarity::ActiveHigh,
        PulseEnd::Software,
    );
    let mut t = Instant(u32::MAX - 2_000); // across the timer's wrap
    let mut highs_seen = 0;
    for code in (lower - 2..=upper + 2).rev().chain(lower - 2..=upper + 2) {
        t = t.after(64);
        let cmd = stack.on_sample(code, t);
        d.apply(cmd).unwrap();
        highs_seen += usize::from(d.gate().is_on());
    }
    assert!(highs_seen > 0);
    finish(d);
}
