//! The soft-start of a law whose reference firmware cannot move (a board's
//! own comparator loop, passed through): each pulse bounded through the
//! frequency guard.
//!
//! The comparator asks for "on" from the moment the stage starts until the
//! output reaches its upper threshold. Each pulse gets an on-time that
//! takes the current from zero to no more than a peak `I_pk` at the
//! present on-slope, `t_on = I_pk · L / (V_in − V_out)` (the buck's on-state,
//! `ΔI = (V_in − V_out) · t / L`, Erickson & Maksimović ch. 2), and the
//! next pulse waits until the off-slope has brought the current back to
//! zero, `t_off ≥ t_on · (V_in − V_out) / (V_out + V_f)` (volt-second
//! balance of the inductor over a boundary-conduction cycle), with an
//! eighth more for the ripple and noise of the output reading it uses;
//! the guard holds that wait after every pulse, taken for a full bounded
//! one (a pulse the comparator ends early waits as long). So
//! every pulse starts from zero and its peak is the on-state relation's,
//! whatever the pulses before it did. The peak is twice the soft-start's
//! cap, within the configured limit: the pulses' mean, half their peak,
//! then follows the cap as a continuous current held at the cap would (the
//! output comes up within the ramp, and past half the setpoint before the
//! short-circuit detector judges it at the full limit). The cap rises from
//! an eighth of the limit to the limit over the soft-start time
//! (`soft_start.rs`), the peak from a quarter of the limit to the limit,
//! reached 3/7 of the way through.
//!
//! Why this and not the current estimate alone: the estimate's cap also
//! acts (cycle by cycle, `limit.rs`, at the same peak), but in continuous conduction the
//! estimate's level comes from integrating thousands of edges (a diode
//! drop or a resistance off in the model moves it, see
//! [`CurrentEstimator`]), while a bounded on-time after a full reset needs
//! only `L`, the input and the output reading of the moment: its error is
//! that of `L` (a 10 % lower inductance, a 10 % higher peak), not an
//! accumulated one, as an analog controller's on-time clamp. At 0 V out the
//! off-time is long (24 V in, 0.45 V diode: 53 on-times): the stage starts
//! at a low frequency, rising as the output comes up, as the frequency
//! foldback of an analog controller does.
//!
//! Formats: the on-time from the cap (`Amps`, 2⁻¹⁶ A) and the estimator's
//! ticks per ampere (× 2¹⁶), each taken 8 bits shorter so their product
//! stays in 32 bits (truncation shortens the on-time: the safe side; a
//! saturated product gives 2¹⁶ − 1 ticks, under what the slope allows);
//! the off-time per on-time × 2⁸ (`u16`, saturating at 256 on-times).

use crate::estimate::{Amps, CurrentEstimator};
use crate::law::PulseLimit;
use crate::units::div_u64;

/// The pulse bound of one start.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct StartPulses {
    /// Bound the pulses of a law that does not follow the reference (on
    /// unless a firmware turned it off).
    enabled: bool,
    /// Bound pulses during this start.
    active: bool,
    /// Least off-time per on-time, × 2⁸.
    off_per_on: u16,
}

impl StartPulses {
    pub(super) const fn new() -> Self {
        Self { enabled: true, active: false, off_per_on: 0 }
    }

    /// Bound the pulses of later starts or not.
    pub(super) fn enable(&mut self, on: bool) {
        self.enabled = on;
    }

    /// Slow path: a start begins, for a law that follows the reference or
    /// not: bound its pulses when it does not (and bounding is enabled).
    pub(super) fn begin(&mut self, follows_reference: bool) {
        self.active = self.enabled && !follows_reference;
    }

    /// Bounding pulses now.
    #[inline(always)]
    pub(super) const fn active(&self) -> bool {
        self.active
    }

    /// The start is over.
    pub(super) fn end(&mut self) {
        self.active = false;
    }

    /// Slow path: the reset's off-time per on-time from the estimator's
    /// present slopes, (on-slope / fall) · 9/8 × 2⁸.
    pub(super) fn retune(&mut self, est: &CurrentEstimator) {
        let on = est.slope_on().to_bits();
        let fall = -est.slope_off().to_bits();
        self.off_per_on = if on <= 0 {
            0
        } else if fall <= 0 {
            u16::MAX
        } else {
            div_u64(on as u64 * 288, fall as u64).min(u64::from(u16::MAX)) as u16
        };
    }

    /// Fast path: the bound for pulses under `cap`, the on-slope taking
    /// `ticks_per_amp` ticks × 2¹⁶ per ampere (0: no rising slope known,
    /// the shortest pulse the window allows).
    #[inline(always)]
    pub(super) fn limit(&self, cap: Amps, ticks_per_amp: u32) -> PulseLimit {
        let cap = (cap.to_bits().max(0) as u32) >> 8;
        let max_on = cap.saturating_mul(ticks_per_amp >> 8) >> 16;
        PulseLimit { max_on, off_per_on: self.off_per_on }
    }
}
