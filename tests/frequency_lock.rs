//! The hysteretic law's frequency lock and dither: the fixed-point
//! integrator against its `f64` oracle, and the lock in closed loop on the
//! default scenario (`hysteretic.toml`: the hysteretic law on comparator
//! edges, a Cortex-M4's handler times charged) over the input and load
//! range, down to 2.5 % of the rated load.

use crate::common;

use common::cases;
use proptest::prelude::*;
use ripplectl::law::{Conditions, Dither, FrequencyTrim, Hysteretic, HystereticConfig, Regulate};
use ripplectl::reference::LockModel;
use ripplectl::sim::emission::{self, EmissionSummary};
use ripplectl::sim::profile::{InputProfile, Load, LoadChange};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, Scenario, Summary};
use ripplectl::{AdcChannel, TimerClock};

const CLOCK_HZ: u32 = 64_000_000;

/// One housekeeping window: cycles, their mean period as a fraction of the
/// target's, whether the window bound, whether a period ran long.
fn window() -> impl Strategy<Value = (u32, f64, bool, bool)> {
    (1u32..40, 0.3f64..3.0, prop::bool::weighted(0.1), prop::bool::weighted(0.05))
}

proptest! {
    #![proptest_config(cases(2_000))]

    /// The fixed-point trim follows the f64 oracle window by window: each
    /// step differs by the truncation of one Q16 product and one division
    /// (a few 2⁻¹⁶), so after n windows the two agree within n·4·2⁻¹⁶.
    #[test]
    fn lock_trim_follows_the_oracle(
        f_target in 20e3f32..150e3,
        gain in 0.01f32..0.5,
        windows in prop::collection::vec(window(), 1..60),
    ) {
        let clock = TimerClock::new(CLOCK_HZ).unwrap();
        let mut trim = FrequencyTrim::named("lock_hz", f_target, gain, 0.125, 2.0, &clock).unwrap();
        let target_ticks = (f64::from(CLOCK_HZ) / f64::from(f_target)).round();
        // The oracle on the same (quantized) target period and gain.
        let gain_q = (f64::from(gain) * 65_536.0).round() / 65_536.0;
        let mut oracle = LockModel::new(f64::from(CLOCK_HZ) / target_ticks, gain_q, 0.125, 2.0);
        for (n, &(cycles, ratio, binding, long)) in windows.iter().enumerate() {
            let period_ticks = (f64::from(cycles) * target_ticks * ratio) as u32;
            let fixed = if long {
                trim.step_down()
            } else {
                trim.update(cycles, period_ticks, binding)
            };
            let period_s = f64::from(period_ticks) / f64::from(CLOCK_HZ);
            let reference = oracle.update(cycles, period_s, binding, long);
            let fixed = f64::from(fixed) / 65_536.0;
            let tol = (n as f64 + 1.0) * 4.0 / 65_536.0;
            prop_assert!((fixed - reference).abs() <= tol, "window {n}: {fixed} vs {reference}");
        }
    }

    /// The band the law arms is the configured band times the oracle's
    /// trim, to within one code a side (rounding of each half), and never
    /// below one code a side.
    #[test]
    fn locked_band_is_the_configured_band_times_the_trim(
        band_codes in 4u16..200,
        windows in prop::collection::vec(window(), 1..40),
    ) {
        let adc = AdcChannel::new(12, 3.3, 1.0, 0.0).unwrap();
        let clock = TimerClock::new(CLOCK_HZ).unwrap();
        let band_v = (f64::from(band_codes) * adc.lsb_signal_v()) as f32;
        let law = Hysteretic::new(&HystereticConfig { setpoint_v: 1.5, band_v }, &adc).unwrap();
        let configured = f64::from(law.band_codes());
        let lock = FrequencyTrim::named("lock_hz", 50e3, 0.2, 0.125, 2.0, &clock).unwrap();
        let mut law = law.with_lock(lock);
        let mut oracle = LockModel::new(f64::from(CLOCK_HZ) / 1280.0, 0.2, 0.125, 2.0);
        for &(cycles, ratio, binding, long) in &windows {
            let period_ticks = (f64::from(cycles) * 1280.0 * ratio) as u32;
            let c = Conditions {
                cycles,
                period_ticks,
                window_binding: binding,
                long_period: long,
                ..Conditions::default()
            };
            law.retune(&c);
            let trim = oracle.update(cycles, f64::from(period_ticks) / f64::from(CLOCK_HZ), binding, long);
            let expected = (configured * trim).max(2.0);
            let band = f64::from(law.band_codes());
            prop_assert!((band - expected).abs() <= 2.0 + configured * 1e-3, "{band} vs {expected}");
            prop_assert!(law.lower_code() < law.reference_code() && law.upper_code() > law.reference_code());
        }
    }
}

