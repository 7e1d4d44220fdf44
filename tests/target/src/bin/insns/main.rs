//! Target side: instructions per fast-path call.
//!
//! Under QEMU's `-icount shift=0` every guest instruction advances virtual
//! time by the same step; the counter read here ([`counter`]: SysTick on
//! the Cortex-M cores, `minstret` on RV32) counts it, so its ticks are
//! proportional to instructions. The ratio is calibrated against a loop of
//! known length (two instructions per turn).
//!
//! Each operation is a handler: a function the compiler may not inline into
//! the measuring loop, as an interrupt handler's body is (the crate's code is
//! inlined into it as the compiler sees fit). It runs `CALLS` times; the
//! same loop calling an empty handler with the same arguments is
//! subtracted, so a count is everything the core executes for the call
//! (register saves, loads, the work, the returned command) less the bare
//! call and return.
//!
//! The supervisor has no count of its own: its share is the whole stack's
//! count less those of what it hands each sample on to (the guarded law,
//! and the current estimator's reading and gate edges), each measured alone
//! on the same events.
#![no_std]
#![no_main]

mod counter;
mod handlers;

use core::hint::black_box;
use counter::{known_loop, since, ticks};
use handlers::{closed_loop, Comparator, Phase, Tallies};
use ripplectl::estimate::{Amps, CurrentEstimator};
use ripplectl::law::Regulate;
use ripplectl::reference::{GuardModel, HystereticModel};
use ripplectl::stack::{Handlers, Stack, StackParts};
use ripplectl::{Command, Gate, Instant, Law};
use ripplectl_target::arch::{entry, CORE};
use ripplectl_target::board::driver;
use ripplectl_target::{
    Rig, COT_EDGE_PARTS, COT_PARTS, EDGE_PARTS, HYSTERETIC, LOCKED, ON_TIME, PARTS, RETROFIT,
};
use semihosting::{println, process};

const CALLS: u32 = 2_048;

/// Instructions per counter tick, as a 16.16 fixed-point ratio.
fn calibrate() -> u64 {
    let (short, long) = (1_000u32, 201_000u32);
    let s = ticks();
    known_loop(short);
    let t_short = since(s);
    let s = ticks();
    known_loop(long);
    let t_long = since(s);
    (u64::from(2 * (long - short)) << 16) / u64::from((t_long - t_short).max(1))
}

/// Ticks for `CALLS` turns of `f`.
fn run(f: impl FnMut(u32)) -> u32 {
    run_n(CALLS, f)
}

/// Ticks for `n` turns of `f`.
#[inline(never)]
fn run_n(n: u32, mut f: impl FnMut(u32)) -> u32 {
    let s = ticks();
    for i in 0..n {
        f(black_box(i));
    }
    since(s)
}

/// A handler: one fast-path call made the way firmware makes it, from an
/// interrupt handler's body, never inlined into the measuring loop. `a` is
/// the event's argument (a code, a level or gate as 0/1, or the packed
/// estimator event of [`estimator_events`]).
type Handler<T> = fn(&mut T, u32, Instant) -> Command;

/// The empty handler: the call, its arguments and its return, no work.
#[inline(never)]
fn idle<T>(obj: &mut T, a: u32, now: Instant) -> Command {
    // SAFETY: no instructions; it only keeps the arguments live.
    unsafe {
        core::arch::asm!("/* {0} {1} {2} */", in(reg) obj as *mut T, in(reg) a, in(reg) now.0,
            options(nostack, preserves_flags));
    }
    Command::hold(Gate::Off)
}

/// A law's output reading.
#[inline(never)]
fn sample<L: Law>(law: &mut L, code: u32, now: Instant) -> Command {
    law.on_sample(code as u16, now)
}

/// A law's comparator edge (`level` 0/1).
#[inline(never)]
fn edge<L: Law>(law: &mut L, level: u32, now: Instant) -> Command {
    law.on_edge(level != 0, now)
}

fn gate_of(on: bool) -> Gate {
    if on {
        Gate::On
    } else {
        Gate::Off
    }
}

/// The estimator told of a gate edge (`on` 0/1).
#[inline(never)]
fn estimator_gate(est: &mut CurrentEstimator, on: u32, now: Instant) -> Command {
    let gate = gate_of(on != 0);
    est.on_gate(gate, now);
    Command::hold(gate)
}

/// The estimator given an output reading.
#[inline(never)]
fn estimator_reading(est: &mut CurrentEstimator, code: u32, now: Instant) -> Command {
    est.on_output_code(code as u16, now);
    Command::hold(Gate::Off)
}

