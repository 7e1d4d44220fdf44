//! The three loops `design` can propose, each checked against the board and
//! the core: it fits (with its parameters and reasons) or it is passed
//! over with a reason.

use super::budget::{Budget, Rates, Scheme};
use super::closed_form::{
    hysteretic_dcm_pulse, pulse_of_peak, DcmPulse, OperatingPoint, OutputFilter,
};
use super::delayed::{hysteretic_cycle_ccm, NoCycle};
use super::facts::{DesignError, Facts};
use super::proposal::{Choice, Context};
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

/// The loop of `scheme` for the context, if it fits.
pub fn plan(scheme: Scheme, ctx: &Context) -> Result<LawPlan, Unfit> {
    match scheme {
        Scheme::HystereticEdge => hysteretic_edge(ctx),
        Scheme::OnTimeEdge | Scheme::OnTimeSampled => on_time(scheme, ctx),
    }
}

fn reject<T>(why: String) -> Result<T, Unfit> {
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
fn edge_delay(ctx: &Context, budget: &Budget) -> f64 {
    let m = &ctx.facts.mcu;
    m.comparator_delay_s + m.isr_latency_s + budget.seconds(Handler::Comparator)
}

/// The hysteretic law at full load and input `vin`: its frequency (CCM
/// cycle, or a DCM pulse when the load is below half the ripple).
pub fn hysteretic_full_load(
    ctx: &Context,
    vin: f64,
    iout: f64,
    band: f64,
    delay: f64,
) -> Result<(f64, f64), NoCycle> {
    let op = point(ctx.facts, ctx.stage.diode_vf_v, vin, iout);
    let f = filter(ctx.facts);
    let cycle = hysteretic_cycle_ccm(&op, &f, band, delay)?;
    if iout >= cycle.ripple_current_a / 2.0 {
        return Ok((cycle.frequency_hz, iout + cycle.ripple_current_a / 2.0));
    }
    // DCM switches no faster than the CCM cycle at the same band and delay.
    let DcmPulse { peak_a, charge_c } = hysteretic_dcm_pulse(&op, &f, band, delay);
    Ok(((iout / charge_c).min(cycle.frequency_hz), peak_a))
}

fn hysteretic_edge(ctx: &Context) -> Result<LawPlan, Unfit> {
    let (facts, b) = (ctx.facts, &ctx.facts.board);
    let budget = Budget::new(Scheme::HystereticEdge, &facts.mcu)?;
    let td = edge_delay(ctx, &budget);
    if b.esr_ohm * b.c_f <= 2.0 * td {
        return reject(format!(
            "ESR·C = {} is not twice the loop delay {} (comparator, interrupt entry, handler): the capacitor's lagging ripple leaves no steady cycle (design::delayed)",
            eng(b.esr_ohm * b.c_f, "s"),
            eng(td, "s")
        ));
    }
    let sample_hz = ctx.readings_hz();
    let code_v = ctx.output_volts_per_code();
    let vins = ctx.input_points();
    let mut found = None;
    for codes in MIN_BAND_CODES..=MAX_BAND_CODES {
        // To 0.1 mV: the written value is the one used.
        let band = (f64::from(codes) * code_v / 1e-4).round() * 1e-4;
        let fs: Result<Vec<_>, _> =
            vins.iter().map(|&v| hysteretic_full_load(ctx, v, b.iout_a, band, td)).collect();
        let fs = match fs {
            Ok(fs) => fs,
            Err(NoCycle::PhaseShorterThanDelay { phase_s }) => {
                return reject(format!(
                    "a {} phase is shorter than the loop delay {}",
                    eng(phase_s, "s"),
                    eng(td, "s")
                ))
            }
            Err(e) => return reject(format!("no steady cycle: {e:?}")),
        };
        let f_hi = fs.iter().map(|f| f.0).fold(0.0, f64::max);
        let f_lo = fs.iter().map(|f| f.0).fold(f64::MAX, f64::min);
        let switching_hz = f_hi.max(LIGHT_LOAD_CEILING * ctx.f_min());
        let load = budget.load(&Rates { switching_hz, sample_hz, housekeeping_hz: ctx.hk.hz });
        if f_hi <= FREQUENCY_CEILING * ctx.f_max() && load <= PLANNED_SHARE {
            found = Some((codes, band, f_lo, f_hi, load));
            break;
        }
    }
    let Some((codes, band, f_lo, f_hi, load)) = found else {
        return reject(format!(
            "even a {}-code band switches too fast for the core or the window",
            MAX_BAND_CODES
        ));
    };
    let floor = FREQUENCY_FLOOR * ctx.f_min();
    if f_lo < floor {
        return reject(format!(
            "at full load it switches at {} at best, below {} (1.25 × the window's floor): the loop delay {} sets the ripple",
            eng(f_lo, "Hz"),
            eng(floor, "Hz"),
            eng(td, "s")
        ));
    }
    let choices = vec![
        Choice::new(
            "band",
            format!("{} ({codes} DAC codes)", eng(band, "V")),
            format!(
                "the smallest band of at least {MIN_BAND_CODES} codes (one code of DAC or comparator offset moves a threshold by at most an eighth of it: rule of this tool) whose full-load frequency, {} to {}, stays below {} of the window's ceiling and within {} of the core",
                eng(f_lo, "Hz"),
                eng(f_hi, "Hz"),
                pct(FREQUENCY_CEILING),
                pct(PLANNED_SHARE)
            ),
        ),
        Choice::new(
            "loop delay",
            eng(td, "s"),
            "comparator + interrupt latency + the comparator handler until it ends (its pin write); it adds V_in·t_d/L to the ripple current (design::delayed)".to_string(),
        ),
    ];
    Ok(LawPlan {
        scheme: Scheme::HystereticEdge,
        law: LawChoice::Hysteretic { band_v: band },
        sample_hz,
        delay_s: td,
        budget,
        load,
        choices,
    })
}

/// Smallest band, DAC codes.
pub const MIN_BAND_CODES: u32 = 8;
/// Largest band tried, DAC codes.
pub const MAX_BAND_CODES: u32 = 400;
/// Full-load frequencies stay at or below this share of the window's
/// ceiling (room for tolerances and transients: rule of this tool).
pub const FREQUENCY_CEILING: f64 = 0.8;
/// ... and at or above this multiple of its floor (where the light-load
/// adaptation starts: [`crate::stack::light_load`]).
pub const FREQUENCY_FLOOR: f64 = 1.25;
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

fn on_time(scheme: Scheme, ctx: &Context) -> Result<LawPlan, Unfit> {
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

/// A value with an engineering prefix (the simulator's report format).
pub fn eng(x: f64, unit: &str) -> String {
    crate::sim::report::eng(x, unit)
}

/// A fraction as a percentage.
pub fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}
