//! A designed scenario as a firmware's `const` configuration (Rust source):
//! the same settings the simulator builds from the scenario
//! ([`crate::sim::build`]) and the driver's pulse end the simulator ran
//! ([`crate::sim::firmware::PULSE_END`]), written as `const` items that the
//! compiler evaluates, so a value out of range fails the build naming it.

use crate::drive::PulseEnd;
use crate::sim::build::{self, TRIM_GAIN, TRIM_MAX, TRIM_MIN};
use crate::sim::scenario::{LawParams, Scenario, ScenarioError};
use crate::stack::{Sensing, StackConfig};
use std::fmt::Write as _;

/// The Rust source of `CONFIG`, `PARTS`, `LAW` and `PULSE_END` for `sc`,
/// under a header comment naming it.
pub fn const_block(sc: &Scenario, title: &str) -> Result<String, ScenarioError> {
    let cfg = build::stack_config(sc)?;
    let mut s = String::new();
    let _ = writeln!(s, "// Written by `ripplectl design`: {title}.");
    s.push_str(HEADER);
    stack_config(&mut s, sc, &cfg);
    s.push_str(
        "\n/// The stack's parts in raw units (checked at compile time).\n\
         pub const PARTS: ripplectl::stack::StackParts =\n    \
         ripplectl::unwrap_config(ripplectl::stack::StackParts::new(&CONFIG));\n",
    );
    law(&mut s, sc);
    pulse_end(&mut s);
    Ok(s)
}

/// The driver's pulse end the simulator ran the proposal with, and what
/// it asks of the board.
fn pulse_end(s: &mut String) {
    let (variant, why) = match crate::sim::firmware::PULSE_END {
        PulseEnd::Hardware => ("Hardware", PULSE_END_HARDWARE),
        PulseEnd::Software => ("Software", PULSE_END_SOFTWARE),
    };
    let _ = write!(
        s,
        "\n{why}pub const PULSE_END: ripplectl::drive::PulseEnd = ripplectl::drive::PulseEnd::{variant};\n"
    );
}

const PULSE_END_HARDWARE: &str = "\
/// Who ends a pulse at a deadline armed while the gate is on, as in the
/// simulator's check of this configuration: the timer's compare, in
/// hardware (see `ripplectl::drive`). Build the `GateDriver` with it only
/// if the board's `OneShot::arm` puts the compare in its \"clear on match\"
/// (or one-pulse) mode when `ends_pulse` is true: otherwise the gate pin
/// is never written low at the deadline. Without such a mode use
/// `PulseEnd::Software`, which the check did not simulate: a pulse is then
/// longer by the compare handler's entry latency, and by a varying amount
/// (period jitter) when another handler runs first or ends it.
";

const PULSE_END_SOFTWARE: &str = "\
/// Who ends a pulse at a deadline armed while the gate is on, as in the
/// simulator's check of this configuration: the compare interrupt's
/// handler, through the pin (see `ripplectl::drive`).
";

const HEADER: &str = "//
// The firmware's configuration as `const` items: the compiler converts
// volts and seconds into codes, ticks and fixed-point coefficients, and a
// value out of range fails the build naming it. It configures the same
// stack the scenario written beside it runs in the simulator. Caution: a
// power stage under firmware control can burn, shock and destroy loads;
// bring a board up from a current-limited bench supply, with a hardware
// current limit that does not depend on this code.

";