/// A housekeeping tick of a stack (the slow path).
#[inline(never)]
fn housekeeping<L: Law + Regulate>(stack: &mut Stack<L>, _: u32, now: Instant) -> Command {
    stack.housekeeping(now).unwrap_or(Command::hold(Gate::Off))
}

/// Bit 16 of a packed estimator event: the gate switched at this reading;
/// bit 17: to on. Bits 0–15: the output code.
const SWITCHED: u32 = 1 << 16;
const SWITCHED_ON: u32 = 1 << 17;

/// The estimator's work inside the supervisor for one sample: the reading,
/// then the gate edge when the sample switched it.
#[inline(never)]
fn estimator_events(est: &mut CurrentEstimator, a: u32, now: Instant) -> Command {
    est.on_output_code(a as u16, now);
    if a & SWITCHED != 0 {
        est.on_gate(gate_of(a & SWITCHED_ON != 0), now);
    }
    Command::hold(Gate::Off)
}

/// Volts per output code of the demo's channel (12 bits, 3.3 V, 4.7/14.7
/// divider).
const VOLTS_PER_CODE: f64 = 3.3 / 4096.0 / (4.7 / 14.7);

/// Seconds per tick of the demo's 64 MHz timer.
const TICK_S: f64 = 1.0 / 64e6;

/// The f64 hysteretic oracle given what firmware has, an ADC code, turned
/// into volts as a floating-point firmware would.
#[inline(never)]
fn hysteretic_f64(model: &mut HystereticModel, code: u32, _: Instant) -> Command {
    Command::hold(gate_of(model.sample(f64::from(code) * VOLTS_PER_CODE)))
}

/// The f64 guard oracle given the law's demand (0/1) and a timer reading,
/// turned into seconds.
#[inline(never)]
fn guard_f64(model: &mut GuardModel, demand: u32, now: Instant) -> Command {
    Command::hold(gate_of(model.step(demand != 0, f64::from(now.0) * TICK_S)))
}

/// One measurement line: `insns core=<m0|m4|rv32> op=<op> n=<n>`.
fn print(op: &str, n: u32) {
    println!("insns core={} op={} n={}", CORE, op, n);
}

struct Meter {
    per_tick: u64,
}

impl Meter {
    /// Mean instructions per call from the counter's ticks of `CALLS` calls,
    /// rounded.
    fn per_call(&self, ticks: u32) -> u32 {
        ((self.per_call_q16(ticks, CALLS) + (1 << 15)) >> 16) as u32
    }

    /// Mean instructions per call from the ticks of `n` calls, 16.16.
    fn per_call_q16(&self, ticks: u32, n: u32) -> u64 {
        u64::from(ticks) * self.per_tick / u64::from(n)
    }

    /// Mean instructions per call of `handler` on `obj` with inputs
    /// `input(i)`, beyond the same calls of [`idle`]: input preparation,
    /// the call itself and loop overhead cancel.
    fn count<T>(
        &self,
        obj: &mut T,
        input: impl Fn(u32) -> (u32, Instant),
        handler: Handler<T>,
    ) -> u32 {
        let empty = run(|i| {
            let (a, now) = input(i);
            black_box(idle(&mut *obj, a, now));
        });
        let t = run(|i| {
            let (a, now) = input(i);
            black_box(handler(&mut *obj, a, now));
        })
        .saturating_sub(empty);
        self.per_call(t)
    }

    /// Instructions of one call of `handler` on a fresh copy of `start`
    /// with input `(a, now)`, beyond [`idle`] on the same copy: the copy is
    /// made in both loops, so it cancels. For an event whose cost depends on
    /// the state it meets (an estimator's turn-on completes a cycle, its
    /// turn-off does not).
    fn count_from<T: Clone>(&self, start: &T, a: u32, now: Instant, handler: Handler<T>) -> u32 {
        ((self.count_from_q16(CALLS, start, a, now, handler) + (1 << 15)) >> 16) as u32
    }

    /// [`count_from`](Self::count_from) over `n` repetitions, 16.16
    /// instructions (the counter's step over `n` bounds the error: SysTick
    /// steps by 40–63 instructions under QEMU, RV32's `minstret` by one).
    fn count_from_q16<T: Clone>(
        &self,
        n: u32,
        start: &T,
        a: u32,
        now: Instant,
        handler: Handler<T>,
    ) -> u64 {
        let empty = run_n(n, |_| {
            let mut obj = start.clone();
            black_box(idle(&mut obj, a, now));
        });
        let t = run_n(n, |_| {
            let mut obj = start.clone();
            black_box(handler(&mut obj, a, now));
        })
        .saturating_sub(empty);
        self.per_call_q16(t, n)
    }

