//! Fixed-point base-2 logarithm and exponential for the slow path.
//!
//! Core loss by Steinmetz's equation, `P = k·f^α·B̂^β`, has non-integer
//! exponents; without an FPU the slow path evaluates it as
//! `2^(log₂k + α·log₂f + β·log₂B̂)` with these two functions, integers only
//! and a few dozen instructions each.
//!
//! - [`log2_q16`]: the integer part from the leading bit; the fraction by
//!   linear interpolation in a 33-entry table of `log₂(1 + k/32)` over the
//!   mantissa. Error below 1.8·10⁻⁴ (the interpolation's `h²/8·max|f''|`
//!   with `h = 1/32`, `f'' = −1/(ln2·x²)`), about 12 units of the result's
//!   last place.
//! - [`exp2_q32`]: the integer part is a shift; the fraction by linear
//!   interpolation in a table of `2^(k/32)`. Relative error below 1.2·10⁻⁴
//!   (`h²/8·ln²2`).
//!
//! Both tables are computed by the compiler from [`super::config`]. For the
//! core loss (`β ≈ 2.6`) the combined error stays below 0.1 %.
//!
//! Formats: logarithms in `Q16.16` (`i32`, value × 2¹⁶); values in
//! `Q32.32` (`u64`, value × 2³²), saturating at `u64::MAX`.

use super::config::{log2, powf, round};

/// Table points: 32 segments over one octave.
const SEGMENTS: usize = 32;

/// `log₂(1 + k/32)` in `Q16` (0 to 65 536).
const LOG2_TABLE: [u32; SEGMENTS + 1] = {
    let mut t = [0u32; SEGMENTS + 1];
    let mut k = 0;
    while k <= SEGMENTS {
        t[k] = round(log2(1.0 + k as f64 / SEGMENTS as f64) * 65_536.0) as u32;
        k += 1;
    }
    t
};

/// `2^(k/32)` in `Q1.30` (2³⁰ to 2³¹).
const EXP2_TABLE: [u32; SEGMENTS + 1] = {
    let mut t = [0u32; SEGMENTS + 1];
    let mut k = 0;
    while k <= SEGMENTS {
        t[k] = round(powf(2.0, k as f64 / SEGMENTS as f64) * (1u64 << 30) as f64) as u32;
        k += 1;
    }
    t
};

/// Linear interpolation in `table` at segment `k` (0..32) and position
/// `frac` (0..2¹⁶) within it.
fn interpolate(table: &[u32; SEGMENTS + 1], k: usize, frac: u32) -> u32 {
    let (a, b) = match (table.get(k), table.get(k + 1)) {
        (Some(&a), Some(&b)) => (a, b),
        _ => return 0,
    };
    // Tables rise: b − a below 2¹⁶·… fits with frac < 2¹⁶.
    a + (((u64::from(b - a)) * u64::from(frac)) >> 16) as u32
}

/// `log₂(x · 2^−frac)` in `Q16.16`; `i32::MIN` for `x = 0`.
pub fn log2_q16(x: u64, frac: u32) -> i32 {
    if x == 0 {
        return i32::MIN;
    }
    let msb = 63 - x.leading_zeros();
    // The mantissa x / 2^msb in [1, 2) as Q1.31; its top 5 fraction bits
    // pick the segment, the next 16 the position.
    let m = if msb >= 31 { x >> (msb - 31) } else { x << (31 - msb) } as u32;
    let k = ((m >> 26) & 31) as usize;
    let within = (m >> 10) & 0xffff;
    let whole = msb as i32 - frac.min(127) as i32;
    whole.wrapping_shl(16).wrapping_add(interpolate(&LOG2_TABLE, k, within) as i32)
}

/// `2^(y · 2^−16)` in `Q32.32`, saturating at `u64::MAX`; 0 when the value
/// is below 2⁻³².
pub fn exp2_q32(y: i32) -> u64 {
    let whole = y >> 16;
    let frac = (y & 0xffff) as u32;
    let m = u64::from(interpolate(&EXP2_TABLE, (frac >> 11) as usize, (frac & 0x7ff) << 5));
    // m in [2³⁰, 2³¹]: the value is m · 2^(whole − 30), so m · 2^(whole + 2)
    // in Q32.32.
    let shift = whole + 2;
    if shift >= 33 {
        u64::MAX
    } else if shift >= 0 {
        m << shift
    } else if shift > -64 {
        m >> -shift
    } else {
        0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log2_agrees_with_f64() {
        for &(x, frac) in &[
            (1u64, 0),
            (3, 0),
            (65_536 * 5, 16),
            (123_456_789, 0),
            (7, 16),
            (1 << 40, 20),
            (100_000, 0),
            (46_137, 16),
        ] {
            let want = ((x as f64) / (1u64 << frac) as f64).log2();
            let got = f64::from(log2_q16(x, frac)) / 65_536.0;
            assert!((got - want).abs() < 2e-4, "log2({x}>>{frac}) {got} vs {want}");
        }
    }

    #[test]
    fn exp2_agrees_with_f64() {
        for &y in &[0.0f64, 0.5, 1.0, -1.0, 3.25, 10.75, -7.25, -20.0, 20.5, 30.9, 0.999] {
            let q = (y * 65_536.0).round();
            let want = (q / 65_536.0).exp2();
            let got = exp2_q32(q as i32) as f64 / 4_294_967_296.0;
            assert!((got - want).abs() <= want * 1.3e-4 + 1e-9, "2^{y} {got} vs {want}");
        }
        assert_eq!(exp2_q32(40 << 16), u64::MAX);
        assert_eq!(exp2_q32(-40 << 16), 0);
    }

    #[test]
    fn round_trip() {
        for x in [1u64 << 32, 3 << 30, 12_345 << 20] {
            let back = exp2_q32(log2_q16(x, 32)) as f64;
            assert!((back - x as f64).abs() / (x as f64) < 3e-4, "{x} -> {back}");
        }
    }
}
