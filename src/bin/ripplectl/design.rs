//! `ripplectl design`: a first configuration from a few board facts; with
//! `--out`, a scenario that `simulate` runs as it is and the firmware's
//! `const` configuration.

use crate::failure::{bad_input, failed, Failure};
use ripplectl::design::check::{propose_checked, Point};
use ripplectl::design::const_block::const_block;
use ripplectl::design::facts::{Board, Facts, LawRequest, Mcu};
use ripplectl::design::report;
use ripplectl::design::scenario_file::{scenario_toml, title};
use ripplectl::sim::cores::Core;
use ripplectl::sim::report::write_all;
use ripplectl::sim::Scenario;
use std::path::Path;

/// The scenario's file name under `--out`.
pub const SCENARIO_FILE: &str = "scenario.toml";
/// The `const` block's file name under `--out`.
pub const CONFIG_FILE: &str = "config.rs";

pub fn design(facts: &Facts, out: Option<&Path>) -> Result<(), Failure> {
    let (p, points) = propose_checked(facts).map_err(bad_input)?;
    let toml = scenario_toml(&p);
    // The written scenario must run as it is: check it as `simulate` will.
    let sc =
        Scenario::from_toml(&toml).map_err(|e| failed(format!("the written scenario: {e}")))?;
    let rust = const_block(&sc, &title(&p)).map_err(failed)?;
    print!("{}", report::text(&p, &simulated(&points)));
    if let Some(dir) = out {
        write_all(dir, &[(SCENARIO_FILE, toml.into_bytes()), (CONFIG_FILE, rust.into_bytes())])
            .map_err(|e| failed(format!("{}: {e}", dir.display())))?;
        println!("  written to {}: {SCENARIO_FILE} (ripplectl simulate --scenario), {CONFIG_FILE} (const items for firmware)", dir.display());
    }
    Ok(())
}

/// The simulated points as the report's rows.
fn simulated(points: &[Point]) -> Vec<report::Simulated> {
    points
        .iter()
        .map(|q| report::Simulated {
            vin_v: q.vin_v,
            load_a: q.load_a,
            error: q.error(),
            f_min_hz: q.summary.fsw_min_hz,
            f_mean_hz: q.summary.fsw_mean_hz,
            f_max_hz: q.summary.fsw_max_hz,
            cpu_load: q.cpu_load(),
        })
        .collect()
}

/// `MIN:MAX` volts.
pub fn input_range(s: &str) -> Result<(f64, f64), String> {
    let bad = || format!("expects MIN:MAX in volts, e.g. 18:32, got `{s}`");
    let (lo, hi) = s.split_once(':').ok_or_else(bad)?;
    Ok((lo.trim().parse().map_err(|_| bad())?, hi.trim().parse().map_err(|_| bad())?))
}

/// A core's name as scenarios write it.
pub fn core(s: &str) -> Result<Core, String> {
    serde_json::from_value(serde_json::Value::String(s.to_string()))
        .map_err(|_| format!("expects cortex-m0, cortex-m0+, cortex-m4 or rv32, got `{s}`"))
}

/// A clock in hertz (`170e6`), a whole number that fits 32 bits.
pub fn clock(s: &str) -> Result<u32, String> {
    let hz: f64 = s.parse().map_err(|_| format!("expects hertz, e.g. 170e6, got `{s}`"))?;
    if hz.fract() == 0.0 && hz >= 1.0 && hz <= f64::from(u32::MAX) {
        Ok(hz as u32)
    } else {
        Err(format!("expects a whole number of hertz from 1 to {}, got `{s}`", u32::MAX))
    }
}

/// A law request.
pub fn law(s: &str) -> Result<LawRequest, String> {
    match s {
        "auto" => Ok(LawRequest::Auto),
        "hysteretic" => Ok(LawRequest::Hysteretic),
        "on-time" => Ok(LawRequest::OnTime),
        _ => Err(format!("expects auto, hysteretic or on-time, got `{s}`")),
    }
}

/// The facts from the options; what is not given is the demo MCU's.
#[allow(clippy::too_many_arguments)]
pub fn facts(
    vin: (f64, f64),
    vout: f64,
    iout: f64,
    l: f64,
    c: f64,
    esr: f64,
    mcu: McuOptions,
    law: LawRequest,
) -> Facts {
    let demo = Mcu::demo();
    Facts {
        board: Board {
            vin_min_v: vin.0,
            vin_max_v: vin.1,
            vout_v: vout,
            iout_a: iout,
            l_h: l,
            c_f: c,
            esr_ohm: esr,
        },
        mcu: Mcu {
            core: mcu.core.unwrap_or(demo.core),
            clock_hz: mcu.clock_hz.unwrap_or(demo.clock_hz),
            adc_bits: mcu.adc_bits.unwrap_or(demo.adc_bits),
            adc_reference_v: mcu.adc_reference_v.unwrap_or(demo.adc_reference_v),
            max_sample_rate_hz: mcu.sample_rate_hz.unwrap_or(demo.max_sample_rate_hz),
            ..demo
        },
        law,
    }
}

/// The MCU options given.
pub struct McuOptions {
    pub core: Option<Core>,
    pub clock_hz: Option<u32>,
    pub adc_bits: Option<u8>,
    pub adc_reference_v: Option<f64>,
    pub sample_rate_hz: Option<f64>,
}
