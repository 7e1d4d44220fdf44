//! The whole firmware stack: supervisor, guarded law, current estimator and
//! the slow path, with the entry points an interrupt-driven firmware calls.
//!
//! ```text
//!   ADC conversion done ─▶ on_conversion(output, input, now) ─┐
//!   comparator edge     ─▶ on_edge(level, now) ───────────────┤
//!   timer compare       ─▶ on_timer(now) ─────────────────────┴─▶ Command ─▶ GateDriver
//!   housekeeping tick   ─▶ housekeeping(now)  (slow path: may return a stop)
//!   telemetry           ◀─ telemetry(), faults()
//! ```
//!
//! [`Stack`] is generic over the law: any [`Law`] + [`Regulate`] drops in,
//! the crate's or your own. It is `no_std`, allocates nothing, and uses no
//! floating point at run time: the fast path is integer compares and adds;
//! the slow path ([`slow`]) divides but stays integer. Configuration
//! ([`StackConfig`] → [`StackParts`], `const fn`) is evaluated at compile
//! time in a firmware's `const` items. The host simulator runs this very
//! type (`sim::StackFirmware`), so what it checks is what ships.
//!
//! | file | what |
//! |---|---|
//! | `mod.rs` | [`Stack`]: assembly and entry points |
//! | `config.rs` | [`StackConfig`] (SI), [`StackParts`] (raw) |
//! | `slow.rs` | the housekeeping window: losses, retuning, DC correction, observer |
//! | `light_load.rs` | smaller pulses at light load (the current limit's cap) |
//! | `handlers.rs` | [`Handlers`]: the stack wired to its gate driver, one call per interrupt |
//! | `telemetry.rs` | [`Telemetry`] |

mod config;
mod handlers;
pub mod light_load;
pub mod slow;
mod telemetry;

pub use config::{Sensing, StackConfig, StackParts};
pub use handlers::Handlers;
pub use slow::{SlowPath, SlowPathConfig, SlowReport};
pub use telemetry::Telemetry;

use crate::estimate::Amps;
use crate::guard::FrequencyGuard;
use crate::law::{Command, Law, Regulate};
use crate::supervisor::{FaultRecord, Supervisor, FAULT_LOG_LEN};
use crate::tick::Instant;

/// The firmware stack around a law `L`, keeping the last `LOG` faults
/// ([`FAULT_LOG_LEN`] unless a firmware chooses fewer, 8 bytes of RAM each).
#[derive(Clone, Debug)]
pub struct Stack<L, const LOG: usize = FAULT_LOG_LEN> {
    supervisor: Supervisor<FrequencyGuard<L>, LOG>,
    slow: SlowPath,
    sensing: Sensing,
}

impl<L: Law + Regulate> Stack<L> {
    /// Assemble the stack around `law`, whose present reference is the
    /// setpoint, with a fault log of [`FAULT_LOG_LEN`] entries. Starts off;
    /// the first housekeeping tick with a good input begins the soft-start.
    pub fn new(law: L, parts: StackParts) -> Self {
        Self::with_fault_log(law, parts)
    }
}

impl<L: Law + Regulate, const LOG: usize> Stack<L, LOG> {
    /// [`new`](Stack::new) with a fault log of `LOG` entries, the length
    /// the type names (`Stack::<MyLaw, 4>::with_fault_log(law, parts)`, or
    /// as the receiving type says).
    pub fn with_fault_log(law: L, parts: StackParts) -> Self {
        let reference = law.reference_code();
        Self::with_reference(law, parts, reference)
    }

    /// [`with_fault_log`](Stack::with_fault_log) in a `const` context,
    /// where the law cannot be asked for its reference: `reference` must
    /// be `law`'s [`reference_code`](Regulate::reference_code) (the
    /// soft-start's target). A firmware whose stack is a `static`
    /// initialised by the compiler, with its driver
    /// ([`GateDriver::before_start`](crate::drive::GateDriver::before_start)),
    /// runs no constructor at start-up: the runtime copies the image with
    /// the rest of `.data`.
    ///
    /// ```
    /// use ripplectl::law::{Hysteretic, HystereticConfig};
    /// use ripplectl::stack::{Stack, StackConfig, StackParts};
    /// use ripplectl::unwrap_config;
    ///
    /// const CONFIG: StackConfig = StackConfig::demo();
    /// const LAW: Hysteretic = unwrap_config(Hysteretic::new(
    ///     &HystereticConfig { setpoint_v: CONFIG.setpoint_v, band_v: 0.04 },
    ///     &CONFIG.output_adc,
    /// ));
    /// const PARTS: StackParts = unwrap_config(StackParts::new(&CONFIG));
    /// static STACK: Stack<Hysteretic, 4> =
    ///     Stack::with_reference(LAW, PARTS, LAW.reference_code());
    /// # assert_eq!(STACK.supervisor().state(), ripplectl::supervisor::State::Off);
    /// # assert_eq!(format!("{:?}", STACK), format!("{:?}", Stack::<_, 4>::with_fault_log(LAW, PARTS)));
    /// ```
    pub const fn with_reference(law: L, parts: StackParts, reference: u16) -> Self {
        let guard = FrequencyGuard::new(law, parts.window);
        // The guard's minimum on-time: what `min_on_ticks` answers.
        let blanking = parts.window.min_on;
        Self {
            supervisor: Supervisor::with_setpoint(
                guard,
                parts.estimator,
                parts.limits,
                reference,
                blanking,
            ),
            slow: parts.slow,
            sensing: parts.sensing,
        }
    }

