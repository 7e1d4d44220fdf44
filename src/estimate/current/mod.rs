//! Inductor current reconstructed from the switching edges.
//!
//! Firmware knows when it switched, the input voltage and the output voltage.
//! Between edges the inductor current of a buck follows
//!
//! ```text
//! on:   di/dt = (V_in − V_out − i·(R_on + DCR)) / L
//! off:  di/dt = (−V_out − V_f − i·(R_d + DCR)) / L        (diode)
//!       di/dt = (−V_out − i·(R_low + DCR)) / L            (synchronous)
//! ```
//!
//! and a diode stage clamps at zero (DCM). On the fast path each segment
//! between edges is one multiply: slope × ticks. The slope's output and
//! input shares follow every reading ([`CurrentEstimator::on_output_code`],
//! [`CurrentEstimator::on_input_code`], one multiply each); the resistive drop
//! `i·R` (taken at the window's mean current, so neither phase is biased by
//! its starting current) comes from the slow path
//! ([`CurrentEstimator::set_voltage_codes`],
//! [`CurrentEstimator::take_window`]). Charge and RMS sums per phase are
//! formed on the slow path from the cycles' peak, valley and tick sums
//! ([`Phases`]).
//!
//! **What it needs to know** ([`InductorModel`]): `L` sets the ripple's
//! amplitude (a 10 % error in `L` is a 10 % error in the ripple, and in the
//! DCM current); the drops `R_on`, `DCR`, `V_f`, `R_d` set the DC level in
//! CCM, which without a current sensor is only observable through the
//! volt-second balance: an error of δV in the average switch-node voltage
//! (a `V_f` off by δV over the off-time, say) moves the average current by
//! `δV / R_total`, with `R_total = D·R_on + (1 − D)·R_d + DCR`. The
//! [`Observer`](super::Observer) corrects slow drift with the measured output
//! voltage, and fixes the level outright when the board measures its output
//! current.
//!
//! Formats (all `fixed` types or their raw bits):
//! - current [`Amps`]: `I16F16`, amperes, LSB 2⁻¹⁶ A (15.3 µA), held within
//!   ±2 048 A (beyond, it saturates);
//! - slopes: `I8F24` amperes per timer tick, LSB 2⁻²⁴ A/tick; each part
//!   within the largest slope the input channel's full scale allows ("cap"),
//!   a segment's slope within twice that;
//! - a segment is integrated over at most [`CurrentEstimator::max_segment_ticks`]
//!   ticks, so that slope × ticks fits 32 bits: the time to ramp 64 A at the
//!   steepest slope (75 µs for 47 µH and a 40 V input). Readings and edges
//!   start new segments, so only a stretch with neither is cut short: keep
//!   readings (or [`CurrentEstimator::update`]) coming faster than that; an
//!   idle DCM gap beyond it changes nothing at zero current;
//! - the window's sums and phases: see [`phases`](super::phases).

mod slopes;

pub use slopes::SlopeScale;

use super::model::InductorModel;
use super::phases::{midpoint, CycleCurrents, Phases, WindowTotals};
use crate::error::{attempt, positive, ConfigError};
use crate::law::Gate;
use crate::scale::TimerClock;
use crate::tick::Instant;
pub use crate::units::Amps;
use crate::units::{clamp_i32, div_i64, div_u64, ratio, scale, to_fixed_i32, ARMV6M};
use slopes::{slope_bits, CodeScale};

/// Largest current magnitude held, in `Amps` bits: 2 048 A.
const CURRENT_LIMIT_BITS: i32 = 2_048 << 16;

/// Piecewise-linear inductor-current estimator.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurrentEstimator {
    clock_hz: u32,
    // Resistive drops' slopes per ampere of mean current, I8F24 A/tick per
    // A, times 2¹⁶ (so `amps bits · k >> 32` is the slope's bits), held
    // within `i32` (a drop of R·tick/L below 2⁻⁹ per ampere).
    drop_on_per_amp: i32,
    drop_off_per_amp: i32,
    max_segment: u32,
    slope_cap: i32,
    // Slope parts, I8F24 bits of A/tick.
    vin_term: i32,
    vout_term: i32,
    freewheel_term: i32,
    drop_on: i32,
    drop_off: i32,
    // Readings' shares of the slopes.
    out_code: CodeScale,
    in_code: CodeScale,
    // The slopes less the output's share (each within ±cap): a segment's
    // slope is its base less `vout_term`, within ±2·cap.
    on_base: i32,
    off_base: i32,
    // Lowest current of an off-segment: zero for a diode stage, else
    // −CURRENT_LIMIT_BITS.
    off_floor: i32,
    ticks_per_amp_on: u32,
    // State.
    gate: Gate,
    since: Instant,
    current: i32,
    cycle: CycleCurrents,
    totals: WindowTotals,
}