    /// [`count`](Self::count), printed as `op`.
    fn report<T>(
        &self,
        op: &str,
        obj: &mut T,
        input: impl Fn(u32) -> (u32, Instant),
        handler: Handler<T>,
    ) -> u32 {
        let n = self.count(obj, input, handler);
        print(op, n);
        n
    }
}

/// Call `i` of a stream of `codes`, one every 64 ticks (1 µs) from `base`.
fn stream(codes: &[u16], base: u32) -> impl Fn(u32) -> (u32, Instant) + '_ {
    move |i| {
        let code = codes.get(i as usize).copied().unwrap_or(0);
        (u32::from(code), Instant(base.wrapping_add(i.wrapping_mul(64))))
    }
}

/// A ripple of output codes sweeping the hysteretic band.
fn code(i: u32) -> u16 {
    let k = (i & 63) as u16;
    1968 + if k < 32 { k } else { 64 - k }
}

/// A small buck in `f32` around which the counts close their loops: the
/// demo's 47 µH, 220 µF with 40 mΩ ESR, 28 V in, 1 A out, a 0.45 V diode,
/// Euler steps of one sample (1 µs). Only the recording runs it, not the
/// measured calls.
#[derive(Clone, Copy)]
struct Buck {
    i_l: f32,
    v_c: f32,
    /// The load is 5 Ω (1 A at 5 V) rather than a constant 1 A (which
    /// would drive a cold output negative).
    resistive: bool,
}

impl Buck {
    const LOAD: f32 = 1.0;
    const ESR: f32 = 0.040;

    /// In regulation at 5 V, carrying the load.
    fn new() -> Self {
        Self { i_l: Self::LOAD, v_c: 5.0, resistive: false }
    }

    /// Cold: no output, no current, the load resistive.
    fn cold() -> Self {
        Self { i_l: 0.0, v_c: 0.0, resistive: true }
    }

    fn load(&self) -> f32 {
        if self.resistive {
            self.v_c / 5.0
        } else {
            Self::LOAD
        }
    }

    /// The output's ADC code (the demo's 12-bit, 3.3 V channel behind its
    /// 4.7/14.7 divider).
    fn output_code(&self) -> u16 {
        let volts_per_code = 3.3 / 4096.0 / (4.7 / 14.7);
        (self.v_out() / volts_per_code + 0.5) as u16
    }

    fn v_out(&self) -> f32 {
        self.v_c + Self::ESR * (self.i_l - self.load())
    }

    /// One sample period with the switch `on`.
    fn step(&mut self, on: bool) {
        let (l, c, vin, dt) = (47e-6f32, 220e-6f32, 28.0f32, 1e-6f32);
        let v_sw = if on { vin } else { -0.45 };
        self.i_l = (self.i_l + (v_sw - self.v_out()) / l * dt).max(0.0);
        self.v_c += (self.i_l - self.load()) / c * dt;
    }
}

/// Output codes for `CALLS` samples, 64 ticks (1 µs) apart from `base`,
/// of `control` (a copy of the object to be measured: true for gate on)
/// closing the loop around the [`Buck`]. The measured loop then replays
/// the same codes at the same instants, so the baseline consumes exactly
/// what the measured call does.
fn regulating_codes(
    codes: &mut [u16; CALLS as usize],
    base: u32,
    mut control: impl FnMut(u16, Instant) -> bool,
) {
    let mut buck = Buck::new();
    for (k, slot) in codes.iter_mut().enumerate() {
        *slot = buck.output_code();
        let on = control(*slot, Instant(base.wrapping_add(64 * k as u32)));
        buck.step(on);
    }
}

/// Count the handlers of the stack around `law` (the event kinds named,
/// see [`handlers`]) as `<prefix>_<kind>`; false if it did not regulate.
#[inline(never)]
fn handler_counts<L: Law + Regulate + Clone>(
    meter: &Meter,
    prefix: &str,
    (law, parts): (L, StackParts),
    (comparator, phase): (Comparator, Phase),
    kinds: &[&str],
) -> bool {
    let mut firmware = Handlers::new(Stack::new(law, parts), driver());
    let mut tallies = Tallies::of(kinds);
    let in_phase = closed_loop(meter, &mut firmware, comparator, &mut tallies, phase);
    tallies.print(CORE, prefix);
    if !in_phase {
        println!("{}: not in the counted phase throughout", prefix);
    }
    in_phase
}

