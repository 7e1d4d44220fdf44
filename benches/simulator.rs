//! Simulator throughput: the default scenario (10 ms, hysteretic law) end to
//! end, and its rate in simulated switching cycles per wall-clock second.

use criterion::{criterion_group, criterion_main, Criterion};
use ripplectl::sim::{self, Scenario};
use std::hint::black_box;
use std::time::Instant;

fn bench_default_scenario(c: &mut Criterion) {
    let scenario = Scenario::default_demo();
    // One timed pass outside criterion for the cycles-per-second figure.
    let runs = 20;
    let started = Instant::now();
    let mut cycles = 0;
    for _ in 0..runs {
        cycles += sim::run(&scenario).unwrap().recorder.cycles.len();
    }
    let per_s = cycles as f64 / started.elapsed().as_secs_f64();
    eprintln!(
        "default scenario: {:.3} million switching cycles per wall-clock second",
        per_s / 1e6
    );
    c.bench_function("default scenario, 10 ms simulated", |b| {
        b.iter(|| black_box(sim::run(&scenario).unwrap()))
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = bench_default_scenario
}
criterion_main!(benches);
