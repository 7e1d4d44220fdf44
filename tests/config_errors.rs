//! Every kind of configuration refusal a scenario can reach, through the
//! program: `ripplectl simulate --scenario` exits 2 with one line that
//! names the scenario key and the line it is set on, and says what is
//! wrong (`line N: `key`: ...`). The crate's constructors refuse the value
//! (the firmware's own checks, run on the scenario's configuration); the
//! line is counted here from the text the test wrote, not by the program's
//! key search.

use crate::common;

use common::program::{assert_one_line_error, default_toml};

/// `text` is refused on `key`, set on the line that begins with `marker`,
/// with `phrase`.
fn refused_at(text: &str, marker: &str, key: &str, phrase: &str) {
    let lines: Vec<_> = text.lines().enumerate().filter(|(_, l)| l.starts_with(marker)).collect();
    assert_eq!(lines.len(), 1, "{marker:?} must begin one line");
    let located = format!("line {}: `{key}`", lines[0].0 + 1);
    assert_one_line_error(text, &[&located, phrase]);
}

/// The default scenario with `from` replaced by `to` (`from` occurs once)
/// is refused on `key`, set on the line `to` begins, with `phrase`.
fn refused(from: &str, to: &str, key: &str, phrase: &str) {
    let text = default_toml();
    assert_eq!(text.matches(from).count(), 1, "{from:?} must occur once");
    refused_at(&text.replace(from, to), to, key, phrase);
}

/// The default scenario with `model` (what the firmware believes of the
/// stage, apart from the plant) in its `[firmware]` table.
fn with_firmware_model(model: &str) -> String {
    default_toml().replace("[firmware]\n", &format!("[firmware]\nmodel = {{ {model} }}\n"))
}

#[test]
fn not_finite() {
    // TOML has `nan` (TOML 1.0, "Float"); the law refuses it.
    refused("band_v = 0.040", "band_v = nan", "control.law.band_v", "must be a finite number");
}

#[test]
fn not_positive() {
    refused("band_v = 0.040", "band_v = 0.0", "control.law.band_v", "must be positive");
    refused(
        "current_limit_a = 4.0",
        "current_limit_a = -4.0",
        "firmware.protection.current_limit_a",
        "must be positive",
    );
    // The capacitance the firmware is configured with, apart from the plant's.
    let text = default_toml().replace("[firmware]\n", "[firmware]\nc_f = 0.0\n");
    refused_at(&text, "c_f = 0.0", "firmware.c_f", "must be a positive number");
}

#[test]
fn negative() {
    let text = with_firmware_model(
        "l_h = 47e-6, r_on_ohm = 0.11, dcr_ohm = -0.01, diode_vf_v = 0.45, diode_rd_ohm = 0.03",
    );
    refused_at(&text, "model = ", "firmware.model.dcr_ohm", "must not be negative");
}

#[test]
fn out_of_range_gives_the_range() {
    refused("adc_bits = 12", "adc_bits = 20", "mcu.adc_bits", "is out of range [1, 16]");
}

#[test]
fn inverted_pair_names_both() {
    refused(
        "f_min_hz = 20_000.0",
        "f_min_hz = 200_000.0",
        "control.window.f_min_hz",
        "must be below `f_max_hz`",
    );
    refused(
        "uvlo_off_v = 15.0",
        "uvlo_off_v = 17.0",
        "firmware.protection.uvlo_off_v",
        "must be below `uvlo_on_v`",
    );
}

#[test]
fn below_resolution() {
    // 150 ns → 1 ns: below one tick of the 64 MHz timer (15.6 ns).
    refused(
        "min_on_s = 150e-9",
        "min_on_s = 1e-9",
        "control.window.min_on_s",
        "finer than one timer tick",
    );
    // 40 mV → 0.1 mV: narrower than one code (3.3 V/4096 over the 0.32
    // divider is 2.5 mV at the output).
    refused("band_v = 0.040", "band_v = 0.0001", "control.law.band_v", "ADC code");
}

#[test]
fn too_long() {
    // 100 s at 64 MHz is 6.4·10⁹ ticks, beyond 2³¹ − 1.
    refused(
        "hiccup_s = 2.0e-3",
        "hiccup_s = 100.0",
        "firmware.protection.hiccup_s",
        "exceeds 2^31 - 1 timer ticks",
    );
}

#[test]
fn not_observable() {
    // No resistance anywhere in the current's path: the averaged model sees
    // the DC current only through the resistive drop.
    let text = with_firmware_model(
        "l_h = 47e-6, r_on_ohm = 0.0, dcr_ohm = 0.0, diode_vf_v = 0.45, diode_rd_ohm = 0.0",
    );
    refused_at(&text, "observer_bandwidth_hz", "firmware.observer_bandwidth_hz", "unobservable");
}

#[test]
fn ripple_too_small() {
    // The ceramic on-time scenario without its emulated ripple.
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/scenarios/on-time-ceramic.toml");
    let text = std::fs::read_to_string(path).unwrap();
    let without: String = text
        .lines()
        .filter(|l| !l.starts_with("emulated_ripple_v"))
        .flat_map(|l| [l, "\n"])
        .collect();
    refused_at(&without, "esr_ohm", "plant.esr_ohm", "too little ripple");
    // The check is on what the firmware is configured with: its own ESR
    // when the scenario gives one, named on that key. With an ESR that
    // gives ripple enough the plant alone passes; the firmware configured
    // with a small one is refused.
    let plant_esr = without.replace("esr_ohm = 0.003", "esr_ohm = 0.05");
    ripplectl::sim::Scenario::from_toml(&plant_esr).expect("50 mΩ gives ripple enough");
    let firmware_esr = plant_esr.replace("[firmware]\n", "[firmware]\nesr_ohm = 0.002\n");
    refused_at(&firmware_esr, "esr_ohm = 0.002", "firmware.esr_ohm", "too little ripple");
    // And the plant's own ESR, too small, is not what the check reads when
    // the firmware is configured with one that gives ripple enough.
    let firmware_large = without.replace("[firmware]\n", "[firmware]\nesr_ohm = 0.05\n");
    ripplectl::sim::Scenario::from_toml(&firmware_large)
        .expect("the firmware's ESR gives the on-time law its ripple");
}