/// `v` within ±`cap` (`cap` ≥ 0). Unlike `Ord::clamp`, no assertion.
#[inline(always)]
fn within(v: i32, cap: i32) -> i32 {
    v.max(-cap).min(cap)
}

impl CurrentEstimator {
    /// An estimator for `model` on a timer `clock`, for input voltages up to
    /// `vin_max_v` (the input channel's full scale: it bounds the slopes),
    /// at rest (zero current, gate off). Follow the channels
    /// ([`follow_output`](Self::follow_output),
    /// [`follow_input`](Self::follow_input)) and call
    /// [`restart_at`](Self::restart_at) before relying on it.
    ///
    /// Errors: those of [`InductorModel::check`]; `vin_max_v` not positive
    /// (reported as `vin_full_scale_v`).
    pub const fn new(
        model: &InductorModel,
        clock: &TimerClock,
        vin_max_v: f32,
    ) -> Result<Self, ConfigError> {
        attempt!(model.check());
        let vin_max = attempt!(positive("vin_full_scale_v", vin_max_v as f64));
        let inv_l_tick = SlopeScale::of(model, clock).inv_l_tick;
        // No slope can exceed the full input plus the freewheel drop.
        let cap = slope_bits((vin_max + model.diode_vf_v as f64) * inv_l_tick, i32::MAX);
        let cap = if cap < 1 { 1 } else { cap };
        Ok(Self {
            clock_hz: clock.hz(),
            drop_on_per_amp: to_fixed_i32(model.on_resistance() as f64 * inv_l_tick, 40),
            drop_off_per_amp: to_fixed_i32(model.off_resistance() as f64 * inv_l_tick, 40),
            // |slope| ≤ 2·cap (see `on_base`), so slope × ticks fits.
            max_segment: (i32::MAX / cap / 2) as u32,
            slope_cap: cap,
            vin_term: 0,
            vout_term: 0,
            freewheel_term: slope_bits(model.freewheel_v() as f64 * inv_l_tick, cap),
            drop_on: 0,
            drop_off: 0,
            out_code: CodeScale::UNFOLLOWED,
            in_code: CodeScale::UNFOLLOWED,
            on_base: 0,
            off_base: 0,
            off_floor: if model.r_low_ohm.is_none() { 0 } else { -CURRENT_LIMIT_BITS },
            ticks_per_amp_on: 0,
            gate: Gate::Off,
            since: Instant(0),
            current: 0,
            cycle: CycleCurrents {
                peak: Amps::ZERO,
                valley: Amps::ZERO,
                on_ticks: 0,
                period_ticks: 0,
                dcm: false,
            },
            totals: WindowTotals {
                cycles: 0,
                dcm_cycles: 0,
                on_ticks: 0,
                period_ticks: 0,
                peak_sum: 0,
                valley_sum: 0,
            },
        })
    }

    /// Longest segment integrated, ticks.
    pub const fn max_segment_ticks(&self) -> u32 {
        self.max_segment
    }

    /// The timer clock, Hz.
    pub const fn clock_hz(&self) -> u32 {
        self.clock_hz
    }

    /// Start timing from `now` (the first segment would otherwise run from
    /// `Instant(0)`), keeping the present current. Call once the timer runs,
    /// and after any pause in switching the estimator did not see.
    pub fn restart_at(&mut self, now: Instant) {
        self.since = now;
        self.cycle =
            CycleCurrents { valley: Amps::from_bits(self.current), ..CycleCurrents::default() };
    }

    /// Fast path: the current at `now` (the state advanced without being
    /// stored).
    #[inline]
    pub fn current_at(&self, now: Instant) -> Amps {
        Amps::from_bits(
            self.segment_end_of_either(self.gate.is_on(), now.ticks_since(self.since)).0,
        )
    }

