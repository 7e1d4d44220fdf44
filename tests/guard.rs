//! Frequency-window guard: gate timing limits hold for any command sequence,
//! across timer wrap-around, and decisions agree with the f64 oracle.

use crate::common;

use common::{cases, Harness};
use proptest::prelude::*;
use ripplectl::law::ComparatorPassThrough;
use ripplectl::reference::GuardModel;
use ripplectl::{
    ConfigError, ErrorKind, FrequencyGuard, LightLoad, TimerClock, Window, WindowConfig,
};

/// Gate edges (unwrapped ticks) checked against the window.
fn check_waveform(edges: &[(u64, bool)], end: u64, w: &Window) -> Result<(), String> {
    let mut last_rise: Option<u64> = None;
    let mut last_fall: Option<u64> = None;
    for &(t, on) in edges {
        if on {
            if let Some(f) = last_fall {
                if t - f < u64::from(w.min_off) {
                    return Err(format!("off-time {} < min {} at {t}", t - f, w.min_off));
                }
            }
            if let Some(r) = last_rise {
                if t - r < u64::from(w.min_period) {
                    return Err(format!("period {} < min {} at {t}", t - r, w.min_period));
                }
            }
            last_rise = Some(t);
        } else {
            let r = last_rise.ok_or("turn-off before any turn-on")?;
            if t - r < u64::from(w.min_on) {
                return Err(format!("on-time {} < min {} at {t}", t - r, w.min_on));
            }
            if t - r > u64::from(w.max_on) {
                return Err(format!("on-time {} > max {} at {t}", t - r, w.max_on));
            }
            last_fall = Some(t);
        }
    }
    // A pulse still on at the end must not already be past the maximum.
    if let (Some(r), Some(&(_, true))) = (last_rise, edges.last()) {
        if end - r > u64::from(w.max_on) {
            return Err(format!("still on after {} > max {}", end - r, w.max_on));
        }
    }
    Ok(())
}

/// Random windows in SI units on arbitrary clocks.
fn window_config() -> impl Strategy<Value = (TimerClock, WindowConfig)> {
    (1_000_000u32..200_000_000, 30_000f32..1_000_000.0, 0.02f32..0.5, any::<bool>()).prop_flat_map(
        |(hz, f_max, f_min_frac, forced)| {
            let f_min = f_max * f_min_frac;
            let p_min = 1.0 / f_max;
            (0.0f32..0.4, 0.0f32..0.4, 0.5f32..1.5).prop_map(move |(on, off, max_on)| {
                let cfg = WindowConfig {
                    f_min_hz: f_min,
                    f_max_hz: f_max,
                    min_on_s: on * p_min,
                    min_off_s: off * p_min,
                    max_on_s: max_on / f_min * 0.5,
                    light_load: if forced { LightLoad::ForcedPulse } else { LightLoad::ReportOnly },
                };
                (TimerClock::new(hz).unwrap(), cfg)
            })
        },
    )
}

/// Start times that include the last few thousand ticks before the wrap.
fn start_tick() -> impl Strategy<Value = u32> {
    prop_oneof![u32::MAX - 20_000..=u32::MAX, any::<u32>()]
}

