//! Supervisor properties over arbitrary inputs.

use crate::common;

use common::cases;
use proptest::prelude::*;
use ripplectl::estimate::{Amps, CurrentEstimator, InductorModel, SlopeScale};
use ripplectl::law::{Hysteretic, HystereticConfig, Regulate};
use ripplectl::supervisor::{FaultKind, Limits, ProtectionConfig, State, Supervisor};
use ripplectl::{AdcChannel, FrequencyGuard, Gate, Instant, Law, TimerClock, Window, WindowConfig};

fn channels() -> (AdcChannel, AdcChannel) {
    (
        AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap(),
        AdcChannel::new(12, 3.3, 0.0826, 0.0).unwrap(),
    )
}

fn protection() -> ProtectionConfig {
    ProtectionConfig::demo()
}

type Stack = Supervisor<FrequencyGuard<Hysteretic>>;

fn stack() -> Stack {
    let (vout, vin) = channels();
    let clock = TimerClock::new(64_000_000).unwrap();
    let law = Hysteretic::new(&HystereticConfig { setpoint_v: 5.0, band_v: 0.04 }, &vout).unwrap();
    let guard = FrequencyGuard::new(law, Window::new(&WindowConfig::demo(), &clock).unwrap());
    let model = InductorModel::demo();
    let mut est = CurrentEstimator::new(&model, &clock, 40.0).unwrap();
    let scale = SlopeScale::of(&model, &clock);
    est.follow_output(&vout, scale);
    est.follow_input(&vin, scale);
    let limits = Limits::new(&protection(), &vout, &vin, &clock, 1984).unwrap();
    Supervisor::new(guard, est, limits)
}

#[derive(Clone, Debug)]
enum Event {
    Sample(u16),
    Edge(bool),
    Timer,
    Housekeeping(u16),
}

fn event() -> impl Strategy<Value = (u32, Event)> {
    (
        1u32..2_000,
        prop_oneof![
            6 => any::<u16>().prop_map(Event::Sample),
            2 => (1900u16..2100).prop_map(Event::Sample),
            1 => any::<bool>().prop_map(Event::Edge),
            1 => Just(Event::Timer),
            2 => prop_oneof![any::<u16>(), 1500u16..3500].prop_map(Event::Housekeeping),
        ],
    )
}

fn apply(s: &mut Stack, e: &Event, now: Instant) -> Option<Gate> {
    match *e {
        Event::Sample(c) => Some(s.on_sample(c, now).gate),
        Event::Edge(l) => Some(s.on_edge(l, now).gate),
        Event::Timer => Some(s.on_timer(now).gate),
        Event::Housekeeping(v) => {
            s.housekeeping(v, now);
            None
        }
    }
}

