//! Tolerance studies: zero spreads give the nominal run, the yield's
//! interval covers a yield known by other means, thread counts do not
//! change a result, and a failing run's file reproduces it.

use crate::common;

use ripplectl::sim::sweep::operating_point;
use ripplectl::sim::tolerance::criteria::{Criteria, Figures};
use ripplectl::sim::tolerance::draw;
use ripplectl::sim::tolerance::params::Spreads;
use ripplectl::sim::tolerance::spread::Spread;
use ripplectl::sim::tolerance::summary::ToleranceReport;
use ripplectl::sim::tolerance::{
    run_scenario, run_study, Mode, Outcome, StudyControl, ToleranceParams,
};
use ripplectl::sim::{self, Scenario, Summary};

fn study(base: &Scenario, mode: Mode) -> Outcome {
    run_study(base, mode, &StudyControl::default()).unwrap()
}

/// Debug text compares NaN figures as equal, and every bit of the others.
fn same<T: std::fmt::Debug>(a: &T, b: &T) -> bool {
    format!("{a:?}") == format!("{b:?}")
}

#[test]
fn with_every_spread_zero_each_run_is_the_nominal_run() {
    let mut base = Scenario::default_demo();
    base.tolerance =
        Some(ToleranceParams { spread: Spreads::zero(), criteria: Criteria::default() });
    let outcome = study(&base, Mode::Random { runs: 6, seed: 3 });
    // The nominal run, as `simulate` runs the scenario itself.
    let nominal = Figures::of(&Summary::of(&sim::run(&base).unwrap(), &base.name, 0.0));
    assert!(same(outcome.nominal.figures.as_ref().unwrap(), &nominal));
    for run in &outcome.runs {
        assert!(run.settings.iter().all(|s| s.value == s.nominal), "{:?}", run.settings);
        assert!(same(run.figures.as_ref().unwrap(), &nominal), "run {}", run.index);
    }
}

#[test]
fn the_same_seed_gives_the_same_study_on_one_or_two_threads() {
    let base = Scenario::default_demo();
    let on = |threads| {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
        pool.install(|| study(&base, Mode::Random { runs: 24, seed: 11 }))
    };
    let (one, two) = (on(1), on(2));
    assert!(same(&one.runs, &two.runs));
    // And the draws do vary.
    assert!(!same(&one.runs[0].settings, &one.runs[1].settings));
    let other = study(&base, Mode::Random { runs: 24, seed: 12 });
    assert!(!same(&one.runs, &other.runs));
}

/// The sampled fixture at 24 V, 1 A, 2 ms, pre-biased, without ADC noise:
/// the mean output is a smooth function of the ADC's gain error.
fn gain_only(criteria: Criteria) -> Scenario {
    let mut base = operating_point(&common::sampled_fixture(), 24.0, 1.0, 2e-3);
    base.mcu.noise_lsb_rms = 0.0;
    let spread = Spreads { adc_gain_error: Spread::uniform_abs(0.02), ..Spreads::zero() };
    base.tolerance = Some(ToleranceParams { spread, criteria });
    base
}

/// The regulation error, %, with the ADC reading `gain` high.
fn error_at(base: &Scenario, gain: f64) -> f64 {
    let mut s = base.clone();
    s.mcu.adc_gain_error = gain;
    let out = sim::run(&s).unwrap();
    Figures::of(&Summary::of(&out, "", 0.0)).regulation_pct
}

#[test]
fn the_yield_interval_covers_a_yield_known_by_a_dense_scan() {
    // Only the regulation band judges: ±1 %, with the gain error uniform
    // on ±2 %. The true yield is the share of that range where the run
    // passes, found here directly: the simulator at 800 evenly spaced gain
    // errors (midpoint rule; the pass set is an interval up to the ADC's
    // quantization steps at its edges).
    let criteria = Criteria {
        regulation_pct: 1.0,
        window: false,
        ripple_max_v: Some(1.0),
        il_peak_max_a: Some(100.0),
        no_fault: false,
        ..Criteria::default()
    };
    let base = gain_only(criteria);
    let grid = 800;
    let passing = (0..grid)
        .filter(|&k| {
            let g = -0.02 + 0.04 * (f64::from(k) + 0.5) / f64::from(grid);
            error_at(&base, g).abs() <= 1.0
        })
        .count();
    let truth = passing as f64 / f64::from(grid);
    // Sanity: mean ≈ setpoint·(1 + e₀)/(1 + g), e₀ the nominal error, so
    // about half of ±2 % passes a ±1 % band.
    assert!((0.4..0.6).contains(&truth), "{truth}");
    let mut covered = 0;
    for seed in 1..=5 {
        let outcome = study(&base, Mode::Random { runs: 200, seed });
        let report = ToleranceReport::of(&outcome, "", 0.0);
        let [lo, hi] = report.yield_interval.unwrap();
        eprintln!(
            "seed {seed}: yield {:.3} in [{lo:.3}, {hi:.3}], true {truth:.3}",
            report.yield_fraction
        );
        covered += usize::from(lo <= truth && truth <= hi);
    }
    // A 95 % interval covers the truth in 95 % of studies: 5 seeds miss
    // more than once with probability 2.3 % (binomial).
    assert!(covered >= 4, "covered {covered} of 5");
}

