//! The hysteretic loop's steady CCM cycle with a loop delay and both parts
//! of the output ripple (ESR and capacitor), derived here.
//!
//! **The cycle.** In CCM the inductor current is a triangle around the
//! load current `I`, rising at `s₁ = (V_in − V_out)/L` for `T_on` and
//! falling at `s₂ = (V_out + V_f)/L` for `T_off`, with `Δi = s₁·T_on =
//! s₂·T_off` (Erickson & Maksimović, *Fundamentals of Power Electronics*,
//! 3rd ed., ch. 2). The capacitor takes `i_C = i_L − I`; the sensed output
//! is `v = v_C + ESR·i_C`. Taking `t = 0` at a turn-on, where `i_C = −Δi/2`,
//!
//! ```text
//! on:   v(t) − v(0) = ESR·s₁·t + (s₁·t²/2 − Δi·t/2)/C          0 ≤ t ≤ T_on
//! off:  v(T_on + τ) − v(0) = ESR·(Δi − s₂·τ) + (Δi·τ/2 − s₂·τ²/2)/C
//! ```
//!
//! (the on-time's charge is zero: its current is symmetric about zero).
//!
//! **The loop.** The gate turns off `t_d` after the output crosses the
//! upper threshold and on `t_d` after it crosses the lower one (comparator,
//! interrupt entry and the handler until its pin write). So the upper
//! threshold is `v(T_on − t_d)` and the lower one `v(−t_d)`, the same point
//! of the previous off-time. Their difference is the band; the `t²` terms
//! leave it linear in `Δi`:
//!
//! ```text
//! band = Δi·(ESR − t_d/C) − (s₁ + s₂)·t_d·(ESR − t_d/(2C))
//! Δi   = (band + (s₁ + s₂)·t_d·(ESR − t_d/(2C))) / (ESR − t_d/C)
//! ```
//!
//! Without delay this is `Δi = band/ESR`; without capacitor ripple
//! (`C → ∞`) it is [`hysteretic_frequency_esr`]'s `band/ESR + V_in·t_d/L`
//! (with `V_f = 0`). **A steady cycle needs `ESR·C > t_d`**: otherwise the
//! capacitor's ripple, lagging the current, has the output still rising
//! past the turn-off and still falling past the turn-on by more than the
//! ESR's step, and no band gives a cycle of this shape (a ceramic output
//! behind a slow interrupt handler switches erratically). The crossings
//! must also fall inside their phases: `T_on ≥ t_d` and `T_off ≥ t_d`.
//!
//! **The mean output.** Integrating the two pieces over a period,
//! `mean − v(0) = ESR·Δi/2 + Δi·(T_off − T_on)/(12·C)`; against the band's
//! centre this is the DC error a DC correction removes. With ESR alone it
//! is `ESR·t_d·(s₁ − s₂)/2`: the output overshoots the upper threshold by
//! more than the lower one when `V_in > 2·V_out`.
//!
//! [`hysteretic_frequency_esr`]: super::hysteretic_frequency_esr

use super::closed_form::{OperatingPoint, OutputFilter};

/// One steady CCM cycle of the hysteretic loop.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HystereticCycle {
    /// Switching frequency, Hz.
    pub frequency_hz: f64,
    /// Peak-to-peak inductor ripple, A.
    pub ripple_current_a: f64,
    /// On-time, s.
    pub on_time_s: f64,
    /// Peak-to-peak output ripple (ESR and capacitor together), V.
    pub ripple_v: f64,
    /// Mean output less the band's centre, V.
    pub mean_offset_v: f64,
}

/// Why the hysteretic loop has no steady CCM cycle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum NoCycle {
    /// `ESR·C` (s) is not above the loop delay (s).
    CapacitorRippleLeads {
        /// `ESR·C`, s.
        esr_c_s: f64,
        /// The loop delay, s.
        delay_s: f64,
    },
    /// A crossing would fall before its phase began: the on- or off-time
    /// (s) is shorter than the delay.
    PhaseShorterThanDelay {
        /// The shorter of on- and off-time, s.
        phase_s: f64,
    },
}