proptest! {
    #![proptest_config(cases(10_000))]

    /// Any stream of readings, edges, timers and input codes: no panic, and
    /// whenever the supervisor is not switching, the gate it commands is off.
    #[test]
    fn arbitrary_streams_never_panic_and_faults_keep_the_gate_off(
        start in prop_oneof![u32::MAX - 50_000..=u32::MAX, any::<u32>()],
        events in prop::collection::vec(event(), 1..400),
    ) {
        let mut s = stack();
        let mut t = start;
        for (dt, e) in &events {
            t = t.wrapping_add(*dt);
            let gate = apply(&mut s, e, Instant(t));
            if !matches!(s.state(), State::SoftStart | State::Regulating) {
                prop_assert_eq!(s.gate(), Gate::Off, "state {:?}", s.state());
                if let Some(g) = gate {
                    prop_assert_eq!(g, Gate::Off);
                }
            }
        }
        prop_assert!(s.faults().count() <= ripplectl::supervisor::FAULT_LOG_LEN);
    }

    /// The current limit never ends a pulse before the guard's minimum
    /// on-time (leading-edge blanking): every pulse that ends while the
    /// supervisor keeps switching lasted at least that long. The stream is
    /// made to reach the limit: regulating, readings below the band (the law
    /// asks for "on") and timer calls, often only a few ticks apart. (Faults
    /// may end a pulse at once: they stop switching.)
    #[test]
    fn pulses_keep_the_minimum_on_time_under_the_current_limit(
        events in prop::collection::vec(
            (
                prop_oneof![3 => 1u32..24, 1 => 1u32..2_000],
                prop_oneof![
                    3 => (1900u16..1990).prop_map(Event::Sample),
                    2 => Just(Event::Timer),
                ],
            ),
            1..600,
        ),
    ) {
        let (mut s, mut t) = regulating(u32::MAX - 80_000);
        let min_on = s.inner().window().min_on;
        let mut rise = None;
        for (dt, e) in &events {
            t = t.wrapping_add(*dt);
            apply(&mut s, e, Instant(t));
            let switching = matches!(s.state(), State::SoftStart | State::Regulating);
            match (s.gate(), rise) {
                (Gate::On, None) => rise = Some(t),
                (Gate::Off, Some(r)) => {
                    if switching {
                        prop_assert!(t.wrapping_sub(r) >= min_on, "pulse of {} ticks", t.wrapping_sub(r));
                    }
                    rise = None;
                }
                _ => {}
            }
        }
    }

    /// An over-voltage reading turns the gate off in the same call, whatever
    /// came before.
    #[test]
    fn over_voltage_turns_the_gate_off_at_the_next_sample(
        events in prop::collection::vec(event(), 0..200),
        ovp_code in 2183u16..4095,
    ) {
        let mut s = stack();
        let mut t = 1_000u32;
        s.on_sample(1984, Instant(t));
        s.housekeeping(2900, Instant(t));
        for (dt, e) in &events {
            t = t.wrapping_add(*dt);
            apply(&mut s, e, Instant(t));
        }
        let before = s.state();
        let cmd = s.on_sample(ovp_code, Instant(t.wrapping_add(1)));
        prop_assert_eq!(cmd.gate, Gate::Off);
        prop_assert_eq!(s.gate(), Gate::Off);
        if matches!(before, State::SoftStart | State::Regulating) {
            let last = s.faults().last().unwrap().kind;
            prop_assert!(matches!(last, FaultKind::OutputOvervoltage | FaultKind::SensorRange), "{:?}", last);
        }
    }
}

#[test]
fn over_voltage_threshold_is_the_configured_one() {
    // 5.5 V through the 4.7/14.7 divider into 12 bits at 3.3 V:
    // 5.5·0.31973/(3.3/4096) = 2182.7 → code 2183.
    let s = stack();
    assert_eq!(s.limits().ovp, 2183);
}

#[test]
fn uvlo_hysteresis_and_soft_start() {
    let mut s = stack();
    let (_, vin) = channels();
    let code = |v: f32| vin.to_code(v).unwrap().raw;
    let mut t = Instant(0);
    s.on_sample(0, t);
    // 15.5 V: between UVLO off and on: stays off.
    s.housekeeping(code(15.5), t);
    assert_eq!(s.state(), State::Off);
    s.housekeeping(code(16.5), t);
    assert_eq!(s.state(), State::SoftStart);
    assert_eq!(s.inner().reference_code(), 0, "ramp starts at the present output");
    // Half-way through the 1 ms ramp the reference is half-way.
    t = t.after(32_000);
    s.housekeeping(code(24.0), t);
    let half = s.inner().reference_code();
    assert!((i32::from(half) - 1984 / 2).abs() <= 2, "reference {half}");
    t = t.after(40_000);
    s.housekeeping(code(24.0), t);
    assert_eq!(s.state(), State::Regulating);
    assert_eq!(s.inner().reference_code(), 1984);
    // A sag to 15.5 V keeps running (hysteresis); 14.5 V stops and logs.
    s.housekeeping(code(15.5), t);
    assert_eq!(s.state(), State::Regulating);
    s.housekeeping(code(14.5), t);
    assert_eq!(s.state(), State::Off);
    assert_eq!(s.faults().last().unwrap().kind, FaultKind::InputUndervoltage);
}

