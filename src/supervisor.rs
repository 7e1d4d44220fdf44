//! Protection and sequencing around a law.
//!
//! [`Supervisor`] wraps a guarded law (anything [`Law`] + [`Regulate`]) and
//! owns the [`CurrentEstimator`], because the cycle-by-cycle current limit
//! acts on it. States:
//!
//! ```text
//!   Off ──input OK──▶ SoftStart ──ramp done──▶ Regulating
//!    ▲                    │  ▲                      │
//!    │ input lost         │  └──── Restart ◀────────┤ short circuit, over-voltage
//!    └────────────────────┴─────────(hiccup)────────┤
//!                                   Fault (latched) ◀┘ sensor faults
//! ```
//!
//! - **UVLO** on the input with hysteresis, and **input over-voltage**: stop,
//!   log, restart with soft-start when the input is back (slow path).
//! - **Soft-start**: the reference ramps from the present output to the
//!   setpoint over the configured time (slow path).
//! - **Over-voltage**: a sample at or above the threshold turns the gate
//!   off in that same call (fast path), then hiccup.
//! - **Over-current**: cycle by cycle, the on-time ends when the estimated
//!   current reaches the limit: a timer deadline is set for the predicted
//!   crossing at each turn-on, and every call while on checks it (fast path).
//!   Not before the wrapped stage's minimum on-time ([`Law::min_on_ticks`],
//!   leading-edge blanking), so the limit never makes a pulse shorter than
//!   the guard allows; a turn-on with the estimate already at the limit is
//!   refused instead (valley hold-off, retried by the guard's next turn-on).
//!   A pulse begun just below the limit can so pass it by up to the on-slope
//!   times the minimum on-time.
//! - **Short circuit**: that many consecutive cycles ended by the limit
//!   while the output reads below half the present reference: off for the
//!   hiccup time, then soft-start again. (Charging the output capacitor at
//!   the limit during soft-start keeps the output near the ramp, so it is
//!   not taken for a short.)
//! - **Retries**: after that many hiccups in a row without reaching
//!   regulation, latch off (a persistent short, or a feedback fault the
//!   current limit masks: with the output reading zero, an open divider and
//!   a short look alike to firmware without another sensor).
//! - **Sensor faults**, latched: the output reads near zero while the
//!   firmware's own timing says the switch node averages well above it
//!   (`D·V_in`, an open feedback divider; a real short instead averages only
//!   about a diode drop); a reading at the ADC's rails.
//!
//! Faults go to a fixed-capacity log with tick timestamps; the oldest entry
//! is dropped when it is full.
//!
//! Fast-path entry points ([`Law`] methods) use integer arithmetic only;
//! [`Supervisor::housekeeping`] is the slow path and divides.

use crate::error::{finite, ConfigError};
use crate::estimate::current::{Amps, CurrentEstimator, CycleCurrents};
use crate::law::{Command, Gate, Law, Regulate};
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::{earliest, Instant};
use heapless::Deque;

/// Capacity of the fault log.
pub const FAULT_LOG_LEN: usize = 16;

/// Protection settings, SI units (voltages at the sensed node: output or
/// input).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct ProtectionConfig {
    /// Input voltage to start at, V.
    pub uvlo_on_v: f32,
    /// Input voltage to stop below, V (< `uvlo_on_v`).
    pub uvlo_off_v: f32,
    /// Input voltage to stop above, V.
    pub vin_max_v: f32,
    /// Input must fall this far below `vin_max_v` to restart, V.
    pub vin_max_hysteresis_v: f32,
    /// Output over-voltage threshold, V (above the setpoint).
    pub ovp_v: f32,
    /// Cycle-by-cycle peak current limit, A.
    pub current_limit_a: f32,
    /// Consecutive limited cycles taken as a short circuit (≥ 1).
    pub short_cycles: u16,
    /// Off-time of the hiccup after a short or an over-voltage, s.
    pub hiccup_s: f32,
    /// Soft-start ramp time, s.
    pub soft_start_s: f32,
    /// An output reading below this counts as "near zero", V.
    pub stuck_low_v: f32,
    /// ... and is implausible while `D·V_in` is at least this, V.
    pub stuck_implied_v: f32,
    /// Consecutive implausible cycles before the sensor fault (≥ 1).
    pub stuck_cycles: u16,
    /// Hiccup restarts in a row that never reach regulation before the
    /// supervisor latches off (≥ 1).
    pub max_retries: u16,
}