#[test]
fn a_failing_runs_file_reproduces_it_exactly() {
    // A regulation band of ±0.05 %, so that some runs fail.
    let mut base = Scenario::default_demo();
    let criteria = Criteria { regulation_pct: 0.05, ..Criteria::default() };
    base.tolerance = Some(ToleranceParams { spread: Spreads::default(), criteria });
    let outcome = study(&base, Mode::Random { runs: 30, seed: 1 });
    let failing = outcome.runs.iter().find(|r| !r.verdict.passed()).expect("some run fails");
    let text = toml::to_string(&run_scenario(&base, failing)).unwrap();
    let again = Scenario::from_toml(&text).unwrap();
    let figures = Figures::of(&Summary::of(&sim::run(&again).unwrap(), "", 0.0));
    assert!(same(&figures, failing.figures.as_ref().unwrap()));
}

#[test]
fn corners_run_every_extreme() {
    let mut base = operating_point(&Scenario::default_demo(), 24.0, 1.0, 1e-3);
    let spread = Spreads {
        l_h: Spread::uniform_rel(0.2),
        esr_ohm: Spread::uniform_rel(0.3),
        ..Spreads::zero()
    };
    base.tolerance = Some(ToleranceParams { spread, criteria: Criteria::default() });
    let outcome = study(&base, Mode::Corners);
    assert_eq!(outcome.runs.len(), 4);
    let mut seen: Vec<(f64, f64)> = outcome
        .runs
        .iter()
        .map(|r| (r.settings[0].value / 47e-6, r.settings[2].value / 0.04))
        .collect();
    seen.sort_by(|a, b| a.partial_cmp(b).unwrap());
    let expect = [(0.8, 0.7), (0.8, 1.3), (1.2, 0.7), (1.2, 1.3)];
    for (got, want) in seen.iter().zip(expect) {
        assert!((got.0 - want.0).abs() < 1e-12 && (got.1 - want.1).abs() < 1e-12, "{seen:?}");
    }
    assert!(ToleranceReport::of(&outcome, "", 0.0).yield_interval.is_none());
}

#[test]
fn a_ceramic_banks_dc_bias_loss_lowers_its_capacitance_before_the_spread() {
    // The README's example tables. A ceramic capacitor at its working DC
    // bias keeps (1 − loss) of its rated capacitance (read off the maker's
    // DC-bias curve), and the ±10 % applies to what is left: corners at
    // 0.55·C·(1 ± 0.10). The input spread of ±2 V moves the whole profile
    // (nominal: its first point, 24 V).
    let text = common::sampled_fixture_toml()
        + "\n[tolerance.spread]\n\
           c_f = { dist = \"uniform\", rel = 0.10, dc_bias_loss = 0.45 }\n\
           vin = { dist = \"uniform\", abs = 2.0 }\n\n\
           [tolerance.criteria]\nregulation_pct = 1.0\nundershoot_max_v = 0.15\n";
    let base = Scenario::from_toml(&text).unwrap();
    let params = base.tolerance.unwrap();
    assert_eq!(params.criteria.undershoot_max_v, Some(0.15));
    let c = base.plant.c_f;
    let n = draw::corner_dimensions(&params.spread, &base);
    let value = |settings: &[draw::Setting], name: &str| {
        settings.iter().find(|s| s.name == name).unwrap().value
    };
    let low = draw::corner(&params.spread, &base, 0);
    let high = draw::corner(&params.spread, &base, (1 << n) - 1);
    for (settings, k, vin) in [(&low, 0.9, 22.0), (&high, 1.1, 26.0)] {
        let want = 0.55 * c * k;
        assert!((value(settings, "c_f") - want).abs() < 1e-12 * want, "{settings:?}");
        let drawn = draw::apply(&base, settings);
        assert_eq!(drawn.plant.c_f, value(settings, "c_f"));
        let first = drawn.input.points[0][1];
        assert!((first - vin).abs() < 1e-12, "{first}");
        // The firmware keeps the nominal stage it was configured with.
        assert_eq!(drawn.firmware_model(), base.firmware_model());
    }
    for index in 0..50 {
        let c_f = value(&draw::random(&params.spread, &base, 9, index), "c_f");
        assert!((0.495 * c..=0.605 * c).contains(&c_f), "{c_f}");
    }
}
