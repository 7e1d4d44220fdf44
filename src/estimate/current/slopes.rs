//! The estimator's slopes: how the input and output voltages, the
//! channels' readings and the resistive drops become the rates at which
//! the inductor current ramps.
//!
//! A segment's slope is the sum of parts, each `I8F24` bits of amperes per
//! timer tick (LSB 2⁻²⁴ A/tick):
//!
//! ```text
//! on-slope  = on_base  − vout_term,   on_base  = vin_term − drop_on
//! off-slope = off_base − vout_term,   off_base = −(freewheel_term + drop_off)
//! ```
//!
//! - the cap: the largest slope the input channel's full scale allows,
//!   `(V_in,max + V_f)·tick / L` (at least one LSB), set by
//!   [`CurrentEstimator::new`]. Every part and both bases are held within
//!   ±cap (beyond, they saturate at it), so a segment's slope is within
//!   ±2·cap.
//! - volts to a share (configuration and host tests, floating point):
//!   [`SlopeScale`], the timer tick over the inductance in s/H; `V · tick / L`
//!   rounded to the nearest LSB.
//! - a reading to a share (fast path, one 32-bit multiply): a followed
//!   channel's code `c` gives `(c × term) >> shift` (`CodeScale`), `term`
//!   being one code's worth of slope with `shift` fraction bits beyond
//!   `I8F24`'s, as many (at most 24) as keep full scale × term below 2³¹
//!   (and `term` cut to `(2³¹ − 1) / full scale` where none does), for
//!   codes up to the channel's full scale; the share is then held at or
//!   below the cap. The channel's offset is ignored (its share is below
//!   one code's worth). A channel not followed has `term` zero and its
//!   readings change nothing.
//! - the drops at mean current `i` (slow path): `R·tick / L` per ampere is
//!   kept in `I8F24` bits per ampere times 2¹⁶ (within `i32`: a drop of
//!   `R·tick / L` below 2⁻⁹ per ampere); `(i bits × k) >> 32` is the drop's
//!   bits, held within `i32`, then within ±cap.
//! - the on-slope's reciprocal for
//!   [`CurrentEstimator::ticks_to_reach`]: `2⁴⁰ / slope`, timer ticks per
//!   ampere in 2⁻¹⁶ ticks, saturating at 2³² − 1; zero when the on-slope
//!   does not rise. Formed when the voltages are set (`set_voltages`,
//!   `set_voltage_codes`), not per reading.

use super::{within, CurrentEstimator};
use crate::estimate::model::InductorModel;
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::Instant;
use crate::units::{clamp_i32, div_u32, div_u64, to_fixed_i32, Amps};
use fixed::types::I8F24;

/// The timer tick over the inductance, s/H: what turns a voltage into the
/// estimator's slope. Configuration only (floating point, `const fn`): the
/// estimator does not keep it, so it costs no RAM on the target; hand it to
/// [`CurrentEstimator::follow_output`], [`CurrentEstimator::follow_input`]
/// and [`CurrentEstimator::set_voltages`], made from the model and clock
/// the estimator was built with.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SlopeScale {
    pub(super) inv_l_tick: f64,
}

impl SlopeScale {
    /// For `model` on `clock` (a model [`CurrentEstimator::new`] accepted:
    /// a positive inductance).
    pub const fn of(model: &InductorModel, clock: &TimerClock) -> Self {
        Self { inv_l_tick: clock.tick_s() / model.l_h as f64 }
    }
}

/// A channel's code as a slope share: `(code × term) >> shift` in `I8F24`
/// A/tick, with as many fraction bits as keep full scale × term below 2³¹
/// (one 32-bit multiply per reading).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub(super) struct CodeScale {
    term: u32,
    shift: u32,
}

impl CodeScale {
    /// A channel not followed: its term is zero.
    pub(super) const UNFOLLOWED: Self = Self { term: 0, shift: 0 };

    /// For `adc` (offset ignored: its share is below one code's worth).
    const fn new(adc: &AdcChannel, inv_l_tick: f64) -> Self {
        let per_code = adc.lsb_signal_v() * inv_l_tick * (1u32 << 24) as f64;
        let full = adc.full_scale_code() as f64;
        let mut shift = 24u32;
        while shift > 0 && per_code * (1u64 << shift) as f64 * full >= i32::MAX as f64 {
            shift -= 1;
        }
        let term = per_code * (1u64 << shift) as f64;
        let most = i32::MAX as f64 / full;
        Self { term: if term >= most { most as u32 } else { term as u32 }, shift }
    }

    #[inline(always)]
    fn slope(&self, code: u16) -> i32 {
        (u32::from(code).wrapping_mul(self.term) >> self.shift) as i32
    }
}

/// `x` A/tick in `I8F24` bits, within ±`cap` (configuration).
pub(super) const fn slope_bits(x: f64, cap: i32) -> i32 {
    let bits = to_fixed_i32(x, 24);
    if bits > cap {
        cap
    } else if bits < -cap {
        -cap
    } else {
        bits
    }
}

impl CurrentEstimator {
    /// The input and output voltages the slopes use, volts, through the
    /// estimator's `scale` (configuration and host tests: floating point;
    /// the slow path uses [`set_voltage_codes`](Self::set_voltage_codes)).
    pub fn set_voltages(&mut self, scale: SlopeScale, vin_v: f32, vout_v: f32) {
        let cap = self.slope_cap;
        self.vin_term = slope_bits(f64::from(vin_v) * scale.inv_l_tick, cap);
        self.vout_term = slope_bits(f64::from(vout_v) * scale.inv_l_tick, cap);
        self.refresh_bases();
        self.refresh_reciprocal();
    }