    /// Ticks from the last edge until the current would reach `limit` while
    /// the gate is on, at the on-slope of the last slow-path update (the
    /// fast path's per-reading check covers a slope that grew since);
    /// `None` when off or not rising. One 64-bit multiply: call it at a
    /// turn-on, not per sample.
    #[inline]
    pub fn ticks_to_reach(&self, limit: Amps) -> Option<u32> {
        if !self.gate.is_on() || self.ticks_per_amp_on == 0 {
            return None;
        }
        let gap = i64::from(limit.to_bits()) - i64::from(self.current);
        if gap <= 0 {
            return Some(0);
        }
        // gap: 2⁻¹⁶ A, ticks_per_amp: 2⁻¹⁶ ticks per A.
        let ticks = (gap * i64::from(self.ticks_per_amp_on)) >> 32;
        Some(ticks.min(i64::from(self.max_segment)) as u32)
    }

    /// Fast path: the gate switched to `gate` at `at`. Returns the cycle
    /// completed by a turn-on.
    #[inline(always)]
    pub fn on_gate(&mut self, gate: Gate, at: Instant) -> Option<CycleCurrents> {
        if gate == self.gate {
            return None;
        }
        // Each arm closes the segment the gate leaves, of the other kind.
        self.gate = gate;
        match gate {
            Gate::Off => {
                self.close_segment_of(true, at);
                // The cycle began at the turn-on: so far it is all on-time.
                self.cycle.on_ticks = self.cycle.period_ticks;
                self.cycle.peak = Amps::from_bits(self.current);
                None
            }
            Gate::On => {
                self.close_segment_of(false, at);
                // Nothing to count before the first turn-on.
                let complete = self.cycle.period_ticks != 0;
                if complete {
                    self.count_cycle();
                }
                let next = CycleCurrents {
                    valley: Amps::from_bits(self.current),
                    ..CycleCurrents::default()
                };
                let done = core::mem::replace(&mut self.cycle, next);
                complete.then_some(done)
            }
        }
    }

    /// Fast path, right after a switching edge's pin write: the gate
    /// really switched at `at`, not when the [`on_gate`](Self::on_gate)
    /// call said. Later (the handler's own time to its write): the segment
    /// the gate left runs on to `at`, a late turn-on's valley and a late
    /// turn-off's peak move there, and the cycle and window sums keep the
    /// ticks in between (a late turn-on's completed cycle keeps its DCM
    /// flag). Earlier, a turn-off only (the timer ended the pulse before
    /// the handler that turned it off began), within the pulse: the
    /// on-segment is cut back to `at`. Anything else changes nothing.
    #[inline]
    pub fn move_edge(&mut self, at: Instant) {
        let late = at.ticks_since(self.since);
        if late == 0 {
            return;
        }
        if late > self.max_segment {
            self.advance_turn_off(self.since.ticks_since(at));
            return;
        }
        let on = self.gate.is_on();
        // The segment before the edge was of the other kind.
        let (current, _) = self.segment_end_of_either(!on, late);
        self.current = current;
        self.since = at;
        if on {
            self.cycle.valley = Amps::from_bits(current);
            // The cycle this turn-on completed (counted, unless it was the
            // first) was that much longer.
            if self.totals.cycles != 0 {
                self.totals.period_ticks = self.totals.period_ticks.wrapping_add(late);
            }
        } else {
            self.cycle.period_ticks = self.cycle.period_ticks.wrapping_add(late);
            self.cycle.on_ticks = self.cycle.period_ticks;
            self.cycle.peak = Amps::from_bits(current);
        }
    }

    /// The last turn-off happened `early` ticks before it was reported.
    #[cold]
    fn advance_turn_off(&mut self, early: u32) {
        if self.gate.is_on() || early > self.cycle.on_ticks || early > self.max_segment {
            return;
        }
        // |slope| ≤ 2·cap and early ≤ max_segment: the product fits.
        let slope = self.on_base - self.vout_term;
        let back = (slope * early as i32) >> 8;
        self.current = within(self.current - back, CURRENT_LIMIT_BITS);
        self.since = Instant(self.since.0.wrapping_sub(early));
        self.cycle.period_ticks = self.cycle.period_ticks.wrapping_sub(early);
        self.cycle.on_ticks = self.cycle.period_ticks;
        self.cycle.peak = Amps::from_bits(self.current);
    }

    #[inline(always)]
    fn count_cycle(&mut self) {
        let (t, c) = (&mut self.totals, &self.cycle);
        t.cycles = t.cycles.wrapping_add(1);
        t.dcm_cycles = t.dcm_cycles.wrapping_add(u32::from(c.dcm));
        t.on_ticks = t.on_ticks.wrapping_add(c.on_ticks);
        t.period_ticks = t.period_ticks.wrapping_add(c.period_ticks);
        t.peak_sum = t.peak_sum.wrapping_add(i64::from(c.peak.to_bits()));
        t.valley_sum = t.valley_sum.wrapping_add(i64::from(c.valley.to_bits()));
    }

