//! The CPU the firmware runs on: what each interrupt handler costs on a
//! named core, and how handlers share the core.
//!
//! **Cost.** A handler's instruction count comes from the target proof
//! (`tests/target/run.sh` counts every handler of the crate's stack on
//! each core under QEMU and writes `tests/target/counts.csv`; CI fails when
//! the committed table is stale). It becomes cycles as
//! `instructions · CPI + entry and exit`, with the factors of the named
//! core ([`Core`]; [`super::cores`] says where they come from).
//!
//! **Sharing.** The handlers that act on the gate (the compare, the
//! comparator, the conversion, in that priority) do not preempt each other:
//! one waits until the one before has finished, and its outputs (the gate
//! pin, the compare it arms) take effect when it ends; the timer a handler
//! reads after its pin write reads that end (`stack::Handlers` times a
//! turn-on there, so a pulse keeps its length). A second event of
//! the same source while its handler still waits is merged with it, as an
//! interrupt controller's single pending bit does: the handler runs once,
//! with the newest data, and the merge is counted (an overrun). The
//! housekeeping tick has the lowest priority and is preempted by all of
//! them: it ends its cost plus their time after it began. Its own pin
//! writes (a stop, a start on the comparator's level) act when it begins,
//! as a firmware makes them first, in a critical section. A tick that
//! comes while the previous one has not ended is merged the same way.

pub use super::cores::Core;
use super::scenario::{HystereticInput, LawParams, Scenario};
use serde::Serialize;
use std::collections::BTreeMap;
use std::sync::OnceLock;

/// A handler the firmware has.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Handler {
    /// ADC conversion complete.
    Conversion,
    /// Comparator edge.
    Comparator,
    /// One-shot compare.
    Compare,
    /// Housekeeping tick.
    Housekeeping,
}

impl Handler {
    /// Every handler.
    pub const ALL: [Handler; 4] =
        [Handler::Conversion, Handler::Comparator, Handler::Compare, Handler::Housekeeping];

    /// The name used in reports and JSON.
    pub const fn name(self) -> &'static str {
        match self {
            Self::Conversion => "conversion",
            Self::Comparator => "comparator",
            Self::Compare => "compare",
            Self::Housekeeping => "housekeeping",
        }
    }

    const fn index(self) -> usize {
        match self {
            Self::Conversion => 0,
            Self::Comparator => 1,
            Self::Compare => 2,
            Self::Housekeeping => 3,
        }
    }
}

/// The committed table of instruction counts per core and operation
/// (`core,op,n` lines; `#` starts a comment).
pub const COUNTS_CSV: &str = include_str!("../../tests/target/counts.csv");

/// Instruction count of `op` on `column` (`m0`, `m4`, `rv32`) in a counts
/// table, if listed.
pub fn count(table: &str, column: &str, op: &str) -> Option<u32> {
    rows(table).find_map(|(c, o, n)| (c == column && o == op).then_some(n))
}

/// The `(column, op, n)` rows of a counts table.
fn rows(table: &str) -> impl Iterator<Item = (&str, &str, u32)> {
    table.lines().filter(|l| !l.starts_with('#')).filter_map(|line| {
        let mut f = line.split(',').map(str::trim);
        match (f.next(), f.next(), f.next()) {
            (Some(c), Some(o), Some(n)) => Some((c, o, n.parse().ok()?)),
            _ => None,
        }
    })
}

/// [`count`] in the committed table ([`COUNTS_CSV`]), read once per
/// process: a run looks up four counts, and reading the table's text each
/// time cost more than a short run's handlers.
pub fn committed_count(column: &str, op: &str) -> Option<u32> {
    static TABLE: OnceLock<BTreeMap<(&str, &str), u32>> = OnceLock::new();
    let table = TABLE.get_or_init(|| {
        let mut table = BTreeMap::new();
        for (c, o, n) in rows(COUNTS_CSV) {
            // The first row of a pair counts, as in `count`.
            table.entry((c, o)).or_insert(n);
        }
        table
    });
    table.get(&(column, op)).copied()
}

/// The crate's stack a scenario builds, as the counts table names it.
pub fn stack_kind(sc: &Scenario) -> &'static str {
    match sc.control.law {
        LawParams::Hysteretic { input: HystereticInput::Sampled, .. } => "hyst",
        LawParams::OnTime { input: HystereticInput::Sampled, .. } => "cot",
        LawParams::Hysteretic { .. } => "edge",
        LawParams::OnTime { .. } => "cotedge",
        LawParams::AnalogRetrofit { .. } => "retrofit",
    }
}

/// The counts-table operation of a handler of the stack `kind`.
pub fn handler_op(kind: &str, handler: Handler) -> String {
    // The retrofit's readings, compares and housekeeping are the edge
    // stack's; only its comparator handler differs.
    let kind = if kind == "retrofit" && handler != Handler::Comparator { "edge" } else { kind };
    format!("handler_{kind}_{}", handler.name())
}

