//! Inductor current reconstructed from the switching edges.
//!
//! Firmware knows when it switched, the input voltage and the output voltage.
//! Between edges the inductor current of a buck follows
//!
//! ```text
//! on:   di/dt = (V_in − V_out − i·(R_on + DCR)) / L
//! off:  di/dt = (−V_out − V_f − i·(R_d + DCR)) / L        (diode)
//!       di/dt = (−V_out − i·(R_low + DCR)) / L            (synchronous)
//! ```
//!
//! and a diode stage clamps at zero (DCM). The estimator integrates these
//! per segment with one predictor-corrector (Heun) step, so the resistive
//! drop is taken at the segment's mean current; on the fast path that is a
//! few multiply-accumulates per edge or query.
//!
//! **What it needs to know** ([`InductorModel`]): `L` sets the ripple's
//! amplitude (a 10 % error in `L` is a 10 % error in the ripple, and in the
//! DCM current); the drops `R_on`, `DCR`, `V_f`, `R_d` set the DC level in
//! CCM, which without a current sensor is only observable through the
//! volt-second balance: an error of δV in the average switch-node voltage
//! (a `V_f` off by δV over the off-time, say) moves the average current by
//! `δV / R_total`, with `R_total = D·R_on + (1 − D)·R_d + DCR`. The
//! [`Observer`](super::Observer) corrects slow drift with the measured output
//! voltage, and fixes the level outright when the board measures its output
//! current.
//!
//! Formats (all `fixed` types or their raw bits):
//! - current [`Amps`]: `I16F16`, amperes, range ±32 768 A, LSB 2⁻¹⁶ A
//!   (15.3 µA); arithmetic saturates at the range's edge;
//! - slopes: `I8F24` amperes per timer tick, range ±128 A/tick, LSB
//!   2⁻²⁴ A/tick;
//! - decays `R·t_tick/L`: `U0F32` per tick, range [0, 1);
//! - charge `∫ i dt`: `i64` in 2⁻¹⁶ A·ticks; `∫ i² dt`: `i64` in
//!   2⁻¹⁶ A²·ticks (current squared at 2⁻⁸ A resolution).

use crate::error::{finite, ConfigError};
use crate::law::Gate;
use crate::scale::{AdcChannel, TimerClock};
use crate::tick::Instant;
use fixed::types::{I16F16, I8F24, U0F32};

/// Current, amperes: `I16F16` (see the module's formats).
pub type Amps = I16F16;

/// What the estimator assumes about the power stage, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct InductorModel {
    /// Inductance, H (> 0).
    pub l_h: f32,
    /// High-side switch on-resistance, Ω.
    pub r_on_ohm: f32,
    /// Inductor DCR, Ω.
    pub dcr_ohm: f32,
    /// Freewheeling diode forward voltage, V.
    pub diode_vf_v: f32,
    /// Freewheeling diode dynamic resistance, Ω.
    pub diode_rd_ohm: f32,
    /// Low-side switch on-resistance, Ω, for a synchronous stage (forced
    /// CCM: no clamp at zero); `None` for a diode.
    pub r_low_ohm: Option<f32>,
}

/// One switching cycle's currents, from a turn-on to the next.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CycleCurrents {
    /// Current at the turn-off (the cycle's peak).
    pub peak: Amps,
    /// Current at the turn-on that began the cycle (the valley; 0 in DCM).
    pub valley: Amps,
    /// Ticks the gate was on.
    pub on_ticks: u32,
    /// Ticks off while conducting (diode or low side), excluding DCM idle.
    pub off_ticks: u32,
    /// Ticks from turn-on to the next turn-on.
    pub period_ticks: u32,
    /// `∫ i dt` over the cycle, 2⁻¹⁶ A·ticks.
    pub charge: i64,
    /// The current reached zero during the off-time.
    pub dcm: bool,
}

impl CycleCurrents {
    /// Average current over the cycle (slow path: divides). Zero for an
    /// empty cycle.
    pub fn average(&self) -> Amps {
        if self.period_ticks == 0 {
            return Amps::ZERO;
        }
        let bits = self.charge / i64::from(self.period_ticks);
        Amps::from_bits(bits.clamp(i64::from(i32::MIN), i64::from(i32::MAX)) as i32)
    }
}