fn stack_config(s: &mut String, sc: &Scenario, cfg: &StackConfig) {
    let m = &sc.mcu;
    let sensing = match cfg.sensing {
        Sensing::Sampled => "Sampled",
        Sensing::Edge => "Edge",
    };
    let w = &cfg.window;
    let (model, p) = (&cfg.model, &cfg.protection);
    let slow = &cfg.slow;
    let l = &slow.losses;
    let _ = write!(
        s,
        "/// Every setting besides the law, SI units.
pub const CONFIG: ripplectl::stack::StackConfig = ripplectl::stack::StackConfig {{
    clock: ripplectl::unwrap_config(ripplectl::TimerClock::new({clock})),
    output_adc: ripplectl::unwrap_config(ripplectl::AdcChannel::new({bits}, {vref:?}, {ratio:?}, {offset:?})),
    input_adc: ripplectl::unwrap_config(ripplectl::AdcChannel::new({bits}, {vref:?}, {vin_ratio:?}, 0.0)),
    setpoint_v: {setpoint:?},
    sensing: ripplectl::stack::Sensing::{sensing},
    window: ripplectl::WindowConfig {{
        f_min_hz: {f_min:?},
        f_max_hz: {f_max:?},
        min_on_s: {min_on:?},
        min_off_s: {min_off:?},
        max_on_s: {max_on:?},
        light_load: ripplectl::LightLoad::{light:?},
    }},
    model: ripplectl::estimate::InductorModel {{
        l_h: {ml:?},
        r_on_ohm: {mron:?},
        dcr_ohm: {mdcr:?},
        diode_vf_v: {mvf:?},
        diode_rd_ohm: {mrd:?},
        r_low_ohm: {mlow:?},
    }},
    protection: ripplectl::supervisor::ProtectionConfig {{
        uvlo_on_v: {uvlo_on:?},
        uvlo_off_v: {uvlo_off:?},
        vin_max_v: {vin_max:?},
        vin_max_hysteresis_v: {vin_hyst:?},
        ovp_v: {ovp:?},
        current_limit_a: {limit:?},
        short_cycles: {short},
        hiccup_s: {hiccup:?},
        soft_start_s: {soft:?},
        stuck_low_v: {stuck_low:?},
        stuck_implied_v: {stuck_implied:?},
        stuck_cycles: {stuck_cycles},
        max_retries: {retries},
    }},
    slow: ripplectl::stack::SlowPathConfig {{
        housekeeping_hz: {hk:?},
        observer_bandwidth_hz: {obs:?},
        output_capacitance_f: {cap:?},
        dc_correction: {dc},
        losses: ripplectl::estimate::LossConfig {{
            l_h: {ll:?},
            r_on_ohm: {lron:?},
            dcr_ohm: {ldcr:?},
            diode_vf_v: {lvf:?},
            off_r_ohm: {loff:?},
            esr_ohm: {lesr:?},
            t_rise_s: {lrise:?},
            t_fall_s: {lfall:?},
            gate_charge_c: {lqg:?},
            gate_drive_v: {lvg:?},
            core: None,
        }},
    }},
}};
",
        clock = m.clock_hz,
        bits = m.adc_bits,
        vref = m.adc_reference_v as f32,
        ratio = m.divider_ratio as f32,
        offset = m.adc_offset_v as f32,
        vin_ratio = m.vin_divider_ratio as f32,
        setpoint = cfg.setpoint_v,
        f_min = w.f_min_hz,
        f_max = w.f_max_hz,
        min_on = w.min_on_s,
        min_off = w.min_off_s,
        max_on = w.max_on_s,
        light = w.light_load,
        ml = model.l_h,
        mron = model.r_on_ohm,
        mdcr = model.dcr_ohm,
        mvf = model.diode_vf_v,
        mrd = model.diode_rd_ohm,
        mlow = model.r_low_ohm,
        uvlo_on = p.uvlo_on_v,
        uvlo_off = p.uvlo_off_v,
        vin_max = p.vin_max_v,
        vin_hyst = p.vin_max_hysteresis_v,
        ovp = p.ovp_v,
        limit = p.current_limit_a,
        short = p.short_cycles,
        hiccup = p.hiccup_s,
        soft = p.soft_start_s,
        stuck_low = p.stuck_low_v,
        stuck_implied = p.stuck_implied_v,
        stuck_cycles = p.stuck_cycles,
        retries = p.max_retries,
        hk = slow.housekeeping_hz,
        obs = slow.observer_bandwidth_hz,
        cap = slow.output_capacitance_f,
        dc = slow.dc_correction,
        ll = l.l_h,
        lron = l.r_on_ohm,
        ldcr = l.dcr_ohm,
        lvf = l.diode_vf_v,
        loff = l.off_r_ohm,
        lesr = l.esr_ohm,
        lrise = l.t_rise_s,
        lfall = l.t_fall_s,
        lqg = l.gate_charge_c,
        lvg = l.gate_drive_v,
    );
}

fn law(s: &mut String, sc: &Scenario) {
    match sc.control.law {
        LawParams::Hysteretic { band_v, .. } => {
            let _ = write!(
                s,
                "
/// The hysteretic law.
pub const LAW: ripplectl::law::Hysteretic = ripplectl::unwrap_config(ripplectl::law::Hysteretic::new(
    &ripplectl::law::HystereticConfig {{ setpoint_v: CONFIG.setpoint_v, band_v: {band_v:?} }},
    &CONFIG.output_adc,
));
"
            );
        }
        LawParams::OnTime { on_time_s, feed_forward_hz, trim, emulated_ripple_v, .. } => {
            on_time(s, sc, on_time_s, feed_forward_hz, trim, emulated_ripple_v)
        }
        LawParams::AnalogRetrofit { .. } => {
            s.push_str("\n// The analog retrofit is the board's own loop: no law here.\n")
        }
    }
}

fn on_time(
    s: &mut String,
    sc: &Scenario,
    on_time_s: f32,
    feed_forward_hz: Option<f32>,
    trim: bool,
    emulated_ripple_v: Option<f32>,
) {
    let _ = write!(
        s,
        "
/// The on-time law before what is added to it.
const BASE: ripplectl::law::OnTime = ripplectl::unwrap_config(ripplectl::law::OnTime::new(
    &ripplectl::law::OnTimeConfig {{ setpoint_v: CONFIG.setpoint_v, on_time_s: {on_time_s:?} }},
    &CONFIG.output_adc,
    &CONFIG.clock,
));

/// The on-time law.
pub const LAW: ripplectl::law::OnTime = BASE"
    );
    if let Some(amplitude) = emulated_ripple_v {
        // As the simulator builds it (`sim::build`): the duty at the first
        // input point, the sampling period in ticks.
        let setpoint = sc.control.law.setpoint_v();
        let vin0 = sc.input.points.first().map_or(setpoint * 2.0, |p| p[1]);
        let duty = (setpoint / vin0) as f32;
        let sample_ticks = (f64::from(sc.mcu.clock_hz) / sc.mcu.sample_rate_hz) as u32;
        let _ = write!(
            s,
            "
    .with_emulated_ripple(ripplectl::unwrap_config(ripplectl::law::EmulatedRipple::new(
        {amplitude:?},
        BASE.on_ticks(),
        {duty:?},
        &CONFIG.output_adc,
        {sample_ticks},
    )))"
        );
    }
    if let Some(f) = feed_forward_hz {
        let _ = write!(
            s,
            "
    .with_feed_forward(ripplectl::unwrap_config(ripplectl::law::OnTimeFeedForward::new(
        CONFIG.setpoint_v,
        {f:?},
        &CONFIG.clock,
    )))"
        );
        if trim {
            let _ = write!(
                s,
                "
    .with_trim(ripplectl::unwrap_config(ripplectl::law::FrequencyTrim::new(
        {f:?},
        {TRIM_GAIN:?},
        {TRIM_MIN:?},
        {TRIM_MAX:?},
        &CONFIG.clock,
    )))"
            );
        }
    }
    s.push_str(";\n");
}
