//! The design module's closed forms against handbook relations and against
//! the waveform they describe, integrated here step by step.
//!
//! Sources: Erickson & Maksimović, *Fundamentals of Power Electronics*
//! (3rd ed., 2020), ch. 2 (inductor ripple `Δi = (V_in − V_out)·D/(L·f)`,
//! capacitor ripple `Δi/(8·f·C)` of a triangular current) and ch. 5 (the
//! DCM conversion ratio `M = 2/(1 + √(1 + 4K/D²))`, `K = 2L/(R·T_s)`).

use ripplectl::design::{
    ccm_output_ripple, hysteretic_cycle_ccm, on_time_frequency_dcm, NoCycle, OperatingPoint,
    OutputFilter,
};

const VOUT: f64 = 5.0;

fn op(vin: f64, iout: f64) -> OperatingPoint {
    OperatingPoint { vin_v: vin, vout_v: VOUT, iout_a: iout, vf_v: 0.0 }
}

#[test]
fn without_capacitor_ripple_the_cycle_is_the_esr_relation() {
    // ESR ripple only (C → ∞): the output is ESR·i_L, it runs past each
    // threshold by its slope times t_d, so Δi = band/ESR + V_in·t_d/L
    // (the slopes (V_in − V_out)/L and V_out/L of ch. 2), and the
    // frequency follows from ch. 2's Δi = (V_in − V_out)·D/(L·f).
    let (l, esr, band, td) = (47e-6, 0.040, 0.020, 2.9e-6);
    for vin in [18.0, 24.0, 32.0] {
        let f = OutputFilter { l_h: l, c_f: 1e3, esr_ohm: esr };
        let c = hysteretic_cycle_ccm(&op(vin, 2.0), &f, band, td).unwrap();
        let di = band / esr + vin * td / l;
        let d = VOUT / vin;
        let f_handbook = (vin - VOUT) * d / (l * di);
        assert!((c.ripple_current_a - di).abs() / di < 1e-6, "{vin} V");
        assert!((c.frequency_hz - f_handbook).abs() / f_handbook < 1e-6, "{vin} V");
        // The mean sits ESR·t_d·(s₁ − s₂)/2 above the band's centre: the
        // rising slope is steeper when V_in > 2·V_out.
        let offset = esr * td * ((vin - VOUT) - VOUT) / l / 2.0;
        assert!((c.mean_offset_v - offset).abs() < 1e-6, "{vin} V");
    }
}

#[test]
fn output_ripple_limits_are_the_handbook_s() {
    // A triangle of Δi at f into C alone: Δi/(8·f·C) (ch. 2); into the ESR
    // alone: ESR·Δi.
    let (vin, l, di) = (24.0, 47e-6, 1.5);
    let f_hz = (vin - VOUT) * (VOUT / vin) / (l * di);
    let c_only = OutputFilter { l_h: l, c_f: 100e-6, esr_ohm: 0.0 };
    let r = ccm_output_ripple(&op(vin, 2.0), &c_only, di);
    let handbook = di / (8.0 * f_hz * 100e-6);
    assert!((r - handbook).abs() / handbook < 1e-9, "{r} vs {handbook}");
    let esr_only = OutputFilter { l_h: l, c_f: 1e6, esr_ohm: 0.040 };
    let r = ccm_output_ripple(&op(vin, 2.0), &esr_only, di);
    assert!((r - 0.040 * di).abs() < 1e-6, "{r}");
}

