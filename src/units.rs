//! Fixed-point quantities of the slow path, and the configuration-time
//! conversions into them.
//!
//! The slow path (housekeeping, 1–20 kHz) works in `fixed`'s `I16F16` for
//! currents, voltages, powers and resistances: 16 integer bits, 16 fraction
//! bits, `value = bits / 2¹⁶`, range ±32 768 (±2 048 A for currents, which
//! the estimator clamps to), resolution 15.3 µ-units. Fractions of a window
//! (duty, efficiency) are [`Fraction`]s: `u32` with 2¹⁶ = 1. Each
//! conversion saturates at the range's edges; none panics, and NaN gives 0.
//!
//! The `const fn` conversions from `f64` run at configuration (compile time
//! in a firmware's `const`); the rest are integer arithmetic. The slow
//! path's helpers (`mul`, `scale`, the divisions, `ratio`) are never
//! inlined: each is called from a dozen places, and on a Cortex-M0 their
//! 64-bit arithmetic is long, so one copy saves flash for a few
//! instructions of call per use.

use crate::scale::AdcChannel;
use fixed::types::I16F16;

/// Current, amperes: `I16F16`, range ±2 048 A where the estimator holds it.
pub type Amps = I16F16;
/// Voltage, volts: `I16F16`, range ±32 768 V.
pub type Volts = I16F16;
/// Power, watts: `I16F16`, range ±32 768 W.
pub type Watts = I16F16;
/// Resistance, ohms: `I16F16`, range 0 to 32 768 Ω.
pub type Ohms = I16F16;

/// A fraction of a window (duty, efficiency): `u32`, 2¹⁶ = 1, range 0 to
/// 65 536 (the slow path never forms one above 1).
pub type Fraction = u32;

/// One, as a [`Fraction`].
pub const ONE: Fraction = 1 << 16;

/// `round(x · 2^frac)` as `i64`, saturating; NaN gives 0 (configuration).
pub const fn to_fixed_i64(x: f64, frac: u32) -> i64 {
    let scaled = x * (1u64 << frac) as f64;
    if scaled.is_nan() {
        0
    } else if scaled >= i64::MAX as f64 {
        i64::MAX
    } else if scaled <= i64::MIN as f64 {
        i64::MIN
    } else {
        crate::math::config::round(scaled) as i64
    }
}

/// `round(x · 2^frac)` as `i32`, saturating; NaN gives 0 (configuration).
pub const fn to_fixed_i32(x: f64, frac: u32) -> i32 {
    let v = to_fixed_i64(x, frac);
    if v > i32::MAX as i64 {
        i32::MAX
    } else if v < i32::MIN as i64 {
        i32::MIN
    } else {
        v as i32
    }
}

/// `x` as `I16F16`, saturating (configuration).
pub const fn q16(x: f64) -> I16F16 {
    I16F16::from_bits(to_fixed_i32(x, 16))
}

/// An `i64` held within `i32`: `x` when its upper half is only the sign of
/// its lower (one compare on a 32-bit core, not two 64-bit ones), else the
/// bound on `x`'s side. Out of line: a dozen slow-path uses.
#[inline(never)]
pub const fn clamp_i32(x: i64) -> i32 {
    let low = x as i32;
    if low as i64 == x {
        low
    } else if x < 0 {
        i32::MIN
    } else {
        i32::MAX
    }
}

/// `a · b` for two `I16F16` values, saturating.
#[inline(never)]
pub fn mul(a: I16F16, b: I16F16) -> I16F16 {
    I16F16::from_bits(clamp_i32((i64::from(a.to_bits()) * i64::from(b.to_bits())) >> 16))
}

/// `x · f` for a [`Fraction`] `f`, saturating.
#[inline(never)]
pub fn scale(x: I16F16, f: Fraction) -> I16F16 {
    I16F16::from_bits(clamp_i32((i64::from(x.to_bits()) * i64::from(f)) >> 16))
}

/// `n / d`, 0 for `d = 0`, with a 32-bit division when both fit and the
/// core has a divide instruction (one instruction on a Cortex-M3/M4 or an
/// RV32 with `M`); else, and when an operand passes 32 bits (a 64-bit
/// division is a long library call on all of them), by shift and subtract.
#[inline(never)]
pub fn div_u64(n: u64, d: u64) -> u64 {
    if d == 0 {
        0
    } else if n <= u64::from(u32::MAX) && d <= u64::from(u32::MAX) && !NO_DIVIDE_INSTRUCTION {
        u64::from(n as u32 / d as u32)
    } else {
        long_division(n, d)
    }
}

