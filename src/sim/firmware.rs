//! The firmware under test: the crate's own no_std objects, built from a
//! scenario exactly as a firmware build would build them, with the slow
//! path a firmware would run at its housekeeping rate.

use super::scenario::{HystereticInput, LawParams, McuParams, Scenario};
use crate::estimate::{
    CurrentEstimator, LossBreakdown, LossModel, Observer, ObserverConfig, Steinmetz,
};
use crate::guard::{ClampCounts, FrequencyGuard, Window};
use crate::law::{
    Command, ComparatorPassThrough, DcCorrection, EmulatedRipple, FrequencyTrim, Gate, Hysteretic,
    HystereticConfig, Law, OnTime, OnTimeConfig, OnTimeFeedForward, Regulate,
};
use crate::scale::{AdcChannel, TimerClock};
use crate::supervisor::{FaultRecord, Limits, State, Supervisor};
use crate::tick::Instant;
use crate::ConfigError;

/// The law and guard in use.
#[derive(Clone, Debug)]
pub enum Controller {
    /// Hysteretic law (sampled or edge input) inside the guard.
    Hysteretic(FrequencyGuard<Hysteretic>),
    /// The on-time law inside the guard.
    OnTime(FrequencyGuard<OnTime>),
    /// An analog comparator's edges inside the guard, with the comparator's
    /// setpoint as an output code (for the supervisor's checks).
    PassThrough(FrequencyGuard<ComparatorPassThrough>, u16),
}

/// Where the comparator that feeds edge interrupts gets its threshold.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ComparatorSource {
    /// No comparator: the law runs on ADC samples.
    None,
    /// A DAC the firmware programs (hysteretic edge mode).
    Dac,
    /// A Schmitt trigger with fixed thresholds at the output, volts.
    Schmitt {
        /// Output level below which the comparator asks for "on", V.
        lower_v: f64,
        /// Output level above which it asks for "off", V.
        upper_v: f64,
    },
}

/// The ADC channel that senses the output.
pub fn output_channel(mcu: &McuParams) -> Result<AdcChannel, ConfigError> {
    AdcChannel::new(
        mcu.adc_bits,
        mcu.adc_reference_v as f32,
        mcu.divider_ratio as f32,
        mcu.adc_offset_v as f32,
    )
}

/// The ADC channel that senses the input.
pub fn input_channel(mcu: &McuParams) -> Result<AdcChannel, ConfigError> {
    AdcChannel::new(mcu.adc_bits, mcu.adc_reference_v as f32, mcu.vin_divider_ratio as f32, 0.0)
}

impl Controller {
    fn build(
        scenario: &Scenario,
        clock: &TimerClock,
    ) -> Result<(Self, ComparatorSource), ConfigError> {
        let window = Window::new(&scenario.control.window, clock)?;
        Ok(match scenario.control.law {
            LawParams::Hysteretic { setpoint_v, band_v, input } => {
                let config = HystereticConfig { setpoint_v, band_v };
                let law = Hysteretic::new(&config, &output_channel(&scenario.mcu)?)?;
                let source = match input {
                    HystereticInput::Sampled => ComparatorSource::None,
                    HystereticInput::Edge => ComparatorSource::Dac,
                };
                (Self::Hysteretic(FrequencyGuard::new(law, window)), source)
            }
            LawParams::OnTime {
                setpoint_v,
                on_time_s,
                input,
                emulated_ripple_v,
                skip_stability_check,
                ..
            } => {
                let adc = output_channel(&scenario.mcu)?;
                let mut law = OnTime::new(&OnTimeConfig { setpoint_v, on_time_s }, &adc, clock)?;
                if let Some(amplitude) = emulated_ripple_v {
                    let vin0 =
                        scenario.input.points.first().map_or(f64::from(setpoint_v) * 2.0, |p| p[1]);
                    let duty = (f64::from(setpoint_v) / vin0) as f32;
                    let sample_ticks =
                        (f64::from(scenario.mcu.clock_hz) / scenario.mcu.sample_rate_hz) as u32;
                    let ripple =
                        EmulatedRipple::new(amplitude, law.on_ticks(), duty, &adc, sample_ticks)?;
                    law = law.with_emulated_ripple(ripple);
                }
                if !skip_stability_check {
                    law.check_ripple(
                        scenario.plant.esr_ohm as f32,
                        scenario.plant.c_f as f32,
                        on_time_s,
                    )?;
                }
                let source = match input {
                    HystereticInput::Sampled => ComparatorSource::None,
                    HystereticInput::Edge => ComparatorSource::Dac,
                };
                (Self::OnTime(FrequencyGuard::new(law, window)), source)
            }
            LawParams::AnalogRetrofit { lower_v, upper_v } => {
                let setpoint =
                    output_channel(&scenario.mcu)?.to_code((0.5 * (lower_v + upper_v)) as f32)?.raw;
                (
                    Self::PassThrough(
                        FrequencyGuard::new(ComparatorPassThrough::new(true), window),
                        setpoint,
                    ),
                    ComparatorSource::Schmitt { lower_v, upper_v },
                )
            }
        })
    }

