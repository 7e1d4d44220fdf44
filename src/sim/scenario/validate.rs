//! A scenario's physical consistency: each value in its range, each
//! refusal on its dotted key (the firmware's own checks last, through
//! [`crate::sim::build::check`]).

use super::{LawParams, Scenario, ScenarioError, MAX_ADC_GAIN_ERROR, MAX_CLOCK_ERROR_PPM};
use crate::sim::plant::Stage;
use crate::sim::profile::Load;

/// A refusal of the value at `key`.
fn invalid(key: &str, message: impl Into<String>) -> ScenarioError {
    ScenarioError { key: key.to_string(), line: None, message: message.into() }
}

/// Require `x > 0` (and finite).
fn positive(key: &str, x: f64) -> Result<(), ScenarioError> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(invalid(key, format!("must be a positive number, got {x}")))
    }
}

/// Require `x ≥ 0` (and finite).
fn non_negative(key: &str, x: f64) -> Result<(), ScenarioError> {
    if x.is_finite() && x >= 0.0 {
        Ok(())
    } else {
        Err(invalid(key, format!("must not be negative, got {x}")))
    }
}

impl Scenario {
    /// Check physical consistency.
    pub fn validate(&self) -> Result<(), ScenarioError> {
        positive("duration_s", self.duration_s)?;
        non_negative("initial_output_v", self.initial_output_v)?;
        self.validate_plant()?;
        self.validate_mcu()?;
        self.validate_profile()?;
        if let Some(band_v) = self.transient.and_then(|t| t.band_v) {
            positive("transient.band_v", band_v)?;
        }
        if let Some(c_f) = self.firmware.c_f {
            positive("firmware.c_f", c_f)?;
        }
        if let Some(esr_ohm) = self.firmware.esr_ohm {
            non_negative("firmware.esr_ohm", esr_ohm)?;
        }
        if let Some(t) = &self.tolerance {
            t.validate()?;
        }
        self.validate_control()?;
        self.validate_emission()?;
        // The firmware's own checks, each refusal on its key.
        crate::sim::build::check(self)
    }

    fn validate_emission(&self) -> Result<(), ScenarioError> {
        if let Some(c) = self.plant.input_capacitor {
            positive("plant.input_capacitor.c_f", c.c_f)?;
            non_negative("plant.input_capacitor.esr_ohm", c.esr_ohm)?;
            non_negative("plant.input_capacitor.esl_h", c.esl_h)?;
        }
        if let Some(f) = self.emission.filter {
            positive("emission.filter.l_h", f.l_h)?;
            positive("emission.filter.c_f", f.c_f)?;
            positive("emission.filter.damping_r_ohm", f.damping_r_ohm)?;
            positive("emission.filter.damping_c_f", f.damping_c_f)?;
            non_negative("emission.filter.c_esl_h", f.c_esl_h)?;
            non_negative("emission.filter.l_epc_f", f.l_epc_f)?;
        }
        Ok(())
    }

    fn validate_plant(&self) -> Result<(), ScenarioError> {
        let p = &self.plant;
        positive("plant.l_h", p.l_h)?;
        positive("plant.c_f", p.c_f)?;
        for (key, x) in [
            ("plant.dcr_ohm", p.dcr_ohm),
            ("plant.esr_ohm", p.esr_ohm),
            ("plant.r_on_ohm", p.r_on_ohm),
            ("plant.r_source_ohm", p.r_source_ohm),
            ("plant.diode_vf_v", p.diode_vf_v),
            ("plant.diode_rd_ohm", p.diode_rd_ohm),
            ("plant.t_rise_s", p.t_rise_s),
            ("plant.t_fall_s", p.t_fall_s),
            ("plant.gate_charge_c", p.gate_charge_c),
            ("plant.gate_drive_v", p.gate_drive_v),
        ] {
            non_negative(key, x)?;
        }
        if let Stage::Synchronous { r_on_low_ohm, dead_time_s } = p.stage {
            non_negative("plant.stage.r_on_low_ohm", r_on_low_ohm)?;
            non_negative("plant.stage.dead_time_s", dead_time_s)?;
        }
        if let Some(s) = p.saturation {
            positive("plant.saturation.i_sat_a", s.i_sat_a)?;
            positive("plant.saturation.roll_off_a", s.roll_off_a)?;
            if !(s.floor > 0.0 && s.floor <= 1.0) {
                return Err(invalid("plant.saturation.floor", "must be in (0, 1]"));
            }
        }
        if let Some(c) = p.core {
            for (key, x) in [
                ("plant.core.k", c.k),
                ("plant.core.turns", c.turns),
                ("plant.core.area_m2", c.area_m2),
                ("plant.core.volume_m3", c.volume_m3),
            ] {
                positive(key, x)?;
            }
        }
        Ok(())
    }

