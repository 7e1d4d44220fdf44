//! Host side: generate the vector file. Two parts, both recorded through
//! [`Rig::step`], so the expected outputs are the host build's own:
//!
//! 1. pseudo-random calls (fixed seed, so the file is reproducible) of
//!    every operation, starting just before the timer wraps;
//! 2. the on-time stack in closed loop around a small buck model (the
//!    demo's 47 µH, 220 µF with 40 mΩ ESR, 24 V in, 1 A out): conversions
//!    every microsecond, its timer deadlines, housekeeping at 10 kHz, from
//!    a cold start through soft-start into regulation, so the slow path's
//!    feed-forward, trim, DC correction and observer all act.
//!
//!     cargo run --features host --bin gen -- vectors.bin

use ripplectl_target::{op, Rig, MAGIC, VIN_24V, WORDS_OUT};
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
}

impl Recording {
    fn call(&mut self, operation: u32, a: u32, t: u32) -> [u32; WORDS_OUT] {
        let out = self.rig.step(operation, a, t);
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
    const LOAD_A: f32 = 1.0;

    fn v_out(&self) -> f32 {
        self.v_c + Self::ESR * (self.i_l - Self::LOAD_A)
    }

    fn step(&mut self, on: bool, dt: f32) {
        let v_sw = if on { Self::VIN } else { -0.45 };
        self.i_l = (self.i_l + (v_sw - self.v_out()) / Self::L * dt).max(0.0);
        self.v_c += (self.i_l - Self::LOAD_A) / Self::C * dt;
    }

    /// The ADC's reading of the output (4.7/14.7 divider, 12 bits, 3.3 V).
    fn code(&self) -> u32 {
        (self.v_out() * (4.7 / 14.7) / (3.3 / 4096.0) + 0.5).clamp(0.0, 4095.0) as u32
    }
}

/// The on-time stack in closed loop for `us` microseconds from `start`.
fn closed_loop(rec: &mut Recording, start: u32, us: u32) {
    let mut buck = Buck { i_l: 0.0, v_c: 0.0 };
    let (mut gate, mut wake): (bool, Option<u32>) = (false, None);
    let apply = |words: [u32; WORDS_OUT], gate: &mut bool, wake: &mut Option<u32>| {
        if words[0] & 8 == 0 {
            *gate = words[0] & 1 != 0;
            *wake = (words[0] & 2 != 0).then_some(words[1]);
        }
    };
    for k in 0..us {
        let t0 = start.wrapping_add(k * TICKS_PER_US);
        // A deadline inside this microsecond: the compare, at its tick.
        if let Some(w) = wake.filter(|&w| w.wrapping_sub(t0) < TICKS_PER_US) {
            let before = w.wrapping_sub(t0) as f32 / TICKS_PER_US as f32;
            buck.step(gate, before * 1e-6);
            let words = rec.call(op::COT_STACK_TIMER, 0, w);
            apply(words, &mut gate, &mut wake);
            buck.step(gate, (1.0 - before) * 1e-6);
        } else {
            for _ in 0..4 {
                buck.step(gate, 0.25e-6);
            }
        }
        let t = t0.wrapping_add(TICKS_PER_US);
        let a = buck.code() | (u32::from(VIN_24V) << 16);
        let words = rec.call(op::COT_STACK_CONVERSION, a, t);
        apply(words, &mut gate, &mut wake);
        if k % 100 == 0 {
            let words = rec.call(op::COT_STACK_HOUSEKEEPING, 0, t);
            if words[0] & 0x100 != 0 {
                gate = false;
            }
        }
    }
}

fn main() -> std::io::Result<()> {
    let path = std::env::args().nth(1).unwrap_or_else(|| "vectors.bin".to_string());
    let mut rec = Recording { rig: Rig::demo(), words: Vec::new(), calls: 0 };
    let mut rng = Rng(0x5eed_1234_abcd_0001);
    random_calls(&mut rec, &mut rng, u32::MAX - 150_000, 3_000);
    closed_loop(&mut rec, u32::MAX - 20_000, 2_500);
    let state = rec.rig.cot.supervisor().state();
    let on_ticks = rec.rig.cot.law().on_ticks();
    let mut file = std::fs::File::create(&path)?;
    file.write_all(&MAGIC.to_le_bytes())?;
    file.write_all(&rec.calls.to_le_bytes())?;
    for w in &rec.words {
        file.write_all(&w.to_le_bytes())?;
    }
    eprintln!(
        "{} calls written to {path}; the on-time stack ends {state:?} with an on-time of {on_ticks} ticks",
        rec.calls
    );
    Ok(())
}
