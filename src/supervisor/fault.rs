//! Fault kinds and the fault log.

use crate::tick::Instant;

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
///
/// A ring of `N` slots, 8 bytes each, and two 16-bit counters (`N` at most
/// 65 535, checked when the log is built).
#[derive(Clone)]
pub struct FaultLog<const N: usize = FAULT_LOG_LEN> {
    // Slots `0..N`; the `len` entries end just before `next`, wrapping.
    records: [Option<FaultRecord>; N],
    // The slot the next entry goes to, always below `N` (0 when `N` is 0).
    next: u16,
    // Entries held, at most `N`.
    len: u16,
}

impl<const N: usize> FaultLog<N> {
    /// An empty log.
    pub const fn new() -> Self {
        const { assert!(N <= u16::MAX as usize, "a fault log holds at most 65 535 entries") };
        Self { records: [None; N], next: 0, len: 0 }
    }

    /// Record `kind` at `at`.
    pub fn push(&mut self, kind: FaultKind, at: Instant) {
        let next = usize::from(self.next);
        if let Some(slot) = self.records.get_mut(next) {
            *slot = Some(FaultRecord { kind, at });
            // Both below `N` ≤ 65 535: the casts keep every value.
            self.next = if next + 1 < N { (next + 1) as u16 } else { 0 };
            if usize::from(self.len) < N {
                self.len += 1;
            }
        }
    }

    /// The entries, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = &FaultRecord> {
        // Past `next`: the older entries (slots never written hold `None`).
        let (newer, older) = self.records.split_at(usize::from(self.next).min(N));
        older.iter().chain(newer).flatten()
    }

    /// Entries held.
    pub fn len(&self) -> usize {
        usize::from(self.len)
    }

    /// Whether the log is empty.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Forget every entry.
    pub fn clear(&mut self) {
        *self = Self::new();
    }
}

impl<const N: usize> core::fmt::Debug for FaultLog<N> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.debug_list().entries(self.iter()).finish()
    }
}

impl<const N: usize> Default for FaultLog<N> {
    fn default() -> Self {
        Self::new()
    }
}
