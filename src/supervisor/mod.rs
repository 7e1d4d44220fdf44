//! Protection and sequencing around a law.
//!
//! [`Supervisor`] wraps a guarded law (anything [`Law`] + [`Regulate`]) and
//! owns the [`CurrentEstimator`], because the cycle-by-cycle current limit
//! acts on it. Its state, construction and read-out are here; its methods
//! are grouped by concern in this module's files:
//!
//! | file | what |
//! |---|---|
//! | `events.rs` | the fast path's events: samples, comparator edges and timer events through one `step` (the [`Law`] entry points), the output and input readings |
//! | `edges.rs` | the gate's edges: the law's command followed, the completed cycle judged, the current limit armed and acting, an edge [`switched_at`](Supervisor::switched_at) another instant |
//! | `starting.rs` | the soft-start as the supervisor runs it (ramp, pulse bound, end), the slow path's pulse caps |
//! | `stops.rs` | the gate forced off, a trip for a fault, the fault log read and cleared |
//! | `housekeeping.rs` | the slow path: [`housekeeping`](Supervisor::housekeeping), the input readings' window |
//!
//! and its parts one a file:
//!
//! | file | what |
//! |---|---|
//! | `config.rs` | [`ProtectionConfig`] (SI) and [`Limits`] (codes, ticks, amperes) |
//! | `fault.rs` | [`FaultKind`], [`FaultRecord`], the [`FaultLog`] |
//! | `sequence.rs` | [`State`]s, hiccup, retries |
//! | `soft_start.rs` | the soft-start ramp of reference and current cap, every reading |
//! | `start_pulses.rs` | the soft-start of a law whose reference is fixed: each pulse bounded through the guard |
//! | `limit.rs` | the cycle-by-cycle current limit and its blanking |
//! | `detect.rs` | short-circuit and stuck-sensor detectors |
//! | `readings.rs` | readings and their window averages for the slow path |
//!
//! Protections:
//!
//! - **UVLO** on the input with hysteresis, and **input over-voltage**: stop,
//!   log, restart with soft-start when the input is back (slow path).
//! - **Over-voltage**: a reading at or above the threshold turns the gate
//!   off in that same call (fast path), then hiccup.
//! - **Over-current**: cycle by cycle on the estimated current (fast path;
//!   `limit.rs`).
//! - **Short circuit**, **stuck sensor** (`detect.rs`), a reading at the
//!   ADC's rails: latched or hiccup (`sequence.rs`).
//!
//! Faults go to a fixed-capacity log with tick timestamps; the oldest entry
//! is dropped when it is full.
//!
//! Fast-path entry points ([`Law`] methods) use integer arithmetic only;
//! [`Supervisor::housekeeping`] is the slow path and divides.

mod config;
mod detect;
mod edges;
mod events;
mod fault;
mod housekeeping;
mod limit;
mod readings;
mod sequence;
mod soft_start;
mod start_pulses;
mod starting;
mod stops;

pub use config::{Limits, ProtectionConfig};
pub use fault::{FaultKind, FaultLog, FaultRecord, FAULT_LOG_LEN};
pub use sequence::State;

use crate::estimate::{Amps, CurrentEstimator};
use crate::law::{Gate, Law, Regulate};
use detect::Detectors;
use limit::CurrentLimit;
use readings::Readings;
use sequence::Sequencer;
use soft_start::SoftStartRamp;
use start_pulses::StartPulses;

/// The supervisor around a law `L`, keeping the last `LOG` faults
/// ([`FAULT_LOG_LEN`] unless chosen; see [`FaultLog`]).
// Declaration order (`repr(C)`): what every event touches first, the
// guarded law and the estimator next, what the slow path alone uses last.
// A Cortex-M0 loads a byte, half-word or word only within 32, 64 or 128
// bytes of a base address: fields near the start need fewer base addresses
// held in its eight low registers (measured: 8 fewer instructions a sample
// than the compiler's own order).
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Supervisor<L, const LOG: usize = FAULT_LOG_LEN> {
    sequence: Sequencer,
    gate: Gate,
    // The lower of the over-voltage threshold and the output rail: one
    // compare per reading finds either.
    out_stop: u16,
    readings: Readings,
    limit: CurrentLimit,
    detect: Detectors,
    inner: L,
    estimator: CurrentEstimator,
    out_average: u32,
    ramp: SoftStartRamp,
    pulses: StartPulses,
    limits: Limits,
    log: FaultLog<LOG>,
}