/// Sums over one conduction phase (on, or off while conducting).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhaseTotals {
    /// Ticks in the phase.
    pub ticks: u64,
    /// `∫ i dt`, 2⁻¹⁶ A·ticks.
    pub charge: i64,
    /// `∫ i² dt`, 2⁻¹⁶ A²·ticks.
    pub charge_sq: i64,
}

impl PhaseTotals {
    fn add(&mut self, ticks: u32, charge: i64, charge_sq: i64) {
        self.ticks = self.ticks.wrapping_add(u64::from(ticks));
        self.charge = self.charge.wrapping_add(charge);
        self.charge_sq = self.charge_sq.wrapping_add(charge_sq);
    }

    /// `∫ i dt` in A·s (slow path).
    pub fn charge_as(&self, tick_s: f32) -> f32 {
        self.charge as f32 / 65_536.0 * tick_s
    }

    /// `∫ i² dt` in A²·s (slow path).
    pub fn charge_sq_a2s(&self, tick_s: f32) -> f32 {
        self.charge_sq as f32 / 65_536.0 * tick_s
    }
}

/// Sums since the slow path last took them.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WindowTotals {
    /// While the gate was on.
    pub on: PhaseTotals,
    /// While off and conducting (diode or low side).
    pub off: PhaseTotals,
    /// Ticks off with zero current (DCM idle).
    pub idle_ticks: u64,
    /// Completed cycles.
    pub cycles: u32,
    /// Cycles that ended in DCM.
    pub dcm_cycles: u32,
    /// Sum of cycle peaks, 2⁻¹⁶ A.
    pub peak_sum: i64,
    /// Sum of cycle valleys, 2⁻¹⁶ A.
    pub valley_sum: i64,
    /// Largest cycle peak.
    pub peak_max: Amps,
    /// Completed cycles' on-ticks (whole cycles only, unlike `on.ticks`).
    pub cycle_on_ticks: u64,
    /// Completed cycles' conducting off-ticks.
    pub cycle_off_ticks: u64,
    /// Completed cycles' ticks.
    pub cycle_ticks: u64,
}

impl WindowTotals {
    /// All ticks in the window.
    pub fn ticks(&self) -> u64 {
        self.on.ticks + self.off.ticks + self.idle_ticks
    }

    /// Average current over the window, A (slow path).
    pub fn average_a(&self) -> f32 {
        let t = self.ticks();
        if t == 0 {
            return 0.0;
        }
        (self.on.charge + self.off.charge) as f32 / 65_536.0 / t as f32
    }

    /// Duty cycle over the window's completed cycles (slow path); 0
    /// without one.
    pub fn duty(&self) -> f32 {
        self.fraction(self.cycle_on_ticks)
    }

    /// Conducting off-time fraction over the completed cycles.
    pub fn off_fraction(&self) -> f32 {
        self.fraction(self.cycle_off_ticks)
    }

    fn fraction(&self, ticks: u64) -> f32 {
        if self.cycle_ticks == 0 {
            0.0
        } else {
            ticks as f32 / self.cycle_ticks as f32
        }
    }
}

/// Piecewise-linear inductor-current estimator.
#[derive(Clone, Debug)]
pub struct CurrentEstimator {
    tick_s: f32,
    model: InductorModel,
    inv_l_tick: f32,
    // Segment constants. The output's share of the slopes follows every
    // output reading (fast path); the input's share, the slow path.
    vin_term: i32,
    vout_term: i32,
    vf_term: i32,
    out_code_term: u32,
    slope_on: i32,
    slope_off: i32,
    decay_on: u32,
    decay_off: u32,
    ticks_per_amp_on: u32,
    ticks_per_amp_off: u32,
    // State.
    gate: Gate,
    since: Instant,
    current: i32,
    cycle: CycleCurrents,
    last_cycle: Option<CycleCurrents>,
    totals: WindowTotals,
}

/// `x` in `U0F32` bits, saturating to [0, 1).
fn u0f32_bits(x: f32) -> u32 {
    U0F32::saturating_from_num(x).to_bits()
}

