//! Whole interrupt handlers: [`Handlers`] (a stack and its gate driver on
//! the RAM-word pin and compare of `board`) counted per call, each call
//! from the state it meets in a closed loop around the [`Buck`].
//!
//! The loop runs 1 µs steps. In each, first a compare whose deadline has
//! passed fires (at its deadline: a pulse it ends, the timer ended in
//! hardware), then the comparator's edge if its output changed, then the
//! conversion (output and input scanned), and every 100 steps (10 kHz) the
//! housekeeping tick. The stack first runs [`WARM_UP`] steps unmeasured
//! (start, the 1 ms soft-start, settling) and must be regulating when the
//! counted steps begin and when they end; or, for [`Phase::Start`], it
//! starts from a cold output and the first [`START_STEPS`] steps are
//! counted, soft-starting throughout (the ramp's share of each handler). Each event of a counted kind is
//! measured with `count_from` on a copy of the state it meets, then
//! performed on the live stack; the mean over all of them is `op`, the
//! most any of them took `op_max`.
//!
//! A law whose regulation never lets a deadline come (the hysteretic law
//! at the demo's operating point turns off and on by its readings, well
//! inside the window) meets no compare in the loop. Its compare count is
//! then taken on each counted step's state as if the compare armed there
//! (the maximum on-time while on, the longest period while off) fired at
//! its deadline.

use super::{Buck, Handler, Meter};
use ripplectl::law::Regulate;
use ripplectl::stack::Handlers;
use ripplectl::supervisor::State;
use ripplectl::{Command, Gate, Instant, Law};
use ripplectl_target::board::{armed_compare, set_counter, Compare, Pin, Registers};
use semihosting::println;

type Firmware<L> = Handlers<L, Pin, Compare>;

/// Steps run before counting: 6 ms.
const WARM_UP: u32 = 6_000;
/// Steps counted: 2 ms.
const STEPS: u32 = 2_048;
/// Steps counted from a cold start: 0.8 ms of the 1 ms soft-start.
const START_STEPS: u32 = 800;

/// Which part of a run is counted.
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Phase {
    /// Regulation, after [`WARM_UP`] steps.
    Regulating,
    /// The soft-start from a cold output, its first [`START_STEPS`] steps.
    Start,
}
/// Housekeeping every this many steps (10 kHz).
const HOUSEKEEPING_STEPS: u32 = 100;
/// Repetitions per event's count (the counter's step over this bounds its
/// error: 4 instructions on the Cortex-M0, 3 on the M4; RV32's counter
/// steps by one instruction).
const REPS: u32 = 16;
/// Repetitions for a candidate for the worst case (error below 1/4).
const REPS_WORST: u32 = 256;
/// 28 V on the demo's input channel: 28·0.0826/(3.3/4096) = 2870.7.
const VIN_28V: u16 = 2871;
/// What the timer reads after a counted handler's pin write: its event's
/// instant plus this many ticks (250 ns at 64 MHz), so each switching
/// edge takes the path a board's does (`Handlers` times the edge there;
/// its cost does not depend on how late). The live calls that close the
/// loop read their own instant: the [`Buck`] switches at the step's
/// start.
const WRITE_LATE: u32 = 16;

/// What drives an edge-driven law.
#[derive(Clone, Copy)]
pub enum Comparator {
    /// None: the law is sampled.
    None,
    /// The output against the threshold the law arms
    /// (`comparator_code`): true when above.
    Armed,
    /// The board's own Schmitt comparator: true (switch on) once the
    /// output is at or below `lower`, false once at or above `upper`.
    Board {
        /// Lower threshold, output code.
        lower: u16,
        /// Upper threshold, output code.
        upper: u16,
    },
}

/// The kinds of event, in [`Tallies`] order.
pub const KINDS: [&str; 4] = ["conversion", "comparator", "compare", "housekeeping"];

/// [`KINDS`]' indices.
const CONVERSION: usize = 0;
const COMPARATOR: usize = 1;
const COMPARE: usize = 2;
const HOUSEKEEPING: usize = 3;

