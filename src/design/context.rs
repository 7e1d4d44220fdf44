//! What every loop shares, settled before a loop is chosen: the facts, the
//! assumed stage, the dividers, the housekeeping rate and the observer,
//! the frequency window, and the two stops the dividers are sized for (the
//! input's stop, the output's over-voltage threshold; the other
//! protections are [`super::protect`]'s).

use super::budget::{Budget, Scheme};
use super::divider::Divider;
use super::facts::{refuse, AssumedStage, DesignError, Facts};
use super::values::round_to;
use crate::guard::{LightLoad, WindowConfig};

/// The slow path's rate and the observer.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Housekeeping {
    /// Rate, Hz.
    pub hz: f64,
    /// Observer bandwidth, Hz; `None`: no observer.
    pub observer_hz: Option<f64>,
}

/// What every loop shares: the facts, the assumed stage, the dividers, the
/// slow path and the window.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Context<'a> {
    /// The facts.
    pub facts: &'a Facts,
    /// The stage's parts the facts do not name.
    pub stage: AssumedStage,
    /// Output divider.
    pub output_divider: Divider,
    /// Input divider.
    pub input_divider: Divider,
    /// Housekeeping.
    pub hk: Housekeeping,
    /// The frequency window.
    pub window: WindowConfig,
}

impl Context<'_> {
    /// Output volts per ADC (and DAC) code.
    pub fn output_volts_per_code(&self) -> f64 {
        self.facts.mcu.volts_per_code() / self.output_divider.ratio()
    }

    /// The input points the predictions and checks use: lowest, middle,
    /// highest.
    pub fn input_points(&self) -> [f64; 3] {
        let b = &self.facts.board;
        [b.vin_min_v, b.vin_nominal_v(), b.vin_max_v]
    }

    /// Readings of output and input for the protections and averages, Hz:
    /// ten per housekeeping window (rule of this tool), within the ADC.
    pub fn readings_hz(&self) -> f64 {
        (10.0 * self.hk.hz).min(self.facts.mcu.max_sample_rate_hz)
    }

    /// The window's floor, Hz.
    pub fn f_min(&self) -> f64 {
        f64::from(self.window.f_min_hz)
    }

    /// The window's ceiling, Hz.
    pub fn f_max(&self) -> f64 {
        f64::from(self.window.f_max_hz)
    }

    /// The over-voltage threshold: 10 % above the output (common
    /// practice), V.
    pub fn ovp_v(&self) -> f64 {
        round_to(1.1 * self.facts.board.vout_v, 0.01)
    }
}

/// The window every proposal uses: 20 kHz, above the audible band, to
/// 140 kHz, below CISPR 32's conducted band from 150 kHz (common practice,
/// [`WindowConfig::demo`]); the demo driver's minimum on- and off-times; a
/// maximum on-time of 80 % of the longest period; smaller pulses at light
/// load.
pub fn window() -> WindowConfig {
    let demo = WindowConfig::demo();
    WindowConfig { max_on_s: 0.8 / demo.f_min_hz, light_load: LightLoad::SmallerPulses, ..demo }
}

/// Share of the core above which the observer is dropped and housekeeping
/// slows to 1 kHz (rule of this tool).
pub const HOUSEKEEPING_SHARE: f64 = 0.25;

/// The shared settings for `facts`; refused when a divider cannot be
/// built.
pub fn context(facts: &Facts) -> Result<Context<'_>, DesignError> {
    let (b, m) = (&facts.board, &facts.mcu);
    // The output at half the reference leaves room for the over-voltage
    // threshold and overshoots (rule of this tool).
    let output_divider = Divider::at_most(10e3, 0.5 * m.adc_reference_v / b.vout_v)
        .ok_or_else(|| refuse("--vout", "is too high for a 10 k divider to the ADC"))?;
    let input_divider = Divider::at_most(100e3, m.adc_reference_v / (1.2 * vin_max_v(b.vin_max_v)))
        .ok_or_else(|| refuse("--vin", "is too high for a 100 k divider to the ADC"))?;
    Ok(Context {
        facts,
        stage: AssumedStage::demo(),
        output_divider,
        input_divider,
        hk: housekeeping(facts)?,
        window: window(),
    })
}

/// Housekeeping at three times the output filter's resonance, whole kHz,
/// at least 1 kHz, with the observer at a fifth of it; when that costs
/// more than [`HOUSEKEEPING_SHARE`] of the core, 1 kHz without the
/// observer.
fn housekeeping(facts: &Facts) -> Result<Housekeeping, DesignError> {
    let budget = Budget::new(Scheme::OnTimeSampled, &facts.mcu)?;
    let hz = (3.0 * facts.board.lc_resonance_hz() / 1e3).ceil().max(1.0) * 1e3;
    Ok(if budget.housekeeping_share(hz) <= HOUSEKEEPING_SHARE {
        Housekeeping { hz, observer_hz: Some(hz / 5.0) }
    } else {
        Housekeeping { hz: 1e3, observer_hz: None }
    })
}

/// The input's over-voltage stop: 10 % above the highest input, rounded
/// up to 0.5 V (rule of this tool).
pub fn vin_max_v(vin_max: f64) -> f64 {
    (1.1 * vin_max / 0.5).ceil() * 0.5
}
