//! Constant on-time with a ceramic-only output (ESR 3 mΩ, 94 µF): the plain
//! valley loop fails the ripple check and, run anyway, oscillates at a
//! subharmonic; emulated ripple makes it stable. On the 1 MHz sampled
//! fixture (`tests/fixtures/on-time-ceramic-1mhz.toml`), away from the
//! sampling's own jitter; the shipped configuration's figures are in the
//! README.

use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::sweep::operating_point;
use ripplectl::sim::{self, RunError, Scenario};

fn ceramic() -> Scenario {
    let text = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/fixtures/on-time-ceramic-1mhz.toml"),
    )
    .unwrap();
    Scenario::from_toml(&text).unwrap()
}

fn without_emulated_ripple(mut s: Scenario, skip_check: bool) -> Scenario {
    if let LawParams::OnTime { emulated_ripple_v, skip_stability_check, .. } = &mut s.control.law {
        *emulated_ripple_v = None;
        *skip_stability_check = skip_check;
    }
    s
}

/// Mean |T(n) − T(n−1)| over the mean period, for cycles starting in the
/// second half of the run (constant conditions, settled).
fn period_jitter(s: &Scenario) -> f64 {
    let out = sim::run(s).unwrap();
    let p: Vec<f64> = out
        .recorder
        .cycles
        .iter()
        .filter(|c| c.t_s >= s.duration_s / 2.0 && c.period_s.is_finite())
        .map(|c| c.period_s)
        .collect();
    let mean = p.iter().sum::<f64>() / p.len() as f64;
    p.windows(2).map(|w| (w[1] - w[0]).abs()).sum::<f64>() / (p.len() - 1) as f64 / mean
}

#[test]
fn the_ripple_check_refuses_the_plain_loop() {
    let s = without_emulated_ripple(ceramic(), false);
    let RunError::Config(e) = sim::run(&s).unwrap_err() else { panic!("a configuration error") };
    assert_eq!(e.key, "plant.esr_ohm", "{e}");
    assert!(e.message.contains("emulated ripple"), "{e}");
    // The polymer output (40 mΩ, 220 µF: ESR·C = 8.8 µs ≫ T_on/2) passes.
    let mut polymer = s.clone();
    polymer.plant.esr_ohm = 0.040;
    polymer.plant.c_f = 220e-6;
    assert!(sim::run(&polymer).is_ok());
}

#[test]
fn plain_loop_doubles_its_period_and_emulated_ripple_steadies_it() {
    let base = ceramic();
    for (vin, load) in [(18.0, 2.0), (24.0, 1.0), (24.0, 2.0), (32.0, 2.0)] {
        let stable = operating_point(&base, vin, load, 8e-3);
        let plain = without_emulated_ripple(stable.clone(), true);
        let (j_stable, j_plain) = (period_jitter(&stable), period_jitter(&plain));
        eprintln!(
            "{vin} V {load} A: period jitter {:.3} with emulated ripple, {:.3} without",
            j_stable, j_plain
        );
        assert!(j_plain > 0.20, "{vin} V {load} A: the plain loop should be unstable ({j_plain})");
        // Stable: cycle-to-cycle period jitter at most 5 % (the project's
        // acceptance bound; measured 0.5-1.1 % with the on-time ended by the timer's
        // compare at its tick).
        assert!(j_stable <= 0.05, "{vin} V {load} A: jitter {j_stable}");
        assert!(j_plain > 8.0 * j_stable, "{vin} V {load} A: {j_plain} vs {j_stable}");
    }
}

#[test]
fn emulated_ripple_holds_at_a_quarter_of_the_sampling_rate() {
    // At 250 kHz the ramp falls by more than 16 codes between samples (the
    // predictor's range before it took 256 codes): a margin held at 16
    // codes predicted turn-ons too early, the loop over-drove the output
    // and the over-voltage protection tripped at the end of the soft-start.
    let mut s = ceramic();
    s.mcu.sample_rate_hz = 250e3;
    let out = sim::run(&s).unwrap();
    let summary = sim::Summary::of(&out, &s.name, 0.0);
    assert!(summary.faults.is_empty(), "{:?}", summary.faults);
    let error = summary.vout_mean_v / summary.vout_setpoint_v - 1.0;
    assert!(error.abs() < 0.005, "mean {} V", summary.vout_mean_v);
}
