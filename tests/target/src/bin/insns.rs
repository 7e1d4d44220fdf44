//! Target side: instructions per fast-path call.
//!
//! Under `qemu-system-arm -icount shift=0` every guest instruction advances
//! virtual time by the same step, and SysTick counts virtual time, so SysTick
//! ticks are proportional to instructions. The ratio is calibrated against a
//! loop of known length (two instructions per turn); each operation runs
//! `CALLS` times and the harness's own cost (the same loop with an empty
//! body) is subtracted.
#![no_std]
#![no_main]

use core::hint::black_box;
use cortex_m::peripheral::{syst::SystClkSource, Peripherals, SYST};
use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use panic_semihosting as _;
use ripplectl::estimate::{Amps, CurrentEstimator};
use ripplectl::reference::{GuardModel, HystereticModel};
use ripplectl::{Gate, Instant, Law};
use ripplectl_target::Rig;

const CALLS: u32 = 2_048;

fn core_name() -> &'static str {
    if cfg!(target_abi = "eabihf") {
        "m4"
    } else {
        "m0"
    }
}

fn ticks() -> u32 {
    SYST::get_current()
}

/// SysTick counts down from 2²⁴ − 1.
fn since(start: u32) -> u32 {
    start.wrapping_sub(ticks()) & 0x00ff_ffff
}

/// Exactly `2·n` instructions: `subs` and `bne` per turn (`n` ≥ 1).
#[inline(never)]
fn known_loop(n: u32) {
    // SAFETY: a register-only countdown loop.
    unsafe {
        core::arch::asm!("2:", "subs {0}, {0}, #1", "bne 2b", inout(reg) n => _, options(nomem, nostack));
    }
}

/// Instructions per SysTick tick, as a 16.16 fixed-point ratio.
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
#[inline(never)]
fn run(mut f: impl FnMut(u32)) -> u32 {
    let s = ticks();
    for i in 0..CALLS {
        f(black_box(i));
    }
    since(s)
}

struct Meter {
    per_tick: u64,
}

impl Meter {
    /// Mean instructions per call of `f` beyond `baseline`: both get the
    /// same inputs, the baseline only consumes them, so input preparation
    /// and loop overhead cancel.
    fn count(&self, baseline: impl FnMut(u32), f: impl FnMut(u32)) -> u32 {
        let empty = run(baseline);
        let t = run(f).saturating_sub(empty);
        ((u64::from(t) * self.per_tick / u64::from(CALLS) + (1 << 15)) >> 16) as u32
    }

    fn report(&self, op: &str, baseline: impl FnMut(u32), f: impl FnMut(u32)) -> u32 {
        let n = self.count(baseline, f);
        hprintln!("insns core={} op={} n={}", core_name(), op, n);
        n
    }

    /// Mean instructions per call of `f(code, now)` over the recorded
    /// `codes`, one sample every 64 ticks from `base`.
    fn count_stream(&self, codes: &[u16], base: u32, mut f: impl FnMut(u16, Instant)) -> u32 {
        let input = |i: u32| {
            let code = codes.get(i as usize).copied().unwrap_or(0);
            (code, Instant(base.wrapping_add(i.wrapping_mul(64))))
        };
        self.count(
            |i| {
                black_box(input(i));
            },
            |i| {
                let (code, now) = input(i);
                f(code, now);
            },
        )
    }

    /// [`count_stream`](Self::count_stream), printed as `op`.
    fn report_stream(
        &self,
        op: &str,
        codes: &[u16],
        base: u32,
        f: impl FnMut(u16, Instant),
    ) -> u32 {
        let n = self.count_stream(codes, base, f);
        hprintln!("insns core={} op={} n={}", core_name(), op, n);
        n
    }
}

/// A ripple of output codes sweeping the hysteretic band.
fn code(i: u32) -> u16 {
    let k = (i & 63) as u16;
    1968 + if k < 32 { k } else { 64 - k }
}

/// Output codes for `CALLS` samples, 64 ticks (1 µs) apart from `base`,
/// of `control` (a copy of the object to be measured: true for gate on)
/// closing the loop around a small buck in `f32` (the demo's 47 µH,
/// 220 µF with 40 mΩ ESR, 28 V in, 1 A out, Euler steps of one sample;
/// only the recording runs it, not the measurement). The measured loop
/// then replays the same codes at the same instants, so the baseline
/// consumes exactly what the measured call does.
fn regulating_codes(
    codes: &mut [u16; CALLS as usize],
    base: u32,
    mut control: impl FnMut(u16, Instant) -> bool,
) {
    let (l, c, esr, vin, load, dt) = (47e-6f32, 220e-6f32, 0.040f32, 28.0f32, 1.0f32, 1e-6f32);
    let volts_per_code = 3.3 / 4096.0 / (4.7 / 14.7);
    let (mut i_l, mut v_c) = (load, 5.0f32);
    for (k, slot) in codes.iter_mut().enumerate() {
        let v_out = v_c + esr * (i_l - load);
        *slot = (v_out / volts_per_code + 0.5) as u16;
        let on = control(*slot, Instant(base.wrapping_add(64 * k as u32)));
        let v_sw = if on { vin } else { -0.45 };
        i_l = (i_l + (v_sw - v_out) / l * dt).max(0.0);
        v_c += (i_l - load) / c * dt;
    }
}

