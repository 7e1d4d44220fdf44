//! Host nanoseconds per fast-path call. (Instruction counts on the target
//! cores come from the QEMU runs under tests/target.)

use criterion::{criterion_group, criterion_main, Criterion};
use ripplectl::law::{ComparatorPassThrough, Hysteretic, HystereticConfig};
use ripplectl::{AdcChannel, FrequencyGuard, Instant, Law, TimerClock, Window, WindowConfig};
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

criterion_group!(benches, bench_hysteretic, bench_passthrough);
criterion_main!(benches);