    /// Slow path: the slopes' voltages from raw codes of the followed input
    /// and output channels (integer only; a channel not followed keeps its
    /// share).
    pub fn set_voltage_codes(&mut self, vin: u16, vout: u16) {
        if self.in_code.term != 0 {
            self.vin_term = self.in_code.slope(vin).min(self.slope_cap);
        }
        if self.out_code.term != 0 {
            self.vout_term = self.out_code.slope(vout).min(self.slope_cap);
        }
        self.refresh_bases();
        self.refresh_reciprocal();
    }

    /// Configuration, once: let [`on_output_code`](Self::on_output_code)
    /// and [`set_voltage_codes`](Self::set_voltage_codes) follow the output
    /// through `adc`'s codes (offset ignored: its share is below one code's
    /// worth of slope); `scale` the estimator's.
    pub const fn follow_output(&mut self, adc: &AdcChannel, scale: SlopeScale) {
        self.out_code = CodeScale::new(adc, scale.inv_l_tick);
    }

    /// Configuration, once: let [`on_input_code`](Self::on_input_code) and
    /// [`set_voltage_codes`](Self::set_voltage_codes) follow the input
    /// through `adc`'s codes; `scale` the estimator's.
    pub const fn follow_input(&mut self, adc: &AdcChannel, scale: SlopeScale) {
        self.in_code = CodeScale::new(adc, scale.inv_l_tick);
    }

    /// Fast path: a fresh output reading taken at `now`; the slopes follow
    /// it from then on (the inductor sees the instantaneous output, ESR
    /// ripple included). Does nothing until
    /// [`follow_output`](Self::follow_output) was called.
    #[inline]
    pub fn on_output_code(&mut self, code: u16, now: Instant) {
        if let Some(term) = self.reading_term(self.out_code, code, now) {
            self.vout_term = term;
        }
    }

    /// Fast path: a fresh input reading taken at `now` (scan the input with
    /// the output, so an input step reaches the on-slope within a reading).
    /// Does nothing until [`follow_input`](Self::follow_input) was called.
    #[inline]
    pub fn on_input_code(&mut self, code: u16, now: Instant) {
        if let Some(term) = self.reading_term(self.in_code, code, now) {
            self.vin_term = term;
            self.on_base = self.on_base_now();
        }
    }

    /// A reading's slope share, after closing the segment up to `now`;
    /// `None` for a channel not followed.
    #[inline(always)]
    fn reading_term(&mut self, scale: CodeScale, code: u16, now: Instant) -> Option<i32> {
        if scale.term == 0 {
            return None;
        }
        self.close_segment(now);
        Some(scale.slope(code).min(self.slope_cap))
    }

    /// The on-slope's base from its parts (all within ±cap: no overflow).
    #[inline(always)]
    fn on_base_now(&self) -> i32 {
        within(self.vin_term - self.drop_on, self.slope_cap)
    }

    fn refresh_bases(&mut self) {
        self.on_base = self.on_base_now();
        self.off_base = within(-(self.freewheel_term + self.drop_off), self.slope_cap);
    }

    /// The present on-slope, `I8F24` A/tick.
    pub fn slope_on(&self) -> I8F24 {
        I8F24::from_bits(self.on_base - self.vout_term)
    }

    /// The present off-slope, `I8F24` A/tick.
    pub fn slope_off(&self) -> I8F24 {
        I8F24::from_bits(self.off_base - self.vout_term)
    }

    /// Timer ticks the on-slope of the last slow-path update takes to
    /// raise the current by one ampere, × 2¹⁶ (`u32`, saturating at
    /// 2³² − 1; 0 when the on-slope does not rise or no voltages were set
    /// yet).
    pub const fn ticks_per_amp_on(&self) -> u32 {
        self.ticks_per_amp_on
    }

    /// Slow path: the resistive drops at mean current `i` (the prediction
    /// of [`ticks_to_reach`](Self::ticks_to_reach) follows at the next
    /// [`set_voltage_codes`](Self::set_voltage_codes)).
    pub(super) fn set_drops(&mut self, i: Amps) {
        let drop = |k: i32| {
            within(clamp_i32((i64::from(i.to_bits()) * i64::from(k)) >> 32), self.slope_cap)
        };
        self.drop_on = drop(self.drop_on_per_amp);
        self.drop_off = drop(self.drop_off_per_amp);
        self.refresh_bases();
    }

    /// Slow path: ticks per ampere of the on-slope, for
    /// [`ticks_to_reach`](Self::ticks_to_reach): `2⁴⁰ / slope` in 2⁻¹⁶ ticks
    /// per ampere (one division).
    fn refresh_reciprocal(&mut self) {
        let on = self.on_base - self.vout_term;
        self.ticks_per_amp_on = match on {
            // 2³² / on by a 32-bit division, then 2⁸ more: the quotient
            // keeps 12 bits or more, a relative error below 2⁻¹².
            1..=0x000f_ffff => div_u32(u32::MAX, on as u32).saturating_mul(256),
            _ if on > 0 => div_u64(1 << 40, on as u64).min(u64::from(u32::MAX)) as u32,
            _ => 0,
        };
    }
}
