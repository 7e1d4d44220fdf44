//! The crate's stack built from a scenario: the configuration a firmware
//! build would write ([`StackConfig`], the law), through the same
//! constructors, with every refusal named by its scenario key; and the
//! scenario run on it ([`run`], [`run_with`]).

use super::engine::{run_firmware_with, RunError, RunOutput};
use super::firmware::StackFirmware;
use super::run_control::RunControl;
use super::scenario::{keyed, HystereticInput, LawParams, McuParams, Scenario, ScenarioError};
use crate::estimate::{LossConfig, Steinmetz};
use crate::law::{
    dither, ComparatorPassThrough, Dither, EmulatedRipple, FrequencyTrim, Hysteretic,
    HystereticConfig, Law, OnTime, OnTimeConfig, OnTimeFeedForward, Regulate,
};
use crate::scale::{AdcChannel, TimerClock};
use crate::stack::{Sensing, SlowPathConfig, Stack, StackConfig, StackParts};
use crate::ConfigError;

/// Frequency-trim gain per housekeeping window and its bounds (demo
/// values).
pub const TRIM_GAIN: f32 = 0.05;
/// Lowest trim factor.
pub const TRIM_MIN: f32 = 0.5;
/// Highest trim factor.
pub const TRIM_MAX: f32 = 1.5;
/// The timer.
fn clock(sc: &Scenario) -> Result<TimerClock, ScenarioError> {
    TimerClock::new(sc.mcu.clock_hz).map_err(|e| keyed(sc, e))
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
        .map_err(|e| match e.parameter {
            "divider_ratio" => e.renamed("vin_divider_ratio"),
            _ => e,
        })
}

/// The loss model's parameters: the firmware's model of the stage and of
/// its capacitor's ESR, the plant's transitions, gate charge and core.
fn losses(sc: &Scenario) -> LossConfig {
    let (model, p) = (sc.firmware_model(), &sc.plant);
    LossConfig {
        l_h: model.l_h,
        r_on_ohm: model.r_on_ohm,
        dcr_ohm: model.dcr_ohm,
        diode_vf_v: model.freewheel_v(),
        off_r_ohm: model.r_low_ohm.unwrap_or(model.diode_rd_ohm),
        esr_ohm: sc.firmware_esr_ohm() as f32,
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
    }
}

/// How the scenario's law gets the output.
pub fn sensing(sc: &Scenario) -> Sensing {
    match sc.control.law {
        LawParams::Hysteretic { input: HystereticInput::Sampled, .. }
        | LawParams::OnTime { input: HystereticInput::Sampled, .. } => Sensing::Sampled,
        _ => Sensing::Edge,
    }
}

/// The stack's configuration besides the law.
pub fn stack_config(sc: &Scenario) -> Result<StackConfig, ScenarioError> {
    Ok(StackConfig {
        clock: clock(sc)?,
        output_adc: output_channel(&sc.mcu).map_err(|e| keyed(sc, e))?,
        input_adc: input_channel(&sc.mcu).map_err(|e| keyed(sc, e))?,
        setpoint_v: sc.control.law.setpoint_v() as f32,
        sensing: sensing(sc),
        window: sc.control.window,
        model: sc.firmware_model(),
        protection: sc.firmware.protection,
        slow: SlowPathConfig {
            housekeeping_hz: sc.firmware.housekeeping_hz as f32,
            observer_bandwidth_hz: sc.firmware.observer_bandwidth_hz.map(|b| b as f32),
            output_capacitance_f: sc.firmware_c_f() as f32,
            dc_correction: sc.control.dc_correction,
            losses: losses(sc),
        },
    })
}

/// The stack's parts, checked.
pub fn stack_parts(sc: &Scenario) -> Result<StackParts, ScenarioError> {
    StackParts::new(&stack_config(sc)?).map_err(|e| keyed(sc, e))
}

/// The scenario's law, built as a firmware would build it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ScenarioLaw {
    /// The hysteretic law.
    Hysteretic(Hysteretic),
    /// The on-time law (with its feed-forward, trim, emulated ripple).
    OnTime(OnTime),
    /// The board's comparator, passed through.
    Retrofit(ComparatorPassThrough),
}

