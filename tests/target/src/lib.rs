//! The firmware under test, driven by a word stream that the host
//! generates and the targets replay.
//!
//! A vector file is `MAGIC`, a count, then per call `WORDS_IN` input words
//! (operation, two arguments) and `WORDS_OUT` expected output words, all
//! little-endian `u32`. [`Rig::step`] performs one call on persistent
//! firmware objects. Their configuration is `const` (the compiler evaluates
//! it: no float code on the target); the `CONFIG` operation runs the same
//! constructors at run time on the core, so the soft-float configuration
//! path is checked bit for bit too.
//!
//! Everything here but the demo's plain parts needs the crate's optional
//! parts (feature `parts`); the `minimal` build, for the size probe of the
//! stack without them, has the board, the runtime and those plain parts.
#![no_std]
#![cfg_attr(not(feature = "parts"), allow(unused))]

#[cfg(feature = "runtime")]
pub mod arch;
#[cfg(feature = "runtime")]
pub mod board;

use core::hint::black_box;
use ripplectl::estimate::{CurrentEstimator, InductorModel};
use ripplectl::law::{
    ComparatorPassThrough, Dither, FrequencyTrim, Hysteretic, HystereticConfig, OnTime,
    OnTimeConfig, OnTimeFeedForward, Regulate,
};
use ripplectl::stack::{Sensing, SlowPathConfig, Stack, StackConfig, StackParts};
use ripplectl::supervisor::State;
use ripplectl::{
    unwrap_config, AdcChannel, Command, FrequencyGuard, Gate, Instant, Law, TimerClock, Window,
    WindowConfig,
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
    /// Hysteretic stack, `on_conversion(a as u16, (a >> 16) as u16, b)`.
    pub const STACK_CONVERSION: u32 = 6;
    /// Hysteretic stack, `on_timer(b)`.
    pub const STACK_TIMER: u32 = 7;
    /// Hysteretic stack, `housekeeping(b)` (slow path).
    pub const STACK_HOUSEKEEPING: u32 = 8;
    /// Configuration at run time on the core (thresholds, window ticks).
    pub const CONFIG: u32 = 9;
    /// On-time law + guard, `on_sample(a as u16, b)`.
    pub const COT_SAMPLE: u32 = 10;
    /// On-time law + guard, `on_timer(b)`.
    pub const COT_TIMER: u32 = 11;
    /// On-time stack (feed-forward, trim, DC correction, observer),
    /// `on_conversion(a as u16, (a >> 16) as u16, b)`.
    pub const COT_STACK_CONVERSION: u32 = 12;
    /// On-time stack, `on_timer(b)`.
    pub const COT_STACK_TIMER: u32 = 13;
    /// On-time stack, `housekeeping(b)` (the whole slow path).
    pub const COT_STACK_HOUSEKEEPING: u32 = 14;
    /// Locked and dithered hysteretic stack,
    /// `on_conversion(a as u16, (a >> 16) as u16, b)`.
    pub const LOCK_STACK_CONVERSION: u32 = 15;
    /// Locked and dithered hysteretic stack, `on_timer(b)`.
    pub const LOCK_STACK_TIMER: u32 = 16;
    /// Locked and dithered hysteretic stack, `housekeeping(b)` (the lock
    /// and the dither act here).
    pub const LOCK_STACK_HOUSEKEEPING: u32 = 17;
    /// Analog-retrofit stack (the board's comparator through the guard),
    /// `on_conversion(a as u16, (a >> 16) as u16, b)` (protections and the
    /// soft-start's pulse bound).
    pub const RETRO_STACK_CONVERSION: u32 = 18;
    /// Analog-retrofit stack, `on_edge(a & 1 != 0, b)`.
    pub const RETRO_STACK_EDGE: u32 = 19;
    /// Analog-retrofit stack, `on_timer(b)`.
    pub const RETRO_STACK_TIMER: u32 = 20;
    /// Analog-retrofit stack, `housekeeping(b)`.
    pub const RETRO_STACK_HOUSEKEEPING: u32 = 21;
    /// Number of operations the random part of a vector file draws from.
    pub const COUNT: u32 = 22;
}

