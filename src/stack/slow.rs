//! The slow path: what the stack does once per housekeeping window, after
//! the supervisor's own housekeeping.
//!
//! 1. The window's mean input and output, in volts (integer code scales).
//! 2. The loss model's breakdown and efficiency from the estimator's phases.
//! 3. While regulating: the law retunes itself from the window's
//!    [`Conditions`] (on-time feed-forward, frequency trim), and the DC
//!    correction trims the reference so the mean output sits at the
//!    setpoint. Otherwise the DC correction forgets its trim.
//! 4. The averaged-model observer, and a blend of the estimate's DC level
//!    toward it (CCM only; held while the input moves).
//!
//! Integer arithmetic only: a core without an FPU links no float code for
//! it. The loss model, the observer, the DC correction and the light-load
//! sizer are optional parts (cargo features `loss-model`, `observer`,
//! `dc-correction`, `light-load`): a build without one links none of its
//! code and keeps none of its state. Configuration (`SlowPath::new`, called by
//! [`StackParts::new`](super::StackParts::new)) is a `const fn`.

use super::light_load::PulseSizer;
use crate::error::{attempt, positive, ConfigError};
use crate::estimate::{
    Amps, CurrentEstimator, InductorModel, LossConfig, LossModel, Observer, ObserverConfig, Phases,
};
use crate::guard::{ClampCounts, LightLoad};
use crate::law::{Conditions, DcCorrection, Law, Regulate};
use crate::part::{self, Part};
use crate::scale::{AdcChannel, TimerClock};
use crate::supervisor::{State, Supervisor};
use crate::units::{q16, scale, CodeVolts, Fraction, Ohms, Volts, ONE};
use crate::FrequencyGuard;

/// How much of the gap to the observer's current the estimate closes per
/// window: 0.3 (a [`Fraction`]; demo value).
pub const OBSERVER_BLEND: Fraction = 19_661;

/// An input that moves more than this between windows, V, holds the
/// observer's correction: the averaged model sees the DC current only
/// through the resistive drop, so a small error in its input while the bus
/// moves would become a large current error (demo value).
pub const INPUT_STEADY_V: f32 = 0.25;

/// Windows the correction stays held after the input moved.
pub const OBSERVER_HOLD: u8 = 2;

/// DC-correction gain per window and its bound, codes (demo values).
pub const DC_GAIN: f32 = 0.05;
/// ± codes the DC correction may move the reference.
pub const DC_LIMIT_CODES: f32 = 40.0;

/// The slow path's settings, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SlowPathConfig {
    /// Housekeeping rate, Hz (1–20 kHz is typical).
    pub housekeeping_hz: f32,
    /// The averaged-model observer's bandwidth, Hz; `None`: no observer
    /// (`Some` needs the feature `observer`).
    pub observer_bandwidth_hz: Option<f32>,
    /// Output capacitance the observer's model uses, F.
    pub output_capacitance_f: f32,
    /// Trim the reference so the mean output sits at the setpoint (`true`
    /// needs the feature `dc-correction`).
    pub dc_correction: bool,
    /// The loss model behind the efficiency estimate: checked always, kept
    /// and run with the feature `loss-model` only.
    pub losses: LossConfig,
}

/// What the slow path needs of the frequency window and the current limit
/// (for the light-load policy).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct LightLoadSettings {
    pub(super) policy: LightLoad,
    pub(super) f_min_hz: f32,
    pub(super) current_limit: Amps,
    /// The soft-start's charging current, `C·setpoint/ramp time`.
    pub(super) start_charge: Amps,
}

/// The observer with what its input needs.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Averaged {
    observer: Observer,
    // The resistance the model was discretized with, and the stage's
    // on- and off-path resistances and freewheeling drop.
    r_nominal: Ohms,
    r_on: Ohms,
    r_off: Ohms,
    freewheel: Volts,
    // INPUT_STEADY_V in input codes × 2¹⁶.
    input_steady: u32,
    last_vin: u32,
    hold: u8,
    // The observer's inductor current at the last window (`None` while it
    // is reset: not regulating, no cycles).
    current: Option<Amps>,
}