/// `n / d`, 0 for `d = 0`: the core's divide instruction where it has one;
/// on a core without (Armv6-M: Cortex-M0, M0+) [`div_u64`]'s shift and
/// subtract, where the compiler's 32-bit division helper and the count of
/// leading zeros it needs take about 500 bytes of a Cortex-M0's flash.
/// The same quotient either way; a few hundred instructions on the M0
/// (slow path only).
#[inline]
pub fn div_u32(n: u32, d: u32) -> u32 {
    if NO_DIVIDE_INSTRUCTION {
        div_u64(u64::from(n), u64::from(d)) as u32
    } else {
        n.checked_div(d).unwrap_or(0)
    }
}

/// An Arm core of Armv6-M (Cortex-M0, M0+, M1), recognised by what its
/// targets lack: 32-bit atomics (the profile's other targets, from
/// Armv7-M and Armv8-M on, have them, and a divide instruction).
pub(crate) const ARMV6M: bool = cfg!(all(target_arch = "arm", not(target_has_atomic = "32")));

/// The core has no divide instruction: Armv6-M (the crate's RISC-V
/// targets have `M`).
const NO_DIVIDE_INSTRUCTION: bool = ARMV6M;

/// The core counts leading zeros in one instruction: not Armv6-M, nor a
/// RISC-V core without `Zbb` (RV32IMC), where `leading_zeros` is a library
/// call of about 100 bytes.
const COUNTS_LEADING_ZEROS: bool =
    !(ARMV6M || cfg!(all(target_arch = "riscv32", not(target_feature = "zbb"))));

/// `n / d` for `d > 0` by shift and subtract (see [`shifted_division`]),
/// in 32-bit arithmetic when both fit (a third of the instructions on a
/// Cortex-M0). The same quotient as `n / d` in a few hundred bytes, where
/// the compiler's 64-bit division helpers take about a kilobyte on a
/// Cortex-M0; [`div_u64`] needs it only when an operand passes 32 bits, or
/// on a core without a divide instruction.
fn long_division(n: u64, d: u64) -> u64 {
    if n <= u64::from(u32::MAX) && d <= u64::from(u32::MAX) {
        u64::from(shifted_division_u32(n as u32, d as u32, COUNTS_LEADING_ZEROS))
    } else {
        shifted_division(n, d, COUNTS_LEADING_ZEROS)
    }
}

