//! The on-time law in closed loop over the input range 18–32 V and loads
//! 10–100 % of the rated 2 A.

use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::sweep::operating_point;
use ripplectl::sim::{self, Scenario, Summary};

fn on_time_scenario() -> Scenario {
    let text = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios/on-time.toml"),
    )
    .unwrap();
    Scenario::from_toml(&text).unwrap()
}

fn run_point(base: &Scenario, vin: f64, load: f64) -> Summary {
    let s = operating_point(base, vin, load, 10e-3);
    let out = sim::run(&s).unwrap();
    Summary::of(&out, &s.name, 0.0)
}

#[test]
fn feed_forward_and_trim_hold_the_frequency_and_dc_correction_the_mean() {
    let base = on_time_scenario();
    let target_hz = match base.control.law {
        LawParams::OnTime { feed_forward_hz: Some(f), .. } => f64::from(f),
        _ => panic!("the shipped on-time scenario feeds forward"),
    };
    let mut without = base.clone();
    without.control.dc_correction = false;
    for vin in [18.0, 25.0, 32.0] {
        for load in [0.2, 1.0, 2.0] {
            let s = run_point(&base, vin, load);
            let f_err = (s.fsw_mean_hz - target_hz) / target_hz;
            let v_err = (s.vout_mean_v - 5.0) / 5.0;
            let plain = run_point(&without, vin, load);
            let v_err_plain = (plain.vout_mean_v - 5.0) / 5.0;
            eprintln!(
                "{vin:>4} V {load:>4} A: f {:.1} kHz ({:+.2} %), mean {:+.3} % with DC correction, {:+.3} % without",
                s.fsw_mean_hz / 1e3,
                100.0 * f_err,
                100.0 * v_err,
                100.0 * v_err_plain
            );
            assert!(f_err.abs() <= 0.05, "{vin} V {load} A: frequency {} Hz", s.fsw_mean_hz);
            assert!(v_err.abs() <= 0.005, "{vin} V {load} A: mean output {} V", s.vout_mean_v);
            assert!(s.faults.is_empty(), "{vin} V {load} A: {:?}", s.faults);
        }
    }
}