    fn law(&mut self) -> &mut dyn Law {
        match self {
            Self::Hysteretic(g) => g,
            Self::OnTime(g) => g,
            Self::PassThrough(g, _) => g,
        }
    }

    /// The DAC code edge mode must arm now, if it uses one.
    pub fn dac_code(&self) -> Option<u16> {
        match self {
            Self::Hysteretic(g) => Some(g.inner().armed_code()),
            Self::OnTime(g) => Some(g.reference_code()),
            Self::PassThrough(..) => None,
        }
    }

    /// The guard's clamp counters.
    pub fn clamps(&self) -> ClampCounts {
        match self {
            Self::Hysteretic(g) => *g.counts(),
            Self::OnTime(g) => *g.counts(),
            Self::PassThrough(g, _) => *g.counts(),
        }
    }
}

impl Law for Controller {
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        self.law().on_sample(code, now)
    }

    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.law().on_edge(level, now)
    }

    fn on_timer(&mut self, now: Instant) -> Command {
        self.law().on_timer(now)
    }

    fn on_gate(&mut self, gate: Gate, at: Instant) {
        self.law().on_gate(gate, at)
    }

    fn min_on_ticks(&self) -> u32 {
        match self {
            Self::Hysteretic(g) => g.min_on_ticks(),
            Self::OnTime(g) => g.min_on_ticks(),
            Self::PassThrough(g, _) => g.min_on_ticks(),
        }
    }
}

/// The analog retrofit's reference is the board's own comparator: the
/// firmware cannot move it, so soft-start and trims do nothing there.
impl Regulate for Controller {
    fn reference_code(&self) -> u16 {
        match self {
            Self::Hysteretic(g) => g.reference_code(),
            Self::OnTime(g) => g.reference_code(),
            Self::PassThrough(_, setpoint) => *setpoint,
        }
    }

    fn set_reference(&mut self, code: u16) {
        match self {
            Self::Hysteretic(g) => g.set_reference(code),
            Self::OnTime(g) => g.set_reference(code),
            Self::PassThrough(..) => {}
        }
    }
}

/// The slow path's latest figures.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SlowPathReport {
    /// Model-based loss breakdown over the last housekeeping window.
    pub losses: LossBreakdown,
    /// Observer's inductor current, A (NaN without an observer).
    pub observer_current_a: f32,
}

/// The whole firmware: supervisor around law and guard, estimator,
/// observer, loss model.
#[derive(Clone, Debug)]
pub struct Firmware {
    stack: Supervisor<Controller>,
    observer: Option<Observer>,
    loss: LossModel,
    vout_adc: AdcChannel,
    vin_adc: AdcChannel,
    report: SlowPathReport,
    observer_r_ohm: f32,
    last_vin_v: f32,
    hold_windows: u8,
    regulation: SlowRegulation,
}

/// The slow path's regulation loops.
#[derive(Clone, Debug)]
struct SlowRegulation {
    feed_forward: Option<OnTimeFeedForward>,
    trim: Option<FrequencyTrim>,
    dc: Option<DcCorrection>,
    clamps_before: ClampCounts,
    setpoint_v: f32,
}

impl SlowRegulation {
    fn build(scenario: &Scenario, clock: &TimerClock, setpoint: u16) -> Result<Self, ConfigError> {
        let (feed_forward, trim) = match scenario.control.law {
            LawParams::OnTime { setpoint_v, feed_forward_hz: Some(f), trim, .. } => (
                Some(OnTimeFeedForward::new(setpoint_v, f, clock)?),
                if trim { Some(FrequencyTrim::new(f, TRIM_GAIN, 0.5, 1.5)?) } else { None },
            ),
            _ => (None, None),
        };
        let dc = if scenario.control.dc_correction {
            Some(DcCorrection::new(setpoint, DC_GAIN, DC_LIMIT_CODES)?)
        } else {
            None
        };
        Ok(Self {
            feed_forward,
            trim,
            dc,
            clamps_before: ClampCounts::default(),
            setpoint_v: scenario.control.law.setpoint_v() as f32,
        })
    }
}

