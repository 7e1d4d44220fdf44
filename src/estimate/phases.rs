//! What the estimator hands the slow path: one cycle's currents
//! ([`CycleCurrents`]), a window's raw sums ([`WindowTotals`]) and the
//! window's phases formed from them ([`Phases`]: mean currents, shares of
//! the window, mean squares per phase).
//!
//! Formats:
//! - currents [`Amps`]: `I16F16`, amperes, LSB 2⁻¹⁶ A;
//! - window sums ([`WindowTotals`]): ticks in `u32` (take a window at least
//!   every 2³² ticks), currents in `i64` raw `Amps` bits;
//! - a window's phases ([`Phases`]): currents in [`Amps`], shares of the
//!   window as [`Fraction`]s (2¹⁶ = 1), mean squares in A² with 16 fraction
//!   bits (`i64`). The slow path forms them with integer arithmetic only
//!   (divisions included), so a core without an FPU links no float code:
//!   trapezoids in CCM, triangles in DCM.

use crate::units::{clamp_i32, scale, Amps, Fraction};

/// One switching cycle's currents, from a turn-on to the next.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CycleCurrents {
    /// Current at the turn-off (the cycle's peak).
    pub peak: Amps,
    /// Current at the turn-on that began the cycle (the valley; 0 in DCM).
    pub valley: Amps,
    /// Ticks the gate was on.
    pub on_ticks: u32,
    /// Ticks from turn-on to the next turn-on.
    pub period_ticks: u32,
    /// The current reached zero during the off-time.
    pub dcm: bool,
}

/// Sums over the cycles completed since the slow path last took them
/// (fast path: additions only).
///
/// The tick sums are 32-bit: the cycles of a window span less than the
/// window, so take windows at least every 2³² ticks (67 s at 64 MHz; the
/// crate's slow path runs at 1–20 kHz).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WindowTotals {
    /// Completed cycles.
    pub cycles: u32,
    /// Cycles that ended in DCM.
    pub dcm_cycles: u32,
    /// Sum of on-ticks (wraps at 2³²).
    pub on_ticks: u32,
    /// Sum of periods, ticks (wraps at 2³²).
    pub period_ticks: u32,
    /// Sum of cycle peaks, 2⁻¹⁶ A.
    pub peak_sum: i64,
    /// Sum of cycle valleys, 2⁻¹⁶ A.
    pub valley_sum: i64,
}

/// A window's currents by phase, from the cycle sums: the mean cycle's
/// trapezoid (CCM) or triangle (DCM). Integer only (slow path).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Phases {
    /// Completed cycles.
    pub cycles: u32,
    /// Cycles that ended in DCM.
    pub dcm_cycles: u32,
    /// Time the cycles cover, timer ticks.
    pub period_ticks: u32,
    /// Switching frequency over the window, Hz (0 without cycles).
    pub f_sw_hz: u32,
    /// Mean cycle peak.
    pub peak: Amps,
    /// Mean cycle valley (0 in DCM).
    pub valley: Amps,
    /// Current at the end of the conducting off-time: the valley in CCM,
    /// zero in DCM.
    pub off_end: Amps,
    /// Share of the window the switch was on (the duty cycle).
    pub duty: Fraction,
    /// Share of the window the current freewheeled (off and conducting).
    pub off_fraction: Fraction,
}

/// `(a² + a·b + b²)/3`: the mean square of a current ramping from `a` to
/// `b`, A² with 16 fraction bits. Currents are held within ±128 A (2²³
/// bits) here, so each product fits 2⁴⁶ and their sum times 21 846 (1/3 in
/// `Q16`, 3·10⁻⁵ high) fits 2⁶³: no 64-bit division.
#[inline(never)]
fn ramp_mean_square(a: Amps, b: Amps) -> i64 {
    const HELD: i32 = 1 << 23;
    let held = |x: Amps| i64::from(x.to_bits().clamp(-HELD, HELD));
    let (a, b) = (held(a), held(b));
    ((a * a + a * b + b * b) * 21_846) >> 32
}

/// `x · f` for A² with 16 fraction bits (held within 2³¹, 32 768 A²) and
/// a [`Fraction`]: one 32 × 32-bit multiply.
fn share_of(x: i64, f: Fraction) -> i64 {
    (i64::from(clamp_i32(x)) * i64::from(f)) >> 16
}

/// The mean of a ramp from `a` to `b`.
pub(super) fn midpoint(a: Amps, b: Amps) -> Amps {
    Amps::from_bits(((i64::from(a.to_bits()) + i64::from(b.to_bits())) / 2) as i32)
}

impl Phases {
    /// Mean current over the window.
    pub fn average(&self) -> Amps {
        self.average_on().saturating_add(self.average_off())
    }

    /// The on-phase's charge over the window's time (its share of the
    /// mean current).
    #[inline(never)]
    pub fn average_on(&self) -> Amps {
        scale(midpoint(self.valley, self.peak), self.duty)
    }

    /// The conducting off-phase's share of the mean current.
    #[inline(never)]
    pub fn average_off(&self) -> Amps {
        scale(midpoint(self.peak, self.off_end), self.off_fraction)
    }

    /// The on-phase's share of the mean square current, A² (16 fraction
    /// bits).
    #[inline(never)]
    pub fn mean_square_on(&self) -> i64 {
        share_of(ramp_mean_square(self.valley, self.peak), self.duty)
    }

    /// The off-phase's share of the mean square current, A² (16 fraction
    /// bits).
    #[inline(never)]
    pub fn mean_square_off(&self) -> i64 {
        share_of(ramp_mean_square(self.peak, self.off_end), self.off_fraction)
    }

    /// Mean square current over the window, A² (16 fraction bits).
    pub fn mean_square(&self) -> i64 {
        self.mean_square_on().saturating_add(self.mean_square_off())
    }

    /// Mean peak-to-peak ripple, never negative.
    pub fn ripple(&self) -> Amps {
        self.peak.saturating_sub(self.valley).max(Amps::ZERO)
    }
}
