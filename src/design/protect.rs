//! The protections and the soft-start every loop gets, sized from the
//! predicted currents, and the reasons for the shared choices.

use super::budget::Scheme;
use super::context::{vin_max_v, Context, HOUSEKEEPING_SHARE};
use super::laws::{LawPlan, PLANNED_SHARE};
use super::range::Prediction;
use super::values::Choice;
use super::values::{eng, pct_over, round_down, round_to, round_up};
use crate::supervisor::ProtectionConfig;

/// The protections and the soft-start.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Protections {
    /// The supervisor's settings.
    pub config: ProtectionConfig,
    /// The highest full-load peak current over the input range, A.
    pub full_load_peak_a: f64,
    /// The current that charges the output during the soft-start, A.
    pub inrush_a: f64,
}

/// Current limit over the highest full-load peak (common practice: 20 to
/// 30 % above it, from memory).
pub const LIMIT_OVER_PEAK: f64 = 1.25;
/// Room the soft-start keeps below the current limit for the estimate's
/// error (rule of this tool).
pub const LIMIT_ROOM: f64 = 1.1;

/// Protections for the predicted currents.
pub fn protections(ctx: &Context, predictions: &[Prediction]) -> Protections {
    let b = &ctx.facts.board;
    let peak =
        predictions.iter().filter(|p| p.load_a >= b.iout_a).map(|p| p.peak_a).fold(0.0, f64::max);
    let limit = round_up(LIMIT_OVER_PEAK * peak, 0.1);
    let inrush = limit / LIMIT_ROOM - peak;
    let soft_start = round_up((b.c_f * b.vout_v / inrush).max(1e-3), 1e-4);
    let config = ProtectionConfig {
        uvlo_on_v: round_down(0.9 * b.vin_min_v, 0.1) as f32,
        uvlo_off_v: round_down(0.85 * b.vin_min_v, 0.1) as f32,
        vin_max_v: vin_max_v(b.vin_max_v) as f32,
        vin_max_hysteresis_v: round_up(0.03 * vin_max_v(b.vin_max_v), 0.1) as f32,
        ovp_v: ctx.ovp_v() as f32,
        current_limit_a: limit as f32,
        soft_start_s: soft_start as f32,
        stuck_low_v: round_to(0.06 * b.vout_v, 0.01) as f32,
        stuck_implied_v: round_to(0.4 * b.vout_v, 0.01) as f32,
        ..ProtectionConfig::demo()
    };
    Protections { config, full_load_peak_a: peak, inrush_a: b.c_f * b.vout_v / soft_start }
}

/// The reasons for the shared choices.
pub fn choices(ctx: &Context, plan: &LawPlan, p: &Protections) -> Vec<Choice> {
    let (b, c) = (&ctx.facts.board, &p.config);
    let mut out = vec![
        Choice::new(
            "output divider",
            format!("{} (ratio {:.6})", ctx.output_divider.label(), ctx.output_divider.ratio()),
            "E24 parts that put the output near half the ADC reference: room for the over-voltage threshold and overshoots (rule of this tool)".into(),
        ),
        Choice::new(
            "input divider",
            format!("{} (ratio {:.6})", ctx.input_divider.label(), ctx.input_divider.ratio()),
            "E24 parts that read 1.2 × the input's stop threshold at full scale (rule of this tool)".into(),
        ),
        Choice::new(
            "readings",
            eng(plan.sample_hz, "Hz"),
            match plan.scheme {
                Scheme::OnTimeSampled => "the law's samples; the protections read the same".into(),
                _ => "ten per housekeeping window, for the protections and the averages; the law runs on the comparator (rule of this tool)".into(),
            },
        ),
        housekeeping_choice(ctx),
        Choice::new(
            "window",
            format!("{} to {}", eng(f64::from(ctx.window.f_min_hz), "Hz"), eng(f64::from(ctx.window.f_max_hz), "Hz")),
            "above the audible band, below CISPR 32's conducted band (common practice); smaller pulses at light load keep the floor".into(),
        ),
        Choice::new(
            "DC correction",
            "on".into(),
            "a ripple loop regulates an edge or the band's centre, not the mean; the slow path trims the reference until the mean sits at the setpoint".into(),
        ),
        Choice::new(
            "current limit",
            eng(f64::from(c.current_limit_a), "A"),
            format!("{LIMIT_OVER_PEAK} × the highest full-load peak {} (common practice: 20 to 30 % above it, from memory); the inductor must not saturate below it", eng(p.full_load_peak_a, "A")),
        ),
        Choice::new(
            "soft-start",
            eng(f64::from(c.soft_start_s), "s"),
            format!("charges C at {} on top of full load, so a start into full load stays {} below the limit (rule of this tool); at least 1 ms", eng(p.inrush_a, "A"), pct_over(LIMIT_ROOM)),
        ),
        Choice::new(
            "UVLO",
            format!("on {} off {}", eng(f64::from(c.uvlo_on_v), "V"), eng(f64::from(c.uvlo_off_v), "V")),
            "90 % and 85 % of the lowest input (rule of this tool)".into(),
        ),
        Choice::new(
            "input stop",
            format!("{} (restart {} lower)", eng(f64::from(c.vin_max_v), "V"), eng(f64::from(c.vin_max_hysteresis_v), "V")),
            "10 % above the highest input, rounded up to 0.5 V; 3 % hysteresis (rule of this tool)".into(),
        ),
        Choice::new(
            "over-voltage",
            eng(f64::from(c.ovp_v), "V"),
            format!("10 % above the {} output (common practice)", eng(b.vout_v, "V")),
        ),
    ];
    out.push(Choice::new(
        "cpu",
        format!("{} at {}: {:.0} % planned", plan.budget.core().name(), eng(f64::from(ctx.facts.mcu.clock_hz), "Hz"), 100.0 * plan.load),
        format!("each handler's counted instructions × the core's cycles per instruction, plus entry and exit, at the planned rates (light load at up to 2.5 × the floor); at most {:.0} %", 100.0 * PLANNED_SHARE),
    ));
    out
}

fn housekeeping_choice(ctx: &Context) -> Choice {
    let f_lc = ctx.facts.board.lc_resonance_hz();
    match ctx.hk.observer_hz {
        Some(obs) => Choice::new(
            "housekeeping",
            format!("{}, observer {}", eng(ctx.hk.hz, "Hz"), eng(obs, "Hz")),
            format!("at least 3 × the LC resonance {} so the observer's model sees the filter (2 kHz broke it at 1.5 kHz in the simulator: rule of this tool); observer at a fifth of the rate", eng(f_lc, "Hz")),
        ),
        None => Choice::new(
            "housekeeping",
            format!("{}, no observer", eng(ctx.hk.hz, "Hz")),
            format!("3 × the LC resonance {} would take over {:.0} % of the core: without the observer 1 kHz serves the protections and the averages", eng(f_lc, "Hz"), 100.0 * HOUSEKEEPING_SHARE),
        ),
    }
}
