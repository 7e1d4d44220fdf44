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
//! ([`Phases`](super::Phases)).
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
//!
//! The estimator's state and read-out are here; its methods are grouped
//! by concern in this module's files: `slopes.rs` (the slope and code
//! scales, how voltages, readings and drops set the slopes, with their
//! formats), `segments.rs` (the fast path: segments integrated between
//! events, a cycle's currents at its edges) and `window.rs` (the slow
//! path: a window's sums turned into phases, the drops at its mean
//! current).

mod segments;
mod slopes;
mod window;

pub use slopes::SlopeScale;

use super::model::InductorModel;
use super::phases::{CycleCurrents, WindowTotals};
use crate::error::{attempt, positive, ConfigError};
use crate::law::Gate;
use crate::scale::TimerClock;
use crate::tick::Instant;
use crate::units::to_fixed_i32;
pub use crate::units::Amps;
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
}
