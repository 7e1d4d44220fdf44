//! The cores the simulator knows, and what turns a handler's instruction
//! count into cycles on each: cycles per instruction (CPI) and the
//! interrupt's entry and exit.
//!
//! | core | CPI | entry + exit, cycles | where the factors come from |
//! |---|---|---|---|
//! | Cortex-M0 | 1.5 | 16 + 16 | from memory of the Cortex-M0 technical reference manual: 1-cycle ALU, 2-cycle loads and stores, 3-cycle taken branches; 16-cycle interrupt latency, a comparable return |
//! | Cortex-M0+ | 1.4 | 15 + 15 | from memory: the two-stage pipeline's 2-cycle taken branches; 15-cycle latency |
//! | Cortex-M4 | 1.25 | 12 + 10 | from memory: 12-cycle latency, 10-cycle return; loads pipelined, branches 1–3 cycles |
//! | RV32 (IMC) | 1.3 | 40 | from memory: a small in-order core; no hardware stacking, so entry and exit are the trap handler's register saves and restores |
//!
//! The factors assume code fetched at zero wait states (from RAM, or
//! through a flash accelerator); a scenario may override both factors
//! (`mcu.cpi`, `mcu.irq_overhead_cycles`) with its part's own.

use serde::{Deserialize, Serialize};

/// The cores the simulator knows.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Core {
    /// Arm Cortex-M0 (ARMv6-M).
    #[serde(rename = "cortex-m0")]
    CortexM0,
    /// Arm Cortex-M0+ (ARMv6-M: the M0's instruction counts).
    #[serde(rename = "cortex-m0+")]
    CortexM0Plus,
    /// Arm Cortex-M4 (ARMv7E-M).
    #[serde(rename = "cortex-m4")]
    CortexM4,
    /// A 32-bit RISC-V core (RV32IMC).
    #[serde(rename = "rv32")]
    Rv32,
}

impl Core {
    /// The column of the counts table this core's instruction counts come
    /// from.
    pub const fn counts_column(self) -> &'static str {
        match self {
            Self::CortexM0 | Self::CortexM0Plus => "m0",
            Self::CortexM4 => "m4",
            Self::Rv32 => "rv32",
        }
    }

    /// Cycles per instruction (see the [module's table](self)).
    pub const fn cycles_per_instruction(self) -> f64 {
        match self {
            Self::CortexM0 => 1.5,
            Self::CortexM0Plus => 1.4,
            Self::CortexM4 => 1.25,
            Self::Rv32 => 1.3,
        }
    }

    /// Interrupt entry and exit, cycles (see the [module's table](self)).
    pub const fn entry_exit_cycles(self) -> u32 {
        match self {
            Self::CortexM0 => 32,
            Self::CortexM0Plus => 30,
            Self::CortexM4 => 22,
            Self::Rv32 => 40,
        }
    }

    /// A name for reports.
    pub const fn name(self) -> &'static str {
        match self {
            Self::CortexM0 => "Cortex-M0",
            Self::CortexM0Plus => "Cortex-M0+",
            Self::CortexM4 => "Cortex-M4",
            Self::Rv32 => "RV32",
        }
    }
}
