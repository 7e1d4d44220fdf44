//! What the C side reads back: the supervisor's state, a telemetry
//! snapshot and the fault log, in fixed-width integers.

use crate::law::AnyLaw;
use ripplectl::law::Regulate;
use ripplectl::stack::Stack;
use ripplectl::supervisor::{FaultKind as CrateFaultKind, FaultRecord, State as CrateState};

/// The supervisor's state (one byte).
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum State {
    /// Not switching: waiting for the input (also: not initialised).
    Off = 0,
    /// Ramping the reference up.
    SoftStart = 1,
    /// Normal operation.
    Regulating = 2,
    /// Waiting out the hiccup time before a soft-start.
    Restart = 3,
    /// Latched off until `ripplectl_clear_faults`.
    Fault = 4,
}

impl From<CrateState> for State {
    fn from(s: CrateState) -> Self {
        match s {
            CrateState::Off => State::Off,
            CrateState::SoftStart => State::SoftStart,
            CrateState::Regulating => State::Regulating,
            CrateState::Restart => State::Restart,
            CrateState::Fault => State::Fault,
        }
    }
}

/// Kinds of fault (one byte).
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FaultKind {
    /// Input below the UVLO threshold (restarts by itself).
    InputUndervoltage = 0,
    /// Input above its maximum (restarts by itself).
    InputOvervoltage = 1,
    /// Output at or above the over-voltage threshold (hiccup).
    OutputOvervoltage = 2,
    /// Consecutive cycles ended by the current limit (hiccup).
    ShortCircuit = 3,
    /// Output reading stuck near zero while the switch node says otherwise
    /// (latched).
    SensorStuck = 4,
    /// A reading at the ADC's rails (latched).
    SensorRange = 5,
    /// Hiccup restarts exhausted without reaching regulation (latched).
    RetriesExhausted = 6,
}

impl From<CrateFaultKind> for FaultKind {
    fn from(k: CrateFaultKind) -> Self {
        match k {
            CrateFaultKind::InputUndervoltage => Self::InputUndervoltage,
            CrateFaultKind::InputOvervoltage => Self::InputOvervoltage,
            CrateFaultKind::OutputOvervoltage => Self::OutputOvervoltage,
            CrateFaultKind::ShortCircuit => Self::ShortCircuit,
            CrateFaultKind::SensorStuck => Self::SensorStuck,
            CrateFaultKind::SensorRange => Self::SensorRange,
            CrateFaultKind::RetriesExhausted => Self::RetriesExhausted,
        }
    }
}

/// One logged fault.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Fault {
    /// What happened.
    pub kind: FaultKind,
    /// Timer reading when it was detected, ticks.
    pub at: u32,
}

impl From<&FaultRecord> for Fault {
    fn from(r: &FaultRecord) -> Self {
        Self { kind: r.kind.into(), at: r.at.0 }
    }
}

/// The loss model's breakdown over the last housekeeping window, watts as
/// `I16F16` (`int32_t`, value = bits / 65536, range ±32768 W).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Losses {
    /// Output power.
    pub output: i32,
    /// High-side conduction.
    pub high_side: i32,
    /// Diode (or low-side) conduction.
    pub diode: i32,
    /// Inductor DCR.
    pub dcr: i32,
    /// Capacitor ESR.
    pub esr: i32,
    /// Switching transitions.
    pub switching: i32,
    /// Gate drive.
    pub gate: i32,
    /// Core.
    pub core: i32,
    /// All the losses above summed (saturating).
    pub total: i32,
}

/// How often each limit of the frequency window acted since start
/// (wrapping counts).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Clamps {
    /// Turn-offs held to the minimum on-time.
    pub min_on: u32,
    /// Turn-ons held to the minimum off-time.
    pub min_off: u32,
    /// Pulses ended at the maximum on-time.
    pub max_on: u32,
    /// Turn-ons held to the minimum period (the highest frequency).
    pub min_period: u32,
    /// Periods longer than the maximum (below the lowest frequency).
    pub slow_periods: u32,
    /// Minimum pulses forced at the maximum period.
    pub forced_pulses: u32,
}

/// A snapshot of the stack. Fixed-point formats: currents, voltages and
/// powers are `I16F16` in an `int32_t` (value = bits / 65536; currents
/// within ±2048 A, voltages ±32768 V); `efficiency` is a fraction with
/// 65536 = 1.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Telemetry {
    /// The supervisor's state.
    pub state: State,
    /// Faults in the log (read them with `ripplectl_read_faults`).
    pub faults: u32,
    /// The estimated inductor current at the last event, A (`I16F16`).
    pub current: i32,
    /// Whether `observer_current` holds a value (an observer configured,
    /// regulating, cycles seen).
    pub observer_valid: bool,
    /// The averaged-model observer's inductor current, A (`I16F16`).
    pub observer_current: i32,
    /// Mean input over the last housekeeping window, V (`I16F16`).
    pub vin: i32,
    /// Mean output over the last window, V (`I16F16`).
    pub vout: i32,
    /// Switching frequency over the last window, Hz.
    pub f_sw_hz: u32,
    /// Model-based losses over the last window.
    pub losses: Losses,
    /// Estimated efficiency over the last window (65536 = 1).
    pub efficiency: u32,
    /// The frequency window's clamp counts.
    pub clamps: Clamps,
    /// The law's present reference, output ADC code (the soft-start ramp,
    /// the DC correction move it).
    pub reference_code: u16,
    /// The on-time law's present on-time, timer ticks (feed-forward and
    /// trim applied); 0 for the other laws.
    pub on_time_ticks: u32,
}

impl Telemetry {
    /// The snapshot of `stack`.
    pub fn of(stack: &Stack<AnyLaw>) -> Self {
        let t = stack.telemetry();
        let l = t.losses;
        let c = t.clamps;
        let law = stack.law();
        Self {
            state: t.state.into(),
            faults: t.faults as u32,
            current: t.current.to_bits(),
            observer_valid: t.observer_current.is_some(),
            observer_current: t.observer_current.map_or(0, |i| i.to_bits()),
            vin: t.vin.to_bits(),
            vout: t.vout.to_bits(),
            f_sw_hz: t.f_sw_hz,
            losses: Losses {
                output: l.output.to_bits(),
                high_side: l.switch.to_bits(),
                diode: l.diode.to_bits(),
                dcr: l.dcr.to_bits(),
                esr: l.esr.to_bits(),
                switching: l.switching.to_bits(),
                gate: l.gate.to_bits(),
                core: l.core.to_bits(),
                total: l.losses().to_bits(),
            },
            efficiency: t.efficiency,
            clamps: Clamps {
                min_on: c.min_on,
                min_off: c.min_off,
                max_on: c.max_on,
                min_period: c.min_period,
                slow_periods: c.slow_periods,
                forced_pulses: c.forced_pulses,
            },
            reference_code: law.reference_code(),
            on_time_ticks: law.on_time_ticks(),
        }
    }
}