/// The demo board (the simulator's default scenario), as a firmware holds
/// it: evaluated by the compiler; with the law on ADC samples for the
/// sampled stacks (the edge stack below takes the demo's own comparator
/// wiring back).
pub const CONFIG: StackConfig = StackConfig { sensing: Sensing::Sampled, ..StackConfig::demo() };

#[cfg(feature = "parts")]
/// The demo stack's parts.
pub const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));

#[cfg(feature = "parts")]
/// The on-time stack's configuration: the demo with DC correction.
const COT_CONFIG: StackConfig =
    StackConfig { slow: SlowPathConfig { dc_correction: true, ..CONFIG.slow }, ..CONFIG };

#[cfg(feature = "parts")]
/// The on-time stack's parts.
pub const COT_PARTS: StackParts = unwrap_config(StackParts::new(&COT_CONFIG));

#[cfg(feature = "parts")]
/// The demo stack's parts with an edge-driven law (an analog comparator
/// whose threshold the law arms; the ADC's readings serve the protections).
pub const EDGE_PARTS: StackParts =
    unwrap_config(StackParts::new(&StackConfig { sensing: Sensing::Edge, ..CONFIG }));

#[cfg(feature = "parts")]
/// The on-time stack's parts with the law on comparator edges (the
/// comparator armed at the reference; the ADC's readings serve the
/// protections).
pub const COT_EDGE_PARTS: StackParts =
    unwrap_config(StackParts::new(&StackConfig { sensing: Sensing::Edge, ..COT_CONFIG }));

/// The demo's hysteretic law: 40 mV band around 5 V.
pub const HYSTERETIC: Hysteretic = unwrap_config(Hysteretic::new(
    &HystereticConfig { setpoint_v: CONFIG.setpoint_v, band_v: 0.04 },
    &CONFIG.output_adc,
));

/// The board's own comparator loop passed through (the analog retrofit):
/// its setpoint is the middle of its thresholds, the hysteretic law's
/// reference.
pub const RETROFIT: ComparatorPassThrough =
    ComparatorPassThrough::new(true).with_setpoint(HYSTERETIC.reference_code());

#[cfg(feature = "parts")]
/// The demo's hysteretic law locked to a mean 40 kHz (the band lock the
/// simulator's `lock_hz` builds, `FrequencyTrim::band_lock`) and dithered
/// ±20 % (the simulator's seed, `DITHER_SEED`).
pub const LOCKED: Hysteretic = HYSTERETIC
    .with_lock(unwrap_config(FrequencyTrim::band_lock(40e3, &CONFIG.clock)))
    .with_dither(unwrap_config(Dither::new(0.2, ripplectl::law::dither::DITHER_SEED)));

/// The demo's plain on-time law: 2.08 µs (about 100 kHz at 24 V).
pub const PLAIN_ON_TIME: OnTime = unwrap_config(OnTime::new(
    &OnTimeConfig { setpoint_v: CONFIG.setpoint_v, on_time_s: 2.08e-6 },
    &CONFIG.output_adc,
    &CONFIG.clock,
));

#[cfg(feature = "parts")]
/// The demo's on-time law with feed-forward to 100 kHz and its trim.
pub const ON_TIME: OnTime = PLAIN_ON_TIME
    .with_feed_forward(unwrap_config(OnTimeFeedForward::new(
        CONFIG.setpoint_v,
        100e3,
        &CONFIG.clock,
    )))
    .with_trim(unwrap_config(FrequencyTrim::new(100e3, 0.05, 0.5, 1.5, &CONFIG.clock)));

/// The demo's estimator model.
pub const MODEL: InductorModel = InductorModel::demo();