    /// Fast path: bring the stored state up to `now` (for instance before a
    /// slow-path read).
    #[inline]
    pub fn update(&mut self, now: Instant) {
        self.close_segment(now);
    }

    /// When the present segment (on- or off-time) began.
    pub const fn segment_start(&self) -> Instant {
        self.since
    }

    /// The current at the last update or edge.
    pub fn current(&self) -> Amps {
        Amps::from_bits(self.current)
    }

    /// Gate state the estimator follows.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// Slow path: move the estimate by `delta` (the observer's
    /// correction); a diode stage stays at or above zero.
    pub fn shift(&mut self, delta: Amps) {
        let shifted = within(self.current.saturating_add(delta.to_bits()), CURRENT_LIMIT_BITS);
        // The floor is zero for a diode stage and below the range otherwise.
        self.current = shifted.max(self.off_floor);
    }

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

    /// The current after `ticks` more of the present segment (an on-segment
    /// if `on`), and whether it reached an off-segment's floor (zero for a
    /// diode stage), without storing anything. Inlined where the kind is
    /// known (at an edge, [`close_segment_of`](Self::close_segment_of)):
    /// the compiler keeps that kind's slope and floor alone.
    #[inline(always)]
    fn segment_end(&self, on: bool, ticks: u32) -> (i32, bool) {
        let slope = if on { self.on_base } else { self.off_base } - self.vout_term;
        let n = ticks.min(self.max_segment) as i32;
        // |slope| ≤ 2·cap and n ≤ i32::MAX / (2·cap): the product fits; and
        // |current| ≤ 2²⁷ plus |delta| ≤ 2²³ cannot overflow.
        let sum = self.current + ((slope * n) >> 8);
        let floor = if on { -CURRENT_LIMIT_BITS } else { self.off_floor };
        (sum.min(CURRENT_LIMIT_BITS).max(floor), !on & (sum < floor))
    }

    /// [`segment_end`](Self::segment_end) where the kind is known only at
    /// run time (a reading, a timer or comparator event, a moved edge). On
    /// a Cortex-M0 (Armv6-M, told by its lack of 32-bit atomics) out of
    /// line: one copy for all of them, a call each (about 500 bytes less
    /// than a copy per use; the edges keep their own); elsewhere inlined,
    /// the faster handlers the other cores' budgets were set with.
    #[cfg_attr(all(target_arch = "arm", not(target_has_atomic = "32")), inline(never))]
    #[cfg_attr(not(all(target_arch = "arm", not(target_has_atomic = "32"))), inline(always))]
    fn segment_end_of_either(&self, on: bool, ticks: u32) -> (i32, bool) {
        self.segment_end(on, ticks)
    }

    /// Close the present segment at `now`, whichever kind it is (a reading,
    /// an update). Out of line on a Cortex-M0, for the same reason.
    #[cfg_attr(all(target_arch = "arm", not(target_has_atomic = "32")), inline(never))]
    #[cfg_attr(not(all(target_arch = "arm", not(target_has_atomic = "32"))), inline(always))]
    fn close_segment(&mut self, now: Instant) {
        let ticks = now.ticks_since(self.since);
        let end = self.segment_end_of_either(self.gate.is_on(), ticks);
        self.store_segment(end, ticks, now);
    }

    /// [`close_segment`](Self::close_segment) where the segment's kind is
    /// known (at an edge: the one the gate leaves), so the compiler keeps
    /// only that kind's slope and floor.
    #[inline(always)]
    fn close_segment_of(&mut self, on: bool, now: Instant) {
        let ticks = now.ticks_since(self.since);
        let end = self.segment_end(on, ticks);
        self.store_segment(end, ticks, now);
    }

    /// Keep a closed segment's `end` (current, floor reached) after `ticks`
    /// more, up to `now`.
    #[inline(always)]
    fn store_segment(&mut self, (current, clamped): (i32, bool), ticks: u32, now: Instant) {
        self.cycle.dcm |= clamped;
        self.cycle.period_ticks = self.cycle.period_ticks.wrapping_add(ticks);
        self.current = current;
        self.since = now;
    }
}