/// Every handler count: the hysteretic, locked-and-dithered hysteretic and
/// on-time stacks on samples, both laws on comparator edges, and the analog
/// retrofit regulating and in its soft-start (each pulse bounded through
/// the guard).
fn whole_handlers(meter: &Meter) -> bool {
    let all = ["conversion", "comparator", "compare", "housekeeping"];
    let sampled = ["conversion", "compare", "housekeeping"];
    let board =
        Comparator::Board { lower: HYSTERETIC.lower_code(), upper: HYSTERETIC.upper_code() };
    let (none, armed) = (Comparator::None, Comparator::Armed);
    let run = Phase::Regulating;
    let hyst = handler_counts(meter, "handler_hyst", (HYSTERETIC, PARTS), (none, run), &sampled);
    let lock = handler_counts(meter, "handler_lock", (LOCKED, PARTS), (none, run), &sampled);
    let cot = handler_counts(meter, "handler_cot", (ON_TIME, COT_PARTS), (none, run), &sampled);
    let edge = handler_counts(meter, "handler_edge", (HYSTERETIC, EDGE_PARTS), (armed, run), &all);
    let cot_edge =
        handler_counts(meter, "handler_cotedge", (ON_TIME, COT_EDGE_PARTS), (armed, run), &all);
    let retrofit = (RETROFIT, EDGE_PARTS);
    let regulating =
        handler_counts(meter, "handler_retrofit", retrofit, (board, run), &["comparator"]);
    // No comparator edge in the counted part of the start: the output
    // stays below the lower threshold (the level reaches the law at each
    // housekeeping tick, counted with it).
    let start = ["conversion", "compare", "housekeeping"];
    let starting =
        handler_counts(meter, "handler_retrofit_start", retrofit, (board, Phase::Start), &start);
    hyst && lock && cot && edge && cot_edge && regulating && starting
}