/// The slow path's latest figures.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SlowReport {
    /// Mean input over the last window.
    pub vin: Volts,
    /// Mean output over the last window.
    pub vout: Volts,
    /// The window's phases (cycles, frequency, peak, valley, duty).
    pub phases: Phases,
    /// Model-based loss breakdown over the last window (feature
    /// `loss-model`).
    #[cfg(feature = "loss-model")]
    pub losses: crate::estimate::LossBreakdown,
}

/// The slow path's state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SlowPath {
    vout: CodeVolts,
    vin: CodeVolts,
    losses: Part<LossModel, { part::LOSS_MODEL }>,
    averaged: Part<Averaged, { part::OBSERVER }>,
    dc: Part<DcCorrection, { part::DC_CORRECTION }>,
    // The window limits' clamp counts that mark the window as binding
    // (minimum period, maximum on-time), summed (wrapping)
    // at the last window: a change means one of them acted since.
    binding_before: u32,
    // The slow-period count at the last window.
    slow_before: u32,
    // Present under `LightLoad::SmallerPulses`.
    sizer: Part<PulseSizer, { part::LIGHT_LOAD }>,
    report: SlowReport,
}

impl SlowPath {
    /// Build the slow path (a `const fn`): `model` is what the firmware
    /// believes of the stage, `setpoint_code` the regulated output code.
    ///
    /// Errors: `housekeeping_hz` or `output_capacitance_f` not positive;
    /// those of [`Observer::new`], [`LossModel::new`] and
    /// [`DcCorrection::new`]; an observer (`observer_bandwidth_hz`), DC
    /// correction (`dc_correction`) or smaller pulses at light load
    /// (`light_load`) asked for in a build without its feature
    /// ([`ErrorKind::NotBuilt`](crate::ErrorKind::NotBuilt)).
    pub(super) const fn new(
        cfg: &SlowPathConfig,
        model: &InductorModel,
        vout: &AdcChannel,
        vin: &AdcChannel,
        clock: &TimerClock,
        setpoint_code: u16,
        light: LightLoadSettings,
    ) -> Result<Self, ConfigError> {
        let hz = attempt!(positive("housekeeping_hz", cfg.housekeeping_hz as f64));
        let steady = (vin.span_codes(INPUT_STEADY_V as f64) * 65_536.0) as u32;
        let averaged = match cfg.observer_bandwidth_hz {
            Some(bw) => Some(attempt!(averaged(bw, hz, cfg.output_capacitance_f, model, steady))),
            None => None,
        };
        let dc = if cfg.dc_correction {
            Some(attempt!(DcCorrection::new(setpoint_code, DC_GAIN, DC_LIMIT_CODES)))
        } else {
            None
        };
        let sizer = match light.policy {
            LightLoad::SmallerPulses => {
                Some(PulseSizer::new(light.current_limit, light.f_min_hz, light.start_charge))
            }
            _ => None,
        };
        Ok(Self {
            vout: CodeVolts::new(vout),
            vin: CodeVolts::new(vin),
            losses: Part::some(attempt!(LossModel::new(&cfg.losses, clock))),
            averaged: attempt!(Part::new(averaged, "observer_bandwidth_hz", "observer")),
            dc: attempt!(Part::new(dc, "dc_correction", "dc-correction")),
            sizer: attempt!(Part::new(sizer, "light_load", "light-load")),
            binding_before: 0,
            slow_before: 0,
            report: SlowReport {
                vin: Volts::ZERO,
                vout: Volts::ZERO,
                phases: Phases {
                    cycles: 0,
                    dcm_cycles: 0,
                    period_ticks: 0,
                    f_sw_hz: 0,
                    peak: Amps::ZERO,
                    valley: Amps::ZERO,
                    off_end: Amps::ZERO,
                    duty: 0,
                    off_fraction: 0,
                },
                #[cfg(feature = "loss-model")]
                losses: crate::estimate::LossBreakdown {
                    output: Volts::ZERO,
                    switch: Volts::ZERO,
                    diode: Volts::ZERO,
                    dcr: Volts::ZERO,
                    esr: Volts::ZERO,
                    switching: Volts::ZERO,
                    gate: Volts::ZERO,
                    core: Volts::ZERO,
                },
            },
        })
    }

