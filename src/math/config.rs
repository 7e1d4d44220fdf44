//! `const fn` elementary functions on `f64`, for configuration.
//!
//! `core` has no `exp`, `ln` or `sqrt` in `const` context, and a firmware
//! that evaluates its configuration at compile time needs them (observer
//! poles, core-loss exponents). These are the textbook methods: range
//! reduction by powers of two read from the IEEE 754 bits, then a series
//! (exp: Taylor on `|r| ≤ ln2/2`; ln: the atanh series
//! `ln x = 2·atanh((x−1)/(x+1))` on `[√½, √2)`), and Newton's iteration for
//! the square root. Each agrees with `std` to within 10⁻¹⁴ relative (tests
//! compare them), far below what any configuration value needs.

const LN_2: f64 = core::f64::consts::LN_2;
/// ln 2 split so that `k·LN_2_HI` is exact for the `k` used (Cody and
/// Waite's reduction, as in fdlibm's `exp`).
const LN_2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
const LN_2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);

/// `2^k` for an integer `k` in the normal range (−1022..=1023), exactly.
const fn pow2i(k: i32) -> f64 {
    let k = if k < -1022 {
        -1022
    } else if k > 1023 {
        1023
    } else {
        k
    };
    f64::from_bits(((k + 1023) as u64) << 52)
}

/// `x` rounded to the nearest integer, halves away from zero (the
/// `f64::round` of `std`, which `core` lacks).
pub const fn round(x: f64) -> f64 {
    // At or beyond 2⁵², every f64 is an integer already (NaN passes too).
    if x.is_nan() || x.abs() >= 4_503_599_627_370_496.0 {
        return x;
    }
    let t = x as i64 as f64;
    let frac = x - t;
    if frac >= 0.5 {
        t + 1.0
    } else if frac <= -0.5 {
        t - 1.0
    } else {
        t
    }
}

/// `e^x`; 0 below −708, `+∞` above 709.
pub const fn exp(x: f64) -> f64 {
    if x.is_nan() {
        return x;
    }
    if x < -708.0 {
        return 0.0;
    }
    if x > 709.0 {
        return f64::INFINITY;
    }
    // x = k·ln2 + r, |r| ≤ ln2/2.
    let k = round(x / LN_2);
    let r = (x - k * LN_2_HI) - k * LN_2_LO;
    let mut term = 1.0;
    let mut sum = 1.0;
    let mut n = 1;
    while n < 24 {
        term = term * r / n as f64;
        sum += term;
        n += 1;
    }
    sum * pow2i(k as i32)
}

/// `ln x` for `x > 0`; NaN for `x ≤ 0` or NaN, `+∞` for `+∞`.
pub const fn ln(x: f64) -> f64 {
    if x.is_nan() || x <= 0.0 {
        return f64::NAN;
    }
    if x.is_infinite() {
        return x;
    }
    // Subnormals: scale up first.
    let (x, bias) = if x < f64::MIN_POSITIVE { (x * pow2i(54), -54) } else { (x, 0) };
    let bits = x.to_bits();
    let mut e = ((bits >> 52) & 0x7ff) as i32 - 1023 + bias;
    let mut m = f64::from_bits((bits & 0x000f_ffff_ffff_ffff) | (1023u64 << 52));
    if m >= core::f64::consts::SQRT_2 {
        m /= 2.0;
        e += 1;
    }
    // ln m = 2·atanh(s), s = (m − 1)/(m + 1), |s| ≤ 0.172.
    let s = (m - 1.0) / (m + 1.0);
    let s2 = s * s;
    let mut power = s;
    let mut sum = 0.0;
    let mut n = 0;
    while n < 30 {
        sum += power / (2 * n + 1) as f64;
        power *= s2;
        n += 1;
    }
    2.0 * sum + e as f64 * LN_2
}

/// `√x` for `x ≥ 0`; NaN below.
pub const fn sqrt(x: f64) -> f64 {
    if x.is_nan() || x < 0.0 {
        return f64::NAN;
    }
    if x == 0.0 || x.is_infinite() {
        return x;
    }
    // Start from the exponent halved, then Newton to convergence.
    let e = ((x.to_bits() >> 52) & 0x7ff) as i32 - 1023;
    let mut y = pow2i(e / 2);
    let mut n = 0;
    while n < 64 {
        let next = 0.5 * (y + x / y);
        if next == y {
            break;
        }
        y = next;
        n += 1;
    }
    y
}

/// `x^y` for `x > 0`, as `e^{y·ln x}`; 1 for `y = 0`.
pub const fn powf(x: f64, y: f64) -> f64 {
    if y == 0.0 {
        return 1.0;
    }
    exp(y * ln(x))
}

/// `log₂ x` for `x > 0`.
pub const fn log2(x: f64) -> f64 {
    ln(x) / LN_2
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-14 * b.abs().max(f64::MIN_POSITIVE)
    }

    #[test]
    fn agree_with_std() {
        for &x in &[1e-300, 1e-9, 0.001, 0.37, 0.5, 1.0, 1.5, 2.0, 9.81, 1234.5, 6.4e7, 1e300] {
            assert!(close(ln(x), x.ln()), "ln {x}: {} vs {}", ln(x), x.ln());
            assert!(close(sqrt(x), x.sqrt()), "sqrt {x}");
        }
        for &x in &[-700.0, -20.0, -1.0, -0.1, 0.0, 0.3, 1.0, 5.5, 40.0, 700.0] {
            assert!(close(exp(x), x.exp()), "exp {x}: {} vs {}", exp(x), x.exp());
        }
        assert!(close(powf(1e5, 1.4), 1e5f64.powf(1.4)));
        assert!(close(powf(0.05, 2.6), 0.05f64.powf(2.6)));
    }

    #[test]
    fn round_matches_std() {
        for &x in
            &[0.0, 0.49999999999999994, 0.5, 1.5, 2.5, -0.5, -1.5, -2.4, 1e15 + 0.5, 3e300, -7.5]
        {
            assert_eq!(round(x), x.round(), "{x}");
        }
    }

    #[test]
    fn edges() {
        assert!(ln(0.0).is_nan() && ln(-1.0).is_nan());
        assert_eq!(exp(-1000.0), 0.0);
        assert_eq!(exp(1000.0), f64::INFINITY);
        assert!(sqrt(-1.0).is_nan());
        assert_eq!(sqrt(0.0), 0.0);
        assert!(close(ln(5e-320), (5e-320f64).ln()));
    }
}