/// Build the scenario's law.
pub fn law(sc: &Scenario) -> Result<ScenarioLaw, ScenarioError> {
    let key = |e| keyed(sc, e);
    let adc = output_channel(&sc.mcu).map_err(key)?;
    let clock = clock(sc)?;
    Ok(match sc.control.law {
        LawParams::Hysteretic { .. } => {
            ScenarioLaw::Hysteretic(hysteretic(sc, &adc, &clock).map_err(key)?)
        }
        LawParams::OnTime { .. } => ScenarioLaw::OnTime(on_time(sc, &adc, &clock).map_err(key)?),
        LawParams::AnalogRetrofit { lower_v, upper_v } => {
            let middle = adc.to_code((0.5 * (lower_v + upper_v)) as f32);
            let setpoint = middle.map_err(|e| key(e.renamed("upper_v")))?.raw;
            ScenarioLaw::Retrofit(ComparatorPassThrough::new(true).with_setpoint(setpoint))
        }
    })
}

/// The hysteretic law with its frequency lock and dither, if any.
fn hysteretic(
    sc: &Scenario,
    adc: &AdcChannel,
    clock: &TimerClock,
) -> Result<Hysteretic, ConfigError> {
    let LawParams::Hysteretic { setpoint_v, band_v, lock_hz, dither_depth, .. } = sc.control.law
    else {
        unreachable!("called for the hysteretic law")
    };
    let mut law = Hysteretic::new(&HystereticConfig { setpoint_v, band_v }, adc)?;
    if let Some(f) = lock_hz {
        law = law.with_lock(FrequencyTrim::band_lock(f, clock)?);
    }
    if let Some(depth) = dither_depth {
        law = law.with_dither(Dither::new(depth, dither::DITHER_SEED)?);
    }
    Ok(law)
}

/// The on-time law with what the scenario adds to it.
fn on_time(sc: &Scenario, adc: &AdcChannel, clock: &TimerClock) -> Result<OnTime, ConfigError> {
    let LawParams::OnTime {
        setpoint_v,
        on_time_s,
        feed_forward_hz,
        trim,
        emulated_ripple_v,
        skip_stability_check,
        ..
    } = sc.control.law
    else {
        unreachable!("called for the on-time law")
    };
    let mut law = OnTime::new(&OnTimeConfig { setpoint_v, on_time_s }, adc, clock)?;
    if let Some(amplitude) = emulated_ripple_v {
        let vin0 = sc.input.points.first().map_or(f64::from(setpoint_v) * 2.0, |p| p[1]);
        let duty = (f64::from(setpoint_v) / vin0) as f32;
        let sample_ticks = (f64::from(sc.mcu.clock_hz) / sc.mcu.sample_rate_hz) as u32;
        let ripple = EmulatedRipple::new(amplitude, law.on_ticks(), duty, adc, sample_ticks)?;
        law = law.with_emulated_ripple(ripple);
    }
    if let Some(f) = feed_forward_hz {
        law = law.with_feed_forward(OnTimeFeedForward::new(setpoint_v, f, clock)?);
        if trim {
            law = law.with_trim(FrequencyTrim::new(f, TRIM_GAIN, TRIM_MIN, TRIM_MAX, clock)?);
        }
    }
    if !skip_stability_check {
        law.check_ripple(sc.firmware_esr_ohm() as f32, sc.firmware_c_f() as f32, on_time_s)?;
    }
    Ok(law)
}

/// Check that the scenario's firmware configures (every refusal on its
/// key).
pub fn check(sc: &Scenario) -> Result<(), ScenarioError> {
    stack_parts(sc)?;
    law(sc)?;
    Ok(())
}

/// Run a scenario to its end with the crate's stack, configured as the
/// scenario says.
pub fn run(scenario: &Scenario) -> Result<RunOutput, RunError> {
    run_with(scenario, &RunControl::default())
}

/// [`run`], reporting progress to `control` and stopping with
/// [`RunError::Cancelled`] when it asks.
pub fn run_with(sc: &Scenario, control: &RunControl) -> Result<RunOutput, RunError> {
    let parts = stack_parts(sc)?;
    match law(sc)? {
        ScenarioLaw::Hysteretic(l) => run_law(sc, control, l, parts),
        ScenarioLaw::OnTime(l) => run_law(sc, control, l, parts),
        ScenarioLaw::Retrofit(l) => run_law(sc, control, l, parts),
    }
}

fn run_law<L: Law + Regulate>(
    sc: &Scenario,
    control: &RunControl,
    law: L,
    parts: StackParts,
) -> Result<RunOutput, RunError> {
    run_firmware_with(sc, control, |p| StackFirmware::new(Stack::new(law, parts), p))
}