/// A shift-and-subtract division for one unsigned width: `n / d` for
/// `d > 0`, one turn per quotient bit after aligning d's top bit with n's
/// (from the leading zeros of both when `by_leading_zeros`, else by
/// shifting d until one more shift would pass n: one turn a bit, and no
/// count of leading zeros, a library call on a Cortex-M0 or an RV32IMC).
macro_rules! shifted_division {
    ($(#[$doc:meta])* $name:ident, $t:ty) => {
        $(#[$doc])*
        #[inline(never)]
        fn $name(n: $t, d: $t, by_leading_zeros: bool) -> $t {
            if n < d {
                return 0;
            }
            // n ≥ d > 0: d shifted left by `bits` has its top bit where n's
            // is (by leading zeros the shifted d may pass n: its quotient
            // bit is 0).
            let (bits, mut step) = if by_leading_zeros {
                let bits = d.leading_zeros() - n.leading_zeros();
                (bits, d << bits)
            } else {
                let (mut bits, mut step) = (0, d);
                while step <= n >> 1 {
                    step <<= 1;
                    bits += 1;
                }
                (bits, step)
            };
            let (mut rest, mut q): ($t, $t) = (n, 0);
            for _ in 0..=bits {
                q <<= 1;
                if rest >= step {
                    rest -= step;
                    q |= 1;
                }
                step >>= 1;
            }
            q
        }
    };
}

shifted_division!(
    /// 64-bit shift and subtract.
    shifted_division,
    u64
);

shifted_division!(
    /// 32-bit shift and subtract.
    shifted_division_u32,
    u32
);

/// The number of bits `x` needs beyond its low 16 (0 for `x` < 2¹⁶): from
/// its leading zeros where the core counts them, else one turn a bit (a
/// loop that stops at zero the compiler would make the library call).
fn bits_above_16(x: u64) -> u32 {
    if COUNTS_LEADING_ZEROS {
        return (64 - x.leading_zeros()).saturating_sub(16);
    }
    let (mut n, mut x) = (0, x);
    while x > 0xffff {
        x >>= 1;
        n += 1;
    }
    n
}

/// `n / d` rounded toward zero, 0 for `d = 0`, saturating (see
/// [`div_u64`]).
#[inline(never)]
pub fn div_i64(n: i64, d: i64) -> i64 {
    let q = div_u64(n.unsigned_abs(), d.unsigned_abs()).min(i64::MAX as u64) as i64;
    if (n < 0) != (d < 0) {
        -q
    } else {
        q
    }
}

/// `num / den` as a [`Fraction`] (0 for `den = 0`), saturating at
/// `u32::MAX`. Both are first cut to keep `num` within 16 bits, so the
/// division is 32-bit; for a fraction up to 1 that leaves `den` 15 bits or
/// more (relative error below 2⁻¹⁵).
#[inline(never)]
pub fn ratio(num: u64, den: u64) -> Fraction {
    let shift = bits_above_16(num);
    let (n, d) = (num >> shift, den >> shift);
    if d == 0 {
        return if den == 0 { 0 } else { u32::MAX };
    }
    div_u64(n << 16, d).min(u64::from(u32::MAX)) as u32
}

/// `√x` of a [`Fraction`] (`Q16.16`), held below 4 (a root below 2), to
/// 2⁻¹⁵: the integer root digit by digit (the core library's integer root
/// links a 512-byte table on a Cortex-M0). Slow path only: about 16 rounds
/// of a compare, a subtract and two shifts.
#[inline(never)]
pub fn sqrt_fraction(x: Fraction) -> Fraction {
    // x·2¹⁴ < 2³²; its root is √x·2¹⁵.
    let mut rest = x.min((4 << 16) - 1) << 14;
    let (mut root, mut bit) = (0u32, 1u32 << 30);
    while bit > rest {
        bit >>= 2;
    }
    while bit != 0 {
        if rest >= root + bit {
            rest -= root + bit;
            root = (root >> 1) + bit;
        } else {
            root >>= 1;
        }
        bit >>= 2;
    }
    root << 1
}

/// ADC codes to volts at the sensed node, integer only: the channel's
/// transfer `V = (code·LSB_pin − offset)/ratio` as one multiply and one
/// subtraction.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CodeVolts {
    /// Volts per code at the sensed node, `Q0.32` (value × 2³²), below
    /// 1 V per code (a channel coarser than that saturates here).
    per_code: u32,
    /// The offset's share, volts, `I16F16`.
    offset: I16F16,
}

impl CodeVolts {
    /// For a channel (configuration).
    pub const fn new(adc: &AdcChannel) -> Self {
        let per_code = adc.lsb_signal_v() * 4_294_967_296.0;
        let per_code = if per_code >= u32::MAX as f64 {
            u32::MAX
        } else {
            crate::math::config::round(per_code) as u32
        };
        let offset = adc.offset_v() as f64 / adc.ratio() as f64;
        Self { per_code, offset: q16(offset) }
    }

    /// Volts for a code with 16 fraction bits (`code · 2¹⁶`, a window's
    /// mean), saturating.
    #[inline]
    pub fn volts_q16(&self, code_q16: u32) -> Volts {
        // Both factors below 2³²: the product fits 64 bits.
        let v = (u64::from(code_q16) * u64::from(self.per_code)) >> 32;
        let v = if v > i32::MAX as u64 { i32::MAX } else { v as i32 };
        Volts::from_bits(v.saturating_sub(self.offset.to_bits()))
    }

    /// Volts for a whole code.
    #[inline]
    pub fn volts(&self, code: u16) -> Volts {
        self.volts_q16(u32::from(code) << 16)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn code_volts_agrees_with_the_channel() {
        let adc = AdcChannel::new(12, 3.3, 4.7 / 14.7, 0.02).unwrap();
        let cv = CodeVolts::new(&adc);
        for code in [0u16, 1, 1551, 2048, 4095] {
            let got = cv.volts(code).to_num::<f64>();
            let want = f64::from(adc.to_volts(code));
            assert!((got - want).abs() < 2e-4, "{code}: {got} vs {want}");
        }
    }

    #[test]
    fn the_root_of_a_fraction_is_f64_s_to_its_resolution() {
        // Against f64's correctly rounded `sqrt` (IEEE 754): floor of the
        // root to 2⁻¹⁵, so within 2⁻¹⁵ below it.
        for bits in (0u32..(4 << 16)).step_by(37).chain([1, 65_536, (4 << 16) - 1]) {
            let want = (f64::from(bits) / 65_536.0).sqrt();
            let got = f64::from(sqrt_fraction(bits)) / 65_536.0;
            assert!(got <= want + 1e-12 && want - got < 1.0 / 32_768.0, "{bits}: {got} {want}");
        }
        assert_eq!(sqrt_fraction(u32::MAX), sqrt_fraction((4 << 16) - 1), "held below 4");
    }

    #[test]
    fn saturating_helpers() {
        assert_eq!(to_fixed_i32(1e12, 16), i32::MAX);
        assert_eq!(to_fixed_i32(f64::NAN, 16), 0);
        for (x, held) in [
            (0i64, 0i32),
            (-1, -1),
            (i64::from(i32::MAX), i32::MAX),
            (i64::from(i32::MAX) + 1, i32::MAX),
            (i64::from(i32::MIN), i32::MIN),
            (i64::from(i32::MIN) - 1, i32::MIN),
            (1 << 40, i32::MAX),
            (-(1 << 40), i32::MIN),
            (i64::MAX, i32::MAX),
            (i64::MIN, i32::MIN),
        ] {
            assert_eq!(clamp_i32(x), held, "{x}");
        }
        assert_eq!(mul(I16F16::from_num(300), I16F16::from_num(300)), I16F16::MAX);
        assert_eq!(ratio(1, 4), ONE / 4);
        assert_eq!(ratio(1, 0), 0);
        assert_eq!(ratio(3 << 40, 4 << 40), 3 * ONE / 4);
        assert_eq!(div_i64(-7, 2), -3);
        assert_eq!(div_i64(i64::MIN, -1), i64::MAX);
        assert_eq!(div_u64(1 << 40, 1 << 8), 1 << 32);
    }

    /// The shift-and-subtract division (at both widths) and the bit count
    /// against the language's own `/` and `leading_zeros` (independent
    /// implementations) on edge cases and a spread of operands of every
    /// width.
    #[test]
    fn long_division_matches_the_builtin_division() {
        let edges = [1u64, 2, 3, 0xffff_ffff, 1 << 32, (1 << 32) + 1, u64::MAX - 1, u64::MAX];
        for &n in &edges {
            for &d in &edges {
                assert_eq!(long_division(n, d), n / d, "{n} / {d}");
            }
        }
        // A 64-bit LCG (Knuth's MMIX multiplier and increment, from memory) for
        // operands of every width.
        let mut x = 0x2545_f491_4f6c_dd1du64;
        let mut next = || {
            x = x.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
            x
        };
        for _ in 0..100_000 {
            let n = next() >> (next() % 64);
            let d = (next() >> (next() % 64)).max(1);
            assert_eq!(long_division(n, d), n / d, "{n} / {d}");
            assert_eq!(div_u64(n, d), n / d, "{n} / {d}");
            let (n32, d32) = (n as u32, (d as u32).max(1));
            assert_eq!(div_u32(n32, d32), n32 / d32, "{n32} / {d32}");
            let above = (64 - n.leading_zeros()).saturating_sub(16);
            assert_eq!(bits_above_16(n), above, "{n}");
            if n >= d {
                // The Cortex-M0's alignment (by shifts) and the others' (by
                // leading zeros).
                for by_leading_zeros in [false, true] {
                    let q = shifted_division(n, d, by_leading_zeros);
                    assert_eq!(q, n / d, "{n} / {d}, {by_leading_zeros}");
                    let (n, d) = (n as u32, (d as u32).max(1));
                    let q = shifted_division_u32(n, d, by_leading_zeros);
                    assert_eq!(q, n / d, "{n} / {d}, {by_leading_zeros}");
                }
            }
        }
        for &n in &[0u32, 1, 2, 3, 0x8000_0000, u32::MAX - 1, u32::MAX] {
            for &d in &[1u32, 2, 3, 0x7fff_ffff, 0x8000_0000, u32::MAX] {
                assert_eq!(long_division(n.into(), d.into()), u64::from(n / d), "{n} / {d}");
            }
        }
        for n in [0u64, 1, 2, 3, 1 << 31, 1 << 32, u64::MAX >> 1, u64::MAX] {
            let above = (64 - n.leading_zeros()).saturating_sub(16);
            assert_eq!(bits_above_16(n), above, "{n}");
        }
        assert_eq!(div_u32(7, 0), 0);
    }
}
