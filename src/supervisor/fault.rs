//! Fault kinds and the fault log.

use crate::tick::Instant;
use heapless::Deque;

/// Capacity of the fault log unless a firmware chooses another (the
/// `LOG` parameter of [`FaultLog`], [`Supervisor`](super::Supervisor),
/// [`Stack`](crate::stack::Stack) and [`Handlers`](crate::stack::Handlers)):
/// 8 bytes of RAM an entry.
pub const FAULT_LOG_LEN: usize = 16;

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

    /// Latched faults need
    /// [`Supervisor::clear_faults`](super::Supervisor::clear_faults); the
    /// others restart by themselves.
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

/// The last `N` faults (at least one; [`FAULT_LOG_LEN`] unless chosen),
/// oldest first; a full log drops its oldest entry. Only telemetry reads
/// it: the supervisor's sequencing never depends on its length.
#[derive(Clone, Debug)]
pub struct FaultLog<const N: usize = FAULT_LOG_LEN> {
    entries: Deque<FaultRecord, N>,
}

impl<const N: usize> FaultLog<N> {
    /// An empty log.
    pub const fn new() -> Self {
        Self { entries: Deque::new() }
    }

    /// Record `kind` at `at`.
    pub fn push(&mut self, kind: FaultKind, at: Instant) {
        if self.entries.is_full() {
            self.entries.pop_front();
        }
        let _ = self.entries.push_back(FaultRecord { kind, at });
    }

    /// The entries, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = &FaultRecord> {
        self.entries.iter()
    }

    /// Entries held.
    pub fn len(&self) -> usize {
        self.entries.len()
    }

    /// Whether the log is empty.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }

    /// Forget every entry.
    pub fn clear(&mut self) {
        self.entries.clear();
    }
}

impl<const N: usize> Default for FaultLog<N> {
    fn default() -> Self {
        Self::new()
    }
}
