//! What a loop's plan holds ([`super::hysteretic_plan`],
//! [`super::on_time_plan`]), and the helpers both plans use: the operating
//! point, the output filter, the edge delay, the CPU share, a rejection.

use super::budget::{Budget, Scheme};
use super::closed_form::{OperatingPoint, OutputFilter};
use super::context::Context;
use super::facts::{DesignError, Facts};
use super::values::Choice;
use crate::sim::cpu::Handler;

/// Share of the core a proposal may plan for: 10 points below the
/// simulator's 70 % warning, for the bursts an average hides (rule of this
/// tool).
pub const PLANNED_SHARE: f64 = 0.60;

/// Light load holds the frequency between 1.25 and 2.5 times the window's
/// floor ([`crate::stack::light_load`]); the budget counts the upper end.
pub const LIGHT_LOAD_CEILING: f64 = 2.5;

/// The law and its parameters.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LawChoice {
    /// Hysteretic law.
    Hysteretic {
        /// Band at the output, V.
        band_v: f64,
    },
    /// On-time law with feed-forward and trim to a target frequency.
    OnTime {
        /// Target frequency, Hz.
        frequency_hz: f64,
        /// On-time at the nominal input, s.
        on_time_s: f64,
        /// Emulated ripple at the output, V (sampled input only).
        emulated_ripple_v: Option<f64>,
    },
}

/// A loop that fits.
#[derive(Clone, Debug, PartialEq)]
pub struct LawPlan {
    /// How the law senses the output.
    pub scheme: Scheme,
    /// The law.
    pub law: LawChoice,
    /// ADC readings, Hz.
    pub sample_hz: f64,
    /// From the output's crossing (or sample) to the gate's move, s.
    pub delay_s: f64,
    /// Handler costs on the core.
    pub budget: Budget,
    /// The share of the core planned at the highest switching rate.
    pub load: f64,
    /// The choices and their reasons.
    pub choices: Vec<Choice>,
}

/// A loop passed over, or a refusal of the facts themselves.
pub enum Unfit {
    /// The loop does not fit; why.
    Rejected(String),
    /// The facts cannot be designed for at all.
    Refused(DesignError),
}

impl From<DesignError> for Unfit {
    fn from(e: DesignError) -> Self {
        Self::Refused(e)
    }
}

/// A loop passed over for `why`.
pub fn reject<T>(why: String) -> Result<T, Unfit> {
    Err(Unfit::Rejected(why))
}

/// The operating point at `vin_v` and `iout_a`.
pub fn point(facts: &Facts, vf_v: f64, vin_v: f64, iout_a: f64) -> OperatingPoint {
    OperatingPoint { vin_v, vout_v: facts.board.vout_v, iout_a, vf_v }
}

/// The output filter.
pub fn filter(facts: &Facts) -> OutputFilter {
    let b = &facts.board;
    OutputFilter { l_h: b.l_h, c_f: b.c_f, esr_ohm: b.esr_ohm }
}

/// The edge input's delay: comparator, interrupt entry, the handler until
/// its pin write (at its end).
pub fn edge_delay(ctx: &Context, budget: &Budget) -> f64 {
    let m = &ctx.facts.mcu;
    m.comparator_delay_s + m.isr_latency_s + budget.seconds(Handler::Comparator)
}
