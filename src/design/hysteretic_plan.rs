//! The hysteretic law on comparator edges, fitted to the board and the
//! core: the band from the delayed cycle ([`super::delayed`]), or why it
//! does not fit.

use super::budget::{Budget, Rates, Scheme};
use super::closed_form::{hysteretic_dcm_pulse, DcmPulse};
use super::context::Context;
use super::delayed::{hysteretic_cycle_ccm, NoCycle};
use super::laws::{
    edge_delay, filter, point, reject, LawChoice, LawPlan, Unfit, LIGHT_LOAD_CEILING, PLANNED_SHARE,
};
use super::values::Choice;
use super::values::{eng, pct};

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

/// The plan, if the loop fits.
pub fn plan(ctx: &Context) -> Result<LawPlan, Unfit> {
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
