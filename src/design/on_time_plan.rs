//! The on-time law, on comparator edges or on samples (with emulated
//! ripple where the ripple check asks for it), fitted to the board and the
//! core: its frequency, samples and ramp, or why it does not fit.

use super::budget::{Budget, Rates, Scheme};
use super::closed_form::pulse_of_peak;
use super::context::Context;
use super::laws::{edge_delay, point, reject, LawChoice, LawPlan, Unfit, PLANNED_SHARE};
use super::values::Choice;
use super::values::{eng, pct};
use crate::sim::cpu::Handler;

/// The on-time law's target at most the window's ceiling over this (its
/// frequency moves with the load and during transients).
pub const ON_TIME_HEADROOM: f64 = 1.4;
/// Samples per switching cycle on the sampled on-time loop (fewer let its
/// timing wander at the highest input, in the simulator: rule of this
/// tool).
pub const SAMPLES_PER_CYCLE: f64 = 5.0;
/// Emulated ripple: this multiple of the least the stability check asks
/// (rule of this tool: in the simulator 1.5 let the timing wander at full
/// load, and 3 offset the mean past the ±40 codes the DC correction
/// trims).
pub const RIPPLE_MARGIN: f64 = 2.0;

/// The plan for `scheme` (on edges or on samples), if the loop fits.
pub fn plan(scheme: Scheme, ctx: &Context) -> Result<LawPlan, Unfit> {
    let (facts, b, m) = (ctx.facts, &ctx.facts.board, &ctx.facts.mcu);
    let budget = Budget::new(scheme, &facts.mcu)?;
    let sampled = scheme == Scheme::OnTimeSampled;
    let fastest = fastest_on_time(ctx, &budget, sampled);
    let ceiling = ctx.f_max() / ON_TIME_HEADROOM;
    let f = (fastest.min(ceiling) / 5e3).floor() * 5e3;
    let floor = 1.5 * ctx.f_min();
    if f < floor {
        return reject(format!(
            "the core affords {} at most, below {} (1.5 × the window's floor)",
            eng(fastest, "Hz"),
            eng(floor, "Hz")
        ));
    }
    let on_time = |vin: f64| b.vout_v / (vin * f);
    let longest = on_time(b.vin_min_v);
    let plain_stable = b.esr_ohm * b.c_f > longest / 2.0;
    if !sampled && !plain_stable {
        return reject(format!(
            "ESR·C = {} is below half the longest on-time {}: the valley loop needs emulated ripple, which needs the sampled input",
            eng(b.esr_ohm * b.c_f, "s"),
            eng(longest, "s")
        ));
    }
    check_pulse_charge(ctx, on_time(b.vin_max_v))?;
    let sample_hz = if sampled { SAMPLES_PER_CYCLE * f } else { ctx.readings_hz() };
    if sampled && m.conversion_s + m.isr_latency_s >= 1.0 / sample_hz {
        return reject("the conversion and the interrupt latency outlast a sample period".into());
    }
    let emulated = (sampled && !plain_stable).then(|| emulated_ripple(ctx, f));
    if let Some(v) = emulated {
        let codes = v / ctx.output_volts_per_code();
        if codes > 200.0 {
            return reject(format!(
                "its emulated ripple would span {codes:.0} codes, past the 256 its predictor takes"
            ));
        }
    }
    let delay_s = if sampled {
        m.conversion_s + m.isr_latency_s + budget.seconds(Handler::Conversion)
    } else {
        edge_delay(ctx, &budget)
    };
    let rates = Rates { switching_hz: f, sample_hz, housekeeping_hz: ctx.hk.hz };
    let load = budget.load(&rates);
    let mut choices = vec![Choice::new(
        "frequency",
        eng(f, "Hz"),
        format!(
            "the fastest in 5 kHz steps the core affords within {} ({} at most) and at most the window's ceiling over {ON_TIME_HEADROOM}; feed-forward and a trim hold it over the input range",
            pct(PLANNED_SHARE),
            eng(fastest, "Hz")
        ),
    )];
    if sampled {
        choices.push(Choice::new(
            "samples",
            format!("{} ({SAMPLES_PER_CYCLE} per cycle)", eng(sample_hz, "Hz")),
            "a turn-on between samples is predicted from the ramp; fewer than five a cycle let the timing wander at the highest input in the simulator (rule of this tool)".into(),
        ));
    }
    if let Some(v) = emulated {
        choices.push(Choice::new(
            "emulated ripple",
            eng(v, "V"),
            format!(
                "ESR·C = {} is below half the longest on-time {} (the ripple check); taken as an equivalent ESR, a ramp of A over T_on needs A > Δi·T_on/(2C); twice that at the worst input (rule of this tool: less let the timing wander, more offset the mean past what the DC correction trims, in the simulator)",
                eng(b.esr_ohm * b.c_f, "s"),
                eng(longest, "s")
            ),
        ));
    }
    Ok(LawPlan {
        scheme,
        law: LawChoice::OnTime {
            frequency_hz: f,
            // To 10 ns: the written value is the one used.
            on_time_s: (on_time(b.vin_nominal_v()) / 1e-8).round() * 1e-8,
            emulated_ripple_v: emulated,
        },
        sample_hz,
        delay_s,
        budget,
        load,
        choices,
    })
}