impl ProtectionConfig {
    /// The crate demo's settings (a 24 V bus, 18–32 V, to a 5 V / 2 A
    /// rail): demo values, to be replaced by a board's own.
    pub const fn demo() -> Self {
        Self {
            uvlo_on_v: 16.0,
            uvlo_off_v: 15.0,
            vin_max_v: 36.0,
            vin_max_hysteresis_v: 1.0,
            ovp_v: 5.5,
            current_limit_a: 4.0,
            short_cycles: 8,
            hiccup_s: 2e-3,
            soft_start_s: 1e-3,
            stuck_low_v: 0.3,
            stuck_implied_v: 2.0,
            stuck_cycles: 3,
            max_retries: 3,
        }
    }
}

/// Kinds of fault.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FaultKind {
    /// Input below the UVLO threshold.
    InputUndervoltage,
    /// Input above its maximum.
    InputOvervoltage,
    /// Output at or above the over-voltage threshold.
    OutputOvervoltage,
    /// Consecutive cycles ended by the current limit.
    ShortCircuit,
    /// Output reading stuck near zero while the switch node says otherwise.
    SensorStuck,
    /// A reading at the ADC's rails.
    SensorRange,
    /// Hiccup restarts exhausted without reaching regulation: a persistent
    /// short, or a feedback fault the current limit masks (an open divider
    /// reads like a short to firmware that has no other sensor).
    RetriesExhausted,
}

impl FaultKind {
    /// A stable kebab-case name (telemetry, reports).
    pub const fn name(self) -> &'static str {
        match self {
            Self::InputUndervoltage => "input-undervoltage",
            Self::InputOvervoltage => "input-overvoltage",
            Self::OutputOvervoltage => "output-overvoltage",
            Self::ShortCircuit => "short-circuit",
            Self::SensorStuck => "sensor-stuck",
            Self::SensorRange => "sensor-range",
            Self::RetriesExhausted => "retries-exhausted",
        }
    }

    /// Latched faults need [`Supervisor::clear_faults`]; the others restart
    /// by themselves.
    pub const fn is_latched(self) -> bool {
        matches!(self, Self::SensorStuck | Self::SensorRange | Self::RetriesExhausted)
    }
}

/// One logged fault.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FaultRecord {
    /// What happened.
    pub kind: FaultKind,
    /// Timer reading when it was detected.
    pub at: Instant,
}

/// Supervisor state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum State {
    /// Not switching: waiting for the input.
    Off,
    /// Ramping the reference up.
    SoftStart,
    /// Normal operation.
    Regulating,
    /// Waiting out the hiccup time before a soft-start.
    Restart,
    /// Latched off until [`Supervisor::clear_faults`].
    Fault,
}

/// Protection limits in raw units.
///
/// Voltages: `u16` ADC codes of their channel (format of its
/// [`AdcChannel`]); current: [`Amps`]; times: `u32` timer ticks.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Limits {
    /// UVLO start threshold, input code.
    pub uvlo_on: u16,
    /// UVLO stop threshold, input code.
    pub uvlo_off: u16,
    /// Input stop threshold, input code.
    pub vin_max: u16,
    /// Input restart threshold, input code.
    pub vin_resume: u16,
    /// Output over-voltage, output code.
    pub ovp: u16,
    /// Current limit.
    pub current_limit: Amps,
    /// Short-circuit cycle count.
    pub short_cycles: u16,
    /// Hiccup time, ticks.
    pub hiccup: u32,
    /// Soft-start time, ticks (≥ 1).
    pub soft_start: u32,
    /// "Near zero" output, output code.
    pub stuck_low: u16,
    /// Implied switch-node average for the sensor check, input code.
    pub stuck_implied: u16,
    /// Sensor-fault cycle count.
    pub stuck_cycles: u16,
    /// Hiccup restarts before latching.
    pub max_retries: u16,
    /// Output code at or above which the reading is implausible.
    pub out_rail: u16,
    /// Input code at or above which the reading is implausible.
    pub in_rail: u16,
}

/// An input-channel code for `v`, or `err` when it does not fit.
fn code(adc: &AdcChannel, v: f32, err: ConfigError) -> Result<u16, ConfigError> {
    adc.to_code(v).map(|q| q.raw).map_err(|e| if e == ConfigError::NotFinite { e } else { err })
}

