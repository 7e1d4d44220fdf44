//! Shipped scenario files parse, and the default scenario is the shipped one.

use ripplectl::sim::scenario::{locate_key, DEFAULT_SCENARIO_TOML};
use ripplectl::sim::Scenario;

#[test]
fn shipped_scenarios_parse() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios");
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "toml") {
            let text = std::fs::read_to_string(&path).unwrap();
            Scenario::from_toml(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            n += 1;
        }
    }
    assert!(n >= 1);
}

#[test]
fn default_is_the_documented_example() {
    let file = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios/hysteretic.toml"),
    )
    .unwrap();
    assert_eq!(file, DEFAULT_SCENARIO_TOML);
    let s = Scenario::default_demo();
    let (lo, hi) = s.profile().input_range();
    assert_eq!((lo, hi), (18.0, 32.0), "the demo bus spans 18-32 V");
    assert_eq!(s.control.law.setpoint_v(), 5.0);
}

#[test]
fn keys_are_located_in_their_table() {
    let text = "[a]\nx = 1\n[b]\nx = 2\n";
    assert_eq!(locate_key(text, "b.x"), Some(4));
    assert_eq!(locate_key(text, "a.x"), Some(2));
}

#[test]
fn shipped_protection_and_model_are_the_crate_demo() {
    // One set of demo values: the scenario file, and the constants the
    // benches and the target runs use.
    let s = Scenario::default_demo();
    let demo = ripplectl::stack::StackConfig::demo();
    assert_eq!(s.firmware.protection, demo.protection);
    assert_eq!(s.firmware_model(), ripplectl::estimate::InductorModel::demo());
    assert_eq!(s.control.window, demo.window);
}