/// The sensed output over two periods of the triangle the cycle names,
/// stepped at `dt` (a plain integration, independent of the closed form):
/// returns (output at the upper crossing, at the lower crossing, mean,
/// peak to peak), the crossings `t_d` before the turn-off and the turn-on.
fn integrate(
    c: &ripplectl::design::HystereticCycle,
    o: &OperatingPoint,
    f: &OutputFilter,
    td: f64,
) -> (f64, f64, f64, f64) {
    let s1 = (o.vin_v - o.vout_v) / f.l_h;
    let s2 = o.vout_v / f.l_h;
    let (t_on, period) = (c.on_time_s, 1.0 / c.frequency_hz);
    let n = 200_000;
    let dt = 2.0 * period / f64::from(n);
    let (mut vc, mut t) = (0.0, 0.0);
    let mut i = -c.ripple_current_a / 2.0;
    let (mut upper, mut lower, mut sum, mut lo, mut hi) = (0.0, 0.0, 0.0, f64::MAX, f64::MIN);
    for k in 0..n {
        let in_second = k >= n / 2;
        let phase = t % period;
        let v = vc + f.esr_ohm * i;
        if in_second {
            sum += v;
            lo = lo.min(v);
            hi = hi.max(v);
            if (phase - (t_on - td)).abs() < dt / 2.0 {
                upper = v;
            }
            if (phase - (period - td)).abs() < dt / 2.0 {
                lower = v;
            }
        }
        let di = if phase < t_on { s1 } else { -s2 };
        vc += (i + di * dt / 2.0) * dt / f.c_f;
        i += di * dt;
        t += dt;
    }
    (upper, lower, sum / f64::from(n / 2), hi - lo)
}

#[test]
fn the_cycle_meets_its_own_conditions() {
    // The demo's polymer output behind a 2.9 µs loop delay: the waveform
    // integrated here crosses the thresholds a band apart t_d before each
    // edge; its mean and ripple are the closed form's.
    let f = OutputFilter { l_h: 47e-6, c_f: 220e-6, esr_ohm: 0.040 };
    let (band, td) = (0.020, 2.9e-6);
    for vin in [18.0, 32.0] {
        let o = op(vin, 2.0);
        let c = hysteretic_cycle_ccm(&o, &f, band, td).unwrap();
        let (upper, lower, mean, pp) = integrate(&c, &o, &f, td);
        assert!((upper - lower - band).abs() < 2e-4, "{vin} V: band {}", upper - lower);
        let centre = (upper + lower) / 2.0;
        assert!((mean - centre - c.mean_offset_v).abs() < 2e-4, "{vin} V: mean");
        assert!((pp - c.ripple_v).abs() < 2e-4, "{vin} V: ripple {pp} vs {}", c.ripple_v);
    }
}

#[test]
fn no_cycle_when_the_capacitor_ripple_leads() {
    // A ceramic output (3 mΩ, 94 µF: ESR·C = 0.28 µs) behind the same
    // delay: no steady cycle of this shape exists.
    let f = OutputFilter { l_h: 47e-6, c_f: 94e-6, esr_ohm: 0.003 };
    match hysteretic_cycle_ccm(&op(24.0, 2.0), &f, 0.020, 2.9e-6) {
        Err(NoCycle::CapacitorRippleLeads { esr_c_s, delay_s }) => {
            assert!((esr_c_s - 0.282e-6).abs() < 1e-12 && delay_s == 2.9e-6)
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn on_time_dcm_frequency_meets_the_dcm_conversion_ratio() {
    // At the frequency the pulse-charge balance gives, the ideal buck's
    // DCM conversion ratio (ch. 5) at D = T_on·f and K = 2L/(R·T_s) is
    // V_out/V_in.
    let (l, t_on) = (47e-6, 5e-6);
    for (vin, iout) in [(18.0, 0.1), (24.0, 0.3), (32.0, 0.5)] {
        let f = on_time_frequency_dcm(&op(vin, iout), l, t_on);
        let d = t_on * f;
        let k = 2.0 * l * f / (VOUT / iout);
        let m = 2.0 / (1.0 + (1.0 + 4.0 * k / (d * d)).sqrt());
        assert!((m - VOUT / vin).abs() < 1e-9, "{vin} V, {iout} A: M {m}");
        // And it is DCM: the load is below half the pulse's peak.
        assert!(iout < (vin - VOUT) / l * t_on / 2.0);
    }
}