impl Limits {
    /// Convert and check. `vout` and `vin` are the output and input
    /// channels; `setpoint_code` the regulated output code.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::VoltageOutsideAdcRange`],
    /// [`ConfigError::ThresholdsOutOfOrder`], [`ConfigError::CurrentLimitNotPositive`],
    /// [`ConfigError::CountZero`], and the timer's duration errors.
    pub fn new(
        cfg: &ProtectionConfig,
        vout: &AdcChannel,
        vin: &AdcChannel,
        clock: &TimerClock,
        setpoint_code: u16,
    ) -> Result<Self, ConfigError> {
        let range = ConfigError::VoltageOutsideAdcRange;
        let uvlo_on = code(vin, cfg.uvlo_on_v, range)?;
        let uvlo_off = code(vin, cfg.uvlo_off_v, range)?;
        let vin_max = code(vin, cfg.vin_max_v, range)?;
        let vin_resume = code(vin, cfg.vin_max_v - cfg.vin_max_hysteresis_v, range)?;
        let ovp = code(vout, cfg.ovp_v, range)?;
        if uvlo_off >= uvlo_on
            || uvlo_on >= vin_resume
            || vin_resume > vin_max
            || ovp <= setpoint_code
        {
            return Err(ConfigError::ThresholdsOutOfOrder);
        }
        if finite(cfg.current_limit_a)? <= 0.0 {
            return Err(ConfigError::CurrentLimitNotPositive);
        }
        if cfg.short_cycles == 0 || cfg.stuck_cycles == 0 || cfg.max_retries == 0 {
            return Err(ConfigError::CountZero);
        }
        let stuck_low = code(vout, cfg.stuck_low_v, range)?;
        let stuck_implied = code(vin, cfg.stuck_implied_v, range)?;
        if stuck_low >= setpoint_code {
            return Err(ConfigError::ThresholdsOutOfOrder);
        }
        Ok(Self {
            uvlo_on,
            uvlo_off,
            vin_max,
            vin_resume,
            ovp,
            current_limit: crate::estimate::current::saturate(cfg.current_limit_a),
            short_cycles: cfg.short_cycles,
            hiccup: clock.to_ticks(cfg.hiccup_s)?.raw,
            soft_start: clock.to_ticks_nonzero(cfg.soft_start_s)?.raw,
            stuck_low,
            stuck_implied,
            stuck_cycles: cfg.stuck_cycles,
            max_retries: cfg.max_retries,
            out_rail: vout.full_scale_code(),
            in_rail: vin.full_scale_code(),
        })
    }
}

/// Whether a cycle's `D·V_in` (input code `vin`) reaches the input code
/// `implied`: `on·vin ≥ period·implied`, with no division and only 32-bit
/// products (a 64-bit multiply is a library call on the Cortex-M0). The tick
/// counts are cut to 16 bits first (shifted alike: the ratio keeps 15 bits
/// or more), so each product of a count and a 16-bit code fits.
#[inline(always)]
fn duty_input_at_least(cycle: &CycleCurrents, vin: u16, implied: u16) -> bool {
    let (mut on, mut period) = (cycle.on_ticks, cycle.period_ticks);
    if period > 0xffff {
        let shift = if period > 0xff_ffff { 16 } else { 8 };
        on >>= shift;
        period >>= shift;
    }
    // on ≤ period < 2¹⁶: each product is below 2³².
    on.min(0xffff) * u32::from(vin) >= period.min(0xffff) * u32::from(implied)
}

/// The supervisor around a law `L`.
#[derive(Clone, Debug)]
pub struct Supervisor<L> {
    inner: L,
    estimator: CurrentEstimator,
    limits: Limits,
    // The lower of the over-voltage threshold and the output rail: one
    // compare per reading finds either.
    out_stop: u16,
    target: u16,
    state: State,
    // `state` is SoftStart or Regulating (kept with it by `enter`).
    switching: bool,
    gate: Gate,
    since: Instant,
    ramp_from: u16,
    vin: u16,
    last_out: u16,
    out_sum: u32,
    out_count: u16,
    out_average: u16,
    in_sum: u32,
    in_count: u16,
    has_reading: bool,
    limited_this_cycle: bool,
    // Predicted crossing of the current limit, set at each turn-on.
    limit_at: Option<Instant>,
    // The wrapped stage's minimum on-time, ticks, and the end of the
    // present pulse's blanking: the limit acts from then on.
    blanking: u32,
    blank_end: Instant,
    limited_streak: u16,
    retries: u16,
    stuck_streak: u16,
    log: Deque<FaultRecord, FAULT_LOG_LEN>,
}

