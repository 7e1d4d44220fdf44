//! Closed-form predictions for ripple-based buck control, in SI units.
//!
//! These are design-time estimates, for choosing a band, an on-time or a
//! window, and for checking what the simulator shows. Continuous conduction
//! (CCM) relations follow Erickson & Maksimović, *Fundamentals of Power
//! Electronics* (3rd ed., 2020): ch. 2 for the inductor ripple, ch. 5 for
//! the CCM/DCM boundary and the DCM conversion ratio. The hysteretic
//! frequency relations are derived in the doc comment of each function.

/// Ideal CCM duty cycle `D = V_out / V_in`.
pub fn duty_ideal(vin: f64, vout: f64) -> f64 {
    vout / vin
}

/// CCM duty cycle with conduction drops: a high-side switch `r_on`, a
/// freewheeling diode `vf` (+ `rd`), and the inductor's `dcr` at output
/// current `iout`. From the volt-second balance on L:
/// `D·(V_in − I·R_on) − (1 − D)·(V_f + I·R_d) = V_out + I·R_dcr`.
pub fn duty_ccm(vin: f64, vout: f64, iout: f64, r_on: f64, vf: f64, rd: f64, dcr: f64) -> f64 {
    let freewheel = vf + iout * rd;
    (vout + iout * dcr + freewheel) / (vin - iout * r_on + freewheel)
}

/// Peak-to-peak inductor ripple in CCM, A:
/// `Δi_L = (V_in − V_out)·D / (L·f_sw)` (Erickson & Maksimović, ch. 2).
pub fn ripple_current(vin: f64, vout: f64, l_h: f64, f_hz: f64) -> f64 {
    (vin - vout) * duty_ideal(vin, vout) / (l_h * f_hz)
}

/// Switching frequency for a given peak-to-peak inductor ripple, Hz: the
/// inverse of [`ripple_current`], `f = V_out·(V_in − V_out) / (V_in·L·Δi_L)`.
pub fn frequency_for_ripple(vin: f64, vout: f64, l_h: f64, delta_i: f64) -> f64 {
    vout * (vin - vout) / (vin * l_h * delta_i)
}

/// Hysteretic frequency when the ESR's ripple dominates, Hz.
///
/// The sensed ripple is `ESR·i_L`, so the loop switches when
/// `ESR·Δi_L` spans the band. A loop delay `t_d` (sampling, conversion,
/// interrupt latency, comparator delay) lets the output run past each
/// threshold by its slope times `t_d`: `ESR·(V_in − V_out)/L` rising and
/// `ESR·V_out/L` falling, `ESR·V_in/L` together. Hence
/// `Δi_L = band/ESR + V_in·t_d/L`, and the frequency follows from
/// [`frequency_for_ripple`].
pub fn hysteretic_frequency_esr(
    vin: f64,
    vout: f64,
    l_h: f64,
    esr: f64,
    band: f64,
    delay_s: f64,
) -> f64 {
    let delta_i = band / esr + vin * delay_s / l_h;
    frequency_for_ripple(vin, vout, l_h, delta_i)
}

/// Hysteretic frequency when the capacitor's ripple dominates (ceramic
/// output, negligible ESR), Hz.
///
/// A triangular ripple current `Δi_L` into `C` makes a capacitor ripple of
/// `Δi_L/(8·f·C)` (Erickson & Maksimović, ch. 2); setting it equal to the
/// band with `Δi_L = V_out·(1 − D)/(L·f)` gives
/// `f = √(V_out·(1 − D) / (8·L·C·band))`. Delay is neglected here.
pub fn hysteretic_frequency_capacitive(vin: f64, vout: f64, l_h: f64, c_f: f64, band: f64) -> f64 {
    libm::sqrt(vout * (1.0 - duty_ideal(vin, vout)) / (8.0 * l_h * c_f * band))
}

/// Constant on-time law's CCM frequency, Hz: `f = D / T_on = V_out/(V_in·T_on)`.
pub fn on_time_frequency(vin: f64, vout: f64, on_time_s: f64) -> f64 {
    duty_ideal(vin, vout) / on_time_s
}

/// Whether the converter runs in CCM at load resistance `r_load`:
/// `K = 2L/(R·T_s) > K_crit = 1 − D` (Erickson & Maksimović, ch. 5).
pub fn is_ccm(vin: f64, vout: f64, l_h: f64, r_load: f64, f_hz: f64) -> bool {
    2.0 * l_h * f_hz / r_load > 1.0 - duty_ideal(vin, vout)
}

/// Load current at the CCM/DCM boundary, A: half the ripple,
/// `I_crit = Δi_L / 2`.
pub fn boundary_current(vin: f64, vout: f64, l_h: f64, f_hz: f64) -> f64 {
    ripple_current(vin, vout, l_h, f_hz) / 2.0
}

/// DCM conversion ratio of the ideal buck at duty `d`:
/// `M = 2 / (1 + √(1 + 4K/D²))`, `K = 2L/(R·T_s)`
/// (Erickson & Maksimović, ch. 5).
pub fn dcm_conversion_ratio(d: f64, l_h: f64, r_load: f64, f_hz: f64) -> f64 {
    let k = 2.0 * l_h * f_hz / r_load;
    2.0 / (1.0 + libm::sqrt(1.0 + 4.0 * k / (d * d)))
}

/// Peak inductor current in CCM, A: `I_out + Δi_L/2`.
pub fn peak_current(iout: f64, delta_i: f64) -> f64 {
    iout + delta_i / 2.0
}