/// `x` in `I8F24` bits, saturating.
fn i8f24_bits(x: f32) -> i32 {
    I8F24::saturating_from_num(x).to_bits()
}

/// Ticks per ampere for a slope magnitude in A/tick, as `U16F16`-style
/// bits (2⁻¹⁶ ticks per A), saturating; 0 for a zero slope.
fn ticks_per_amp_bits(slope_a_per_tick: f32) -> u32 {
    let s = slope_a_per_tick.abs();
    if s <= 0.0 {
        return 0;
    }
    let v = 65_536.0 / s;
    if v >= u32::MAX as f32 {
        u32::MAX
    } else {
        v as u32
    }
}

impl CurrentEstimator {
    /// An estimator for `model` on a timer `clock`, at rest (zero current,
    /// gate off). Call [`set_voltages`](Self::set_voltages) before relying
    /// on it.
    ///
    /// Errors: [`ConfigError::NotFinite`]; [`ConfigError::InductanceNotPositive`]
    /// when `l_h ≤ 0`; [`ConfigError::ResistanceNegative`] for a negative
    /// resistance or forward voltage.
    pub fn new(model: &InductorModel, clock: &TimerClock) -> Result<Self, ConfigError> {
        if finite(model.l_h)? <= 0.0 {
            return Err(ConfigError::InductanceNotPositive);
        }
        for r in [
            model.r_on_ohm,
            model.dcr_ohm,
            model.diode_vf_v,
            model.diode_rd_ohm,
            model.r_low_ohm.unwrap_or(0.0),
        ] {
            if finite(r)? < 0.0 {
                return Err(ConfigError::ResistanceNegative);
            }
        }
        let tick_s = clock.tick_s() as f32;
        let inv_l_tick = tick_s / model.l_h;
        let off_r = model.r_low_ohm.unwrap_or(model.diode_rd_ohm) + model.dcr_ohm;
        Ok(Self {
            tick_s,
            model: *model,
            inv_l_tick,
            vin_term: 0,
            vout_term: 0,
            vf_term: i8f24_bits(if model.r_low_ohm.is_some() {
                0.0
            } else {
                model.diode_vf_v * inv_l_tick
            }),
            out_code_term: 0,
            slope_on: 0,
            slope_off: 0,
            decay_on: u0f32_bits((model.r_on_ohm + model.dcr_ohm) * inv_l_tick),
            decay_off: u0f32_bits(off_r * inv_l_tick),
            ticks_per_amp_on: 0,
            ticks_per_amp_off: 0,
            gate: Gate::Off,
            since: Instant(0),
            current: 0,
            cycle: CycleCurrents::default(),
            last_cycle: None,
            totals: WindowTotals::default(),
        })
    }

    /// Start timing from `now` (the first segment would otherwise run from
    /// `Instant(0)`), keeping the present current. Call once the timer runs,
    /// and after any pause in switching the estimator did not see.
    pub fn restart_at(&mut self, now: Instant) {
        self.since = now;
        self.cycle =
            CycleCurrents { valley: Amps::from_bits(self.current), ..CycleCurrents::default() };
    }

    /// The model in use.
    pub const fn model(&self) -> &InductorModel {
        &self.model
    }

    /// Slow path: the input and output voltages the slopes use, volts.
    pub fn set_voltages(&mut self, vin_v: f32, vout_v: f32) {
        self.vin_term = i8f24_bits(vin_v * self.inv_l_tick);
        self.vout_term = i8f24_bits(vout_v * self.inv_l_tick);
        self.refresh_slopes();
        self.refresh_reciprocals();
    }

    /// Slow path: the same from raw ADC codes of the input and output
    /// channels.
    pub fn set_voltage_codes(
        &mut self,
        vin: u16,
        vin_adc: &AdcChannel,
        vout: u16,
        vout_adc: &AdcChannel,
    ) {
        self.set_voltages(vin_adc.to_volts(vin), vout_adc.to_volts(vout));
    }

