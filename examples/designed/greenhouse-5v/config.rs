// Written by `ripplectl design`: 18-32 V to 5 V / 2 A, on-time on comparator edges.
//
// The firmware's configuration as `const` items: the compiler converts
// volts and seconds into codes, ticks and fixed-point coefficients, and a
// value out of range fails the build naming it. It configures the same
// stack the scenario written beside it runs in the simulator. Caution: a
// power stage under firmware control can burn, shock and destroy loads;
// bring a board up from a current-limited bench supply, with a hardware
// current limit that does not depend on this code.

/// Every setting besides the law, SI units.
pub const CONFIG: ripplectl::stack::StackConfig = ripplectl::stack::StackConfig {
    clock: ripplectl::unwrap_config(ripplectl::TimerClock::new(170000000)),
    output_adc: ripplectl::unwrap_config(ripplectl::AdcChannel::new(12, 3.3, 0.319728, 0.0)),
    input_adc: ripplectl::unwrap_config(ripplectl::AdcChannel::new(12, 3.3, 0.075786, 0.0)),
    setpoint_v: 5.0,
    sensing: ripplectl::stack::Sensing::Edge,
    window: ripplectl::WindowConfig {
        f_min_hz: 20000.0,
        f_max_hz: 140000.0,
        min_on_s: 1.5e-7,
        min_off_s: 3e-7,
        max_on_s: 4e-5,
        light_load: ripplectl::LightLoad::SmallerPulses,
    },
    model: ripplectl::estimate::InductorModel {
        l_h: 4.7e-5,
        r_on_ohm: 0.11,
        dcr_ohm: 0.03,
        diode_vf_v: 0.45,
        diode_rd_ohm: 0.03,
        r_low_ohm: None,
    },
    protection: ripplectl::supervisor::ProtectionConfig {
        uvlo_on_v: 16.2,
        uvlo_off_v: 15.3,
        vin_max_v: 35.5,
        vin_max_hysteresis_v: 1.1,
        ovp_v: 5.5,
        current_limit_a: 3.7,
        short_cycles: 8,
        hiccup_s: 0.002,
        soft_start_s: 0.0024,
        stuck_low_v: 0.3,
        stuck_implied_v: 2.0,
        stuck_cycles: 3,
        max_retries: 3,
    },
    slow: ripplectl::stack::SlowPathConfig {
        housekeeping_hz: 5000.0,
        observer_bandwidth_hz: Some(1000.0),
        output_capacitance_f: 0.00022,
        dc_correction: true,
        losses: ripplectl::estimate::LossConfig {
            l_h: 4.7e-5,
            r_on_ohm: 0.11,
            dcr_ohm: 0.03,
            diode_vf_v: 0.45,
            off_r_ohm: 0.03,
            esr_ohm: 0.04,
            t_rise_s: 2e-8,
            t_fall_s: 2e-8,
            gate_charge_c: 1e-8,
            gate_drive_v: 10.0,
            core: None,
        },
    },
};

/// The stack's parts in raw units (checked at compile time).
pub const PARTS: ripplectl::stack::StackParts =
    ripplectl::unwrap_config(ripplectl::stack::StackParts::new(&CONFIG));

/// The on-time law before what is added to it.
const BASE: ripplectl::law::OnTime = ripplectl::unwrap_config(ripplectl::law::OnTime::new(
    &ripplectl::law::OnTimeConfig { setpoint_v: CONFIG.setpoint_v, on_time_s: 4e-6 },
    &CONFIG.output_adc,
    &CONFIG.clock,
));

/// The on-time law.
pub const LAW: ripplectl::law::OnTime = BASE
    .with_feed_forward(ripplectl::unwrap_config(ripplectl::law::OnTimeFeedForward::new(
        CONFIG.setpoint_v,
        50000.0,
        &CONFIG.clock,
    )))
    .with_trim(ripplectl::unwrap_config(ripplectl::law::FrequencyTrim::new(
        50000.0,
        0.05,
        0.5,
        1.5,
        &CONFIG.clock,
    )));

/// Who ends a pulse at a deadline armed while the gate is on, as in the
/// simulator's check of this configuration: the timer's compare, in
/// hardware (see `ripplectl::drive`). Build the `GateDriver` with it only
/// if the board's `OneShot::arm` puts the compare in its "clear on match"
/// (or one-pulse) mode when `ends_pulse` is true: otherwise the gate pin
/// is never written low at the deadline. Without such a mode use
/// `PulseEnd::Software`, which the check did not simulate: a pulse is then
/// longer by the compare handler's entry latency, and by a varying amount
/// (period jitter) when another handler runs first or ends it.
pub const PULSE_END: ripplectl::drive::PulseEnd = ripplectl::drive::PulseEnd::Hardware;
