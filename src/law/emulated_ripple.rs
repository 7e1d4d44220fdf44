//! Emulated ripple for a valley on-time loop on a ceramic-only output.
//!
//! A sawtooth in phase with the inductor current is added to the sensed
//! output before the valley compare: zero at each turn-on, rising through
//! the on-time, falling at the inductor's off-slope ratio `D/(1 − D)` and
//! floored at zero. It gives an output with negligible ESR the
//! current-shaped ripple a valley loop needs.

use crate::error::{attempt, positive, ConfigError, ErrorKind};
use crate::scale::AdcChannel;
use crate::units::Volts;

/// The ramp's slopes and the crossing predictor.
///
/// Slopes: `u32` in 2⁻¹⁶ ADC codes per tick; each segment's ramp is one
/// 32-bit multiply (segments beyond 2¹⁶ ticks saturate the ramp).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EmulatedRipple {
    pub(super) up: u32,
    down: u32,
    /// Ticks per code of the falling ramp, 2⁻⁸ ticks (≤ 2¹⁹).
    ticks_per_code: u32,
    /// Predict a crossing only this many ticks ahead (a sampling period).
    horizon: u32,
}

/// `x` as a slope, saturating at 0 and `u32::MAX` (configuration).
const fn slope_bits(x: f64) -> u32 {
    if x >= u32::MAX as f64 {
        u32::MAX
    } else if x > 0.0 {
        x as u32
    } else {
        0
    }
}

impl EmulatedRipple {
    /// A ramp of `amplitude_v` (at the sensed output) over the on-time
    /// `on_ticks`, falling at `duty/(1 − duty)` of that rate (a `const fn`).
    ///
    /// `sample_ticks`: the sampling period; while off, a sample that shows
    /// the falling ramp will cross the reference before the next sample sets
    /// a timer deadline at the predicted tick, so turn-ons are not quantized
    /// to the sampling period.
    ///
    /// Errors: `emulated_ripple_v` not positive; `duty` outside (0, 1).
    pub const fn new(
        amplitude_v: f32,
        on_ticks: u32,
        duty: f32,
        adc: &AdcChannel,
        sample_ticks: u32,
    ) -> Result<Self, ConfigError> {
        let amplitude = attempt!(positive("emulated_ripple_v", amplitude_v as f64));
        let duty = duty as f64;
        if !(duty > 0.0 && duty < 1.0) {
            return Err(ConfigError::new("duty", ErrorKind::OutOfRange { min: 0.0, max: 1.0 }));
        }
        let on = if on_ticks == 0 { 1 } else { on_ticks };
        let up = slope_bits(adc.span_codes(amplitude) * 65_536.0 / on as f64);
        let down = slope_bits(up as f64 * duty / (1.0 - duty));
        Ok(Self { up, down, ticks_per_code: ticks_per_code(down), horizon: sample_ticks })
    }

    /// Slow path: follow the duty `V_out/V_in` so the ramp returns to zero
    /// at the next turn-on in steady state: the falling slope becomes
    /// `up · V_out/(V_in − V_out)` (integer only; ignored unless
    /// `0 < V_out < V_in`).
    pub fn follow(&mut self, vout: Volts, vin: Volts) {
        let (out, inp) = (vout.to_bits(), vin.to_bits());
        if out <= 0 || inp <= out {
            return;
        }
        // Full precision (one 64-bit division): the loop's timing is
        // sensitive to this slope.
        let down = crate::units::div_u64(u64::from(self.up) * out as u64, (inp - out) as u64);
        self.down = if down > u64::from(u32::MAX) { u32::MAX } else { down as u32 };
        self.ticks_per_code = ticks_per_code(self.down);
    }

    /// Ticks until the falling ramp closes a margin of `margin_q16`
    /// (2⁻¹⁶ codes), if within the horizon (fast path: one multiply).
    ///
    /// The margin is taken in 2⁻⁴ codes, up to 256 codes (`u32`, below
    /// 2¹²); a larger margin predicts nothing (the next sample decides),
    /// never a crossing earlier than the ramp would reach: a margin held at
    /// a cap would predict the turn-on too soon whenever the ramp falls by
    /// more than the cap within one sampling period (a slow sampling rate).
    #[inline(always)]
    pub(super) fn crossing_in(&self, margin_q16: u32) -> Option<u32> {
        let margin_q4 = margin_q16 >> 12;
        if margin_q4 > MAX_MARGIN_Q4 {
            return None;
        }
        let ticks = (margin_q4 * self.ticks_per_code) >> 12;
        (self.ticks_per_code != 0 && ticks < self.horizon).then_some(ticks)
    }

    /// The rising ramp after `ticks`, 2⁻¹⁶ codes (fast path).
    #[inline(always)]
    pub(super) fn rise(&self, ticks: u32) -> u32 {
        ramp(self.up, ticks)
    }

    /// The falling ramp's drop after `ticks`, 2⁻¹⁶ codes (fast path).
    #[inline(always)]
    pub(super) fn fall(&self, ticks: u32) -> u32 {
        ramp(self.down, ticks)
    }
}

/// Largest margin the crossing predictor takes, 2⁻⁴ codes (256 codes).
const MAX_MARGIN_Q4: u32 = 4_095;

/// `2²⁴ / down`: ticks per code in 2⁻⁸ ticks, capped at 2¹⁹ so a margin
/// below 256 codes (in 2⁻⁴ codes) times it fits 31 bits; 0 for a flat ramp.
const fn ticks_per_code(down: u32) -> u32 {
    if down == 0 {
        return 0;
    }
    let t = (1u32 << 24) / down;
    if t > 524_288 {
        524_288
    } else {
        t
    }
}

#[inline(always)]
fn ramp(rate: u32, ticks: u32) -> u32 {
    rate.saturating_mul(ticks.min(u32::from(u16::MAX)))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 12-bit, 3.3 V channel at the pin (divider ratio 1).
    fn adc() -> AdcChannel {
        AdcChannel::new(12, 3.3, 1.0, 0.0).unwrap()
    }

    #[test]
    fn a_margin_is_crossed_when_the_ramp_has_fallen_by_it() {
        // 100 codes over a 1 000-tick on-time at duty 1/2: the ramp falls
        // 0.1 code a tick, so a margin of 40 codes closes in 400 ticks,
        // within a 1 000-tick sampling period.
        let amplitude_v = 100.0 * 3.3 / 4096.0;
        let r = EmulatedRipple::new(amplitude_v as f32, 1_000, 0.5, &adc(), 1_000).unwrap();
        let ticks = r.crossing_in(40 << 16).unwrap();
        assert!(ticks.abs_diff(400) <= 2, "{ticks}");
        // The ramp's own fall over those ticks covers the margin.
        let fallen = f64::from(r.fall(ticks)) / 65_536.0;
        assert!((fallen - 40.0).abs() < 0.3, "{fallen}");
    }

    #[test]
    fn beyond_the_predictor_s_range_nothing_is_predicted() {
        // 300 codes would take 3 000 ticks: past the horizon, and past the
        // 256 codes the predictor takes, so no early turn-on.
        let amplitude_v = 100.0 * 3.3 / 4096.0;
        let r = EmulatedRipple::new(amplitude_v as f32, 1_000, 0.5, &adc(), 100_000).unwrap();
        assert_eq!(r.crossing_in(300 << 16), None);
        assert!(r.crossing_in(200 << 16).is_some_and(|t| t.abs_diff(2_000) <= 4));
    }
}
