use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::sweep::operating_point;
use ripplectl::sim::{self, Scenario};
fn ceramic() -> Scenario {
    let text = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("examples/scenarios/on-time-ceramic.toml"),
    )
    .unwrap();
    Scenario::from_toml(&text).unwrap()
}
fn period_jitter(s: &Scenario) -> (f64, f64) {
    let out = sim::run(s).unwrap();
    let p: Vec<f64> = out
        .recorder
        .cycles
        .iter()
        .filter(|c| c.t_s >= s.duration_s / 2.0 && c.period_s.is_finite())
        .map(|c| c.period_s)
        .collect();
    let mean = p.iter().sum::<f64>() / p.len() as f64;
    (p.windows(2).map(|w| (w[1] - w[0]).abs()).sum::<f64>() / (p.len() - 1) as f64 / mean, mean)
}
#[test]
fn probe() {
    {
        let mut s = operating_point(&ceramic(), 32.0, 2.0, 8e-3);
        s.mcu.noise_lsb_rms = 0.0;
        s.firmware.protection.current_limit_a = 10.0;
        let out = sim::run(&s).unwrap();
        let v: Vec<String> = out
            .recorder
            .cycles
            .iter()
            .filter(|c| c.t_s >= 6e-3)
            .take(60)
            .map(|c| format!("{:.3}/{:.3}", c.period_s * 1e6, c.on_s * 1e6))
            .collect();
        eprintln!("{}", v.join(" "));
    }
    for amp in [0.2] {
        for (vin, load) in [(18.0, 2.0), (24.0, 2.0), (32.0, 2.0), (32.0, 1.0)] {
            let mut s = operating_point(&ceramic(), vin, load, 8e-3);
            if let LawParams::OnTime { emulated_ripple_v, .. } = &mut s.control.law {
                *emulated_ripple_v = Some(amp);
            }
            let mut s2 = s.clone();
            s2.mcu.noise_lsb_rms = 0.0;
            let (j, m) = period_jitter(&s);
            let (j2, _) = period_jitter(&s2);
            eprintln!(
                "amp {amp} {vin} V {load} A: jitter {j:.4} (no noise {j2:.4}) mean {:.3} us",
                m * 1e6
            );
        }
    }
}
