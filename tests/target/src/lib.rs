//! The fast path under test, driven by a word stream that the host
//! generates and the targets replay.
//!
//! A vector file is `MAGIC`, a count, then per call `WORDS_IN` input words
//! (operation, two arguments) and `WORDS_OUT` expected output words, all
//! little-endian `u32`. [`Rig::step`] performs one call on persistent
//! firmware objects built from fixed SI configurations, so configuration
//! (float, on each core) is under test too.
#![no_std]

use ripplectl::estimate::{CurrentEstimator, InductorModel};
use ripplectl::law::{ComparatorPassThrough, Hysteretic, HystereticConfig, OnTime, OnTimeConfig};
use ripplectl::supervisor::{Limits, ProtectionConfig, State, Supervisor};
use ripplectl::{
    AdcChannel, Command, FrequencyGuard, Gate, Instant, Law, TimerClock, Window, WindowConfig,
};

/// File magic: "RPLV".
pub const MAGIC: u32 = 0x564c_5052;
/// Input words per call.
pub const WORDS_IN: usize = 3;
/// Output words per call.
pub const WORDS_OUT: usize = 4;

/// The operations a vector can ask for.
pub mod op {
    /// Hysteretic law + guard, `on_sample(a as u16, b)`.
    pub const HYST_SAMPLE: u32 = 0;
    /// Hysteretic law + guard, `on_timer(b)`.
    pub const HYST_TIMER: u32 = 1;
    /// Comparator pass-through + guard, `on_edge(a & 1 != 0, b)`.
    pub const EDGE: u32 = 2;
    /// Current estimator, `on_gate(a & 1, b)`.
    pub const EST_GATE: u32 = 3;
    /// Current estimator, `current_at(b)`.
    pub const EST_AT: u32 = 4;
    /// Current estimator, `on_output_code(a as u16, b)`.
    pub const EST_OUT: u32 = 5;
    /// Supervisor stack, `on_sample(a as u16, b)`.
    pub const SUP_SAMPLE: u32 = 6;
    /// Supervisor stack, `on_timer(b)`.
    pub const SUP_TIMER: u32 = 7;
    /// Supervisor stack, `housekeeping(a as u16, b)` (slow path).
    pub const SUP_HOUSEKEEPING: u32 = 8;
    /// Configuration results (thresholds, window ticks).
    pub const CONFIG: u32 = 9;
    /// On-time law + guard, `on_sample(a as u16, b)`.
    pub const COT_SAMPLE: u32 = 10;
    /// On-time law + guard, `on_timer(b)`.
    pub const COT_TIMER: u32 = 11;
    /// Number of operations.
    pub const COUNT: u32 = 12;
}

/// The demo's firmware objects.
pub struct Rig {
    /// Hysteretic law inside the guard.
    pub guard: FrequencyGuard<Hysteretic>,
    /// Comparator pass-through inside the guard.
    pub edge: FrequencyGuard<ComparatorPassThrough>,
    /// On-time law inside the guard.
    pub on_time: FrequencyGuard<OnTime>,
    /// A free-standing current estimator.
    pub estimator: CurrentEstimator,
    /// Supervisor around law and guard.
    pub stack: Supervisor<FrequencyGuard<Hysteretic>>,
    /// Output channel.
    pub vout: AdcChannel,
    /// Input channel.
    pub vin: AdcChannel,
}

/// The demo's estimator model.
pub const MODEL: InductorModel = InductorModel::demo();

/// The demo's protection settings.
pub const PROTECTION: ProtectionConfig = ProtectionConfig::demo();

fn command_words(c: Command, extra: u32) -> [u32; WORDS_OUT] {
    let wake = c.wake.map_or(0, |w| w.0);
    [u32::from(c.gate.is_on()) | (u32::from(c.wake.is_some()) << 1), wake, extra, 0]
}

fn state_code(s: State) -> u32 {
    match s {
        State::Off => 0,
        State::SoftStart => 1,
        State::Regulating => 2,
        State::Restart => 3,
        State::Fault => 4,
    }
}

