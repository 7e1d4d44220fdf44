//! The slow path's window: the cycle sums the fast path kept, taken and
//! turned into the window's phases, and the resistive drops set at the
//! window's mean current.
//!
//! Integer only, divisions included (no float: a core without an FPU links
//! no float code). Formats are the [`phases`](crate::estimate::phases)
//! ones; here:
//! - the mean peak and valley: each sum over the cycles divided by their
//!   number (toward zero), held within `Amps`' range;
//! - the window is DCM when more than half its cycles were: its off-phase
//!   then lasts the mean peak's fall to zero at the present off-slope, per
//!   cycle (a fall is at most 2³¹ − 1 ticks), and at most the window's
//!   off-time; in CCM the whole off-time;
//! - the switching frequency: cycles × timer clock / the cycles' ticks,
//!   Hz, rounded down;
//! - a window without cycles, or whose time wrapped to zero, gives all-zero
//!   phases and keeps the drops as they were;
//! - a fall in ticks: `(peak << 8) / fall` (peak 2⁻¹⁶ A, never below zero;
//!   fall 2⁻²⁴ A per tick), saturating at 2³² − 1, which is also the answer
//!   when the off-slope does not fall.

use super::CurrentEstimator;
use crate::estimate::phases::{midpoint, CycleCurrents, Phases, WindowTotals};
use crate::units::{clamp_i32, div_i64, div_u64, ratio, scale, Amps, ARMV6M};

impl CurrentEstimator {
    /// Slow path: take and reset the cycle sums, turn them into phase
    /// currents, and take the resistive drop at the window's mean current
    /// from now on.
    pub fn take_window(&mut self) -> Phases {
        let totals = core::mem::take(&mut self.totals);
        let phases = self.phases(&totals);
        if phases.cycles > 0 {
            self.set_drops(phases.average());
        }
        phases
    }

    /// Ticks for the off-slope to bring `peak` to zero (`u32::MAX` when it
    /// does not fall).
    fn fall_ticks(&self, peak: Amps) -> u32 {
        let fall = -(self.off_base - self.vout_term);
        if fall <= 0 {
            return u32::MAX;
        }
        // peak: 2⁻¹⁶ A; fall: 2⁻²⁴ A per tick.
        let t = div_i64(i64::from(peak.to_bits().max(0)) << 8, i64::from(fall));
        if t > i64::from(u32::MAX) {
            u32::MAX
        } else {
            t as u32
        }
    }

    /// A cycle's average current (slow path, integer only): the trapezoid's
    /// mean `(peak + valley)/2` in CCM; in DCM the triangle's charge
    /// `½·peak·(T_on + T_fall)` over the period, `T_fall` at the off-slope.
    pub fn cycle_average(&self, c: &CycleCurrents) -> Amps {
        if !c.dcm || c.period_ticks == 0 {
            return midpoint(c.peak, c.valley);
        }
        let rest = c.period_ticks.saturating_sub(c.on_ticks);
        let t_fall = self.fall_ticks(c.peak).min(rest);
        let conducting = u64::from(c.on_ticks) + u64::from(t_fall);
        scale(midpoint(c.peak, Amps::ZERO), ratio(conducting, u64::from(c.period_ticks)))
    }

    /// Phase currents of `totals` (slow path, integer only).
    pub fn phases(&self, totals: &WindowTotals) -> Phases {
        if totals.cycles == 0 || totals.period_ticks == 0 {
            // All zero (no cycles, or their time wrapped to zero). On a
            // Cortex-M0 the time is taken from the totals (zero here too):
            // the compiler then stores eight zero words and a copy instead
            // of clearing all nine through a library routine
            // (`__aeabi_memclr4`, 158 bytes, linked for this alone); other
            // cores clear them inline either way.
            let period_ticks = if ARMV6M { totals.period_ticks } else { 0 };
            return Phases { period_ticks, ..Phases::default() };
        }
        let n = i64::from(totals.cycles);
        let mean = |sum: i64| Amps::from_bits(clamp_i32(div_i64(sum, n)));
        let (peak, valley) = (mean(totals.peak_sum), mean(totals.valley_sum));
        let time = u64::from(totals.period_ticks);
        let rest = time.saturating_sub(u64::from(totals.on_ticks));
        // Off: CCM falls from peak to valley over the whole rest; DCM falls
        // from peak to zero at the off-slope, then idles.
        let dcm = totals.dcm_cycles * 2 > totals.cycles;
        let (off_ticks, off_end) = if dcm {
            // Below 2³¹ × 2³²: no overflow.
            let fall =
                u64::from(self.fall_ticks(peak).min(i32::MAX as u32)) * u64::from(totals.cycles);
            (fall.min(rest), Amps::ZERO)
        } else {
            (rest, valley)
        };
        Phases {
            cycles: totals.cycles,
            dcm_cycles: totals.dcm_cycles,
            period_ticks: totals.period_ticks,
            f_sw_hz: div_u64(u64::from(totals.cycles) * u64::from(self.clock_hz), time) as u32,
            peak,
            valley,
            off_end,
            duty: ratio(u64::from(totals.on_ticks), time),
            off_fraction: ratio(off_ticks, time),
        }
    }
}