/// The shipped scenario with the lock.
fn locked() -> Scenario {
    let text = include_str!("../examples/scenarios/hysteretic.toml");
    Scenario::from_toml(text).unwrap()
}

/// The locked scenario at a constant input and resistive load, 20 ms.
fn steady(vin: f64, ohms: f64, tweak: impl Fn(&mut Scenario)) -> Summary {
    let (s, out) = steady_run(vin, ohms, tweak);
    summary(&s, &out)
}

/// The run behind [`steady`], with its scenario.
fn steady_run(vin: f64, ohms: f64, tweak: impl Fn(&mut Scenario)) -> (Scenario, sim::RunOutput) {
    let mut s = locked();
    s.input = InputProfile { points: vec![[0.0, vin]] };
    s.load = vec![LoadChange { at_s: 0.0, load: Load::Resistive { ohms } }];
    s.duration_s = 20e-3;
    tweak(&mut s);
    let out = sim::run(&s).unwrap();
    (s, out)
}

/// A run's summary with its emission estimate.
fn summary(s: &Scenario, out: &sim::RunOutput) -> Summary {
    Summary::of(out, &s.name, 0.0).with_emission(&emission::estimate(s, &out.recorder))
}

fn lock_hz(s: &Scenario) -> f64 {
    match s.control.law {
        LawParams::Hysteretic { lock_hz: Some(f), .. } => f64::from(f),
        _ => panic!("the scenario locks its frequency"),
    }
}

/// The project's acceptance: mean frequency within ±5 % of the target over
/// 18–32 V × 10–100 % of the rated 2 A (demo rail 5 V: 25 Ω to 2.5 Ω), from
/// a cold start, with the output within 1 %. (±5 % is the project's own
/// bound, not a standard's.)
#[test]
fn lock_holds_the_mean_frequency_over_input_and_load() {
    let target = lock_hz(&locked());
    for vin in [18.0, 24.0, 32.0] {
        for ohms in [25.0, 5.0, 2.5] {
            let s = steady(vin, ohms, |_| {});
            let f_err = s.fsw_mean_hz / target - 1.0;
            let v_err = s.vout_mean_v / s.vout_setpoint_v - 1.0;
            eprintln!(
                "{vin} V, {ohms} Ω: mean {:.0} Hz ({:+.2} %), output {:+.2} %",
                s.fsw_mean_hz,
                100.0 * f_err,
                100.0 * v_err
            );
            assert!(f_err.abs() < 0.05, "{vin} V {ohms} Ω: mean {} Hz", s.fsw_mean_hz);
            assert!(v_err.abs() < 0.01, "{vin} V {ohms} Ω: {} V", s.vout_mean_v);
            assert!(s.faults.is_empty(), "{vin} V {ohms} Ω: {:?}", s.faults);
        }
    }
}

/// Without the lock the same loop runs well below the target at full load
/// (the handler's time widens the effective band): the lock is what moves
/// it, so the test above can fail.
#[test]
fn without_the_lock_the_frequency_wanders_off_the_target() {
    let target = lock_hz(&locked());
    let s = steady(24.0, 2.5, |s| {
        if let LawParams::Hysteretic { lock_hz, .. } = &mut s.control.law {
            *lock_hz = None;
        }
    });
    assert!(s.fsw_mean_hz < 0.9 * target, "unlocked mean {} Hz", s.fsw_mean_hz);
}

/// The default scenario through its start and disturbances: through the
/// start (a cold start into 1 A, up to the load step at 3 ms) the
/// inductor's true peak stays at or below the current limit; over the
/// whole run no period passes `1/f_min` once switching, the output is
/// within 1 %, nothing trips. (The bus's 14 V/ms ramp at 8–9 ms at full
/// load takes the true peak close to the 4 A limit: the stage's inductor
/// rolls off there, which the firmware's linear model of it cannot see.)
#[test]
fn default_scenario_starts_within_the_limit_and_the_window() {
    let sc = locked();
    let out = sim::run(&sc).unwrap();
    let s = Summary::of(&out, &sc.name, 0.0);
    let limit = f64::from(sc.firmware.protection.current_limit_a);
    let start_peak =
        out.recorder.cycles.iter().filter(|c| c.t_s < 3e-3).map(|c| c.il_max_a).fold(0.0, f64::max);
    assert!(start_peak > 0.5 * limit, "the start switched ({start_peak} A)");
    assert!(start_peak <= limit, "peak {start_peak} A over the {limit} A limit");
    assert_eq!(s.clamps.slow_periods, 0);
    assert!((s.vout_mean_v / s.vout_setpoint_v - 1.0).abs() < 0.01);
    assert!(s.faults.is_empty());
}