/// The per-call counts of the laws, the guard, the estimator and the
/// stacks' parts. Out of line, so the rig and the sample buffer leave the
/// call stack before the handler counts (the Cortex-M0 board has 16 KiB
/// of RAM).
#[inline(never)]
fn call_counts(meter: &Meter) {
    let mut rig = Rig::demo();
    let at = |i: u32, step: u32, base: u32| Instant(base.wrapping_add(i.wrapping_mul(step)));
    let mut base = 0u32;
    let mut next_base = |calls_span: u32| {
        base = base.wrapping_add(calls_span);
        base
    };

    // Laws per sample, each on a stream of its own closed loop (one buffer,
    // refilled: the Cortex-M0 board has 16 KiB of RAM).
    let mut codes = [0u16; CALLS as usize];
    let b = next_base(64 * CALLS);
    let mut copy = rig.guard.clone();
    regulating_codes(&mut codes, b, |c, t| sample(&mut copy, c.into(), t).gate.is_on());
    meter.report("hysteretic_guard", &mut rig.guard, stream(&codes, b), sample);
    let b = next_base(64 * CALLS);
    let mut copy = rig.on_time.clone();
    regulating_codes(&mut codes, b, |c, t| sample(&mut copy, c.into(), t).gate.is_on());
    meter.report("on_time_guard", &mut rig.on_time, stream(&codes, b), sample);
    let b = next_base(320 * CALLS);
    let levels = |i: u32| (u32::from(i & 1 == 0), at(i, 320, b));
    meter.report("passthrough_guard", &mut rig.edge, levels, edge);
    // The estimator's edges, each from the state it meets in a cycle of
    // 560 ticks (8.75 µs) at 1 A: the turn-off ends an on-time; the
    // turn-on ends an off-time and completes the cycle (its window sums).
    let mut est: CurrentEstimator = rig.estimator;
    let b = next_base(560);
    est.restart_at(Instant(b));
    est.shift(Amps::from_num(1));
    est.on_gate(Gate::On, Instant(b));
    let (turn_off, turn_on) = (Instant(b + 120), Instant(b + 560));
    let n = meter.count_from(&est, 0, turn_off, estimator_gate);
    print("estimator_turn_off", n);
    est.on_gate(Gate::Off, turn_off);
    let n = meter.count_from(&est, 1, turn_on, estimator_gate);
    print("estimator_turn_on", n);
    est.on_gate(Gate::On, turn_on);
    let b = next_base(64 * CALLS);
    let ripple = |i: u32| (u32::from(code(i)), at(i, 64, b));
    meter.report("estimator_sample", &mut est, ripple, estimator_reading);

    // The slow path: one housekeeping tick of the on-time stack (feed-
    // forward, trim, DC correction, observer, losses), from the state it
    // meets regulating: the stack first runs its own closed loop around the
    // buck model with a housekeeping tick every 100 samples, then 99 more
    // samples fill the window the counted tick closes.
    let b = next_base(64 * CALLS);
    let mut k = 0u32;
    regulating_codes(&mut codes, b, |c, t| {
        if k.is_multiple_of(100) {
            rig.cot.housekeeping(t);
        }
        k += 1;
        let _ = rig.cot.on_conversion(c, 2900, t);
        rig.cot.supervisor().gate().is_on()
    });
    let b = next_base(64 * CALLS);
    let last = Instant(b);
    let n = meter.count_from(&rig.cot, 0, last, housekeeping);
    print("housekeeping", n);

    // The supervisor, brought into regulation first.
    let b = next_base(0);
    rig.stack.on_conversion(1984, 2900, Instant(b));
    rig.stack.housekeeping(Instant(b));
    let b = next_base(70_000);
    rig.stack.on_conversion(1984, 2900, Instant(b));
    rig.stack.housekeeping(Instant(b));
    let sup = rig.stack.supervisor_mut();

    // Regulating: the stack's own closed loop around the buck model (see
    // `regulating_codes`), peak current below the limit. The estimator's
    // events are kept for its share below: each reading, packed with
    // whether (and how) the gate switched at it.
    let b = next_base(64 * CALLS);
    let mut copy = sup.clone();
    // Two bits a call (switched, to on), beside the codes: the Cortex-M0
    // board has 16 KiB of RAM.
    let mut edges = [0u32; CALLS as usize / 16];
    let mut k = 0;
    regulating_codes(&mut codes, b, |c, t| {
        let was_on = copy.gate().is_on();
        let on = sample(&mut copy, c.into(), t).gate.is_on();
        let bits = u32::from(on != was_on) | (u32::from(on) << 1);
        if let Some(word) = edges.get_mut(k / 16) {
            *word |= bits << (2 * (k % 16));
        }
        k += 1;
        on
    });
    let (mut est_alone, mut law_alone) = (*sup.estimator(), sup.inner().clone());
    let whole = meter.report("supervisor_stack", sup, stream(&codes, b), sample);
    // Its own share: the stack less what it hands on, each on the same
    // stream: the law and guard, and the estimator (budgeted on its own,
    // per event) given the same readings and gate edges.
    let law = meter.count(&mut law_alone, stream(&codes, b), sample);
    let estimator_input = |i: u32| {
        let bits = edges.get(i as usize / 16).map_or(0, |w| w >> (2 * (i % 16)));
        let code = codes.get(i as usize).copied().map_or(0, u32::from);
        (code | (bits & 3) << 16, at(i, 64, b))
    };
    let estimator = meter.count(&mut est_alone, estimator_input, estimator_events);
    let own = whole.saturating_sub(law + estimator);
    print("supervisor", own);

    // Overload: the open-loop sweep holds the gate on for 32 samples, so
    // every cycle ends at the current limit (limit, forced turn-off, the
    // law asked what follows): the event path, reported beside the budget.
    let b = next_base(64 * CALLS);
    let sweep = |i: u32| (u32::from(code(i)), at(i, 64, b));
    meter.report("supervisor_stack_limited", rig.stack.supervisor_mut(), sweep, sample);

    // The f64 oracles (soft float on both cores' f64) for comparison, on
    // the same raw inputs: a ripple sweeping the band, and a demand toggling
    // every 16 µs.
    let mut model = HystereticModel::new(5.0, 0.04);
    let b = next_base(64 * CALLS);
    let ripple = |i: u32| (u32::from(code(i)), at(i, 64, b));
    meter.report("hysteretic_f64", &mut model, ripple, hysteretic_f64);
    let mut guard = GuardModel::new(150e-9, 300e-9, 40e-6, 1.0 / 140e3);
    let demands = |i: u32| (u32::from(i & 16 == 0), at(i, 64, b));
    meter.report("guard_f64", &mut guard, demands, guard_f64);
}

#[entry]
fn main() -> ! {
    counter::start();
    let meter = Meter { per_tick: calibrate() };
    call_counts(&meter);
    let regulating = whole_handlers(&meter);
    process::exit(if regulating { 0 } else { 1 })
}