impl Rig {
    /// Build the demo objects. The configurations are valid, so the
    /// conversions cannot fail; `None` would mean a core disagrees.
    pub fn demo() -> Option<Self> {
        let clock = TimerClock::new(64_000_000).ok()?;
        let vout = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.0).ok()?;
        let vin = AdcChannel::new(12, 3.3, 0.0826, 0.0).ok()?;
        let window = Window::new(&WindowConfig::demo(), &clock).ok()?;
        let law =
            Hysteretic::new(&HystereticConfig { setpoint_v: 5.0, band_v: 0.04 }, &vout).ok()?;
        let mut estimator = CurrentEstimator::new(&MODEL, &clock, 40.0).ok()?;
        estimator.set_voltages(24.0, 5.0);
        estimator.follow_output(&vout);
        let mut sup_estimator = CurrentEstimator::new(&MODEL, &clock, 40.0).ok()?;
        sup_estimator.follow_output(&vout);
        let limits = Limits::new(&PROTECTION, &vout, &vin, &clock, law.reference_code()).ok()?;
        Some(Self {
            guard: FrequencyGuard::new(law, window),
            edge: FrequencyGuard::new(ComparatorPassThrough::new(true), window),
            on_time: FrequencyGuard::new(
                OnTime::new(&OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.08e-6 }, &vout, &clock)
                    .ok()?,
                window,
            ),
            estimator,
            stack: Supervisor::new(FrequencyGuard::new(law, window), sup_estimator, limits),
            vout,
            vin,
        })
    }

    /// Perform one call; its outputs.
    pub fn step(&mut self, operation: u32, a: u32, b: u32) -> [u32; WORDS_OUT] {
        let now = Instant(b);
        match operation {
            op::HYST_SAMPLE => command_words(self.guard.on_sample(a as u16, now), 0),
            op::HYST_TIMER => command_words(self.guard.on_timer(now), 0),
            op::EDGE => command_words(self.edge.on_edge(a & 1 != 0, now), 0),
            op::EST_GATE => {
                let gate = if a & 1 != 0 { Gate::On } else { Gate::Off };
                match self.estimator.on_gate(gate, now) {
                    Some(c) => [
                        c.peak.to_bits() as u32,
                        c.valley.to_bits() as u32,
                        c.on_ticks,
                        c.period_ticks,
                    ],
                    None => [self.estimator.current().to_bits() as u32, 0, 0, u32::MAX],
                }
            }
            op::EST_AT => [self.estimator.current_at(now).to_bits() as u32, 0, 0, 0],
            op::EST_OUT => {
                self.estimator.on_output_code(a as u16, now);
                [self.estimator.current().to_bits() as u32, 0, 0, 0]
            }
            op::SUP_SAMPLE => {
                command_words(self.stack.on_sample(a as u16, now), state_code(self.stack.state()))
            }
            op::SUP_TIMER => {
                command_words(self.stack.on_timer(now), state_code(self.stack.state()))
            }
            op::SUP_HOUSEKEEPING => {
                let (vin, vout) = (self.vin, self.vout);
                self.stack.housekeeping(a as u16, &vin, &vout, now);
                let reference = ripplectl::law::Regulate::reference_code(self.stack.inner());
                [
                    state_code(self.stack.state()),
                    u32::from(reference),
                    self.stack.faults().count() as u32,
                    0,
                ]
            }
            _ => {
                let h = self.guard.inner();
                let w = self.guard.window();
                [
                    u32::from(h.lower_code()) | (u32::from(h.upper_code()) << 16),
                    w.min_on | (w.min_off << 16),
                    w.max_on,
                    w.min_period | (w.max_period << 16),
                ]
            }
        }
    }
}

/// Little-endian word `i` of `bytes` (0 past the end).
pub fn word(bytes: &[u8], i: usize) -> u32 {
    match bytes.get(4 * i..4 * i + 4) {
        Some(&[a, b, c, d]) => u32::from_le_bytes([a, b, c, d]),
        _ => 0,
    }
}

/// Replay a vector file on a fresh [`Rig`]: `(calls, mismatches)`, or
/// `None` for a malformed file.
pub fn replay(bytes: &[u8]) -> Option<(u32, u32)> {
    if word(bytes, 0) != MAGIC {
        return None;
    }
    let count = word(bytes, 1);
    let mut rig = Rig::demo()?;
    let mut mismatches = 0;
    for k in 0..count as usize {
        let base = 2 + k * (WORDS_IN + WORDS_OUT);
        let got = rig.step(word(bytes, base), word(bytes, base + 1), word(bytes, base + 2));
        let expected =
            core::array::from_fn::<u32, WORDS_OUT, _>(|j| word(bytes, base + WORDS_IN + j));
        mismatches += u32::from(got != expected);
    }
    Some((count, mismatches))
}
