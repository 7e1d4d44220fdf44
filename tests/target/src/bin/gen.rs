//! Host side: generate the vector file. Inputs are pseudo-random (fixed
//! seed, so the file is reproducible), start just before the timer wraps,
//! and the expected outputs are the host build's own.
//!
//!     cargo run --features host --bin gen -- vectors.bin

use ripplectl_target::{op, Rig, MAGIC};
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

fn main() -> std::io::Result<()> {
    let path = std::env::args().nth(1).unwrap_or_else(|| "vectors.bin".to_string());
    let mut rng = Rng(0x5eed_1234_abcd_0001);
    let mut rig = Rig::demo().expect("demo configuration");
    let mut words: Vec<u32> = Vec::new();
    let mut t: u32 = u32::MAX - 150_000;
    let calls = 3_000;
    let mut gate = 0u32;
    for _ in 0..calls {
        t = t.wrapping_add(1 + rng.below(180));
        let operation = rng.below(op::COUNT);
        let a = match operation {
            op::HYST_SAMPLE | op::SUP_SAMPLE | op::EST_OUT | op::COT_SAMPLE => {
                if rng.below(8) == 0 {
                    rng.below(4096)
                } else {
                    1960 + rng.below(50)
                }
            }
            op::SUP_HOUSEKEEPING => {
                if rng.below(10) == 0 {
                    rng.below(4096)
                } else {
                    2800 + rng.below(300)
                }
            }
            op::EST_GATE | op::EDGE => {
                gate ^= 1;
                gate
            }
            _ => rng.next(),
        };
        let out = rig.step(operation, a, t);
        words.extend([operation, a, t]);
        words.extend(out);
    }
    let mut file = std::fs::File::create(&path)?;
    file.write_all(&MAGIC.to_le_bytes())?;
    file.write_all(&(calls as u32).to_le_bytes())?;
    for w in words {
        file.write_all(&w.to_le_bytes())?;
    }
    eprintln!("{calls} calls written to {path}");
    Ok(())
}