impl<L: Law + Regulate> Supervisor<L> {
    /// Wrap `inner`, whose present reference becomes the setpoint. Starts
    /// [`State::Off`]; the first [`housekeeping`](Self::housekeeping) with a
    /// good input begins the soft-start.
    ///
    /// The current limit keeps pulses at least `inner`'s
    /// [`min_on_ticks`](Law::min_on_ticks), read here once.
    pub fn new(inner: L, estimator: CurrentEstimator, limits: Limits) -> Self {
        let (target, blanking) = (inner.reference_code(), inner.min_on_ticks());
        Self {
            inner,
            estimator,
            limits,
            out_stop: limits.ovp.min(limits.out_rail),
            target,
            state: State::Off,
            switching: false,
            gate: Gate::Off,
            since: Instant(0),
            ramp_from: 0,
            vin: 0,
            last_out: 0,
            out_sum: 0,
            out_count: 0,
            out_average: 0,
            in_sum: 0,
            in_count: 0,
            has_reading: false,
            limited_this_cycle: false,
            limit_at: None,
            blanking,
            blank_end: Instant(0),
            limited_streak: 0,
            retries: 0,
            stuck_streak: 0,
            log: Deque::new(),
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
        self.state
    }

    /// The gate as last commanded.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// The limits in force.
    pub const fn limits(&self) -> &Limits {
        &self.limits
    }

    /// The fault log, oldest first.
    pub fn faults(&self) -> impl Iterator<Item = &FaultRecord> {
        self.log.iter()
    }

    /// Slow path: empty the log, and leave a latched fault for
    /// [`State::Off`] (a restart follows when the input is good).
    pub fn clear_faults(&mut self) {
        self.log.clear();
        self.retries = 0;
        if self.state == State::Fault {
            self.enter(State::Off);
        }
    }

    /// Slow path: the output readings' average since the last call (the
    /// last reading when there were none).
    pub fn take_output_average(&mut self) -> u16 {
        let avg = if self.out_count == 0 {
            self.last_out
        } else {
            (self.out_sum / u32::from(self.out_count)) as u16
        };
        self.out_sum = 0;
        self.out_count = 0;
        avg
    }

    /// The output readings' average over the last housekeeping window, code.
    pub const fn output_average(&self) -> u16 {
        self.out_average
    }

    #[inline(always)]
    fn note_reading(&mut self, out: u16) {
        self.last_out = out;
        // Wrapping: the slow path takes them long before 65 536 readings.
        self.out_sum = self.out_sum.wrapping_add(u32::from(out));
        self.out_count = self.out_count.wrapping_add(1);
    }

    #[inline(always)]
    fn is_switching(&self) -> bool {
        self.switching
    }

    fn enter(&mut self, state: State) {
        self.state = state;
        self.switching = matches!(state, State::SoftStart | State::Regulating);
    }

    fn log_fault(&mut self, kind: FaultKind, at: Instant) {
        if self.log.is_full() {
            self.log.pop_front();
        }
        let _ = self.log.push_back(FaultRecord { kind, at });
    }

    /// Gate off now, telling the law and the estimator.
    fn force_off(&mut self, now: Instant) {
        if self.gate.is_on() {
            self.gate = Gate::Off;
            self.estimator.on_gate(Gate::Off, now);
            self.inner.on_gate(Gate::Off, now);
        }
    }

    /// Stop for `kind`: latched, hiccup, or back to `Off`. A hiccup that
    /// follows too many restarts without regulation latches instead.
    #[cold]
    #[inline(never)]
    fn trip(&mut self, kind: FaultKind, now: Instant) -> Command {
        self.force_off(now);
        self.log_fault(kind, now);
        let next = match kind {
            k if k.is_latched() => State::Fault,
            FaultKind::InputUndervoltage | FaultKind::InputOvervoltage => State::Off,
            _ => {
                self.retries = self.retries.saturating_add(1);
                if self.retries > self.limits.max_retries {
                    self.log_fault(FaultKind::RetriesExhausted, now);
                    State::Fault
                } else {
                    State::Restart
                }
            }
        };
        self.enter(next);
        self.since = now;
        self.limited_streak = 0;
        self.stuck_streak = 0;
        Command::hold(Gate::Off)
    }

    /// Check a reading against the rails and the over-voltage threshold.
    #[inline(always)]
    fn check_output(&mut self, out: u16, now: Instant) -> Option<Command> {
        self.note_reading(out);
        self.estimator.on_output_code(out, now);
        if out < self.out_stop {
            return None;
        }
        let kind = if out >= self.limits.out_rail {
            FaultKind::SensorRange
        } else {
            FaultKind::OutputOvervoltage
        };
        Some(self.trip(kind, now))
    }

    /// Apply the current limit and follow the gate.
    #[inline(always)]
    fn finish(&mut self, cmd: Command, now: Instant) -> Command {
        let current = self.estimator.current_at(now);
        self.finish_with(cmd, now, current)
    }

    /// [`finish`](Self::finish) with the estimated current at `now` known.
    #[inline(always)]
    fn finish_with(&mut self, cmd: Command, now: Instant, current_now: Amps) -> Command {
        if cmd.gate != self.gate {
            if let Some(fault) = self.follow_gate(cmd.gate, now, current_now) {
                return fault;
            }
        }
        if !self.gate.is_on() {
            return cmd;
        }
        if current_now >= self.limits.current_limit && now.has_reached(self.blank_end) {
            return self.limit_current(now);
        }
        Command { gate: Gate::On, wake: earliest(now, cmd.wake, self.limit_at) }
    }

    /// The gate switches to `gate` at `now`: tell the estimator, check the
    /// cycle it completes, and at a turn-on set the blanking and predict
    /// when the current will reach the limit (the deadline then stands for
    /// the whole on-time; the check at every call covers a slope that grew
    /// since). A turn-on at or above the limit gets no blanking: the limit
    /// ends it at once (the hold-off).
    #[inline(always)]
    fn follow_gate(&mut self, gate: Gate, now: Instant, current_now: Amps) -> Option<Command> {
        self.gate = gate;
        if let Some(done) = self.estimator.on_gate(gate, now) {
            if let Some(fault) = self.end_of_cycle(&done, now) {
                return Some(fault);
            }
        }
        if gate.is_on() {
            let limit = self.limits.current_limit;
            let blanking = if current_now >= limit { 0 } else { self.blanking };
            self.blank_end = now.after(blanking);
            self.limit_at =
                self.estimator.ticks_to_reach(limit).map(|t| now.after(t.max(blanking)));
        }
        None
    }

    /// The limit ended this on-time.
    #[inline(always)]
    fn limit_current(&mut self, now: Instant) -> Command {
        self.limited_this_cycle = true;
        self.force_off(now);
        // The law sees its own turn-off; ask it what comes next.
        let next = self.inner.on_timer(now);
        Command { gate: Gate::Off, wake: next.wake }
    }

    /// Short-circuit and sensor checks on a completed cycle.
    #[inline(always)]
    fn end_of_cycle(&mut self, done: &CycleCurrents, now: Instant) -> Option<Command> {
        // A short: limited cycles while the output sits below half the
        // present reference. (Charging the output capacitor at the limit
        // during soft-start keeps up with the ramp, so it does not count.)
        let collapsed = self.last_out < self.inner.reference_code() / 2;
        let short = self.limited_this_cycle && collapsed;
        self.limited_streak = if short { self.limited_streak.saturating_add(1) } else { 0 };
        self.limited_this_cycle = false;
        if self.limited_streak >= self.limits.short_cycles {
            return Some(self.trip(FaultKind::ShortCircuit, now));
        }
        let implied = duty_input_at_least(done, self.vin, self.limits.stuck_implied);
        let stuck = self.last_out <= self.limits.stuck_low && implied;
        self.stuck_streak = if stuck { self.stuck_streak.saturating_add(1) } else { 0 };
        if self.stuck_streak >= self.limits.stuck_cycles {
            return Some(self.trip(FaultKind::SensorStuck, now));
        }
        None
    }

    /// Fast path, for firmware whose law runs on comparator edges: an output
    /// reading taken for protection only (over-voltage, rails, soft-start
    /// origin). Returns a command only when it acted (the gate must go off);
    /// otherwise the law's last command and deadline stand.
    #[inline]
    pub fn on_output_reading(&mut self, code: u16, now: Instant) -> Option<Command> {
        if !self.is_switching() {
            self.note_reading(code);
            return None;
        }
        self.check_output(code, now)
    }

    /// Fast path: an input reading (scanned with the output); the current
    /// estimator's on-slope follows it. Input limits stay on the slow path.
    #[inline]
    pub fn on_input_reading(&mut self, code: u16, now: Instant) {
        self.vin = code;
        self.in_sum = self.in_sum.wrapping_add(u32::from(code));
        self.in_count = self.in_count.wrapping_add(1);
        self.estimator.on_input_code(code, now);
    }

    /// Slow path: the input readings' average since the last call, or
    /// `None` without fast-path input readings.
    pub fn take_input_average(&mut self) -> Option<u16> {
        let avg =
            (self.in_count > 0).then(|| (self.in_sum / u32::from(self.in_count.max(1))) as u16);
        self.in_sum = 0;
        self.in_count = 0;
        avg
    }

    /// Slow path, at a steady rate (1–20 kHz): input checks, soft-start
    /// ramp, hiccup timing, and the estimator's voltages. `vin` is the
    /// input channel's code.
    pub fn housekeeping(
        &mut self,
        vin: u16,
        vin_adc: &AdcChannel,
        vout_adc: &AdcChannel,
        now: Instant,
    ) {
        self.vin = vin;
        if vin >= self.limits.in_rail && self.state != State::Fault {
            self.trip(FaultKind::SensorRange, now);
            return;
        }
        if self.is_switching() || self.state == State::Restart {
            if vin < self.limits.uvlo_off {
                self.trip(FaultKind::InputUndervoltage, now);
            } else if vin > self.limits.vin_max {
                self.trip(FaultKind::InputOvervoltage, now);
            }
        }
        // Set here rather than per reading: the fast path stays lighter.
        self.has_reading |= self.out_count != 0;
        if !self.has_reading {
            // Nothing to start from (nor to set the estimator's slopes
            // with) before the first output reading.
            return;
        }
        let elapsed = now.ticks_since(self.since);
        match self.state {
            State::Off if vin >= self.limits.uvlo_on && vin <= self.limits.vin_resume => {
                self.begin_soft_start(now)
            }
            State::Restart if elapsed >= self.limits.hiccup => self.begin_soft_start(now),
            State::SoftStart => self.ramp(elapsed),
            _ => {}
        }
        let out = self.take_output_average();
        self.out_average = out;
        self.estimator.set_voltage_codes(vin, vin_adc, out, vout_adc);
    }

    fn begin_soft_start(&mut self, now: Instant) {
        self.estimator.restart_at(now);
        self.enter(State::SoftStart);
        self.since = now;
        self.ramp_from = self.last_out.min(self.target);
        self.inner.set_reference(self.ramp_from);
    }

    fn ramp(&mut self, elapsed: u32) {
        if elapsed >= self.limits.soft_start {
            self.inner.set_reference(self.target);
            self.enter(State::Regulating);
            self.retries = 0;
            return;
        }
        let span = u64::from(self.target - self.ramp_from);
        let step = span * u64::from(elapsed) / u64::from(self.limits.soft_start.max(1));
        self.inner.set_reference(self.ramp_from + step as u16);
    }
}

impl<L: Law + Regulate> Law for Supervisor<L> {
    #[inline]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        if !self.is_switching() {
            self.note_reading(code);
            self.force_off(now);
            return Command::hold(Gate::Off);
        }
        if let Some(stop) = self.check_output(code, now) {
            return stop;
        }
        let cmd = self.inner.on_sample(code, now);
        // The reading closed the estimator's segment at `now`: its stored
        // current is the current now.
        self.finish_with(cmd, now, self.estimator.current())
    }

    #[inline]
    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        if !self.is_switching() {
            self.force_off(now);
            return Command::hold(Gate::Off);
        }
        let cmd = self.inner.on_edge(level, now);
        self.finish(cmd, now)
    }

    #[inline]
    fn on_timer(&mut self, now: Instant) -> Command {
        if !self.is_switching() {
            self.force_off(now);
            return Command::hold(Gate::Off);
        }
        let cmd = self.inner.on_timer(now);
        self.finish(cmd, now)
    }

    /// The wrapped stage's.
    fn min_on_ticks(&self) -> u32 {
        self.blanking
    }
}