/// What each handler costs on the scenario's core, and the core's clock.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Costs {
    /// The core.
    pub core: Core,
    /// Its clock, Hz.
    pub cpu_clock_hz: f64,
    /// Cycles of each handler ([`Handler`] order), entry and exit included.
    pub cycles: [f64; 4],
}

impl Costs {
    /// The cost of `handler`, cycles.
    pub fn cycles(&self, handler: Handler) -> f64 {
        self.cycles[handler.index()]
    }

    /// The cost of `handler`, s.
    pub fn seconds(&self, handler: Handler) -> f64 {
        self.cycles(handler) / self.cpu_clock_hz
    }

    /// Costs from instruction counts per handler.
    pub fn from_instructions(
        core: Core,
        cpu_clock_hz: f64,
        cpi: f64,
        overhead_cycles: f64,
        instructions: [u32; 4],
    ) -> Self {
        Self {
            core,
            cpu_clock_hz,
            cycles: instructions.map(|n| f64::from(n) * cpi + overhead_cycles),
        }
    }
}

/// The scenario's costs; `None` when the scenario names no core (handlers
/// take no time). Each handler's count is `own(handler, core)` when that
/// gives one (a firmware's own figure), else the crate's stack's from the
/// committed counts table; a handler neither knows costs its entry and exit
/// only, and is named in the second element.
pub fn scenario_costs(
    sc: &Scenario,
    own: impl Fn(Handler, Core) -> Option<u32>,
) -> Option<(Costs, Vec<String>)> {
    let core = sc.mcu.core?;
    let kind = stack_kind(sc);
    let mut missing = Vec::new();
    let instructions = Handler::ALL.map(|h| {
        let op = handler_op(kind, h);
        own(h, core).or_else(|| committed_count(core.counts_column(), &op)).unwrap_or_else(|| {
            missing.push(op);
            0
        })
    });
    let costs = Costs::from_instructions(
        core,
        sc.mcu.cpu_clock_hz.unwrap_or(f64::from(sc.mcu.clock_hz)),
        sc.mcu.cpi.unwrap_or(core.cycles_per_instruction()),
        sc.mcu.irq_overhead_cycles.unwrap_or(f64::from(core.entry_exit_cycles())),
        instructions,
    );
    Some((costs, missing))
}

/// The CPU's time while a run goes on.
#[derive(Clone, Debug, PartialEq)]
pub struct Cpu {
    costs: Option<Costs>,
    /// Each handler's cost in timer ticks (ceiling).
    ticks: [u64; 4],
    /// The fast handlers' core is busy until this tick.
    busy_until: u64,
    /// The housekeeping tick in progress ends at this tick.
    housekeeping_until: Option<u64>,
    /// Calls, and merged (overrun) events, per handler.
    calls: [u64; 4],
    merged: [u64; 4],
}

impl Cpu {
    /// For `costs` (none: every handler takes no time) on a timer of
    /// `timer_hz`.
    pub fn new(costs: Option<Costs>, timer_hz: f64) -> Self {
        let ticks = costs.map_or([0; 4], |c| {
            Handler::ALL.map(|h| (c.seconds(h) * timer_hz).ceil().max(0.0) as u64)
        });
        Self {
            costs,
            ticks,
            busy_until: 0,
            housekeeping_until: None,
            calls: [0; 4],
            merged: [0; 4],
        }
    }

    /// Whether a fast handler could start at `tick`.
    pub fn free_at(&self, tick: u64) -> bool {
        tick >= self.busy_until
    }

    /// When the fast handlers' core frees up (to wake the event loop).
    pub fn busy_until(&self) -> u64 {
        self.busy_until
    }

    /// Whether a housekeeping tick is still running at `tick`.
    pub fn housekeeping_running(&self, tick: u64) -> bool {
        self.housekeeping_until.is_some_and(|t| t > tick)
    }

    /// A fast handler starts at `tick`; returns the tick it ends.
    pub fn run_fast(&mut self, handler: Handler, tick: u64) -> u64 {
        let t = self.ticks[handler.index()];
        self.account(handler);
        self.busy_until = tick + t;
        // The housekeeping tick in progress is preempted for that long.
        if let Some(until) = self.housekeeping_until.as_mut() {
            if *until > tick {
                *until += t;
            }
        }
        tick + t
    }

    /// A housekeeping tick starts at `tick` (after any fast handler then
    /// running); returns the tick it ends.
    pub fn run_housekeeping(&mut self, tick: u64) -> u64 {
        let t = self.ticks[Handler::Housekeeping.index()];
        self.account(Handler::Housekeeping);
        let end = tick.max(self.busy_until) + t;
        self.housekeeping_until = Some(end);
        end
    }

    /// The housekeeping tick in progress ends at this tick, if any.
    pub fn housekeeping_until(&self) -> Option<u64> {
        self.housekeeping_until
    }

    /// An event of `handler` merged with one still waiting.
    pub fn merge(&mut self, handler: Handler) {
        self.merged[handler.index()] += 1;
    }

