//! Frequency dithering (spread spectrum): a pseudo-random factor that
//! scales what sets a cycle's length once per housekeeping window, so the
//! switching frequency and its harmonics move over a band instead of
//! sitting on one line of the conducted-emission spectrum.
//!
//! The sequence is a 16-bit maximal-length Galois linear-feedback shift
//! register (polynomial x¹⁶ + x¹⁴ + x¹³ + x¹¹ + 1, period 65 535; the
//! textbook example of a maximal-length LFSR). Each window takes the
//! register's value as a uniform draw `u` in `[0, 1)` and returns the factor
//! `1 − depth + 2·depth·u`, so the factor stays within `1 ± depth`. A law
//! multiplies its band or on-time by it; the frequency window's guard
//! still bounds every period, so dithering never leaves the window.
//!
//! Integer arithmetic only: a shift, an exclusive-or and one 32-bit
//! multiply per window.

use crate::error::{attempt, within, ConfigError};
use crate::units::{to_fixed_i64, Fraction, ONE};

/// The register's seed in the simulator's scenarios (any nonzero value:
/// each gives the same sequence from another starting point).
pub const DITHER_SEED: u16 = 0xACE1;

/// Feedback taps of the Galois register (x¹⁶ + x¹⁴ + x¹³ + x¹¹ + 1).
const TAPS: u16 = 0xB400;

/// Largest depth accepted: ±50 %.
pub const MAX_DEPTH: f32 = 0.5;

/// A pseudo-random dither factor.
///
/// Depth: [`Fraction`] (unsigned Q16.16, [`ONE`] = 1), in
/// `(0, ONE/2]`; the factor returned by [`draw`](Self::draw) is a
/// `Fraction` in `[ONE − depth, ONE + depth)`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Dither {
    depth: Fraction,
    register: u16,
}

impl Dither {
    /// Dither by up to ±`depth` (0 < depth ≤ 0.5, a fraction of the
    /// nominal), from a nonzero `seed` (zero is replaced by 1: the register
    /// must never hold zero) (a `const fn`).
    ///
    /// Errors: `dither_depth` outside (0, 0.5].
    pub const fn new(depth: f32, seed: u16) -> Result<Self, ConfigError> {
        let depth = attempt!(within("dither_depth", depth as f64, 1.0 / 65_536.0, 0.5));
        let register = if seed == 0 { 1 } else { seed };
        Ok(Self { depth: to_fixed_i64(depth, 16) as Fraction, register })
    }

    /// The depth ([`Fraction`]).
    pub const fn depth(&self) -> Fraction {
        self.depth
    }

    /// Step the register once and return the next factor
    /// ([`Fraction`], within `[ONE − depth, ONE + depth)`).
    pub fn draw(&mut self) -> Fraction {
        let lsb = self.register & 1;
        self.register >>= 1;
        if lsb != 0 {
            self.register ^= TAPS;
        }
        // u = register / 2¹⁶ in [0, 1). With depth ≤ 2¹⁵ and register
        // < 2¹⁶ the product 2·depth·register < 2³²: it fits in u32 before
        // the shift.
        let spread = (2 * self.depth * u32::from(self.register)) >> 16;
        ONE - self.depth + spread
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn register_has_the_maximal_period() {
        // A maximal-length 16-bit LFSR visits all 65 535 nonzero states
        // before repeating (the definition of maximal length).
        let mut d = Dither::new(0.1, 1).unwrap();
        let mut seen = 0u32;
        loop {
            d.draw();
            seen += 1;
            if d.register == 1 {
                break;
            }
            assert!(seen < 70_000, "register never returned to its seed");
        }
        assert_eq!(seen, 65_535);
    }

    #[test]
    fn factors_stay_within_depth_and_average_to_one() {
        let mut d = Dither::new(0.2, 0xACE1).unwrap();
        let (mut lo, mut hi, mut sum) = (u32::MAX, 0, 0u64);
        for _ in 0..65_535 {
            let f = d.draw();
            lo = lo.min(f);
            hi = hi.max(f);
            sum += u64::from(f);
        }
        let depth = d.depth();
        assert!(lo >= ONE - depth && hi < ONE + depth, "{lo}..{hi}");
        // Over a full period the states are 1..=65 535 once each: the mean
        // of u is 1/2 (to 2⁻¹⁶), so the mean factor is one.
        let mean = sum as f64 / 65_535.0 / f64::from(ONE);
        assert!((mean - 1.0).abs() < 1e-4, "{mean}");
    }

    #[test]
    fn depth_out_of_range_names_its_parameter() {
        assert_eq!(Dither::new(0.0, 1).unwrap_err().parameter, "dither_depth");
        assert_eq!(Dither::new(0.6, 1).unwrap_err().parameter, "dither_depth");
    }
}