    /// Slow path, once: let [`on_output_code`](Self::on_output_code) follow
    /// the output through `adc`'s codes (offset ignored: its share is below
    /// one code's worth of slope).
    pub fn follow_output(&mut self, adc: &AdcChannel) {
        // A/tick per code in 2⁻³² units: one code's volts × t_tick/L.
        let per_code = adc.lsb_signal_v() * f64::from(self.inv_l_tick) * 4_294_967_296.0;
        self.out_code_term =
            if per_code >= f64::from(u32::MAX) { u32::MAX } else { per_code as u32 };
    }

    /// Fast path: a fresh output reading; the slopes follow it from `now`.
    /// Does nothing until [`follow_output`](Self::follow_output) was called.
    #[inline]
    pub fn on_output_code(&mut self, code: u16, now: Instant) {
        if self.out_code_term == 0 {
            return;
        }
        self.close_segment(now);
        // Q8.24 = (code × 2⁻³² A/tick) >> 8.
        self.vout_term = ((u64::from(code) * u64::from(self.out_code_term)) >> 8) as i32;
        self.refresh_slopes();
    }

    #[inline(always)]
    fn refresh_slopes(&mut self) {
        self.slope_on = self.vin_term.saturating_sub(self.vout_term);
        self.slope_off = self.vout_term.saturating_add(self.vf_term).saturating_neg();
    }

    fn refresh_reciprocals(&mut self) {
        let per_tick = |bits: i32| I8F24::from_bits(bits).to_num::<f32>();
        self.ticks_per_amp_on = ticks_per_amp_bits(per_tick(self.slope_on));
        self.ticks_per_amp_off = ticks_per_amp_bits(per_tick(self.slope_off));
    }

    /// Fast path: the current at `now` (the state advanced without being
    /// stored).
    #[inline]
    pub fn current_at(&self, now: Instant) -> Amps {
        let (i, _, _, _) = self.segment_end(now.ticks_since(self.since));
        Amps::from_bits(i)
    }

    /// Fast path: ticks from the last edge until the current would reach
    /// `limit` while the gate is on (from the slope without its
    /// resistive term, so never later than the model's own crossing);
    /// `None` when off or not rising.
    #[inline]
    pub fn ticks_to_reach(&self, limit: Amps) -> Option<u32> {
        if !self.gate.is_on() || self.ticks_per_amp_on == 0 {
            return None;
        }
        let gap = i64::from(limit.to_bits()) - i64::from(self.current);
        if gap <= 0 {
            return Some(0);
        }
        let ticks = (gap * i64::from(self.ticks_per_amp_on)) >> 32;
        Some(ticks.min(i64::from(u32::MAX >> 1)) as u32)
    }

    /// Fast path: the gate switched to `gate` at `at`. Returns the cycle
    /// completed by a turn-on.
    #[inline]
    pub fn on_gate(&mut self, gate: Gate, at: Instant) -> Option<CycleCurrents> {
        if gate == self.gate {
            return None;
        }
        self.close_segment(at);
        self.gate = gate;
        match gate {
            Gate::Off => {
                self.cycle.peak = Amps::from_bits(self.current);
                None
            }
            Gate::On => {
                let done = self.cycle;
                self.cycle = CycleCurrents {
                    valley: Amps::from_bits(self.current),
                    ..CycleCurrents::default()
                };
                if done.period_ticks == 0 {
                    return None;
                }
                self.totals.cycles = self.totals.cycles.wrapping_add(1);
                self.totals.dcm_cycles = self.totals.dcm_cycles.wrapping_add(u32::from(done.dcm));
                self.totals.peak_sum =
                    self.totals.peak_sum.wrapping_add(i64::from(done.peak.to_bits()));
                self.totals.valley_sum =
                    self.totals.valley_sum.wrapping_add(i64::from(done.valley.to_bits()));
                self.totals.peak_max = self.totals.peak_max.max(done.peak);
                self.totals.cycle_on_ticks += u64::from(done.on_ticks);
                self.totals.cycle_off_ticks += u64::from(done.off_ticks);
                self.totals.cycle_ticks += u64::from(done.period_ticks);
                self.last_cycle = Some(done);
                Some(done)
            }
        }
    }

    /// Fast path: bring the stored state up to `now` (for instance before a
    /// slow-path read).
    #[inline]
    pub fn update(&mut self, now: Instant) {
        self.close_segment(now);
    }

