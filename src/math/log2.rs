//! Fixed-point base-2 logarithm and exponential for the slow path.
//!
//! Core loss by Steinmetz's equation, `P = k·f^α·B̂^β`, has non-integer
//! exponents; without an FPU the slow path evaluates it as
//! `2^(log₂k + α·log₂f + β·log₂B̂)` with these two functions, integers only.
//!
//! - [`log2_q16`]: the integer part from the leading bit, then sixteen
//!   fraction bits by repeated squaring of the mantissa (each squaring
//!   doubles the logarithm; a result at or above 2 is a 1 bit). Error below
//!   2⁻¹⁵ (one unit in the last place plus truncation).
//! - [`exp2_q32`]: the fraction's bits select factors `2^(2^−i)` from a
//!   table the compiler computes, multiplied in `Q1.31`; the integer part
//!   is a shift. Relative error below 2⁻²⁶ per factor, 16 factors.
//!
//! Formats: logarithms in `Q16.16` (`i32`, value × 2¹⁶); values in
//! `Q32.32` (`u64`, value × 2³²), saturating at `u64::MAX`.

use super::config::{powf, round};

/// `2^(2^−(i+1))` in `Q1.31`, for `i` in 0..16: the factor of fraction bit
/// `15 − i` of a `Q16.16` exponent.
const ROOTS: [u32; 16] = {
    let mut t = [0u32; 16];
    let mut i = 0;
    while i < 16 {
        let x = powf(2.0, 1.0 / (1u32 << (i + 1)) as f64);
        t[i] = round(x * (1u64 << 31) as f64) as u32;
        i += 1;
    }
    t
};

/// `log₂(x · 2^−frac)` in `Q16.16`; `i32::MIN` for `x = 0`.
pub fn log2_q16(x: u64, frac: u32) -> i32 {
    if x == 0 {
        return i32::MIN;
    }
    let msb = 63 - x.leading_zeros();
    // The mantissa x / 2^msb in [1, 2), Q1.31.
    let mut m: u64 = if msb >= 31 { x >> (msb - 31) } else { x << (31 - msb) };
    let mut bits: i32 = 0;
    for _ in 0..16 {
        // m < 2³², so m² < 2⁶⁴; back to Q1.31 (now in [1, 4)).
        m = m.wrapping_mul(m) >> 31;
        bits <<= 1;
        if m >= 1 << 32 {
            m >>= 1;
            bits |= 1;
        }
    }
    let whole = msb as i32 - frac.min(127) as i32;
    whole.wrapping_shl(16) | bits
}

/// `2^(y · 2^−16)` in `Q32.32`, saturating at `u64::MAX`; 0 when the value
/// is below 2⁻³².
pub fn exp2_q32(y: i32) -> u64 {
    let whole = y >> 16;
    let frac = (y & 0xffff) as u32;
    let mut m: u64 = 1 << 31;
    for (i, root) in ROOTS.iter().enumerate() {
        if frac & (0x8000 >> i) != 0 {
            m = (m * u64::from(*root)) >> 31;
        }
    }
    // m in [2³¹, 2³²): the value is m · 2^(whole − 31) in plain units, so
    // m · 2^(whole + 1) in Q32.32.
    let shift = whole + 1;
    if shift >= 32 {
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
        for &(x, frac) in
            &[(1u64, 0), (3, 0), (65_536 * 5, 16), (123_456_789, 0), (7, 16), (1 << 40, 20)]
        {
            let want = ((x as f64) / (1u64 << frac) as f64).log2();
            let got = f64::from(log2_q16(x, frac)) / 65_536.0;
            assert!((got - want).abs() < 2.0 / 65_536.0, "log2({x}>>{frac}) {got} vs {want}");
        }
    }

    #[test]
    fn exp2_agrees_with_f64() {
        for &y in &[0.0f64, 0.5, 1.0, -1.0, 3.25, 10.75, -7.25, -20.0, 20.5, 30.9] {
            let q = (y * 65_536.0).round();
            let want = (q / 65_536.0).exp2();
            let got = exp2_q32(q as i32) as f64 / 4_294_967_296.0;
            assert!((got - want).abs() <= want * 1e-6 + 1e-9, "2^{y} {got} vs {want}");
        }
        assert_eq!(exp2_q32(40 << 16), u64::MAX);
        assert_eq!(exp2_q32(-40 << 16), 0);
    }

    #[test]
    fn round_trip() {
        for x in [1u64 << 32, 3 << 30, 12_345 << 20] {
            let back = exp2_q32(log2_q16(x, 32)) as f64;
            assert!((back - x as f64).abs() / (x as f64) < 2e-5, "{x} -> {back}");
        }
    }
}
