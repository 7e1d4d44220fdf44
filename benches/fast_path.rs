//! Host nanoseconds per fast-path call. (Instruction counts on the target
//! cores come from the QEMU runs under tests/target.)

use criterion::{criterion_group, criterion_main, Criterion};
use ripplectl::estimate::{CurrentEstimator, InductorModel, SlopeScale};
use ripplectl::law::{
    ComparatorPassThrough, EmulatedRipple, Hysteretic, HystereticConfig, OnTime, OnTimeConfig,
};
use ripplectl::stack::{Stack, StackConfig, StackParts};
use ripplectl::{AdcChannel, FrequencyGuard, Gate, Instant, Law, TimerClock, Window, WindowConfig};
use std::hint::black_box;

/// A triangle of ADC codes sweeping the hysteretic band, one sample per µs.
fn ripple_codes() -> Vec<u16> {
    (0..64u16).map(|i| 1968 + if i < 32 { i } else { 64 - i }).collect()
}

fn demo_guard<L: Law>(law: L) -> FrequencyGuard<L> {
    let clock = TimerClock::new(64_000_000).unwrap();
    FrequencyGuard::new(law, Window::new(&WindowConfig::demo(), &clock).unwrap())
}

fn bench_hysteretic(c: &mut Criterion) {
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let cfg = HystereticConfig { setpoint_v: 5.0, band_v: 0.04 };
    let codes = ripple_codes();

    let mut law = Hysteretic::new(&cfg, &adc).unwrap();
    let mut t = 0u32;
    let mut i = 0usize;
    c.bench_function("hysteretic on_sample", |b| {
        b.iter(|| {
            t = t.wrapping_add(64);
            i = (i + 1) & 63;
            black_box(law.on_sample(black_box(codes[i]), Instant(t)))
        })
    });

    let mut guarded = demo_guard(Hysteretic::new(&cfg, &adc).unwrap());
    c.bench_function("hysteretic + guard on_sample", |b| {
        b.iter(|| {
            t = t.wrapping_add(64);
            i = (i + 1) & 63;
            black_box(guarded.on_sample(black_box(codes[i]), Instant(t)))
        })
    });
}

fn bench_passthrough(c: &mut Criterion) {
    let mut guarded = demo_guard(ComparatorPassThrough::new(true));
    let mut t = 0u32;
    let mut level = false;
    c.bench_function("comparator pass-through + guard on_edge", |b| {
        b.iter(|| {
            t = t.wrapping_add(320);
            level = !level;
            black_box(guarded.on_edge(black_box(level), Instant(t)))
        })
    });
}

fn demo_estimator(clock: &TimerClock, adc: &AdcChannel) -> CurrentEstimator {
    let model = InductorModel::demo();
    let mut est = CurrentEstimator::new(&model, clock, 40.0).unwrap();
    let scale = SlopeScale::of(&model, clock);
    est.set_voltages(scale, 24.0, 5.0);
    est.follow_output(adc, scale);
    est
}

fn bench_estimator(c: &mut Criterion) {
    let clock = TimerClock::new(64_000_000).unwrap();
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let mut est = demo_estimator(&clock, &adc);
    let mut t = 0u32;
    let mut gate = Gate::Off;
    c.bench_function("current estimator on_gate (per edge)", |b| {
        b.iter(|| {
            t = t.wrapping_add(560);
            gate = if gate.is_on() { Gate::Off } else { Gate::On };
            black_box(est.on_gate(black_box(gate), Instant(t)))
        })
    });
    c.bench_function("current estimator on_output_code (per sample)", |b| {
        b.iter(|| {
            t = t.wrapping_add(64);
            est.on_output_code(black_box(1984), Instant(t));
        })
    });
}

/// The demo stack (the one wiring shared with the simulator and the
/// target), brought into regulation.
fn regulating_stack() -> Stack<Hysteretic> {
    let config = StackConfig::demo();
    let parts = StackParts::new(&config).unwrap();
    let cfg = HystereticConfig { setpoint_v: config.setpoint_v, band_v: 0.04 };
    let mut stack = Stack::new(Hysteretic::new(&cfg, &config.output_adc).unwrap(), parts);
    stack.on_conversion(1984, 2900, Instant(0));
    stack.housekeeping(Instant(0));
    stack.on_conversion(1984, 2900, Instant(70_000));
    stack.housekeeping(Instant(70_000));
    stack
}

fn bench_stack(c: &mut Criterion) {
    let mut stack = regulating_stack();
    let codes = ripple_codes();
    let mut t = 70_000u32;
    let mut i = 0usize;
    c.bench_function("stack (supervisor, estimator, guard, hysteretic) per conversion", |b| {
        b.iter(|| {
            t = t.wrapping_add(64);
            i = (i + 1) & 63;
            black_box(stack.on_conversion(black_box(codes[i]), 2900, Instant(t)))
        })
    });
    c.bench_function("stack housekeeping (slow path, 100 conversions a window)", |b| {
        b.iter(|| {
            for _ in 0..100 {
                t = t.wrapping_add(64);
                i = (i + 1) & 63;
                black_box(stack.on_conversion(codes[i], 2900, Instant(t)));
            }
            black_box(stack.housekeeping(Instant(t)))
        })
    });
}

fn bench_on_time(c: &mut Criterion) {
    let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).unwrap();
    let clock = TimerClock::new(64_000_000).unwrap();
    let law =
        OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.08e-6 }, &adc, &clock).unwrap();
    let ripple = EmulatedRipple::new(0.1, law.on_ticks(), 5.0 / 24.0, &adc, 64).unwrap();
    let codes = ripple_codes();
    for (name, law) in [
        ("on-time + guard on_sample", law),
        ("on-time (emulated ripple) + guard on_sample", law.with_emulated_ripple(ripple)),
    ] {
        let mut guarded = demo_guard(law);
        let (mut t, mut i) = (0u32, 0usize);
        c.bench_function(name, |b| {
            b.iter(|| {
                t = t.wrapping_add(64);
                i = (i + 1) & 63;
                black_box(guarded.on_sample(black_box(codes[i]), Instant(t)))
            })
        });
    }
}

criterion_group!(
    benches,
    bench_hysteretic,
    bench_passthrough,
    bench_on_time,
    bench_estimator,
    bench_stack
);
criterion_main!(benches);
