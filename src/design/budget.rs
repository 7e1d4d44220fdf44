//! What the firmware's handlers cost on the named core: each handler's
//! cycles from the committed counts ([`crate::sim::cpu`]: instructions
//! counted under QEMU, times the core's cycles per instruction, plus entry
//! and exit, [`crate::sim::cores`]), and the share of the core a scheme takes at given rates.

use super::facts::{refuse, DesignError, Mcu};
use crate::sim::cores::Core;
use crate::sim::cpu::{count, handler_op, Costs, Handler, COUNTS_CSV};

/// The loops `design` proposes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scheme {
    /// The hysteretic law on an analog comparator whose DAC threshold the
    /// law moves; the ADC's readings serve the protections.
    HystereticEdge,
    /// The on-time law on a comparator at the reference; a timer compare
    /// ends each pulse.
    OnTimeEdge,
    /// The on-time law on ADC samples (with emulated ripple when the output
    /// needs it); a timer compare ends each pulse and starts the predicted
    /// next one.
    OnTimeSampled,
}

impl Scheme {
    /// The stack the counts table names.
    pub const fn stack_kind(self) -> &'static str {
        match self {
            Self::HystereticEdge => "edge",
            Self::OnTimeEdge => "cotedge",
            Self::OnTimeSampled => "cot",
        }
    }

    /// Handler calls per switching cycle ([`Handler`] order: conversion,
    /// comparator, compare, housekeeping), as the stack makes them: an edge
    /// at each threshold crossing; on the hysteretic loop a compare per
    /// pulse (the guard's timing); on the on-time loop on edges the pulse's
    /// end and the guard's minimum off-time; on samples the pulse's end and
    /// the predicted next turn-on. Calls per cycle counted in simulator runs
    /// of the demo board (at most these: on-time on edges 1.8 edges and
    /// 1.95 compares a cycle at 60 and 65 kHz).
    pub const fn calls_per_cycle(self) -> [f64; 4] {
        match self {
            Self::HystereticEdge => [0.0, 2.0, 1.0, 0.0],
            Self::OnTimeEdge => [0.0, 2.0, 2.0, 0.0],
            Self::OnTimeSampled => [0.0, 0.0, 2.0, 0.0],
        }
    }

    /// A name for the printed proposal.
    pub const fn name(self) -> &'static str {
        match self {
            Self::HystereticEdge => "hysteretic on comparator edges",
            Self::OnTimeEdge => "on-time on comparator edges",
            Self::OnTimeSampled => "on-time on ADC samples",
        }
    }
}

/// The rates a configuration runs its handlers at.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rates {
    /// Switching frequency, Hz.
    pub switching_hz: f64,
    /// ADC readings of output and input, Hz.
    pub sample_hz: f64,
    /// Housekeeping, Hz.
    pub housekeeping_hz: f64,
}

/// A scheme's handlers on a core.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Budget {
    /// Each handler's cost.
    pub costs: Costs,
    scheme: Scheme,
}

impl Budget {
    /// The handlers of `scheme` on `mcu`'s core and clock; refused (on
    /// `--core`) when the counts table has no counts for the core.
    pub fn new(scheme: Scheme, mcu: &Mcu) -> Result<Self, DesignError> {
        let core = mcu.core;
        let column = core.counts_column();
        // A handler the stack never has (the sampled stack's comparator)
        // has no count and costs nothing.
        let used = |h: Handler| !(h == Handler::Comparator && scheme.calls_per_cycle()[1] == 0.0);
        let instructions = Handler::ALL
            .map(|h| (used(h), count(COUNTS_CSV, column, &handler_op(scheme.stack_kind(), h))));
        if instructions.iter().any(|&(used, n)| used && n.is_none()) {
            return Err(refuse(
                "--core",
                format!("{}: tests/target/counts.csv holds no counts for it yet", core.name()),
            ));
        }
        let costs = Costs::from_instructions(
            core,
            f64::from(mcu.clock_hz),
            core.cycles_per_instruction(),
            f64::from(core.entry_exit_cycles()),
            instructions.map(|(_, n)| n.unwrap_or(0)),
        );
        Ok(Self { costs, scheme })
    }

    /// The time one call of `handler` takes, s.
    pub fn seconds(&self, handler: Handler) -> f64 {
        self.costs.seconds(handler)
    }

    /// The share of the core the handlers take at `rates`.
    pub fn load(&self, rates: &Rates) -> f64 {
        let per_cycle = self.scheme.calls_per_cycle();
        let calls = |h: Handler| match h {
            Handler::Conversion => rates.sample_hz,
            Handler::Housekeeping => rates.housekeeping_hz,
            Handler::Comparator => per_cycle[1] * rates.switching_hz,
            Handler::Compare => per_cycle[2] * rates.switching_hz,
        };
        let cycles: f64 = Handler::ALL.iter().map(|&h| calls(h) * self.costs.cycles(h)).sum();
        cycles / self.costs.cpu_clock_hz
    }

    /// The share the housekeeping alone takes at `hz`.
    pub fn housekeeping_share(&self, hz: f64) -> f64 {
        hz * self.seconds(Handler::Housekeeping)
    }

    /// The core's name.
    pub fn core(&self) -> Core {
        self.costs.core
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_known_load() {
        // The edge stack's comparator handler on the demo MCU: its count
        // times 1.25 cycles per instruction plus 22 cycles of entry and
        // exit, over 170 MHz.
        let b = Budget::new(Scheme::HystereticEdge, &Mcu::demo()).unwrap();
        let n = count(COUNTS_CSV, "m4", "handler_edge_comparator").unwrap();
        let expected = (f64::from(n) * 1.25 + 22.0) / 170e6;
        assert!((b.seconds(Handler::Comparator) - expected).abs() < 1e-15);
        // Only switching: two edges and a compare per cycle.
        let rates = Rates { switching_hz: 10e3, sample_hz: 0.0, housekeeping_hz: 0.0 };
        let per_cycle =
            2.0 * b.costs.cycles(Handler::Comparator) + b.costs.cycles(Handler::Compare);
        assert!((b.load(&rates) - 10e3 * per_cycle / 170e6).abs() < 1e-12);
    }
}