    fn validate_mcu(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        if m.clock_hz == 0 {
            return Err(invalid("mcu.clock_hz", "must be above 0"));
        }
        if let Some(hz) = m.cpu_clock_hz {
            positive("mcu.cpu_clock_hz", hz)?;
        }
        if let Some(cpi) = m.cpi {
            positive("mcu.cpi", cpi)?;
        }
        if let Some(cycles) = m.irq_overhead_cycles {
            non_negative("mcu.irq_overhead_cycles", cycles)?;
        }
        positive("mcu.sample_rate_hz", m.sample_rate_hz)?;
        if m.sample_rate_hz > f64::from(m.clock_hz) {
            return Err(invalid("mcu.sample_rate_hz", "exceeds the timer clock"));
        }
        non_negative("mcu.conversion_s", m.conversion_s)?;
        non_negative("mcu.noise_lsb_rms", m.noise_lsb_rms)?;
        non_negative("mcu.isr_latency_s", m.isr_latency_s)?;
        self.validate_mcu_timing()?;
        self.validate_mcu_errors()?;
        non_negative("mcu.comparator_delay_s", m.comparator_delay_s)?;
        positive("mcu.vin_divider_ratio", m.vin_divider_ratio)?;
        if let Some(t) = m.feedback_open_at_s {
            non_negative("mcu.feedback_open_at_s", t)?;
        }
        positive("firmware.housekeeping_hz", self.firmware.housekeeping_hz)?;
        if self.firmware.housekeeping_hz > m.sample_rate_hz.max(f64::from(m.clock_hz) / 64.0) {
            return Err(invalid("firmware.housekeeping_hz", "faster than the fast path"));
        }
        Ok(())
    }

    /// Refuse timings no converter has: a result that arrives after the
    /// next sample was taken never reaches the law (and noise wider than the
    /// converter's whole range is no measurement).
    fn validate_mcu_timing(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        let period_s = 1.0 / m.sample_rate_hz;
        for (key, x) in
            [("mcu.conversion_s", m.conversion_s), ("mcu.isr_latency_s", m.isr_latency_s)]
        {
            if x >= period_s {
                return Err(invalid(
                    key,
                    format!("{x} s is not shorter than the sample period {period_s} s"),
                ));
            }
        }
        if m.conversion_s + m.isr_latency_s >= period_s {
            return Err(invalid(
                "mcu.isr_latency_s",
                format!(
                    "conversion_s + isr_latency_s = {} s is not shorter than the sample period {period_s} s: every result would arrive after the next sample",
                    m.conversion_s + m.isr_latency_s
                ),
            ));
        }
        let codes = f64::from(1u32 << m.adc_bits.min(16));
        if m.noise_lsb_rms > codes {
            return Err(invalid(
                "mcu.noise_lsb_rms",
                format!("{} LSB rms is beyond the ADC's range of {codes} codes", m.noise_lsb_rms),
            ));
        }
        Ok(())
    }

    /// The simulated hardware's departures from the configuration.
    fn validate_mcu_errors(&self) -> Result<(), ScenarioError> {
        let m = &self.mcu;
        if !(m.adc_gain_error.is_finite() && m.adc_gain_error.abs() < MAX_ADC_GAIN_ERROR) {
            return Err(invalid(
                "mcu.adc_gain_error",
                format!("must lie within ±{MAX_ADC_GAIN_ERROR}, got {}", m.adc_gain_error),
            ));
        }
        let pin_offset = m.adc_offset_v + m.adc_offset_error_v;
        if !(pin_offset.is_finite() && pin_offset.abs() < m.adc_reference_v) {
            return Err(invalid(
                "mcu.adc_offset_error_v",
                format!("the offset at the pin, {pin_offset} V, must stay within ± the reference"),
            ));
        }
        if !(m.clock_error_ppm.is_finite() && m.clock_error_ppm.abs() < MAX_CLOCK_ERROR_PPM) {
            return Err(invalid(
                "mcu.clock_error_ppm",
                format!("must lie within ±{MAX_CLOCK_ERROR_PPM} ppm, got {}", m.clock_error_ppm),
            ));
        }
        Ok(())
    }

    fn validate_profile(&self) -> Result<(), ScenarioError> {
        if self.input.points.is_empty() {
            return Err(invalid("input.points", "needs at least one [t_s, volts] point"));
        }
        for w in self.input.points.windows(2) {
            if w[1][0] < w[0][0] {
                return Err(invalid("input.points", "times must not decrease"));
            }
        }
        for q in &self.input.points {
            non_negative("input.points", q[0])?;
            positive("input.points", q[1])?;
        }
        for change in &self.load {
            non_negative("load.at_s", change.at_s)?;
            match change.load {
                Load::Resistive { ohms } => positive("load.ohms", ohms)?,
                Load::Current { amps } => non_negative("load.amps", amps)?,
                Load::Ramp { from_a, to_a, over_s } => {
                    non_negative("load.from_a", from_a)?;
                    non_negative("load.to_a", to_a)?;
                    positive("load.over_s", over_s)?;
                }
                Load::Short => {}
            }
        }
        Ok(())
    }

    fn validate_control(&self) -> Result<(), ScenarioError> {
        let setpoint = self.control.law.setpoint_v();
        let (_, vin_max) = self.profile().input_range();
        if vin_max <= setpoint {
            return Err(invalid(
                "control.law.setpoint_v",
                format!("output {setpoint} V is at or above the input (at most {vin_max} V) for the whole run: a buck cannot reach it"),
            ));
        }
        match self.control.law {
            LawParams::Hysteretic { lock_hz, .. } => {
                if let Some(f) = lock_hz {
                    positive("control.law.lock_hz", f64::from(f))?;
                }
            }
            LawParams::OnTime { on_time_s, feed_forward_hz, trim, .. } => {
                positive("control.law.on_time_s", f64::from(on_time_s))?;
                if let Some(f) = feed_forward_hz {
                    positive("control.law.feed_forward_hz", f64::from(f))?;
                } else if trim {
                    return Err(invalid(
                        "control.law.trim",
                        "needs feed_forward_hz, the frequency to lock to",
                    ));
                }
            }
            LawParams::AnalogRetrofit { lower_v, upper_v } => {
                positive("control.law.lower_v", lower_v)?;
                if upper_v <= lower_v {
                    return Err(invalid("control.law.upper_v", "must be above lower_v"));
                }
            }
        }
        Ok(())
    }
}
