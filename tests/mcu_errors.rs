//! The board's ADC and timer errors, which the firmware does not know,
//! against closed forms.

use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::sweep::operating_point;
use ripplectl::sim::{self, Scenario, Summary};
use std::path::Path;

fn summary(s: &Scenario) -> Summary {
    Summary::of(&sim::run(s).unwrap(), &s.name, 0.0)
}

#[test]
fn adc_gain_error_moves_the_output_by_its_inverse() {
    // The firmware holds the code: code ∝ V·ratio·(1 + g) for the ideal
    // converter (Kester, Data Conversion Handbook, ch. 2), so the output
    // it regulates moves to V₀/(1 + g).
    let mut base = operating_point(&Scenario::default_demo(), 24.0, 1.0, 4e-3);
    base.mcu.noise_lsb_rms = 0.0;
    let nominal = summary(&base).vout_mean_v;
    for g in [-0.02, 0.02] {
        let mut s = base.clone();
        s.mcu.adc_gain_error = g;
        let got = summary(&s).vout_mean_v;
        let want = nominal / (1.0 + g);
        // 0.1 %: one code of the thresholds (0.8 mV at the pin) is 0.05 %.
        assert!((got - want).abs() / want < 1e-3, "g {g}: {got} V vs {want} V");
    }
}

#[test]
fn clock_error_scales_a_fixed_on_time_loops_frequency() {
    // A fixed on-time is a count of timer ticks: a timer running (1 + e)
    // fast makes it (1 + e) shorter, and with the duty set by volt-second
    // balance, f = D/T_on (Erickson & Maksimović, ch. 2), the frequency
    // rises by (1 + e).
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios/on-time.toml"),
    )
    .unwrap();
    let mut base = operating_point(&Scenario::from_toml(&text).unwrap(), 24.0, 2.0, 4e-3);
    let LawParams::OnTime { feed_forward_hz, trim, .. } = &mut base.control.law else {
        panic!("on-time scenario")
    };
    (*feed_forward_hz, *trim) = (None, false);
    let nominal = summary(&base).fsw_mean_hz;
    let e = 0.02;
    let mut s = base.clone();
    s.mcu.clock_error_ppm = e * 1e6;
    let got = summary(&s).fsw_mean_hz;
    let ratio = got / nominal;
    assert!((ratio - (1.0 + e)).abs() < 2e-3, "{got} Hz / {nominal} Hz = {ratio}");
}
