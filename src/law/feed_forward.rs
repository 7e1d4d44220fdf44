//! Slow-path input feed-forward for the on-time: `T_on = V_out/(V_in·f)`
//! keeps the CCM frequency `f = D/T_on` at the target whatever the input.
//! Integer arithmetic only. The frequency trim that corrects what the
//! feed-forward misses (losses, DCM) is [`FrequencyTrim`](super::FrequencyTrim).

use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::scale::TimerClock;
use crate::tick::MAX_DURATION_TICKS;
use crate::units::{div_u64, to_fixed_i64, Fraction, Volts};

/// Input feed-forward for the on-time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OnTimeFeedForward {
    /// `V_out·f_clock/f_target`, volt·ticks × 2¹⁶.
    volt_ticks: u64,
}

impl OnTimeFeedForward {
    /// For output `vout_v` at `f_target_hz` on `clock` (a `const fn`).
    ///
    /// Errors: `setpoint_v` or `feed_forward_hz` not positive; an on-time
    /// at 1 V input, `V_out·f_clock/f_target`, above 2²⁴ ticks (reported on
    /// `feed_forward_hz`).
    pub const fn new(
        vout_v: f32,
        f_target_hz: f32,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let vout = attempt!(positive("setpoint_v", vout_v as f64));
        let f = attempt!(positive("feed_forward_hz", f_target_hz as f64));
        let volt_ticks = to_fixed_i64(vout * clock.hz() as f64 / f, 16);
        if volt_ticks >= 1 << 40 {
            let range = ErrorKind::OutOfRange { min: 0.0, max: 16_777_216.0 };
            return Err(ConfigError::new("feed_forward_hz", range));
        }
        Ok(Self { volt_ticks: if volt_ticks < 0 { 0 } else { volt_ticks as u64 } })
    }

    /// The on-time for input `vin`, ticks, times `trim` ([`ONE`](crate::units::ONE) = none);
    /// at least one tick, at most 2³¹ − 1. (Slow path: one division.)
    pub fn on_ticks(&self, vin: Volts, trim: Fraction) -> u32 {
        let vin = vin.to_bits();
        if vin <= 0 {
            return 1;
        }
        // volt_ticks < 2⁴⁰ (configuration), trim ≤ 2¹⁸: no overflow.
        let num = (self.volt_ticks * u64::from(trim)) >> 16;
        let t = div_u64(num + (vin as u64) / 2, vin as u64);
        t.clamp(1, u64::from(MAX_DURATION_TICKS)) as u32
    }
}
