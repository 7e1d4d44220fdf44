//! DC-error correction (slow path): trim a law's reference so the *mean*
//! output sits at the setpoint.
//!
//! Ripple-based laws regulate an edge of the ripple (the valley for an
//! on-time law, the band's middle only on average for a hysteretic one), so
//! the mean output is off by a load- and ripple-dependent amount. A slow
//! integrator `trim ← trim + g·(setpoint − mean)`, bounded to ±`limit`
//! codes, moves the reference by `trim`.

use super::Regulate;
use crate::error::{finite, ConfigError};

/// The integrator. Codes are the sensed output's ADC codes; the trim is a
/// fractional code (`f32`), applied rounded.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DcCorrection {
    setpoint: u16,
    gain: f32,
    limit: f32,
    trim: f32,
}

impl DcCorrection {
    /// Around `setpoint` (ADC code), gain `gain` per update (0 < gain ≤ 1),
    /// trim within ±`limit_codes`.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::ThresholdsOutOfOrder`]
    /// for a bad gain or a negative limit.
    pub fn new(setpoint: u16, gain: f32, limit_codes: f32) -> Result<Self, ConfigError> {
        if !(finite(gain)? > 0.0 && gain <= 1.0 && finite(limit_codes)? >= 0.0) {
            return Err(ConfigError::ThresholdsOutOfOrder);
        }
        Ok(Self { setpoint, gain, limit: limit_codes, trim: 0.0 })
    }

    /// The trim, codes.
    pub const fn trim(&self) -> f32 {
        self.trim
    }

    /// One update with the window's mean output (ADC code, fractional);
    /// moves `law`'s reference. Returns the reference applied.
    pub fn update<L: Regulate>(&mut self, mean_code: f32, law: &mut L) -> u16 {
        if mean_code.is_finite() {
            let error = f32::from(self.setpoint) - mean_code;
            self.trim = (self.trim + self.gain * error).clamp(-self.limit, self.limit);
        }
        let reference = (f32::from(self.setpoint) + self.trim + 0.5).max(0.0);
        let reference = if reference >= f32::from(u16::MAX) { u16::MAX } else { reference as u16 };
        law.set_reference(reference);
        reference
    }

    /// Forget the trim (after a restart).
    pub fn reset(&mut self) {
        self.trim = 0.0;
    }
}