/// Counts of one kind of event.
#[derive(Clone, Copy, Default)]
struct Tally {
    sum_q16: u64,
    calls: u32,
    worst_q16: u64,
}

impl Tally {
    fn mean(&self) -> u32 {
        (self.sum_q16 / u64::from(self.calls.max(1)) + (1 << 15)) as u32 >> 16
    }

    fn worst(&self) -> u32 {
        ((self.worst_q16 + (1 << 15)) >> 16) as u32
    }
}

/// One tally per kind of event, and which kinds are counted.
pub struct Tallies {
    counted: [bool; 4],
    tally: [Tally; 4],
    // Compares as if each step's armed deadline came (see the module).
    armed: Tally,
}

impl Tallies {
    /// Count the kinds named (of [`KINDS`]).
    pub fn of(kinds: &[&str]) -> Self {
        Self {
            counted: KINDS.map(|k| kinds.contains(&k)),
            tally: [Tally::default(); 4],
            armed: Tally::default(),
        }
    }

    /// Print `insns` lines: `<prefix>_<kind>` (mean) and
    /// `<prefix>_<kind>_max` for each counted kind.
    pub fn print(&self, core: &str, prefix: &str) {
        for (k, (kind, counted)) in KINDS.iter().zip(self.counted).enumerate() {
            let Some(&real) = self.tally.get(k) else { continue };
            let t = if k == COMPARE && real.calls == 0 { self.armed } else { real };
            if counted {
                println!("insns core={} op={}_{} n={}", core, prefix, kind, t.mean());
                println!("insns core={} op={}_{}_max n={}", core, prefix, kind, t.worst());
            }
        }
    }
}

/// Count `handler` on a copy of `fw` as event `kind` (an index into
/// [`KINDS`]) when that kind is counted.
fn measure<T: Clone>(
    meter: &Meter,
    tallies: &mut Tallies,
    kind: usize,
    fw: &T,
    event: (u32, Instant),
    handler: Handler<T>,
) {
    let (Some(&true), Some(t)) = (tallies.counted.get(kind), tallies.tally.get_mut(kind)) else {
        return;
    };
    add(meter, t, fw, event, handler);
}

/// Count `handler` on a copy of `fw` into `t`.
fn add<T: Clone>(
    meter: &Meter,
    t: &mut Tally,
    fw: &T,
    (a, now): (u32, Instant),
    handler: Handler<T>,
) {
    set_counter(now.after(WRITE_LATE));
    let q = meter.count_from_q16(REPS, fw, a, now, handler);
    t.sum_q16 += q;
    t.calls += 1;
    // Within the coarse count's error of the worst so far: count it finer.
    if q + (8 << 16) >= t.worst_q16 {
        t.worst_q16 = t.worst_q16.max(meter.count_from_q16(REPS_WORST, fw, a, now, handler));
    }
    set_counter(now);
}

/// Conversion complete: `a` packs the output code (low half) and the input
/// code (high half).
#[inline(never)]
fn conversion<L: Law + Regulate>(fw: &mut Firmware<L>, a: u32, now: Instant) -> Command {
    let Ok(()) = fw.conversion_done(a as u16, (a >> 16) as u16, now);
    Command::hold(Gate::Off)
}

/// The comparator's output changed to `level` (0/1).
#[inline(never)]
fn comparator_edge<L: Law + Regulate>(fw: &mut Firmware<L>, level: u32, now: Instant) -> Command {
    let Ok(()) = fw.comparator_edge(level != 0, now);
    Command::hold(Gate::Off)
}

/// The one-shot compare fired.
#[inline(never)]
fn compare<L: Law + Regulate>(fw: &mut Firmware<L>, _: u32, now: Instant) -> Command {
    let Ok(()) = fw.compare_fired(now);
    Command::hold(Gate::Off)
}

/// The housekeeping tick of a sampled law.
#[inline(never)]
fn housekeeping<L: Law + Regulate>(fw: &mut Firmware<L>, _: u32, now: Instant) -> Command {
    let Ok(()) = fw.housekeeping(now, None);
    Command::hold(Gate::Off)
}