    fn account(&mut self, handler: Handler) {
        self.calls[handler.index()] += 1;
    }

    /// What the run cost the CPU over `simulated_s`.
    pub fn usage(&self, simulated_s: f64) -> Option<CpuUsage> {
        let c = self.costs?;
        let available = c.cpu_clock_hz * simulated_s;
        // Demanded, not served: merged events count too, so a core too slow
        // for its handlers shows above 100 %. Each run of a handler costs
        // the same cycles.
        let demanded = |i: usize| (self.calls[i] + self.merged[i]) as f64 * c.cycles[i];
        let share = |i: usize| if available > 0.0 { demanded(i) / available } else { f64::NAN };
        let handlers = Handler::ALL
            .iter()
            .map(|&h| {
                let i = h.index();
                HandlerUsage {
                    handler: h.name().to_string(),
                    calls: self.calls[i],
                    merged: self.merged[i],
                    seconds_per_call: c.seconds(h),
                    load: share(i),
                }
            })
            .collect::<Vec<_>>();
        let load = handlers.iter().map(|h| h.load).sum();
        let (worst, worst_s) = Handler::ALL
            .iter()
            .filter(|&&h| self.calls[h.index()] > 0)
            .map(|&h| (h.name().to_string(), c.seconds(h)))
            .fold((String::new(), 0.0), |a, b| if b.1 > a.1 { b } else { a });
        Some(CpuUsage {
            core: c.core.name().to_string(),
            cpu_clock_hz: c.cpu_clock_hz,
            load,
            worst_handler: worst,
            worst_handler_s: worst_s,
            handlers,
        })
    }
}

/// One handler's share of the CPU over a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct HandlerUsage {
    /// `conversion`, `comparator`, `compare` or `housekeeping`.
    pub handler: String,
    /// Calls made.
    pub calls: u64,
    /// Events merged with one still waiting (overruns).
    pub merged: u64,
    /// Time per call, entry and exit included, s.
    pub seconds_per_call: f64,
    /// Share of the CPU's time the handler's events ask for, merged ones
    /// included (above 1 when the core cannot keep up).
    pub load: f64,
}

/// What a run cost the CPU.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CpuUsage {
    /// The core.
    pub core: String,
    /// Its clock, Hz.
    pub cpu_clock_hz: f64,
    /// Share of the CPU's time all handlers ask for, 0–1 (the rest is free
    /// for the board's other work; above 1, events were merged because the
    /// core could not keep up).
    pub load: f64,
    /// The longest handler that ran.
    pub worst_handler: String,
    /// Its time per call, s.
    pub worst_handler_s: f64,
    /// Each handler's share.
    pub handlers: Vec<HandlerUsage>,
}

/// Load above which a run warns.
pub const WARN_LOAD: f64 = 0.70;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_table_lookup() {
        let table = "# core,op,n\nm0,handler_hyst_conversion,230\nm4,handler_hyst_conversion,150\n";
        assert_eq!(count(table, "m4", "handler_hyst_conversion"), Some(150));
        assert_eq!(count(table, "rv32", "handler_hyst_conversion"), None);
        assert_eq!(handler_op("retrofit", Handler::Compare), "handler_edge_compare");
        assert_eq!(handler_op("retrofit", Handler::Comparator), "handler_retrofit_comparator");
        assert_eq!(handler_op("cotedge", Handler::Comparator), "handler_cotedge_comparator");
    }

    #[test]
    fn a_known_handler_at_a_known_rate() {
        // 100 instructions at CPI 1 plus 20 cycles of entry and exit, at
        // 100 kHz on a 60 MHz core: 120 cycles · 100 000 / s = 20 % of
        // 60 M cycles/s.
        let costs = Costs::from_instructions(Core::CortexM4, 60e6, 1.0, 20.0, [100, 0, 0, 0]);
        let mut cpu = Cpu::new(Some(costs), 60e6);
        for k in 0..100_000u64 {
            let end = cpu.run_fast(Handler::Conversion, k * 600);
            assert_eq!(end, k * 600 + 120);
        }
        let u = cpu.usage(1.0).unwrap();
        assert!((u.load - 0.20).abs() < 1e-12, "{}", u.load);
        assert_eq!(u.worst_handler, "conversion");
        assert!((u.worst_handler_s - 2e-6).abs() < 1e-15);
    }

    #[test]
    fn housekeeping_is_preempted() {
        let costs = Costs::from_instructions(Core::CortexM4, 1e6, 1.0, 0.0, [10, 0, 0, 100]);
        let mut cpu = Cpu::new(Some(costs), 1e6);
        assert_eq!(cpu.run_housekeeping(0), 100);
        cpu.run_fast(Handler::Conversion, 50);
        assert_eq!(cpu.housekeeping_until(), Some(110), "ten ticks of preemption");
        assert!(cpu.housekeeping_running(109) && !cpu.housekeeping_running(110));
    }
}
