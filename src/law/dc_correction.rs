//! DC-error correction (slow path): trim a law's reference so the *mean*
//! output sits at the setpoint.
//!
//! Ripple-based laws regulate an edge of the ripple (the valley for an
//! on-time law, the band's middle only on average for a hysteretic one), so
//! the mean output is off by a load- and ripple-dependent amount. A slow
//! integrator `trim ← trim + g·(setpoint − mean)`, bounded to ±`limit`
//! codes, moves the reference by `trim`. Integer arithmetic only.

use super::Regulate;
use crate::error::{attempt, non_negative, within, ConfigError};
use crate::units::{to_fixed_i32, to_fixed_i64, Fraction};

/// The integrator. Codes are the sensed output's ADC codes; the mean and
/// the trim carry 16 fraction bits (`i32`/`u32`, code × 2¹⁶), the trim
/// within ±`limit`; the reference applied is rounded to a whole code.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DcCorrection {
    setpoint: u16,
    gain: Fraction,
    limit: i32,
    trim: i32,
}

impl DcCorrection {
    /// Around `setpoint` (ADC code), gain `gain` per update (0 < gain ≤ 1),
    /// trim within ±`limit_codes` (0 to 32 767) (a `const fn`).
    ///
    /// Errors: `dc_gain` or `dc_limit_codes` out of range.
    pub const fn new(setpoint: u16, gain: f32, limit_codes: f32) -> Result<Self, ConfigError> {
        let gain = attempt!(within("dc_gain", gain as f64, 1.0 / 65_536.0, 1.0));
        let limit = attempt!(non_negative("dc_limit_codes", limit_codes as f64));
        let limit = attempt!(within("dc_limit_codes", limit, 0.0, 32_767.0));
        Ok(Self {
            setpoint,
            gain: to_fixed_i64(gain, 16) as Fraction,
            limit: to_fixed_i32(limit, 16),
            trim: 0,
        })
    }

    /// The trim, codes × 2¹⁶.
    pub const fn trim(&self) -> i32 {
        self.trim
    }

    /// One update with the window's mean output (ADC code × 2¹⁶); moves
    /// `law`'s reference. Returns the reference applied.
    pub fn update<L: Regulate>(&mut self, mean_code_q16: u32, law: &mut L) -> u16 {
        let error = (i64::from(self.setpoint) << 16) - i64::from(mean_code_q16);
        let step = (error * i64::from(self.gain)) >> 16;
        // Bounds as max/min, not `clamp`: nothing here may panic.
        let limit = i64::from(self.limit);
        let trim = (i64::from(self.trim) + step).max(-limit).min(limit);
        self.trim = trim as i32;
        let reference = ((i64::from(self.setpoint) << 16) + trim + (1 << 15)) >> 16;
        let reference = reference.clamp(0, i64::from(u16::MAX)) as u16;
        law.set_reference(reference);
        reference
    }

    /// Forget the trim (after a restart).
    pub fn reset(&mut self) {
        self.trim = 0;
    }
}