/// Frequency-trim gain per housekeeping window (demo value).
const TRIM_GAIN: f32 = 0.05;
/// DC-correction gain per window and its bound, codes (demo values).
const DC_GAIN: f32 = 0.05;
/// ± codes the DC correction may move the reference.
const DC_LIMIT_CODES: f32 = 40.0;

/// How much of the gap to the observer's current the estimate closes per
/// housekeeping step.
const OBSERVER_BLEND: f32 = 0.3;

/// An input that moves more than this between windows, V, holds the
/// observer's correction: the averaged model sees the DC current only
/// through the resistive drop, so a small error in its input while the bus
/// moves would become a large current error.
const INPUT_STEADY_V: f32 = 0.25;

/// Windows the correction stays held after the input moved.
const OBSERVER_HOLD: u8 = 2;

impl Firmware {
    /// Build the firmware a scenario describes.
    pub fn build(scenario: &Scenario) -> Result<(Self, ComparatorSource), ConfigError> {
        let clock = TimerClock::new(scenario.mcu.clock_hz)?;
        let (controller, source) = Controller::build(scenario, &clock)?;
        let vout_adc = output_channel(&scenario.mcu)?;
        let vin_adc = input_channel(&scenario.mcu)?;
        let model = scenario.firmware_model();
        let vin_full_v = vin_adc.to_volts(vin_adc.full_scale_code());
        let mut estimator = CurrentEstimator::new(&model, &clock, vin_full_v)?;
        estimator.follow_output(&vout_adc);
        estimator.follow_input(&vin_adc);
        let setpoint = vout_adc.to_code(scenario.control.law.setpoint_v() as f32)?.raw;
        let limits =
            Limits::new(&scenario.firmware.protection, &vout_adc, &vin_adc, &clock, setpoint)?;
        let period_s = (1.0 / scenario.firmware.housekeeping_hz) as f32;
        let observer_r_ohm = 0.5 * (model.on_resistance() + model.off_resistance());
        let observer = match scenario.firmware.observer_bandwidth_hz {
            Some(bw) => Some(Observer::new(&ObserverConfig {
                l_h: model.l_h,
                c_f: scenario.plant.c_f as f32,
                r_ohm: observer_r_ohm,
                period_s,
                poles: ObserverConfig::poles_for_bandwidth(bw as f32, period_s),
            })?),
            None => None,
        };
        let p = &scenario.plant;
        let loss = LossModel {
            l_h: model.l_h,
            r_on_ohm: model.r_on_ohm,
            dcr_ohm: model.dcr_ohm,
            diode_vf_v: if model.r_low_ohm.is_some() { 0.0 } else { model.diode_vf_v },
            off_r_ohm: model.r_low_ohm.unwrap_or(model.diode_rd_ohm),
            esr_ohm: p.esr_ohm as f32,
            t_rise_s: p.t_rise_s as f32,
            t_fall_s: p.t_fall_s as f32,
            gate_charge_c: p.gate_charge_c as f32,
            gate_drive_v: p.gate_drive_v as f32,
            core: p.core.map(|c| Steinmetz {
                k: c.k as f32,
                alpha: c.alpha as f32,
                beta: c.beta as f32,
                turns: c.turns as f32,
                area_m2: c.area_m2 as f32,
                volume_m3: c.volume_m3 as f32,
            }),
        };
        let regulation = SlowRegulation::build(scenario, &clock, setpoint)?;
        let stack = Supervisor::new(controller, estimator, limits);
        Ok((
            Self {
                stack,
                observer,
                loss,
                vout_adc,
                vin_adc,
                report: SlowPathReport::default(),
                observer_r_ohm,
                last_vin_v: 0.0,
                hold_windows: OBSERVER_HOLD,
                regulation,
            },
            source,
        ))
    }