proptest! {
    #![proptest_config(cases(10_000))]

    #[test]
    fn gate_waveform_never_violates_window(
        (clock, cfg) in window_config(),
        start in start_tick(),
        steps in prop::collection::vec((0.0f64..1.5, any::<bool>()), 1..300),
    ) {
        let Ok(window) = Window::new(&cfg, &clock) else { return Ok(()) };
        let mut guard = FrequencyGuard::new(ComparatorPassThrough::new(true), window);
        let mut h = Harness::new(start);
        let mut t = 0u64;
        for (dt_frac, level) in steps {
            // Inner commands arrive at random spacing up to 1.5 max periods.
            t += 1 + (dt_frac * f64::from(window.max_period)) as u64;
            h.run_timers_until(&mut guard, t, |_, _| {});
            h.edge(&mut guard, t, level);
        }
        let end = h.wake.map_or(t, |w| w.min(t + u64::from(window.max_period)));
        h.run_timers_until(&mut guard, end, |_, _| {});
        if let Err(e) = check_waveform(&h.edges, end, &window) {
            return Err(TestCaseError::fail(e));
        }
    }

    /// With every duration a whole number of ticks and a power-of-two clock
    /// (so tick times are exact in f64), the guard and the f64 oracle must
    /// take the same decision at every call.
    #[test]
    fn decisions_match_oracle_exactly(
        log2_hz in 20u32..=27,
        start in start_tick(),
        (min_on, min_off, max_on, min_period) in (1u32..200, 1u32..200, 0u32..2_000, 1u32..600)
            .prop_map(|(a, b, c, p)| (a, b, a + 1 + c, p)),
        steps in prop::collection::vec((0u64..3_000, any::<bool>()), 1..300),
    ) {
        let hz = 1u32 << log2_hz;
        let clock = TimerClock::new(hz).unwrap();
        let s = |ticks: u32| ticks as f32 / hz as f32;
        // Light-load reporting only: the oracle does not model forced pulses.
        let max_period = (min_on + min_off + min_period + max_on) * 4;
        let cfg = WindowConfig {
            f_min_hz: hz as f32 / max_period as f32,
            f_max_hz: hz as f32 / min_period as f32,
            min_on_s: s(min_on),
            min_off_s: s(min_off),
            max_on_s: s(max_on),
            light_load: LightLoad::ReportOnly,
        };
        let window = Window::new(&cfg, &clock).unwrap();
        prop_assert_eq!(
            (window.min_on, window.min_off, window.max_on, window.min_period),
            (min_on, min_off, max_on, min_period)
        );
        let tick = 1.0 / f64::from(hz);
        let mut model = GuardModel::new(
            f64::from(min_on) * tick, f64::from(min_off) * tick,
            f64::from(max_on) * tick, f64::from(min_period) * tick,
        );
        let mut guard = FrequencyGuard::new(ComparatorPassThrough::new(true), window);
        let mut h = Harness::new(start);
        let (mut t, mut level) = (0u64, false);
        let mut mismatch = None;
        for (dt, next_level) in steps {
            t += 1 + dt;
            h.run_timers_until(&mut guard, t, |tw, gate_on| {
                if model.step(level, tw as f64 * tick) != gate_on && mismatch.is_none() {
                    mismatch = Some(tw);
                }
            });
            level = next_level;
            h.edge(&mut guard, t, level);
            if model.step(level, t as f64 * tick) != h.gate_on && mismatch.is_none() {
                mismatch = Some(t);
            }
        }
        prop_assert!(mismatch.is_none(), "guard and oracle differ at tick {:?}", mismatch);
    }

    /// Any configuration, however wild, builds or returns an error.
    #[test]
    fn random_configurations_never_panic(
        hz in any::<u32>(),
        f in prop::array::uniform5(prop_oneof![any::<f32>(), -1.0f32..1e7]),
        forced in any::<bool>(),
    ) {
        let Ok(clock) = TimerClock::new(hz) else { return Ok(()) };
        let cfg = WindowConfig {
            f_min_hz: f[0], f_max_hz: f[1], min_on_s: f[2], min_off_s: f[3], max_on_s: f[4],
            light_load: if forced { LightLoad::ForcedPulse } else { LightLoad::ReportOnly },
        };
        if let Ok(w) = Window::new(&cfg, &clock) {
            prop_assert!(w.min_on >= 1 && w.min_off >= 1 && w.min_on <= w.max_on);
            prop_assert!(w.min_period < w.max_period);
            prop_assert!(w.min_on + w.min_off < w.max_period);
        }
    }
}

#[test]
fn demo_window_sits_between_audible_band_and_cispr32_range() {
    let demo = WindowConfig::demo();
    // Upper limit of human hearing, commonly taken as 20 kHz (common practice).
    assert!(demo.f_min_hz >= 20_000.0);
    // CISPR 32 conducted-emission limits start at 150 kHz: keep the
    // fundamental below it.
    assert!(demo.f_max_hz < 150_000.0);
    let w = Window::new(&demo, &TimerClock::new(64_000_000).unwrap()).unwrap();
    assert_eq!((w.min_period, w.max_period), (457, 3200));
}