    /// The latest figures.
    pub const fn report(&self) -> &SlowReport {
        &self.report
    }

    /// The observer's inductor current at the last window (`None` without
    /// an observer, or while it is reset: not regulating, no cycles). Held
    /// with the observer, so a build without one spends no RAM on it.
    pub const fn observer_current(&self) -> Option<Amps> {
        match self.averaged.get() {
            Some(a) => a.current,
            None => None,
        }
    }

    /// The output channel's code-to-volts scale.
    pub const fn output_volts(&self) -> &CodeVolts {
        &self.vout
    }

    /// One window: `phases` from the estimator, `vin_q16` the input's mean
    /// code × 2¹⁶; the supervisor has done its own housekeeping.
    pub fn run<L: Law + Regulate, const LOG: usize>(
        &mut self,
        sup: &mut Supervisor<FrequencyGuard<L>, LOG>,
        phases: &Phases,
        vin_q16: u32,
    ) {
        let vin = self.vin.volts_q16(vin_q16);
        let vout = self.vout.volts_q16(sup.output_average());
        self.report.vin = vin;
        self.report.vout = vout;
        self.report.phases = *phases;
        #[cfg(feature = "loss-model")]
        if let Some(model) = self.losses.get() {
            self.report.losses = model.evaluate(phases, vin, vout);
        }
        let regulating = sup.state() == State::Regulating;
        self.regulate(sup, phases, vin, vout, regulating);
        self.observe(sup.estimator_mut(), phases, (vin_q16, vin), vout, regulating);
    }

    /// Retune the law and trim the reference, while regulating.
    fn regulate<L: Law + Regulate, const LOG: usize>(
        &mut self,
        sup: &mut Supervisor<FrequencyGuard<L>, LOG>,
        phases: &Phases,
        vin: Volts,
        vout: Volts,
        regulating: bool,
    ) {
        let counts = sup.inner().counts();
        let binding = binding_clamps(counts);
        let before = core::mem::replace(&mut self.binding_before, binding);
        let slow_before = core::mem::replace(&mut self.slow_before, counts.slow_periods);
        let slow = counts.slow_periods != slow_before;
        if !regulating {
            if let Some(dc) = self.dc.get_mut() {
                dc.reset();
            }
            if let Some(sizer) = self.sizer.get_mut() {
                if sup.state() == State::SoftStart {
                    let window = (sup.output_average(), sup.start_span());
                    let caps = sizer.size_start(phases, sup.inner().frequency_lock(), window);
                    sup.size_start_pulses(caps.ramp, caps.end);
                } else {
                    sizer.reset();
                }
            }
            return;
        }
        if let Some(sizer) = self.sizer.get_mut() {
            let lock = sup.inner().frequency_lock();
            let window = (phases.cycles, phases.dcm_cycles);
            let output = (sup.output_average(), u32::from(sup.setpoint_code()) << 16);
            let size = sizer.update(phases.f_sw_hz, window, slow, binding != before, output, lock);
            sup.set_pulse_cap(size.cap);
            sup.inner_mut().set_forced_pulses(size.forced);
        }
        let conditions = Conditions {
            vin,
            vout,
            cycles: phases.cycles,
            period_ticks: phases.period_ticks,
            window_binding: binding != before,
            long_period: slow,
        };
        sup.inner_mut().retune(&conditions);
        if let Some(dc) = self.dc.get_mut() {
            let mean = sup.output_average();
            dc.update(mean, sup.inner_mut());
        }
    }