/// The housekeeping tick of an edge-driven law, the comparator's output
/// read as `level` (0/1).
#[inline(never)]
fn housekeeping_edge<L: Law + Regulate>(fw: &mut Firmware<L>, level: u32, now: Instant) -> Command {
    let Ok(()) = fw.housekeeping(now, Some(level != 0));
    Command::hold(Gate::Off)
}

/// The comparator's output for `code`, given its last output.
fn comparator_level<L: Law + Regulate>(
    comparator: Comparator,
    fw: &Firmware<L>,
    code: u16,
    last: bool,
) -> bool {
    match comparator {
        Comparator::None => false,
        Comparator::Armed => code > fw.comparator_code().unwrap_or(u16::MAX),
        Comparator::Board { lower, upper } => (code <= lower) || (last && code < upper),
    }
}

/// Fire every compare due by `now`, each at its deadline (at most a few:
/// a handler may arm one already due).
fn fire_compares<L: Law + Regulate + Clone>(
    meter: &Meter,
    tallies: &mut Tallies,
    fw: &mut Firmware<L>,
    now: Instant,
    counting: bool,
) {
    for _ in 0..4 {
        let Some(at) = armed_compare().filter(|&at| now.has_reached(at)) else { return };
        if counting {
            measure(meter, tallies, COMPARE, fw, (0, at), compare);
        }
        set_counter(at);
        let Ok(()) = fw.compare_fired(at);
    }
}

/// Run `fw` in the closed loop, counting the kinds `tallies` asks for in
/// `phase`. `false` if the stack was not in that phase's state (regulating,
/// soft-starting) when counting began or ended.
pub fn closed_loop<L: Law + Regulate + Clone>(
    meter: &Meter,
    fw: &mut Firmware<L>,
    comparator: Comparator,
    tallies: &mut Tallies,
    phase: Phase,
) -> bool {
    let (mut buck, counted, expected) = match phase {
        Phase::Regulating => (Buck::new(), WARM_UP..WARM_UP + STEPS, State::Regulating),
        Phase::Start => (Buck::cold(), 1..START_STEPS, State::SoftStart),
    };
    let mut level = comparator_level(comparator, fw, buck.output_code(), false);
    let mut in_phase = true;
    for k in 0..counted.end {
        let (now, counting) = (Instant(64 * k), counted.contains(&k));
        if k == counted.start {
            in_phase &= fw.stack().supervisor().state() == expected;
        }
        fire_compares(meter, tallies, fw, now, counting);
        set_counter(now);
        let code = buck.output_code();
        let seen = comparator_level(comparator, fw, code, level);
        if !matches!(comparator, Comparator::None) && seen != level {
            level = seen;
            if counting {
                measure(
                    meter,
                    tallies,
                    COMPARATOR,
                    fw,
                    (u32::from(level), now),
                    comparator_edge::<L>,
                );
            }
            let Ok(()) = fw.comparator_edge(level, now);
        }
        let scan = u32::from(code) | u32::from(VIN_28V) << 16;
        if counting {
            measure(meter, tallies, CONVERSION, fw, (scan, now), conversion::<L>);
        }
        let Ok(()) = fw.conversion_done(code, VIN_28V, now);
        if k % HOUSEKEEPING_STEPS == 0 {
            let edge = !matches!(comparator, Comparator::None);
            let tick: Handler<Firmware<L>> = if edge { housekeeping_edge } else { housekeeping };
            if counting {
                measure(meter, tallies, HOUSEKEEPING, fw, (u32::from(level), now), tick);
            }
            tick(fw, u32::from(level), now);
        }
        if counting && tallies.counted[COMPARE] {
            if let Some(at) = armed_compare() {
                // A compare that does not happen: it may change no register.
                let registers = Registers::save();
                add(meter, &mut tallies.armed, fw, (0, at), compare);
                registers.restore();
            }
        }
        buck.step(fw.driver().gate().is_on());
    }
    in_phase && fw.stack().supervisor().state() == expected
}