    /// When the present segment (on- or off-time) began.
    pub const fn segment_start(&self) -> Instant {
        self.since
    }

    /// The last completed cycle.
    pub const fn last_cycle(&self) -> Option<CycleCurrents> {
        self.last_cycle
    }

    /// The current at the last update or edge.
    pub fn current(&self) -> Amps {
        Amps::from_bits(self.current)
    }

    /// Gate state the estimator follows.
    pub const fn gate(&self) -> Gate {
        self.gate
    }

    /// Slow path: take and reset the sums since the last call.
    pub fn take_totals(&mut self) -> WindowTotals {
        core::mem::take(&mut self.totals)
    }

    /// Slow path: move the estimate by `delta` (the observer's
    /// correction); a diode stage stays at or above zero.
    pub fn shift(&mut self, delta: Amps) {
        let shifted = self.current.saturating_add(delta.to_bits());
        self.current = if self.model.r_low_ohm.is_none() { shifted.max(0) } else { shifted };
    }

    /// One tick in seconds.
    pub const fn tick_s(&self) -> f32 {
        self.tick_s
    }

    /// The current after `ticks` more of the present segment, with the
    /// segment's charge, squared charge and conducting ticks, without storing
    /// anything.
    #[inline(always)]
    fn segment_end(&self, ticks: u32) -> (i32, i64, i64, u32) {
        let (slope, decay) = if self.gate.is_on() {
            (self.slope_on, self.decay_on)
        } else {
            (self.slope_off, self.decay_off)
        };
        let i0 = i64::from(self.current);
        let n = i64::from(ticks);
        // rate [Q8.24 A/tick] = slope − i·decay, i in Q16.16, decay Q0.32.
        // Heun's step: the drop at the segment's mean current, so neither
        // phase's resistive drop is biased by its starting current.
        let rate = |i: i64| i64::from(slope) - ((i * i64::from(decay)) >> 24);
        let predicted = i0 + ((rate(i0) * n) >> 8);
        let i1 = i0 + ((rate((i0 + predicted) >> 1) * n) >> 8);
        let clamps = !self.gate.is_on() && self.model.r_low_ohm.is_none() && i1 < 0;
        let (i1, conducting) = if clamps {
            // DCM: conducts only until zero, after i0·ticks_per_amp ticks.
            let t0 = (i0.max(0) * i64::from(self.ticks_per_amp_off)) >> 32;
            (0, t0.min(i64::from(ticks)) as u32)
        } else {
            (i1, ticks)
        };
        let i1 = i1.clamp(i64::from(i32::MIN), i64::from(i32::MAX));
        let n = i64::from(conducting);
        let charge = ((i0 + i1) * n) >> 1;
        // ∫i² = n·(i0² + i0·i1 + i1²)/3 at 2⁻⁸ A resolution (squares in
        // 2⁻¹⁶ A²); 21 846/65 536 ≈ 1/3.
        let (a, b) = (i0 >> 8, i1 >> 8);
        let charge_sq = ((a * a + a * b + b * b) * n * 21_846) >> 16;
        (i1 as i32, charge, charge_sq, conducting)
    }

    #[inline(always)]
    fn close_segment(&mut self, now: Instant) {
        let ticks = now.ticks_since(self.since);
        let (i1, charge, charge_sq, conducting) = self.segment_end(ticks);
        let on = self.gate.is_on();
        self.cycle.dcm |= conducting < ticks;
        if on {
            self.cycle.on_ticks = self.cycle.on_ticks.wrapping_add(ticks);
            self.totals.on.add(ticks, charge, charge_sq);
        } else {
            self.cycle.off_ticks = self.cycle.off_ticks.wrapping_add(conducting);
            self.totals.off.add(conducting, charge, charge_sq);
            self.totals.idle_ticks =
                self.totals.idle_ticks.wrapping_add(u64::from(ticks - conducting));
        }
        self.cycle.period_ticks = self.cycle.period_ticks.wrapping_add(ticks);
        self.cycle.charge = self.cycle.charge.wrapping_add(charge);
        self.current = i1;
        self.since = now;
    }
}
