//! The facts a design starts from: the board's (input range, output, load,
//! output filter) and the microcontroller's (core, clock, ADC), checked
//! once, each refusal naming the option it came from.

use crate::sim::cores::Core;
use std::fmt;

/// The power stage as the designer knows it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Board {
    /// Lowest input voltage, V.
    pub vin_min_v: f64,
    /// Highest input voltage, V.
    pub vin_max_v: f64,
    /// Output voltage, V.
    pub vout_v: f64,
    /// Full-load output current, A.
    pub iout_a: f64,
    /// Inductance, H.
    pub l_h: f64,
    /// Output capacitance left at the output voltage (after a ceramic's DC
    /// bias), F.
    pub c_f: f64,
    /// Output capacitor ESR, Ω.
    pub esr_ohm: f64,
}

impl Board {
    /// The crate's demo board: the greenhouse valve rail, 18–32 V to
    /// 5 V / 2 A, 47 µH, 220 µF polymer with 40 mΩ.
    pub const fn demo() -> Self {
        Self {
            vin_min_v: 18.0,
            vin_max_v: 32.0,
            vout_v: 5.0,
            iout_a: 2.0,
            l_h: 47e-6,
            c_f: 220e-6,
            esr_ohm: 0.040,
        }
    }

    /// The middle of the input range, V.
    pub fn vin_nominal_v(&self) -> f64 {
        0.5 * (self.vin_min_v + self.vin_max_v)
    }

    /// The output filter's resonance `1/(2π·√(LC))`, Hz.
    pub fn lc_resonance_hz(&self) -> f64 {
        1.0 / (2.0 * std::f64::consts::PI * (self.l_h * self.c_f).sqrt())
    }
}

/// The microcontroller as the designer knows it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Mcu {
    /// The core (its handler counts: [`crate::sim::cpu`]; its factors:
    /// [`crate::sim::cores`]).
    pub core: Core,
    /// Core clock, Hz; the timer counts it too.
    pub clock_hz: u32,
    /// ADC resolution, bits (the comparator's DAC has the same).
    pub adc_bits: u8,
    /// ADC reference, V.
    pub adc_reference_v: f64,
    /// Highest sample rate the ADC converts at, Hz.
    pub max_sample_rate_hz: f64,
    /// Conversion time, s.
    pub conversion_s: f64,
    /// Interrupt latency before a handler starts, s.
    pub isr_latency_s: f64,
    /// Analog comparator delay, s.
    pub comparator_delay_s: f64,
    /// ADC noise, LSB rms.
    pub noise_lsb_rms: f64,
}

impl Mcu {
    /// The demo MCU: a Cortex-M4 at 170 MHz with a 12-bit, 3.3 V ADC
    /// (0.2 µs conversions, up to 1 MHz, 0.7 LSB rms noise), 0.25 µs
    /// interrupt latency and a 60 ns comparator. Demo values.
    pub const fn demo() -> Self {
        Self {
            core: Core::CortexM4,
            clock_hz: 170_000_000,
            adc_bits: 12,
            adc_reference_v: 3.3,
            max_sample_rate_hz: 1.0e6,
            conversion_s: 0.2e-6,
            isr_latency_s: 0.25e-6,
            comparator_delay_s: 60e-9,
            noise_lsb_rms: 0.7,
        }
    }

    /// The output's resolution at the pin, V per code.
    pub fn volts_per_code(&self) -> f64 {
        self.adc_reference_v / f64::from(1u32 << self.adc_bits)
    }
}

/// Which law the designer asks for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LawRequest {
    /// The first that fits: hysteretic on comparator edges, then on-time
    /// on edges, then on-time on samples.
    Auto,
    /// The hysteretic law only.
    Hysteretic,
    /// The on-time law only.
    OnTime,
}

/// Everything a design starts from.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Facts {
    /// The power stage.
    pub board: Board,
    /// The microcontroller.
    pub mcu: Mcu,
    /// The law asked for.
    pub law: LawRequest,
}

/// A design refused, naming the option (`--vout`) it comes from.
#[derive(Clone, Debug, PartialEq)]
pub struct DesignError {
    /// The command-line option, e.g. `--vout`.
    pub option: &'static str,
    /// What is wrong, to follow the option's name.
    pub message: String,
}

