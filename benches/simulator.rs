//! Simulator throughput: 10 ms simulated end to end, as simulated switching
//! cycles per wall-clock second, for the built-in default (the hysteretic
//! law on comparator edges, its mean frequency locked to 35 kHz, readings
//! at 50 kHz, housekeeping at 5 kHz, handlers charged on a 170 MHz
//! Cortex-M4) and for the sampled test fixture
//! (`tests/fixtures/sampled-1mhz.toml`: the law on 1 MHz readings, no named
//! core); and the plant alone, per step, with step lengths that repeat and
//! that never do (the cost of a step must not depend on it).

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use ripplectl::sim::plant::{Conduction, Environment, Plant};
use ripplectl::sim::{self, Scenario};
use std::hint::black_box;

/// The sampled test fixture.
fn sampled() -> Scenario {
    Scenario::from_toml(include_str!("../tests/fixtures/sampled-1mhz.toml"))
        .expect("the fixture parses")
}

fn scenarios(c: &mut Criterion) {
    let cases = [
        ("default (comparator edges), switching cycles", Scenario::default_demo()),
        ("sampled fixture (1 MHz readings), switching cycles", sampled()),
    ];
    let mut group = c.benchmark_group("10 ms simulated");
    for (name, scenario) in cases {
        let cycles = sim::run(&scenario).unwrap().recorder.cycles.len() as u64;
        // Criterion reports the rate as "elem/s": switching cycles per second.
        group.throughput(Throughput::Elements(cycles));
        group.bench_function(name, |b| b.iter(|| black_box(sim::run(&scenario).unwrap())));
    }
    group.finish();
}

/// 1 000 step lengths: all 1 µs, or spread over 0.2–1.8 µs and never
/// repeating (a fixed pseudo-random sequence).
fn step_lengths(irregular: bool) -> Vec<f64> {
    let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
    (0..1000)
        .map(|_| {
            x = x.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
            let unit = (x >> 11) as f64 / (1u64 << 53) as f64;
            if irregular {
                0.2e-6 + 1.6e-6 * unit
            } else {
                1e-6
            }
        })
        .collect()
}

/// Step the default stage at 24 V into 2.5 Ω, switching on below 4.98 V
/// and off above 5.02 V, so the state stays at its operating point.
fn run_steps(plant: &mut Plant, steps: &[f64]) {
    for &dt in steps {
        black_box(plant.advance(dt, None));
        let v = plant.v_out();
        if v < 4.98 {
            plant.set_mode(Conduction::HighSide);
        } else if v > 5.02 {
            plant.set_mode(Conduction::Diode);
        }
    }
}

fn plant_steps(c: &mut Criterion) {
    let mut params = Scenario::default_demo().plant;
    params.saturation = None;
    let env = Environment { vin_v: 24.0, load_g_s: 0.4, ..Environment::default() };
    let mut group = c.benchmark_group("plant, 1000 steps");
    group.throughput(Throughput::Elements(1000));
    for (name, irregular) in [("repeated lengths", false), ("irregular lengths", true)] {
        let steps = step_lengths(irregular);
        let mut plant = Plant::new(params, 5.0);
        plant.set_state(2.0, 5.0);
        plant.set_environment(env);
        group.bench_function(name, |b| b.iter(|| run_steps(&mut plant, &steps)));
    }
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = scenarios, plant_steps
}
criterion_main!(benches);