/// The fault log's length in the size probes and the firmware example: a
/// Cortex-M0 firmware with little RAM keeps its last four faults (8 bytes
/// each) rather than the crate's default sixteen. The log is telemetry
/// only; protections and sequencing do not read it.
pub const FAULT_LOG: usize = 4;

/// Input code of 24 V on the demo's input channel (100 k over 9.1 k into
/// 12 bits at 3.3 V: 24·0.0826/(3.3/4096) = 2460.6).
pub const VIN_24V: u16 = 2461;

#[cfg(feature = "parts")]
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
    /// The demo stack around the hysteretic law.
    pub stack: Stack<Hysteretic>,
    /// The on-time stack, every slow-path feature on.
    pub cot: Stack<OnTime>,
    /// The hysteretic stack with the frequency lock and dither.
    pub locked: Stack<Hysteretic>,
    /// The analog retrofit's stack: the board's comparator on edges.
    pub retrofit: Stack<ComparatorPassThrough>,
}

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

#[cfg(feature = "parts")]
/// A fast-path call of a stack: its command (none: gate bit 3 set) and
/// state.
fn stack_words<L: Law + Regulate>(s: &Stack<L>, c: Option<Command>) -> [u32; WORDS_OUT] {
    let state = state_code(s.supervisor().state());
    match c {
        Some(c) => command_words(c, state),
        None => [8, 0, state, 0],
    }
}

#[cfg(feature = "parts")]
/// A housekeeping tick of a stack: state, reference, `law_word` (the
/// on-time, the locked band; 0 where the C replay expects a law without
/// one), and a hash of the slow path's figures.
fn housekeeping_words<L: Law + Regulate>(
    s: &mut Stack<L>,
    now: Instant,
    law_word: fn(&Stack<L>) -> u32,
) -> [u32; WORDS_OUT] {
    let stop = s.housekeeping(now);
    let t = s.telemetry();
    let figures = [
        t.vin.to_bits() as u32,
        t.vout.to_bits() as u32,
        t.losses.output.to_bits() as u32,
        t.losses.losses().to_bits() as u32,
        t.observer_current.map_or(0x8000_0000, |i| i.to_bits() as u32),
        s.supervisor().estimator().current().to_bits() as u32,
        t.efficiency,
        t.faults as u32,
    ];
    let hash = figures.iter().fold(0x811c_9dc5u32, |h, w| (h ^ w).wrapping_mul(0x0100_0193));
    [
        state_code(t.state) | (u32::from(stop.is_some()) << 8),
        u32::from(s.supervisor().inner().reference_code()),
        law_word(s),
        hash,
    ]
}

#[cfg(feature = "parts")]
/// The locked law's band (codes, low half) and the lock's factor (× 2¹⁶,
/// high half, wrapping).
fn locked_band(s: &Stack<Hysteretic>) -> u32 {
    let trim = s.law().frequency_trim().map_or(0, |t| t.trim());
    u32::from(s.law().band_codes()) | trim << 16
}

#[cfg(feature = "parts")]
impl Rig {
    /// Build the demo objects from the `const` configuration.
    pub fn demo() -> Self {
        let window = PARTS.window;
        Self {
            guard: FrequencyGuard::new(HYSTERETIC, window),
            edge: FrequencyGuard::new(ComparatorPassThrough::new(true), window),
            on_time: FrequencyGuard::new(PLAIN_ON_TIME, window),
            estimator: {
                let mut est = PARTS.estimator;
                est.set_voltage_codes(VIN_24V, 1984);
                est
            },
            stack: Stack::new(HYSTERETIC, PARTS),
            cot: Stack::new(ON_TIME, COT_PARTS),
            locked: Stack::new(LOCKED, PARTS),
            retrofit: Stack::new(RETROFIT, EDGE_PARTS),
        }
    }