/// A cold start into a light load (25 Ω and 100 Ω, 1.25 % and 5 % of the
/// rated 2 A) over 18–32 V: once switching, at most 8 periods a start run
/// past `1/f_min`, none past 1.3/f_min, over the first 5 ms. The soft-start
/// sizes its pulses from the charge law and ends on pulses for the load
/// alone; before it did, the same starts had 21–30 such periods at 24 V,
/// the longest 182–462 µs. The bounds are regression bounds from that
/// measurement (1–6 periods now, the longest 52–63 µs, at the ramp's
/// middle where the output catches up a lag), not a standard's.
#[test]
fn a_light_load_start_stays_near_the_window_floor() {
    let f_min = f64::from(locked().control.window.f_min_hz);
    for ohms in [25.0, 100.0] {
        for vin in [18.0, 24.0, 32.0] {
            let (_, out) = steady_run(vin, ohms, |s| s.duration_s = 5e-3);
            let periods: Vec<f64> = out.recorder.cycles.iter().map(|c| c.period_s).collect();
            let long = periods.iter().filter(|&&p| p > 1.0 / f_min).count();
            let longest = periods.iter().copied().fold(0.0, f64::max);
            eprintln!(
                "{ohms} Ω, {vin} V: {long} periods past 1/f_min, longest {:.1} µs",
                longest * 1e6
            );
            assert!(long <= 8, "{ohms} Ω, {vin} V: {long} long periods");
            assert!(longest <= 1.3 / f_min, "{ohms} Ω, {vin} V: {longest} s");
        }
    }
}

/// The light-load start's end sized on the firmware's estimate, with that
/// estimate off: the stage's inductance 25 % below or above the firmware's
/// model (a common inductor tolerance is ±20 %), into 5, 25 and 100 Ω at
/// 24 V. The ramp ends at 1.7 ms (switching begins at 0.2 ms, the ramp
/// takes 1.5 ms). From there the output does not fall by more than 1 % of
/// the setpoint below where the ramp left it, never passes 3 % above the
/// setpoint, and from 3 ms on its cycles' mid-ripple mean is within 3 %
/// (the 1 A case with the inductance 25 % low runs 2.7 % high at 3–5 ms
/// on the code before this sizing too, and +0.8 % over 20 ms); nothing
/// trips. An estimate that
/// splits the window's current wrongly between the load and the ramp's
/// charge may size the ramp's end too small; the output then finishes its
/// rise late, and the sizer raises the cap by half in each window the
/// output stays more than 1/32 short and rises less than a quarter of the
/// way.
#[test]
fn a_light_load_start_survives_a_wrong_inductance() {
    for ohms in [5.0, 25.0, 100.0] {
        for l_scale in [0.75, 1.25] {
            let (_, out) = steady_run(24.0, ohms, |s| {
                s.duration_s = 5e-3;
                s.firmware.model = Some(s.firmware_model());
                s.plant.l_h *= l_scale;
            });
            let setpoint = out.setpoint_v;
            let after: Vec<_> = out.recorder.cycles.iter().filter(|c| c.t_s >= 1.7e-3).collect();
            let at_end = after[0].vo_min_v;
            let low = after.iter().map(|c| c.vo_min_v).fold(f64::INFINITY, f64::min);
            let high = after.iter().map(|c| c.vo_max_v).fold(0.0, f64::max);
            let settled = after.iter().filter(|c| c.t_s >= 3e-3);
            let worst =
                settled.map(|c| (c.vo_min_v - setpoint).abs().max((c.vo_max_v - setpoint).abs()));
            let worst = worst.fold(0.0, f64::max);
            let case = format!("{ohms} Ω, L × {l_scale}");
            eprintln!(
                "{case}: {at_end:.3} V at the ramp's end, then {low:.3}-{high:.3} V; \
                 from 3 ms a mean {:+.2} % off",
                100.0 * worst / setpoint
            );
            assert!(low >= at_end - 0.01 * setpoint, "{case}: fell to {low} V");
            assert!(high <= 1.03 * setpoint, "{case}: rose to {high} V");
            assert!(worst <= 0.03 * setpoint, "{case}: settled {worst} V off");
            assert!(out.faults.is_empty(), "{case}: {:?}", out.faults);
        }
    }
}

