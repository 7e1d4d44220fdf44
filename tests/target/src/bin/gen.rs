//! Host side: generate the vector file. Two parts, both recorded through
//! [`Rig::step`], so the expected outputs are the host build's own:
//!
//! 1. three stacks in closed loop around a small buck model (the demo's
//!    47 µH, 220 µF with 40 mΩ ESR, 24 V in, 5 Ω out: 1 A at 5 V): conversions every
//!    microsecond, their timer deadlines, housekeeping at 10 kHz, each from
//!    a cold start through soft-start into regulation: the on-time stack
//!    (the slow path's feed-forward, trim, DC correction and observer all
//!    act), the hysteretic stack with its frequency lock and dither (the
//!    lock moves the band, the dither draws every window), and the analog
//!    retrofit (a Schmitt comparator on the model's output, edges to the
//!    stack; its soft-start bounds each pulse through the guard). Each
//!    starts 100 000 ticks before the timer wraps and runs across the wrap;
//!    the generator checks that each ends regulating and that the lock, the
//!    dither and the bounded start acted;
//! 2. pseudo-random calls (fixed seed, so the file is reproducible) of
//!    every operation, after the loops (a random reading at a rail latches
//!    a stack's fault: the loops come first, from fresh stacks).
//!
//!     cargo run --features host --bin gen -- vectors.bin

use ripplectl::supervisor::State;
use ripplectl_target::{op, Rig, HYSTERETIC, MAGIC, VIN_24V, WORDS_OUT};
use std::io::Write;

/// xorshift64* (Vigna), enough for test inputs.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u32 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 32) as u32
    }

    fn below(&mut self, n: u32) -> u32 {
        self.next() % n
    }
}

/// The calls recorded so far.
struct Recording {
    rig: Rig,
    words: Vec<u32>,
    calls: u32,
    /// The locked stack's bands (codes) seen at its housekeeping ticks.
    bands: std::collections::BTreeSet<u32>,
}

impl Recording {
    fn call(&mut self, operation: u32, a: u32, t: u32) -> [u32; WORDS_OUT] {
        let out = self.rig.step(operation, a, t);
        if operation == op::LOCK_STACK_HOUSEKEEPING {
            self.bands.insert(out[2] & 0xffff);
        }
        self.words.extend([operation, a, t]);
        self.words.extend(out);
        self.calls += 1;
        out
    }
}

/// An output code near the band most of the time, anywhere sometimes,
/// with an input code near 24 V in the high half-word.
fn conversion(rng: &mut Rng) -> u32 {
    let out = if rng.below(8) == 0 { rng.below(4096) } else { 1960 + rng.below(50) };
    let input = if rng.below(10) == 0 { rng.below(4096) } else { 2400 + rng.below(300) };
    out | (input << 16)
}

fn random_calls(rec: &mut Recording, rng: &mut Rng, start: u32, calls: u32) {
    let mut t = start;
    let mut gate = 0u32;
    for _ in 0..calls {
        t = t.wrapping_add(1 + rng.below(180));
        let operation = rng.below(op::COUNT);
        let a = match operation {
            op::HYST_SAMPLE | op::EST_OUT | op::COT_SAMPLE => conversion(rng) & 0xffff,
            op::STACK_CONVERSION | op::COT_STACK_CONVERSION => conversion(rng),
            op::EST_GATE | op::EDGE => {
                gate ^= 1;
                gate
            }
            _ => rng.next(),
        };
        rec.call(operation, a, t);
    }
}

/// Ticks per microsecond of the demo's 64 MHz timer.
const TICKS_PER_US: u32 = 64;

/// The buck model, Euler steps of a quarter microsecond.
struct Buck {
    i_l: f32,
    v_c: f32,
}

impl Buck {
    const L: f32 = 47e-6;
    const C: f32 = 220e-6;
    const ESR: f32 = 0.040;
    const VIN: f32 = 24.0;
    /// 1 A at 5 V; none at 0 V (a constant-current load would drive a
    /// cold output negative).
    const LOAD_OHMS: f32 = 5.0;

    fn load_a(&self) -> f32 {
        self.v_c / Self::LOAD_OHMS
    }

    fn v_out(&self) -> f32 {
        self.v_c + Self::ESR * (self.i_l - self.load_a())
    }

    fn step(&mut self, on: bool, dt: f32) {
        let v_sw = if on { Self::VIN } else { -0.45 };
        self.i_l = (self.i_l + (v_sw - self.v_out()) / Self::L * dt).max(0.0);
        self.v_c += (self.i_l - self.load_a()) / Self::C * dt;
    }

    /// The ADC's reading of the output (4.7/14.7 divider, 12 bits, 3.3 V).
    fn code(&self) -> u32 {
        (self.v_out() * (4.7 / 14.7) / (3.3 / 4096.0) + 0.5).clamp(0.0, 4095.0) as u32
    }
}

/// The operations of one stack in closed loop.
struct Loop {
    conversion: u32,
    timer: u32,
    housekeeping: u32,
    /// The edge operation and the board comparator's lower and upper
    /// thresholds (output codes): on at or below the lower, off at or
    /// above the upper. `None`: a sampled law.
    edge: Option<(u32, u32, u32)>,
}

const COT_LOOP: Loop = Loop {
    conversion: op::COT_STACK_CONVERSION,
    timer: op::COT_STACK_TIMER,
    housekeeping: op::COT_STACK_HOUSEKEEPING,
    edge: None,
};

const LOCK_LOOP: Loop = Loop {
    conversion: op::LOCK_STACK_CONVERSION,
    timer: op::LOCK_STACK_TIMER,
    housekeeping: op::LOCK_STACK_HOUSEKEEPING,
    edge: None,
};