/// Hysteretic frequency in DCM, Hz.
///
/// Derived here. A pulse starts from zero current when the output reaches
/// the lower threshold. While on, the current rises at
/// `s₁ = (V_in − V_out)/L` and the output above its starting value is
/// `ESR·i + (s₁·t²/2 − I_out·t)/C`: the ESR's ripple plus the charge the
/// capacitor takes. It crosses the upper threshold at the positive root
/// `t₁` of `s₁/(2C)·t² + (ESR·s₁ − I_out/C)·t − band = 0`; the gate turns
/// off `t_d` later, at `i_pk = s₁·(t₁ + t_d)`. The current then falls at
/// `s₂ = (V_out + V_f)/L` to zero. The pulse carries
/// `Q = i_pk²/2·(1/s₁ + 1/s₂)` of charge, and pulses repeat as often as the
/// load draws it: `f = I_out / Q`. A sampled law's delay is really a whole
/// number of sampling periods after a sample-aligned turn-on, which this
/// averages over.
pub fn hysteretic_frequency_dcm(
    op: &OperatingPoint,
    filter: &OutputFilter,
    band_v: f64,
    delay_s: f64,
) -> f64 {
    op.iout_a / hysteretic_dcm_pulse(op, filter, band_v, delay_s).charge_c
}

/// One DCM pulse: its peak current and the charge it delivers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DcmPulse {
    /// Peak inductor current, A.
    pub peak_a: f64,
    /// Charge delivered to the output, C.
    pub charge_c: f64,
}

/// The hysteretic law's DCM pulse (derived at
/// [`hysteretic_frequency_dcm`]).
pub fn hysteretic_dcm_pulse(
    op: &OperatingPoint,
    filter: &OutputFilter,
    band_v: f64,
    delay_s: f64,
) -> DcmPulse {
    let s1 = (op.vin_v - op.vout_v) / filter.l_h;
    let a = s1 / (2.0 * filter.c_f);
    let b = filter.esr_ohm * s1 - op.iout_a / filter.c_f;
    let t1 = (-b + libm::sqrt(b * b + 4.0 * a * band_v)) / (2.0 * a);
    pulse_of_peak(op, filter.l_h, s1 * (t1 + delay_s))
}

/// A DCM pulse that rises from zero to `peak_a` and falls back to zero:
/// `Q = i_pk²/2·(1/s₁ + 1/s₂)` with `s₁ = (V_in − V_out)/L`,
/// `s₂ = (V_out + V_f)/L` (the triangle's area).
pub fn pulse_of_peak(op: &OperatingPoint, l_h: f64, peak_a: f64) -> DcmPulse {
    let s1 = (op.vin_v - op.vout_v) / l_h;
    let s2 = (op.vout_v + op.vf_v) / l_h;
    DcmPulse { peak_a, charge_c: peak_a * peak_a / 2.0 * (1.0 / s1 + 1.0 / s2) }
}

/// Constant on-time law's DCM frequency, Hz.
///
/// Derived here, as for the hysteretic DCM pulse: each pulse starts from
/// zero current and lasts `T_on`, so it peaks at `s₁·T_on` and carries
/// [`pulse_of_peak`]'s charge; pulses come as often as the load draws it,
/// `f = I_out / Q`. In CCM the law switches at [`on_time_frequency`]; it
/// is in DCM when `I_out` is below half of `s₁·T_on`.
pub fn on_time_frequency_dcm(op: &OperatingPoint, l_h: f64, on_time_s: f64) -> f64 {
    let s1 = (op.vin_v - op.vout_v) / l_h;
    op.iout_a / pulse_of_peak(op, l_h, s1 * on_time_s).charge_c
}

/// Where the converter runs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OperatingPoint {
    /// Input voltage, V (as seen by the inductor during the on-time).
    pub vin_v: f64,
    /// Output voltage, V.
    pub vout_v: f64,
    /// Load current, A.
    pub iout_a: f64,
    /// Freewheeling diode drop, V (0 for a synchronous stage).
    pub vf_v: f64,
}

/// The output filter.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OutputFilter {
    /// Inductance, H.
    pub l_h: f64,
    /// Output capacitance, F.
    pub c_f: f64,
    /// Capacitor ESR, Ω.
    pub esr_ohm: f64,
}

/// Predicted hysteretic frequency, Hz, choosing the regime: ESR- or
/// capacitor-dominated ripple (whichever is larger at the ESR-dominated
/// frequency), then DCM when the load is below half the ripple
/// (`synchronous`: forced CCM, no DCM branch).
pub fn hysteretic_frequency(
    op: &OperatingPoint,
    filter: &OutputFilter,
    band_v: f64,
    delay_s: f64,
    synchronous: bool,
) -> f64 {
    let (vin, vout, l) = (op.vin_v, op.vout_v, filter.l_h);
    let f_esr = hysteretic_frequency_esr(vin, vout, l, filter.esr_ohm, band_v, delay_s);
    // ESR ripple Δi·ESR against capacitor ripple Δi/(8·f·C).
    if filter.esr_ohm * 8.0 * f_esr * filter.c_f < 1.0 {
        return hysteretic_frequency_capacitive(vin, vout, l, filter.c_f, band_v);
    }
    let delta_i = band_v / filter.esr_ohm + vin * delay_s / l;
    if !synchronous && op.iout_a < delta_i / 2.0 {
        // DCM can only switch slower than CCM at the same ripple.
        hysteretic_frequency_dcm(op, filter, band_v, delay_s).min(f_esr)
    } else {
        f_esr
    }
}