#[entry]
fn main() -> ! {
    let mut p = Peripherals::take().unwrap();
    p.SYST.set_clock_source(SystClkSource::Core);
    p.SYST.set_reload(0x00ff_ffff);
    p.SYST.clear_current();
    p.SYST.enable_counter();

    let meter = Meter { per_tick: calibrate() };
    let mut rig = Rig::demo().unwrap();
    // Inputs are functions of the call index (times advance with it), so
    // each baseline prepares exactly what its operation consumes.
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
    regulating_codes(&mut codes, b, |c, t| copy.on_sample(c, t).gate.is_on());
    meter.report_stream("hysteretic_guard", &codes, b, |c, t| {
        black_box(rig.guard.on_sample(c, t));
    });
    let b = next_base(64 * CALLS);
    let mut copy = rig.on_time.clone();
    regulating_codes(&mut codes, b, |c, t| copy.on_sample(c, t).gate.is_on());
    meter.report_stream("on_time_guard", &codes, b, |c, t| {
        black_box(rig.on_time.on_sample(c, t));
    });
    let b = next_base(320 * CALLS);
    meter.report(
        "passthrough_guard",
        |i| {
            black_box((i & 1 == 0, at(i, 320, b)));
        },
        |i| {
            black_box(rig.edge.on_edge(i & 1 == 0, at(i, 320, b)));
        },
    );
    let mut est: CurrentEstimator = rig.estimator.clone();
    let b = next_base(560 * CALLS);
    est.restart_at(Instant(b));
    est.shift(Amps::from_num(1));
    let gate = |i: u32| if i & 1 == 0 { Gate::On } else { Gate::Off };
    meter.report(
        "estimator_edge",
        |i| {
            black_box((gate(i), at(i, 560, b)));
        },
        |i| {
            black_box(est.on_gate(gate(i), at(i, 560, b)));
        },
    );
    let b = next_base(64 * CALLS);
    meter.report(
        "estimator_sample",
        |i| {
            black_box((code(i), at(i, 64, b)));
        },
        |i| {
            est.on_output_code(code(i), at(i, 64, b));
        },
    );

    // The supervisor, brought into regulation first.
    let (vin, vout) = (rig.vin, rig.vout);
    let b = next_base(0);
    rig.stack.on_sample(1984, Instant(b));
    rig.stack.housekeeping(2900, &vin, &vout, Instant(b));
    let b = next_base(70_000);
    rig.stack.housekeeping(2900, &vin, &vout, Instant(b));

    // Regulating: the stack's own closed loop around the buck model (see
    // `regulating_codes`), peak current below the limit.
    let b = next_base(64 * CALLS);
    let mut copy = rig.stack.clone();
    regulating_codes(&mut codes, b, |c, t| copy.on_sample(c, t).gate.is_on());
    let whole = meter.report_stream("supervisor_stack", &codes, b, |c, t| {
        black_box(rig.stack.on_sample(c, t));
    });
    // Its own share: the stack less the law and guard, and less the
    // estimator's per-reading update (budgeted on its own), on the same
    // stream.
    let mut guard = rig.guard.clone();
    let law = meter.count_stream(&codes, b, |c, t| {
        black_box(guard.on_sample(c, t));
    });
    let mut est_alone = rig.stack.estimator().clone();
    let reading = meter.count_stream(&codes, b, |c, t| est_alone.on_output_code(c, t));
    hprintln!("insns core={} op=supervisor n={}", core_name(), whole.saturating_sub(law + reading));

    // Overload: the open-loop sweep holds the gate on for 32 samples, so
    // every cycle ends at the current limit (limit, forced turn-off, the
    // law asked what follows): the event path, reported beside the budget.
    let b = next_base(64 * CALLS);
    meter.report(
        "supervisor_stack_limited",
        |i| {
            black_box((code(i), at(i, 64, b)));
        },
        |i| {
            black_box(rig.stack.on_sample(code(i), at(i, 64, b)));
        },
    );

    // The f64 oracles (soft float on both cores' f64) for comparison.
    let mut model = HystereticModel::new(5.0, 0.04);
    let volts = |i: u32| 4.96 + f64::from(i & 63) * 0.00125;
    meter.report(
        "hysteretic_f64",
        |i| {
            black_box(volts(i));
        },
        |i| {
            black_box(model.sample(volts(i)));
        },
    );
    let mut guard = GuardModel::new(150e-9, 300e-9, 40e-6, 1.0 / 140e3);
    meter.report(
        "guard_f64",
        |i| {
            black_box((i & 16 == 0, f64::from(i) * 1e-6));
        },
        |i| {
            black_box(guard.step(i & 16 == 0, f64::from(i) * 1e-6));
        },
    );
    debug::exit(debug::EXIT_SUCCESS);
    loop {
        cortex_m::asm::wfi();
    }
}