    /// The slow path: protection housekeeping, then the estimates.
    pub fn housekeeping(&mut self, vin: u16, now: Instant) {
        self.stack.estimator_mut().update(now);
        let phases = self.stack.estimator_mut().take_window();
        let (vin_adc, vout_adc) = (self.vin_adc, self.vout_adc);
        self.stack.housekeeping(vin, &vin_adc, &vout_adc, now);
        // The window's average input when the fast path scans it.
        let vin_v = vin_adc.to_volts(self.stack.take_input_average().unwrap_or(vin));
        let input_moved = (vin_v - self.last_vin_v).abs() > INPUT_STEADY_V;
        self.last_vin_v = vin_v;
        self.hold_windows =
            if input_moved { OBSERVER_HOLD } else { self.hold_windows.saturating_sub(1) };
        let vout_v = self.last_output_v();
        self.report.losses = self.loss.evaluate(&phases, vin_v, vout_v);
        self.regulate(&phases, vin_v);
        self.report.observer_current_a = f32::NAN;
        let Some(observer) = self.observer.as_mut() else { return };
        if phases.cycles == 0 || self.stack.state() != State::Regulating {
            observer.reset(phases.average_a(), vout_v, phases.average_a());
            return;
        }
        let model = *self.stack.estimator().model();
        // Whole cycles only: a window cutting cycles would swing the duty.
        let (d, d_off) = (phases.duty(), phases.off_fraction());
        let u = d * vin_v - d_off * model.freewheel_v() + (1.0 - d - d_off) * vout_v;
        // The model was discretized with a nominal R; the drop's change with
        // the duty enters as an input, exact in steady state.
        let r_now = d * model.on_resistance() + d_off * model.off_resistance();
        let u = u - (r_now - self.observer_r_ohm) * observer.current_a();
        let i_obs = observer.update(u, vout_v, None);
        self.report.observer_current_a = i_obs;
        // Blend the estimate's DC level toward the observer's (CCM only:
        // DCM anchors the estimate at zero every cycle).
        if phases.dcm_cycles == 0 && self.hold_windows == 0 {
            let gap = (i_obs - phases.average_a()) * OBSERVER_BLEND;
            self.stack.estimator_mut().shift(crate::estimate::amps(gap));
        }
    }

    /// Slow path: feed-forward and trim of an on-time law, DC correction
    /// of the reference; only while regulating.
    fn regulate(&mut self, phases: &crate::estimate::Phases, vin_v: f32) {
        let r = &mut self.regulation;
        if self.stack.state() != State::Regulating {
            if let Some(dc) = r.dc.as_mut() {
                dc.reset();
            }
            return;
        }
        let clamps = self.stack.inner().clamps();
        let binding = clamps.min_period != r.clamps_before.min_period
            || clamps.slow_periods != r.clamps_before.slow_periods
            || clamps.max_on != r.clamps_before.max_on;
        r.clamps_before = clamps;
        let mean_period = (phases.cycles > 0).then(|| phases.time_s / phases.cycles as f32);
        let trim = r.trim.as_mut().map_or(1.0, |t| t.update(mean_period, binding));
        if let Controller::OnTime(g) = self.stack.inner_mut() {
            if let Some(ff) = r.feed_forward {
                g.inner_mut().set_on_ticks(ff.on_ticks(vin_v, trim));
            }
            if let Some(ripple) = g.inner_mut().emulated_ripple_mut() {
                ripple.set_duty(r.setpoint_v / vin_v);
            }
        }
        if let Some(dc) = r.dc.as_mut() {
            let mean = f32::from(self.stack.output_average());
            dc.update(mean, self.stack.inner_mut());
        }
    }

    fn last_output_v(&self) -> f32 {
        self.vout_adc.to_volts(self.stack.output_average())
    }

    /// An input reading, scanned with each output reading.
    pub fn on_input_reading(&mut self, code: u16, now: Instant) {
        self.stack.on_input_reading(code, now);
    }

    /// An output reading for protection only (edge-driven laws).
    pub fn on_output_reading(&mut self, code: u16, now: Instant) -> Option<Command> {
        self.stack.on_output_reading(code, now)
    }

    /// The slow path's latest figures.
    pub fn report(&self) -> &SlowPathReport {
        &self.report
    }

    /// The supervisor stack.
    pub fn stack(&self) -> &Supervisor<Controller> {
        &self.stack
    }

    /// The DAC code edge mode must arm now, if it uses one.
    pub fn dac_code(&self) -> Option<u16> {
        self.stack.inner().dac_code()
    }

    /// The guard's clamp counters.
    pub fn clamps(&self) -> ClampCounts {
        self.stack.inner().clamps()
    }

    /// The fault log.
    pub fn faults(&self) -> impl Iterator<Item = &FaultRecord> {
        self.stack.faults()
    }

    /// Estimated inductor current at `now`, A.
    pub fn estimated_current_a(&self, now: Instant) -> f64 {
        f64::from(self.stack.estimator().current_at(now).to_num::<f32>())
    }
}

impl Law for Firmware {
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        self.stack.on_sample(code, now)
    }

    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        self.stack.on_edge(level, now)
    }

    fn on_timer(&mut self, now: Instant) -> Command {
        self.stack.on_timer(now)
    }
}