    /// Step the observer and blend the estimate's DC level toward it;
    /// `vin` the input's mean code × 2¹⁶ and in volts.
    fn observe(
        &mut self,
        est: &mut CurrentEstimator,
        phases: &Phases,
        (vin_q16, vin): (u32, Volts),
        vout: Volts,
        regulating: bool,
    ) {
        let Some(a) = self.averaged.get_mut() else { return };
        a.current = None;
        a.note_input(vin_q16);
        let average = phases.average();
        if phases.cycles == 0 || !regulating {
            a.observer.reset(average, vout, average);
            return;
        }
        let i_obs = a.step(phases, vin, vout);
        a.current = Some(i_obs);
        // CCM only: DCM anchors the estimate at zero every cycle.
        if phases.dcm_cycles == 0 && a.hold == 0 {
            let gap = i_obs.saturating_sub(average);
            est.shift(scale(gap, OBSERVER_BLEND));
        }
    }
}

/// The clamp counts that mark a window as binding, summed (wrapping): it
/// changes whenever one of them counts (only 2³² clamps within one window,
/// beyond any window's cycles, could hide a change). Slow periods are
/// reported apart ([`Conditions::long_period`]).
fn binding_clamps(c: &ClampCounts) -> u32 {
    c.min_period.wrapping_add(c.max_on)
}

impl Averaged {
    /// Hold the observer's correction for a few windows after the input
    /// moved.
    fn note_input(&mut self, vin_q16: u32) {
        let moved = vin_q16.abs_diff(self.last_vin) > self.input_steady;
        self.last_vin = vin_q16;
        self.hold = if moved { OBSERVER_HOLD } else { self.hold.saturating_sub(1) };
    }

    /// One observer step from the window's duty and voltages.
    fn step(&mut self, p: &Phases, vin: Volts, vout: Volts) -> Amps {
        // Whole cycles only: a window cutting cycles would swing the duty.
        let (d, d_off) = (p.duty, p.off_fraction);
        let idle = ONE.saturating_sub(d).saturating_sub(d_off);
        let u = scale(vin, d)
            .saturating_sub(scale(self.freewheel, d_off))
            .saturating_add(scale(vout, idle));
        // The model was discretized with a nominal R; the drop's change with
        // the duty enters as an input, exact in steady state.
        let r_now = scale(self.r_on, d).saturating_add(scale(self.r_off, d_off));
        let r_delta = r_now.saturating_sub(self.r_nominal);
        let u = u.saturating_sub(crate::units::mul(r_delta, self.observer.current()));
        self.observer.update(u, vout, None)
    }
}

/// The observer for `model` at `bandwidth_hz`, updated at `hz`; `steady`
/// is [`INPUT_STEADY_V`] in input codes × 2¹⁶.
const fn averaged(
    bandwidth_hz: f32,
    hz: f64,
    c_f: f32,
    model: &InductorModel,
    steady: u32,
) -> Result<Averaged, ConfigError> {
    let period_s = (1.0 / hz) as f32;
    let r_on = model.on_resistance();
    let r_off = model.off_resistance();
    let r_nominal = 0.5 * (r_on + r_off);
    let observer = attempt!(Observer::new(&ObserverConfig {
        l_h: model.l_h,
        c_f,
        r_ohm: r_nominal,
        period_s,
        poles: ObserverConfig::poles_for_bandwidth(bandwidth_hz, period_s),
    }));
    Ok(Averaged {
        observer,
        r_nominal: q16(r_nominal as f64),
        r_on: q16(r_on as f64),
        r_off: q16(r_off as f64),
        freewheel: q16(model.freewheel_v() as f64),
        input_steady: steady,
        last_vin: 0,
        hold: OBSERVER_HOLD,
        current: None,
    })
}