/// The steady CCM cycle at `op` with `band_v` and loop delay `delay_s`
/// (derived in the module's documentation).
pub fn hysteretic_cycle_ccm(
    op: &OperatingPoint,
    filter: &OutputFilter,
    band_v: f64,
    delay_s: f64,
) -> Result<HystereticCycle, NoCycle> {
    let OutputFilter { l_h, c_f, esr_ohm } = *filter;
    let td = delay_s;
    if esr_ohm * c_f <= td {
        return Err(NoCycle::CapacitorRippleLeads { esr_c_s: esr_ohm * c_f, delay_s: td });
    }
    let s1 = (op.vin_v - op.vout_v) / l_h;
    let s2 = (op.vout_v + op.vf_v) / l_h;
    let di = (band_v + (s1 + s2) * td * (esr_ohm - td / (2.0 * c_f))) / (esr_ohm - td / c_f);
    let (t_on, t_off) = (di / s1, di / s2);
    if t_on.min(t_off) < td {
        return Err(NoCycle::PhaseShorterThanDelay { phase_s: t_on.min(t_off) });
    }
    let wave = Wave { s1, s2, di, c_f, esr_ohm };
    let upper = wave.on(t_on - td);
    let lower = wave.off(t_off - td);
    let mean = esr_ohm * di / 2.0 + di * (t_off - t_on) / (12.0 * c_f);
    Ok(HystereticCycle {
        frequency_hz: 1.0 / (t_on + t_off),
        ripple_current_a: di,
        on_time_s: t_on,
        ripple_v: wave.peak_to_peak(),
        mean_offset_v: mean - (upper + lower) / 2.0,
    })
}

/// Peak-to-peak output ripple of a CCM cycle with `ripple_current_a`
/// (ESR and capacitor together, as in the module's documentation), V.
pub fn ccm_output_ripple(op: &OperatingPoint, filter: &OutputFilter, ripple_current_a: f64) -> f64 {
    let s1 = (op.vin_v - op.vout_v) / filter.l_h;
    let s2 = (op.vout_v + op.vf_v) / filter.l_h;
    let wave = Wave { s1, s2, di: ripple_current_a, c_f: filter.c_f, esr_ohm: filter.esr_ohm };
    wave.peak_to_peak()
}

/// The output over one cycle, relative to its value at the turn-on.
struct Wave {
    s1: f64,
    s2: f64,
    di: f64,
    c_f: f64,
    esr_ohm: f64,
}

impl Wave {
    /// `t` into the on-time.
    fn on(&self, t: f64) -> f64 {
        self.esr_ohm * self.s1 * t + (self.s1 * t * t / 2.0 - self.di * t / 2.0) / self.c_f
    }

    /// `tau` into the off-time.
    fn off(&self, tau: f64) -> f64 {
        self.esr_ohm * (self.di - self.s2 * tau)
            + (self.di * tau / 2.0 - self.s2 * tau * tau / 2.0) / self.c_f
    }

    /// Highest less lowest output: the phases' ends and the turning points
    /// inside them (where `ESR·di/dt + i_C/C = 0`).
    fn peak_to_peak(&self) -> f64 {
        let (t_on, t_off) = (self.di / self.s1, self.di / self.s2);
        let rc = self.esr_ohm * self.c_f;
        let (turn_on, turn_off) = (t_on / 2.0 - rc, t_off / 2.0 - rc);
        let points = [
            Some(self.on(0.0)),
            Some(self.on(t_on)),
            (0.0..=t_on).contains(&turn_on).then(|| self.on(turn_on)),
            (0.0..=t_off).contains(&turn_off).then(|| self.off(turn_off)),
        ];
        let (lo, hi) = points
            .iter()
            .flatten()
            .fold((f64::MAX, f64::MIN), |(lo, hi), &v| (lo.min(v), hi.max(v)));
        hi - lo
    }
}