#[test]
fn invalid_protection_is_named() {
    let (vout, vin) = channels();
    let clock = TimerClock::new(64_000_000).unwrap();
    let with = |f: &dyn Fn(&mut ProtectionConfig)| {
        let mut p = protection();
        f(&mut p);
        Limits::new(&p, &vout, &vin, &clock, 1984)
    };
    use ripplectl::{ConfigError, ErrorKind};
    let named = |r: Result<Limits, ConfigError>| r.map(|_| ()).map_err(|e| (e.parameter, e.kind));
    let below = |other| ErrorKind::NotBelow(other);
    assert_eq!(named(with(&|p| p.uvlo_off_v = 17.0)), Err(("uvlo_off_v", below("uvlo_on_v"))));
    assert_eq!(named(with(&|p| p.ovp_v = 4.0)), Err(("setpoint_v", below("ovp_v"))));
    assert_eq!(
        named(with(&|p| p.current_limit_a = 0.0)),
        Err(("current_limit_a", ErrorKind::NotPositive))
    );
    assert_eq!(named(with(&|p| p.short_cycles = 0)), Err(("short_cycles", ErrorKind::NotPositive)));
    let e = with(&|p| p.vin_max_v = 60.0).unwrap_err();
    assert_eq!(e.parameter, "vin_max_v");
    assert!(matches!(e.kind, ErrorKind::OutOfRange { .. }));
    assert_eq!(
        named(with(&|p| p.soft_start_s = 0.0)),
        Err(("soft_start_s", ErrorKind::BelowResolution))
    );
}

/// The demo stack brought into regulation at 28 V in (the ramp done), from
/// `t`; returns it and the instant it regulates from.
fn regulating(t: u32) -> (Stack, u32) {
    let mut s = stack();
    s.on_sample(1984, Instant(t));
    s.housekeeping(2900, Instant(t));
    let t = t.wrapping_add(70_000);
    s.housekeeping(2900, Instant(t));
    assert_eq!(s.state(), State::Regulating);
    (s, t)
}

/// Put the estimate at `amps` at `t` (its segment closed there first).
fn estimate_at(s: &mut Stack, amps: f32, t: u32) {
    let e = s.estimator_mut();
    e.update(Instant(t));
    let delta = Amps::from_num(amps) - e.current();
    e.shift(delta);
}

#[test]
fn a_turn_on_at_the_limit_is_refused_and_one_below_it_is_blanked() {
    let (mut s, t0) = regulating(5_000);
    let min_on = s.inner().window().min_on;
    // The law asks for "on" (output below its band) with the estimate
    // already past the 4 A limit: no pulse, and no fault.
    let t1 = t0 + 1_000;
    estimate_at(&mut s, 5.0, t1);
    assert_eq!(s.on_sample(1900, Instant(t1)).gate, Gate::Off);
    assert_eq!(s.gate(), Gate::Off);
    assert_eq!((s.state(), s.faults().count()), (State::Regulating, 0));
    // Just below the limit: the pulse starts, the limit would be crossed
    // within a couple of ticks, but acts only at the minimum on-time.
    let t2 = t1 + 1_000;
    estimate_at(&mut s, 3.99, t2);
    let cmd = s.on_sample(1900, Instant(t2));
    assert_eq!(cmd.gate, Gate::On);
    assert_eq!(cmd.wake, Some(Instant(t2 + min_on)), "deadline at the blanking's end");
    let early = s.on_timer(Instant(t2 + 2));
    assert_eq!(early.gate, Gate::On, "cut inside the blanking");
    assert!(s.estimator().current_at(Instant(t2 + 2)) >= s.limits().current_limit);
    assert_eq!(s.on_timer(Instant(t2 + min_on)).gate, Gate::Off);
    assert_eq!(s.state(), State::Regulating);
}