impl<L: Law + Regulate> Supervisor<L> {
    /// Wrap `inner`, whose present reference becomes the setpoint, with a
    /// fault log of [`FAULT_LOG_LEN`] entries. Starts [`State::Off`]; the
    /// first [`housekeeping`](Supervisor::housekeeping) with a good input
    /// begins the soft-start.
    ///
    /// The current limit keeps pulses at least `inner`'s
    /// [`min_on_ticks`](Law::min_on_ticks), read here once.
    pub fn new(inner: L, estimator: CurrentEstimator, limits: Limits) -> Self {
        Self::with_fault_log(inner, estimator, limits)
    }
}

impl<L: Law + Regulate, const LOG: usize> Supervisor<L, LOG> {
    /// [`new`](Supervisor::new) with a fault log of `LOG` entries, the
    /// length the type names.
    pub fn with_fault_log(inner: L, estimator: CurrentEstimator, limits: Limits) -> Self {
        let (target, blanking) = (inner.reference_code(), inner.min_on_ticks());
        Self::with_setpoint(inner, estimator, limits, target, blanking)
    }

    /// [`new`](Self::new) in a `const` context, where trait methods cannot
    /// be called: `setpoint` is `inner`'s reference code and `blanking` its
    /// minimum on-time, ticks.
    pub const fn with_setpoint(
        inner: L,
        estimator: CurrentEstimator,
        limits: Limits,
        setpoint: u16,
        blanking: u32,
    ) -> Self {
        let out_stop = if limits.ovp < limits.out_rail { limits.ovp } else { limits.out_rail };
        Self {
            inner,
            estimator,
            out_stop,
            sequence: Sequencer::new(),
            ramp: SoftStartRamp::new(limits.soft_start, setpoint),
            pulses: StartPulses::new(),
            gate: Gate::Off,
            readings: Readings::new(),
            out_average: 0,
            limit: CurrentLimit::new(limits.current_limit, blanking),
            detect: Detectors::new(),
            log: FaultLog::new(),
            limits,
        }
    }

    /// The wrapped law.
    pub const fn inner(&self) -> &L {
        &self.inner
    }

    /// The wrapped law, mutable.
    pub fn inner_mut(&mut self) -> &mut L {
        &mut self.inner
    }

    /// The current estimator.
    pub const fn estimator(&self) -> &CurrentEstimator {
        &self.estimator
    }

    /// The current estimator, mutable (slow path: voltages, corrections).
    pub fn estimator_mut(&mut self) -> &mut CurrentEstimator {
        &mut self.estimator
    }

    /// State now.
    pub const fn state(&self) -> State {
        self.sequence.state()
    }

    /// The gate as last commanded.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// The limits in force.
    pub const fn limits(&self) -> &Limits {
        &self.limits
    }

    /// The output readings' average over the last housekeeping window,
    /// code × 2¹⁶.
    pub const fn output_average(&self) -> u32 {
        self.out_average
    }

    /// The output setpoint, code.
    pub const fn setpoint_code(&self) -> u16 {
        self.ramp.target()
    }

    /// The last output reading, code.
    pub const fn last_output(&self) -> u16 {
        self.readings.last_out
    }

    /// The level the current limit acts at now: the configured limit, or
    /// lower during the soft-start or under a light-load policy.
    pub const fn pulse_cap(&self) -> Amps {
        self.limit.cap()
    }

    /// The last input reading, code.
    pub const fn last_input(&self) -> u16 {
        self.readings.last_in
    }
}