/// The highest switching frequency the on-time loop's handlers leave
/// within [`PLANNED_SHARE`] of the core, Hz.
fn fastest_on_time(ctx: &Context, budget: &Budget, sampled: bool) -> f64 {
    let at = |f: f64| {
        let sample_hz = if sampled { SAMPLES_PER_CYCLE * f } else { ctx.readings_hz() };
        budget.load(&Rates { switching_hz: f, sample_hz, housekeeping_hz: ctx.hk.hz })
    };
    // The load is affine in f: solve at two points.
    let (l0, l1) = (at(0.0), at(1.0));
    let by_core = (PLANNED_SHARE - l0) / (l1 - l0);
    let by_adc =
        if sampled { ctx.facts.mcu.max_sample_rate_hz / SAMPLES_PER_CYCLE } else { f64::MAX };
    by_core.min(by_adc).max(0.0)
}

/// A whole pulse into a light load must not lift the output past the
/// over-voltage threshold (before the light-load adaptation shrinks the
/// pulses): the pulse's charge over C.
fn check_pulse_charge(ctx: &Context, on_time_s: f64) -> Result<(), Unfit> {
    let b = &ctx.facts.board;
    let op = point(ctx.facts, ctx.stage.diode_vf_v, b.vin_max_v, 0.0);
    let peak = (b.vin_max_v - b.vout_v) / b.l_h * on_time_s;
    let rise = pulse_of_peak(&op, b.l_h, peak).charge_c / b.c_f;
    let margin = ctx.ovp_v() - b.vout_v;
    if rise > margin {
        return reject(format!(
            "one {} pulse at {} lifts a lightly loaded output by {}, past the over-voltage margin {}: more capacitance or a faster core",
            eng(on_time_s, "s"),
            eng(b.vin_max_v, "V"),
            eng(rise, "V"),
            eng(margin, "V")
        ));
    }
    Ok(())
}

/// Emulated ripple amplitude at `f`: [`RIPPLE_MARGIN`] × the largest
/// `Δi·T_on/(2C)` over the input points, rounded up to 10 mV.
fn emulated_ripple(ctx: &Context, f: f64) -> f64 {
    let b = &ctx.facts.board;
    let least = ctx
        .input_points()
        .iter()
        .map(|&vin| {
            let t_on = b.vout_v / (vin * f);
            let di = (vin - b.vout_v) / b.l_h * t_on;
            di * t_on / (2.0 * b.c_f)
        })
        .fold(0.0, f64::max);
    (RIPPLE_MARGIN * least / 0.01).ceil() * 0.01
}