    /// Configuration run on the core at run time (soft float on the
    /// Cortex-M0): the hysteretic thresholds and the window's ticks.
    /// `None` would mean a core disagrees with the compiler.
    pub fn runtime_configuration() -> Option<[u32; WORDS_OUT]> {
        let clock = TimerClock::new(black_box(64_000_000)).ok()?;
        let vout = AdcChannel::new(12, black_box(3.3), 4.7 / 14.7, 0.0).ok()?;
        let h =
            Hysteretic::new(&HystereticConfig { setpoint_v: black_box(5.0), band_v: 0.04 }, &vout)
                .ok()?;
        let w = Window::new(&black_box(WindowConfig::demo()), &clock).ok()?;
        Some([
            u32::from(h.lower_code()) | (u32::from(h.upper_code()) << 16),
            w.min_on | (w.min_off << 16),
            w.max_on,
            w.min_period | (w.max_period << 16),
        ])
    }

    /// Perform one call; its outputs.
    pub fn step(&mut self, operation: u32, a: u32, b: u32) -> [u32; WORDS_OUT] {
        let now = Instant(b);
        let (out, input) = (a as u16, (a >> 16) as u16);
        match operation {
            op::HYST_SAMPLE => command_words(self.guard.on_sample(out, now), 0),
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
                self.estimator.on_output_code(out, now);
                [self.estimator.current().to_bits() as u32, 0, 0, 0]
            }
            op::STACK_CONVERSION => {
                let c = self.stack.on_conversion(out, input, now);
                stack_words(&self.stack, c)
            }
            op::STACK_TIMER => {
                let c = self.stack.on_timer(now);
                stack_words(&self.stack, Some(c))
            }
            op::STACK_HOUSEKEEPING => housekeeping_words(&mut self.stack, now, |_| 0),
            op::LOCK_STACK_CONVERSION => {
                let c = self.locked.on_conversion(out, input, now);
                stack_words(&self.locked, c)
            }
            op::LOCK_STACK_TIMER => {
                let c = self.locked.on_timer(now);
                stack_words(&self.locked, Some(c))
            }
            op::LOCK_STACK_HOUSEKEEPING => housekeeping_words(&mut self.locked, now, locked_band),
            op::RETRO_STACK_CONVERSION => {
                let c = self.retrofit.on_conversion(out, input, now);
                stack_words(&self.retrofit, c)
            }
            op::RETRO_STACK_EDGE => {
                let c = self.retrofit.on_edge(a & 1 != 0, now);
                stack_words(&self.retrofit, Some(c))
            }
            op::RETRO_STACK_TIMER => {
                let c = self.retrofit.on_timer(now);
                stack_words(&self.retrofit, Some(c))
            }
            op::RETRO_STACK_HOUSEKEEPING => housekeeping_words(&mut self.retrofit, now, |s| {
                s.supervisor().pulse_cap().to_bits() as u32
            }),
            op::COT_SAMPLE => command_words(self.on_time.on_sample(out, now), 0),
            op::COT_TIMER => command_words(self.on_time.on_timer(now), 0),
            op::COT_STACK_CONVERSION => {
                let c = self.cot.on_conversion(out, input, now);
                stack_words(&self.cot, c)
            }
            op::COT_STACK_TIMER => {
                let c = self.cot.on_timer(now);
                stack_words(&self.cot, Some(c))
            }
            op::COT_STACK_HOUSEKEEPING => {
                housekeeping_words(&mut self.cot, now, |s| s.law().on_ticks())
            }
            _ => Self::runtime_configuration().unwrap_or([u32::MAX; WORDS_OUT]),
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

#[cfg(feature = "parts")]
/// Replay a vector file on a fresh [`Rig`]: `(calls, mismatches)`, or
/// `None` for a malformed file.
pub fn replay(bytes: &[u8]) -> Option<(u32, u32)> {
    if word(bytes, 0) != MAGIC {
        return None;
    }
    let count = word(bytes, 1);
    let mut rig = Rig::demo();
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
