//! Helpers shared by the integration tests.

pub mod plants;
pub mod program;
pub mod tools;

use ripplectl::{AdcChannel, Command, Instant, Law, LightLoad, WindowConfig};

/// Proptest settings: the foundation asks for at least 10 000 cases.
pub fn cases(n: u32) -> proptest::test_runner::Config {
    proptest::test_runner::Config {
        cases: n,
        failure_persistence: None,
        ..proptest::test_runner::Config::default()
    }
}

/// The ideal converter's output for a signal voltage: nearest code,
/// saturating at 0 and full scale (Kester, Data Conversion Handbook, ch. 2).
pub fn ideal_adc(adc: &AdcChannel, v: f64) -> u16 {
    let exact = adc.exact_code(v).round();
    exact.clamp(0.0, f64::from(adc.full_scale_code())) as u16
}

/// Drives a law with wrapping timer readings while keeping an unwrapped
/// clock, honouring every `wake` deadline, and records the gate's edges.
pub struct Harness {
    pub start: u32,
    pub now: u64,
    pub wake: Option<u64>,
    pub gate_on: bool,
    /// (unwrapped tick, new state) of each gate change.
    pub edges: Vec<(u64, bool)>,
}

impl Harness {
    pub fn new(start: u32) -> Self {
        Self { start, now: 0, wake: None, gate_on: false, edges: Vec::new() }
    }

    pub fn instant(&self, t: u64) -> Instant {
        Instant(self.start.wrapping_add(t as u32))
    }

    fn record(&mut self, t: u64, cmd: Command) {
        let now = self.instant(t);
        self.wake = cmd.wake.map(|w| t + u64::from(w.ticks_since(now)));
        if cmd.gate.is_on() != self.gate_on {
            self.gate_on = cmd.gate.is_on();
            self.edges.push((t, self.gate_on));
        }
        self.now = t;
    }

    /// Serve timer deadlines that fall before `t`, calling `before_timer`
    /// with each deadline's time; returns how many were served.
    pub fn run_timers_until<L: Law>(
        &mut self,
        law: &mut L,
        t: u64,
        mut before_timer: impl FnMut(u64, bool),
    ) {
        let mut guard = 0;
        while let Some(w) = self.wake {
            if w >= t || guard > 64 {
                break;
            }
            guard += 1;
            let cmd = law.on_timer(self.instant(w));
            self.record(w, cmd);
            before_timer(w, self.gate_on);
        }
    }

    pub fn edge<L: Law>(&mut self, law: &mut L, t: u64, level: bool) {
        let cmd = law.on_edge(level, self.instant(t));
        self.record(t, cmd);
    }
}

/// A frequency window wide enough never to bind.
pub fn open_window() -> WindowConfig {
    WindowConfig {
        f_min_hz: 1e3,
        f_max_hz: 2e6,
        min_on_s: 10e-9,
        min_off_s: 10e-9,
        max_on_s: 500e-6,
        light_load: LightLoad::ReportOnly,
    }
}

/// The sampled test fixture's path (`tests/fixtures/sampled-1mhz.toml`:
/// the demo rail's hysteretic law on ADC samples at 1 MHz, no named core).
pub const SAMPLED_FIXTURE: &str =
    concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/sampled-1mhz.toml");

/// The sampled test fixture's text.
pub fn sampled_fixture_toml() -> String {
    std::fs::read_to_string(SAMPLED_FIXTURE).unwrap()
}

/// The sampled test fixture: the demo rail close to an ideal comparator
/// loop, for checks of the law and the plant against closed forms.
pub fn sampled_fixture() -> ripplectl::sim::Scenario {
    ripplectl::sim::Scenario::from_toml(&sampled_fixture_toml()).unwrap()
}