    /// Fast path, in the conversion-complete interrupt: the output and
    /// input readings of one scan, sampled at `now`. With a sampled law the
    /// output reading goes to it and the result is always a command; with
    /// an edge-driven law it serves the protections and a command comes
    /// only when they act.
    #[inline]
    pub fn on_conversion(&mut self, output: u16, input: u16, now: Instant) -> Option<Command> {
        self.supervisor.on_input_reading(input, now);
        match self.sensing {
            Sensing::Sampled => Some(self.supervisor.on_sample(output, now)),
            Sensing::Edge => self.supervisor.on_output_reading(output, now),
        }
    }

    /// Fast path, in the comparator interrupt: its output is now `level`
    /// (true: the sensed output above the armed threshold). Re-arm the
    /// comparator at [`comparator_code`](Self::comparator_code) afterwards.
    #[inline]
    pub fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.supervisor.on_edge(level, now)
    }

    /// Fast path, in the compare interrupt: the deadline of an earlier
    /// [`Command::wake`] was reached.
    #[inline]
    pub fn on_timer(&mut self, now: Instant) -> Command {
        self.supervisor.on_timer(now)
    }

    /// Fast path, right after a switching edge's pin write: the gate
    /// switched at `at`, the timer's reading after the write, not at
    /// `now`, the instant the call that switched it was given. Returns the
    /// deadline to arm in place of that call's `wake` (see
    /// [`Supervisor::switched_at`]). [`Handlers`] does this.
    #[inline]
    pub fn switched_at(
        &mut self,
        now: Instant,
        at: Instant,
        wake: Option<Instant>,
    ) -> Option<Instant> {
        self.supervisor.switched_at(now, at, wake)
    }

    /// Slow path, at the configured housekeeping rate: protections on the
    /// input, soft-start and hiccup, the estimator's voltages, then the
    /// window's losses, retuning, DC correction and observer. Returns a
    /// command when it stopped the stage (the gate must go off now).
    /// Compiled once, out of line, whoever calls it.
    #[inline(never)]
    pub fn housekeeping(&mut self, now: Instant) -> Option<Command> {
        let sup = &mut self.supervisor;
        sup.estimator_mut().update(now);
        let phases = sup.estimator_mut().take_window();
        let last_in = u32::from(sup.last_input()) << 16;
        let vin_q16 = sup.input_average().unwrap_or(last_in);
        let vin = ((vin_q16 + (1 << 15)) >> 16).min(u32::from(u16::MAX)) as u16;
        let stop = sup.housekeeping(vin, now);
        self.slow.run(&mut self.supervisor, &phases, vin_q16);
        stop
    }

    /// The comparator threshold an edge-driven law wants armed, output
    /// code (`None` for a law without one).
    pub fn comparator_code(&self) -> Option<u16> {
        self.supervisor.comparator_code()
    }

    /// How the law gets the output.
    pub const fn sensing(&self) -> Sensing {
        self.sensing
    }

    /// `at`, or the instant of the stack's last event when `at` precedes
    /// it: no event may go back in time (fast path: one compare).
    #[inline]
    pub fn not_before_last_event(&self, at: Instant) -> Instant {
        let last = self.supervisor.estimator().segment_start();
        if at.ticks_since(last) > crate::tick::MAX_DURATION_TICKS {
            last
        } else {
            at
        }
    }

    /// The estimated inductor current at `now` (fast path).
    #[inline]
    pub fn current_at(&self, now: Instant) -> Amps {
        self.supervisor.estimator().current_at(now)
    }

    /// A snapshot for telemetry.
    pub fn telemetry(&self) -> Telemetry {
        let r = self.slow.report();
        Telemetry {
            state: self.supervisor.state(),
            faults: self.supervisor.fault_log().len(),
            current: self.supervisor.estimator().current(),
            observer_current: self.slow.observer_current(),
            vin: r.vin,
            vout: r.vout,
            f_sw_hz: r.phases.f_sw_hz,
            #[cfg(feature = "loss-model")]
            losses: r.losses,
            #[cfg(feature = "loss-model")]
            efficiency: r.losses.efficiency(),
            clamps: *self.supervisor.inner().counts(),
        }
    }

    /// The slow path's latest figures.
    pub const fn slow_report(&self) -> &SlowReport {
        self.slow.report()
    }

    /// The fault log, oldest first.
    pub fn faults(&self) -> impl Iterator<Item = &FaultRecord> {
        self.supervisor.faults()
    }

    /// Slow path: clear the fault log and leave a latched fault.
    pub fn clear_faults(&mut self, now: Instant) {
        self.supervisor.clear_faults(now);
    }

    /// The supervisor, with the guarded law and the estimator inside.
    pub const fn supervisor(&self) -> &Supervisor<FrequencyGuard<L>, LOG> {
        &self.supervisor
    }

    /// The supervisor, mutable.
    pub fn supervisor_mut(&mut self) -> &mut Supervisor<FrequencyGuard<L>, LOG> {
        &mut self.supervisor
    }

    /// The law.
    pub const fn law(&self) -> &L {
        self.supervisor.inner().inner()
    }
}
