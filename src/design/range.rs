//! The proposal's predictions over the input × load range, from the closed
//! forms: frequency, ripple, conduction mode, the CCM/DCM boundary and the
//! peak current.

use super::closed_form::{
    hysteretic_dcm_pulse, on_time_frequency_dcm, pulse_of_peak, OperatingPoint,
};
use super::context::Context;
use super::delayed::{ccm_output_ripple, hysteretic_cycle_ccm};
use super::laws::{filter, point, LawChoice, LawPlan};
use crate::sim::build::TRIM_MIN;

/// Load shares the table shows: 10 %, 50 % and 100 % of full load.
pub const LOAD_SHARES: [f64; 3] = [0.1, 0.5, 1.0];

/// One operating point's prediction.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Prediction {
    /// Input, V.
    pub vin_v: f64,
    /// Load, A.
    pub load_a: f64,
    /// Whether the inductor current stays above zero.
    pub ccm: bool,
    /// Switching frequency the law settles at, Hz (the on-time law with
    /// its trim; in DCM below the window's floor, the light-load
    /// adaptation, not counted here, raises it with smaller pulses).
    pub frequency_hz: f64,
    /// Peak-to-peak inductor ripple, A (DCM: the pulse's peak).
    pub ripple_current_a: f64,
    /// Peak-to-peak output ripple, V (DCM: at most the ESR's step plus the
    /// charge the pulse delivers above the load, over C).
    pub ripple_v: f64,
    /// Load below which the converter enters DCM at this input, A.
    pub boundary_a: f64,
    /// Peak inductor current, A.
    pub peak_a: f64,
}

/// The predictions at every input point × [`LOAD_SHARES`].
pub fn predict(ctx: &Context, plan: &LawPlan) -> Vec<Prediction> {
    let b = &ctx.facts.board;
    ctx.input_points()
        .iter()
        .flat_map(|&vin| LOAD_SHARES.iter().map(move |&share| (vin, share * b.iout_a)))
        .filter_map(|(vin, load)| {
            let op = point(ctx.facts, ctx.stage.diode_vf_v, vin, load);
            match plan.law {
                LawChoice::Hysteretic { band_v } => hysteretic(ctx, &op, band_v, plan.delay_s),
                LawChoice::OnTime { frequency_hz, .. } => Some(on_time(ctx, &op, frequency_hz)),
            }
        })
        .collect()
}

fn hysteretic(ctx: &Context, op: &OperatingPoint, band: f64, delay: f64) -> Option<Prediction> {
    let f = filter(ctx.facts);
    let cycle = hysteretic_cycle_ccm(op, &f, band, delay).ok()?;
    let boundary_a = cycle.ripple_current_a / 2.0;
    if op.iout_a >= boundary_a {
        return Some(Prediction {
            vin_v: op.vin_v,
            load_a: op.iout_a,
            ccm: true,
            frequency_hz: cycle.frequency_hz,
            ripple_current_a: cycle.ripple_current_a,
            ripple_v: cycle.ripple_v,
            boundary_a,
            peak_a: op.iout_a + boundary_a,
        });
    }
    // DCM switches no faster than the CCM cycle at the same band and delay.
    let pulse = hysteretic_dcm_pulse(op, &f, band, delay);
    let f_hz = (op.iout_a / pulse.charge_c).min(cycle.frequency_hz);
    Some(dcm(ctx, op, f_hz, pulse.peak_a, boundary_a))
}

fn on_time(ctx: &Context, op: &OperatingPoint, f_hz: f64) -> Prediction {
    let b = &ctx.facts.board;
    // Feed-forward: the on-time that gives f at this input in CCM.
    let t_on = b.vout_v / (op.vin_v * f_hz);
    let di = (op.vin_v - op.vout_v) / b.l_h * t_on;
    let boundary_a = di / 2.0;
    if op.iout_a >= boundary_a {
        return Prediction {
            vin_v: op.vin_v,
            load_a: op.iout_a,
            ccm: true,
            frequency_hz: f_hz,
            ripple_current_a: di,
            ripple_v: ccm_output_ripple(op, &filter(ctx.facts), di),
            boundary_a,
            peak_a: op.iout_a + boundary_a,
        };
    }
    // The trim shortens the on-time (down to TRIM_MIN of it) until the
    // frequency is back at f: a DCM pulse's charge goes as T_on².
    let natural = on_time_frequency_dcm(op, b.l_h, t_on);
    let k = (natural / f_hz).sqrt().clamp(f64::from(TRIM_MIN), 1.0);
    dcm(ctx, op, natural / (k * k), di * k, boundary_a)
}

/// A DCM point: pulses of `peak_a` at `f_hz`. The output ripple is at
/// most the ESR's step plus the charge the pulse delivers while above the
/// load (the triangle's part above `I`, `Q·((i_pk − I)/i_pk)²`) over C.
fn dcm(ctx: &Context, op: &OperatingPoint, f_hz: f64, peak_a: f64, boundary_a: f64) -> Prediction {
    let b = &ctx.facts.board;
    let above = ((peak_a - op.iout_a) / peak_a).max(0.0);
    let charge = pulse_of_peak(op, b.l_h, peak_a).charge_c * above * above;
    Prediction {
        vin_v: op.vin_v,
        load_a: op.iout_a,
        ccm: false,
        frequency_hz: f_hz,
        ripple_current_a: peak_a,
        ripple_v: b.esr_ohm * peak_a + charge / b.c_f,
        boundary_a,
        peak_a,
    }
}