/// Light load without the audible band (the project's acceptance): at 2.5 %
/// of the rated 2 A (100 Ω on the 5 V rail) over 18–32 V, once settled,
/// no switching period is longer than `1/f_min` and the output is within
/// 1 %. Without the law's wait for the lower threshold after a pulse the
/// light-load cap cut short, the same runs had single periods of 55–63 µs
/// (16.5 kHz at 18 V), so this can fail.
#[test]
fn light_load_stays_above_the_window_floor() {
    let f_min = f64::from(locked().control.window.f_min_hz);
    for vin in [18.0, 24.0, 32.0] {
        let s = steady(vin, 100.0, |_| {});
        let v_err = s.vout_mean_v / s.vout_setpoint_v - 1.0;
        eprintln!(
            "{vin} V, 100 Ω: {:.1}-{:.1} kHz (mean {:.1}), output {:+.2} %",
            s.fsw_min_hz / 1e3,
            s.fsw_max_hz / 1e3,
            s.fsw_mean_hz / 1e3,
            100.0 * v_err
        );
        assert!(s.fsw_min_hz >= f_min, "{vin} V: slowest steady period {} Hz", s.fsw_min_hz);
        assert!(v_err.abs() < 0.01, "{vin} V: {} V", s.vout_mean_v);
        assert!(s.faults.is_empty(), "{vin} V: {:?}", s.faults);
    }
}

/// Dithering the locked band spreads the switching frequency: at 24 V and
/// full and half load, with a ±40 % dither the 10th to 90th percentiles of
/// the settled cycles' frequencies (the last 10 ms) span at least 15 % of
/// the lock target and at least 4 % of it more than the locked loop's own
/// span without it, and every period stays in the window. The spread is
/// far narrower than the band's ±40 %: on comparator edges the handler's
/// delay, not the band, sets most of the ripple. Its effect on the
/// conducted-emission estimate's worst margin is printed, not asserted
/// (+0.94 dB at 2.5 Ω and +0.73 dB at 5 Ω when last measured; the same
/// runs at 18 and 32 V too moved it by −1.4 to +3.3 dB on an earlier build
/// of the firmware: README).
#[test]
fn dithering_spreads_the_frequency_within_the_window() {
    let target = lock_hz(&locked());
    let w = locked().control.window;
    for ohms in [2.5, 5.0] {
        let (plain, plain_span) = steady_spread(24.0, ohms, None);
        let (dithered, dithered_span) = steady_spread(24.0, ohms, Some(0.4));
        eprintln!(
            "24 V, {ohms} Ω: 10-90 % span {:.1} % of the target plain, {:.1} % dithered; \
             margin {:.2} dB plain, {:.2} dB dithered",
            100.0 * plain_span / target,
            100.0 * dithered_span / target,
            margin(&plain),
            margin(&dithered)
        );
        // Regression bounds from measurement, not from a published figure:
        // 21.4-21.9 % dithered and 8-16 % plain when written; 18.5-22.8 %
        // and 9-12 % once the soft-start sized its pulses (the same
        // sequence then meets a settled loop at another phase), so the
        // first bound went from 20 % to 15 %; 21.4-21.8 % and 9.5-9.7 %
        // once the estimator's on-slope kept the last input reading.
        assert!(dithered_span >= 0.15 * target, "{ohms} Ω: dithered span {dithered_span} Hz");
        assert!(
            dithered_span >= plain_span + 0.04 * target,
            "{ohms} Ω: {plain_span} vs {dithered_span} Hz"
        );
        assert!(dithered.fsw_max_hz <= f64::from(w.f_max_hz) * 1.001);
        assert!(dithered.fsw_min_hz >= f64::from(w.f_min_hz) * 0.999);
    }
}

/// A steady run (as [`steady`]) with the dither at `depth`, and the span
/// between the 10th and 90th percentiles of its last 10 ms of cycles'
/// frequencies, Hz.
fn steady_spread(vin: f64, ohms: f64, depth: Option<f32>) -> (Summary, f64) {
    let (s, out) = steady_run(vin, ohms, |s| {
        if let LawParams::Hysteretic { dither_depth, .. } = &mut s.control.law {
            *dither_depth = depth;
        }
    });
    let mut f: Vec<f64> =
        out.recorder.cycles.iter().filter(|c| c.t_s >= 10e-3).map(|c| 1.0 / c.period_s).collect();
    f.sort_by(f64::total_cmp);
    let span = f[f.len() * 9 / 10] - f[f.len() / 10];
    (summary(&s, &out), span)
}

fn margin(s: &Summary) -> f64 {
    match s.emission {
        EmissionSummary::Estimated { margin_db, .. } => margin_db,
        EmissionSummary::NotAvailable { ref reason } => panic!("no estimate: {reason}"),
    }
}

/// The dither's draws average to one, so the band's mean is kept.
#[test]
fn dither_is_centred() {
    let mut d = Dither::new(0.3, 0xACE1).unwrap();
    let mean = (0..65_535).map(|_| f64::from(d.draw())).sum::<f64>() / 65_535.0 / 65_536.0;
    assert!((mean - 1.0).abs() < 1e-4, "{mean}");
}