fn retrofit_loop() -> Loop {
    let (lower, upper) = (HYSTERETIC.lower_code(), HYSTERETIC.upper_code());
    Loop {
        conversion: op::RETRO_STACK_CONVERSION,
        timer: op::RETRO_STACK_TIMER,
        housekeeping: op::RETRO_STACK_HOUSEKEEPING,
        edge: Some((op::RETRO_STACK_EDGE, u32::from(lower), u32::from(upper))),
    }
}

/// One stack in closed loop (`ops`) for `us` microseconds from `start`.
fn closed_loop(rec: &mut Recording, ops: &Loop, start: u32, us: u32) {
    let mut buck = Buck { i_l: 0.0, v_c: 0.0 };
    let mut level = false;
    let (mut gate, mut wake): (bool, Option<u32>) = (false, None);
    let apply = |words: [u32; WORDS_OUT], gate: &mut bool, wake: &mut Option<u32>| {
        if words[0] & 8 == 0 {
            *gate = words[0] & 1 != 0;
            *wake = (words[0] & 2 != 0).then_some(words[1]);
        }
    };
    for k in 0..us {
        let t0 = start.wrapping_add(k * TICKS_PER_US);
        // A deadline inside this microsecond: the compare, at its tick; one
        // already passed (armed by a call late in the microsecond before,
        // or at its own instant): at once.
        let due = |&w: &u32| (w.wrapping_sub(t0) as i32) < TICKS_PER_US as i32;
        if let Some(w) = wake.filter(due) {
            let w = if (w.wrapping_sub(t0) as i32) < 0 { t0 } else { w };
            let before = w.wrapping_sub(t0) as f32 / TICKS_PER_US as f32;
            buck.step(gate, before * 1e-6);
            let words = rec.call(ops.timer, 0, w);
            apply(words, &mut gate, &mut wake);
            buck.step(gate, (1.0 - before) * 1e-6);
        } else {
            for _ in 0..4 {
                buck.step(gate, 0.25e-6);
            }
        }
        let t = t0.wrapping_add(TICKS_PER_US);
        if let Some((edge, lower, upper)) = ops.edge {
            let code = buck.code();
            let seen = code <= lower || (level && code < upper);
            if seen != level {
                level = seen;
                let words = rec.call(edge, u32::from(level), t);
                apply(words, &mut gate, &mut wake);
            }
        }
        let a = buck.code() | (u32::from(VIN_24V) << 16);
        let words = rec.call(ops.conversion, a, t);
        apply(words, &mut gate, &mut wake);
        if k % 100 == 0 {
            let words = rec.call(ops.housekeeping, 0, t);
            if words[0] & 0x100 != 0 {
                gate = false;
            }
            // An edge-driven law hears the comparator's level after each
            // tick, as `Handlers::housekeeping` passes it (a start sees no
            // fresh edge).
            if let Some((edge, ..)) = ops.edge {
                let words = rec.call(edge, u32::from(level), t);
                apply(words, &mut gate, &mut wake);
            }
        }
    }
}

/// What the loops are for, checked: all three stacks regulate at their
/// end, the lock moved the band, the dither drew several bands, the
/// retrofit's start bounded its pulses. Their figures, as a sentence.
fn loops_summary(rec: &Recording) -> String {
    let cot = &rec.rig.cot;
    let locked = &rec.rig.locked;
    let retrofit = &rec.rig.retrofit;
    let trim = locked.law().frequency_trim().map_or(0, |t| t.trim());
    let c = retrofit.supervisor().inner().counts();
    let bounded = c.max_on + c.min_off;
    let states =
        [cot.supervisor().state(), locked.supervisor().state(), retrofit.supervisor().state()];
    let faults: Vec<_> =
        retrofit.faults().map(|f| (f.kind, f.at.0.wrapping_sub(u32::MAX - 100_000) / 64)).collect();
    assert!(states.iter().all(|s| *s == State::Regulating), "{states:?} {faults:?}");
    assert!(
        trim != 1 << 16 && rec.bands.len() > 4 && bounded > 4,
        "lock {trim}, bands {}, bounded {bounded}",
        rec.bands.len()
    );
    format!(
        "the loops end regulating: the on-time stack with an on-time of {} ticks, the locked \
         stack with a band of {} codes (lock factor {:.3}, {} bands seen at its windows), the \
         retrofit after {bounded} pulses bounded in its start (ended at the bound or held off by it)",
        cot.law().on_ticks(),
        locked.law().band_codes(),
        f64::from(trim) / 65_536.0,
        rec.bands.len(),
    )
}

fn main() -> std::io::Result<()> {
    let path = std::env::args().nth(1).unwrap_or_else(|| "vectors.bin".to_string());
    let mut rec =
        Recording { rig: Rig::demo(), words: Vec::new(), calls: 0, bands: Default::default() };
    let mut rng = Rng(0x5eed_1234_abcd_0001);
    let start = u32::MAX - 100_000;
    closed_loop(&mut rec, &COT_LOOP, start, 2_000);
    closed_loop(&mut rec, &LOCK_LOOP, start, 3_000);
    closed_loop(&mut rec, &retrofit_loop(), start, 1_800);
    let summary = loops_summary(&rec);
    // After the loops' last instant (3 000 µs of 64 ticks from `start`).
    // The file stays within the Cortex-M0 board's 256 KiB of flash with
    // the replay's code: 28 bytes a call.
    random_calls(&mut rec, &mut rng, start.wrapping_add(200_000), 300);
    let mut file = std::fs::File::create(&path)?;
    file.write_all(&MAGIC.to_le_bytes())?;
    file.write_all(&rec.calls.to_le_bytes())?;
    for w in &rec.words {
        file.write_all(&w.to_le_bytes())?;
    }
    eprintln!("{} calls written to {path}; {summary}", rec.calls);
    Ok(())
}