#[test]
fn inconsistent_windows_are_named() {
    let clock = TimerClock::new(64_000_000).unwrap();
    let with = |f: &dyn Fn(&mut WindowConfig)| {
        let mut c = WindowConfig::demo();
        f(&mut c);
        Window::new(&c, &clock)
    };
    fn refused<T>(p: &'static str, k: ErrorKind) -> Result<T, ConfigError> {
        Err(ConfigError::new(p, k))
    }
    let below = |p, other| refused(p, ErrorKind::NotBelow(other));
    assert_eq!(with(&|c| c.f_min_hz = 200e3), below("f_min_hz", "f_max_hz"));
    assert_eq!(with(&|c| c.f_min_hz = 140e3), below("f_min_hz", "f_max_hz"));
    assert_eq!(with(&|c| c.min_on_s = 50e-6), below("min_on_s", "max_on_s"));
    assert_eq!(with(&|c| c.f_max_hz = 0.0), refused("f_max_hz", ErrorKind::NotPositive));
    assert_eq!(with(&|c| c.min_off_s = -1e-9), refused("min_off_s", ErrorKind::Negative));
    assert_eq!(with(&|c| c.max_on_s = 1e-10), refused("max_on_s", ErrorKind::BelowResolution));
    assert_eq!(with(&|c| c.min_off_s = 0.0), refused("min_off_s", ErrorKind::BelowResolution));
    assert_eq!(
        with(&|c| {
            c.min_on_s = 30e-6;
            c.min_off_s = 25e-6;
        }),
        below("min_off_s", "1/f_min_hz - min_on_s")
    );
    assert_eq!(with(&|c| c.max_on_s = f32::NAN), refused("max_on_s", ErrorKind::NotFinite));
}

#[test]
fn clamps_are_counted_once_per_cycle() {
    let clock = TimerClock::new(64_000_000).unwrap();
    let w = Window::new(&WindowConfig::demo(), &clock).unwrap();
    let mut g = FrequencyGuard::new(ComparatorPassThrough::new(true), w);
    let mut h = Harness::new(u32::MAX - 100);
    // On, then off after 2 ticks (min on-time 10 ticks): delayed, counted once.
    h.edge(&mut g, 0, true);
    h.edge(&mut g, 2, false);
    h.edge(&mut g, 3, false);
    assert!(h.gate_on);
    h.run_timers_until(&mut g, 100, |_, _| {});
    assert_eq!(h.edges, vec![(0, true), (10, false)]);
    // On again at 100: the 457-tick minimum period holds it to 457.
    h.edge(&mut g, 100, true);
    h.edge(&mut g, 200, true);
    h.run_timers_until(&mut g, 1_000, |_, _| {});
    assert_eq!(h.edges.last(), Some(&(457, true)));
    // Demand stays on: forced off at the 40 µs (2560-tick) maximum on-time.
    h.run_timers_until(&mut g, 457 + 2_561, |_, _| {});
    assert_eq!(h.edges.last(), Some(&(457 + 2_560, false)));
    let c = g.counts();
    assert_eq!((c.min_on, c.min_period, c.max_on), (1, 1, 1));
}

#[test]
fn slow_periods_are_reported_or_pulsed() {
    let clock = TimerClock::new(64_000_000).unwrap();
    for (policy, pulses) in [(LightLoad::ReportOnly, 0), (LightLoad::ForcedPulse, 1)] {
        let cfg = WindowConfig { light_load: policy, ..WindowConfig::demo() };
        let w = Window::new(&cfg, &clock).unwrap();
        let mut g = FrequencyGuard::new(ComparatorPassThrough::new(true), w);
        let mut h = Harness::new(0);
        h.edge(&mut g, 0, true);
        h.edge(&mut g, 100, false);
        // No demand for two maximum periods.
        h.run_timers_until(&mut g, 6_400, |_, _| {});
        assert_eq!(g.counts().slow_periods, 1, "{policy:?}");
        assert_eq!(g.counts().forced_pulses, pulses, "{policy:?}");
        if pulses == 1 {
            // The forced pulse starts at the maximum period and lasts min_on.
            assert_eq!(h.edges[2..], [(3_200, true), (3_210, false)]);
        }
    }
}