impl fmt::Display for DesignError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.option, self.message)
    }
}

impl std::error::Error for DesignError {}

/// A refusal of `option`.
pub fn refuse(option: &'static str, message: impl Into<String>) -> DesignError {
    DesignError { option, message: message.into() }
}

fn positive(option: &'static str, x: f64) -> Result<(), DesignError> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(refuse(option, format!("must be a positive number, got {x}")))
    }
}

/// Headroom the input needs above the output: switch, diode and inductor
/// drops, and a duty cycle below about 90 % (rule of this tool).
pub const MIN_HEADROOM: f64 = 1.1;

impl Facts {
    /// Check the facts (each refusal names its option).
    pub fn validate(&self) -> Result<(), DesignError> {
        self.validate_board()?;
        self.validate_mcu()
    }

    fn validate_board(&self) -> Result<(), DesignError> {
        let b = &self.board;
        positive("--vin", b.vin_min_v)?;
        positive("--vin", b.vin_max_v)?;
        if b.vin_max_v < b.vin_min_v {
            return Err(refuse("--vin", "expects MIN:MAX with MIN at most MAX"));
        }
        positive("--vout", b.vout_v)?;
        if b.vout_v >= b.vin_min_v {
            return Err(refuse(
                "--vout",
                format!(
                    "must be below --vin's minimum ({} V): a buck only steps down",
                    b.vin_min_v
                ),
            ));
        }
        if b.vin_min_v < MIN_HEADROOM * b.vout_v {
            return Err(refuse(
                "--vin",
                format!(
                    "minimum {} V leaves under 10 % above --vout {} V for the switch, diode and inductor drops",
                    b.vin_min_v, b.vout_v
                ),
            ));
        }
        positive("--iout", b.iout_a)?;
        positive("--l", b.l_h)?;
        positive("--c", b.c_f)?;
        if !(b.esr_ohm.is_finite() && b.esr_ohm >= 0.0) {
            return Err(refuse("--esr", format!("must not be negative, got {}", b.esr_ohm)));
        }
        Ok(())
    }

    fn validate_mcu(&self) -> Result<(), DesignError> {
        let m = &self.mcu;
        if m.clock_hz == 0 {
            return Err(refuse("--clock", "must be above 0 Hz"));
        }
        if !(8..=16).contains(&m.adc_bits) {
            return Err(refuse("--adc-bits", format!("must be 8 to 16, got {}", m.adc_bits)));
        }
        positive("--adc-ref", m.adc_reference_v)?;
        positive("--sample-rate", m.max_sample_rate_hz)
    }
}

/// The stage's parts the facts do not name: the demo stage's, to be
/// replaced by the board's own in the written scenario.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AssumedStage {
    /// Inductor DCR, Ω.
    pub dcr_ohm: f64,
    /// High-side switch on-resistance, Ω.
    pub r_on_ohm: f64,
    /// Source and wiring resistance, Ω.
    pub r_source_ohm: f64,
    /// Freewheeling diode forward voltage, V.
    pub diode_vf_v: f64,
    /// Its dynamic resistance, Ω.
    pub diode_rd_ohm: f64,
    /// Switch-node rise and fall times, s.
    pub t_edge_s: f64,
    /// Gate charge, C.
    pub gate_charge_c: f64,
    /// Gate drive voltage, V.
    pub gate_drive_v: f64,
}

impl AssumedStage {
    /// The demo stage: a 60 mΩ MOSFET with 50 mΩ of wiring, a Schottky
    /// diode (0.45 V, 30 mΩ), 30 mΩ DCR, 20 ns edges, 10 nC at 10 V.
    pub const fn demo() -> Self {
        Self {
            dcr_ohm: 0.030,
            r_on_ohm: 0.060,
            r_source_ohm: 0.050,
            diode_vf_v: 0.45,
            diode_rd_ohm: 0.030,
            t_edge_s: 20e-9,
            gate_charge_c: 10e-9,
            gate_drive_v: 10.0,
        }
    }
}
