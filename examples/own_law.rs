//! A law of your own, in the crate's stack, in the simulator: a hysteretic
//! law that narrows its band at light load.
//!
//! A plain hysteretic loop's frequency falls with the load in DCM: each
//! pulse carries a charge set by the band, and pulses come only as often as
//! the load draws that charge, down into the audible band. Narrowing the
//! band shrinks each pulse's charge, so pulses come more often. This law
//! watches the window's mean frequency on the slow path
//! ([`Regulate::retune`]) and switches between a wide band (less switching
//! loss at full load) and a narrow one (below `narrow_below_hz`), with
//! hysteresis between the two frequencies so it does not chatter.
//!
//! Everything here uses the crate's public API only: the law implements
//! [`Law`] and [`Regulate`], [`Stack`] wraps it in the guard, supervisor,
//! estimator and slow path, and [`sim::run_firmware`] runs it on the
//! simulated peripherals, wired as on a board by [`StackFirmware`].
//!
//! ```sh
//! cargo run --release --example own_law
//! ```
//!
//! Caution: a simulation is not a measurement. Check a real board's switch
//! node, output and inductor current with a scope, from a current-limited
//! bench supply, before trusting a law of your own.

use ripplectl::law::{Conditions, Regulate};
use ripplectl::sim::scenario::LawParams;
use ripplectl::sim::{self, build, report, RunError, Scenario, StackFirmware, Summary};
use ripplectl::stack::Stack;
use ripplectl::{AdcChannel, Command, ConfigError, Gate, Instant, Law, TimerClock};

/// The law's settings, SI units at the sensed output.
#[derive(Clone, Copy, Debug)]
pub struct TwoBandConfig {
    /// Band centre, V.
    pub setpoint_v: f32,
    /// Full band at full load, V.
    pub wide_band_v: f32,
    /// Full band at light load, V.
    pub narrow_band_v: f32,
    /// Narrow the band when the window's mean frequency falls below this, Hz.
    pub narrow_below_hz: f32,
    /// Widen it again above this, Hz (above `narrow_below_hz` by more than
    /// the bands' ratio of pulse charge).
    pub widen_above_hz: f32,
}

/// The law: thresholds in ADC codes around a reference that the slow path
/// may move (soft-start, DC correction).
#[derive(Clone, Copy, Debug)]
pub struct TwoBandHysteretic {
    reference: u16,
    full_scale: u16,
    /// Half bands, codes.
    wide: u16,
    narrow: u16,
    /// Mean periods, timer ticks, that switch the band.
    narrow_above_ticks: u32,
    widen_below_ticks: u32,
    half: u16,
    demand: Gate,
    /// On comparator edges: the upper threshold is armed (else the lower).
    upper_armed: bool,
}

impl TwoBandHysteretic {
    /// Build the law for an output sensed through `adc`, on `clock`.
    pub fn new(
        cfg: &TwoBandConfig,
        adc: &AdcChannel,
        clock: &TimerClock,
    ) -> Result<Self, ConfigError> {
        let reference = adc.to_code(cfg.setpoint_v)?.raw;
        let half = |band: f32| (adc.span_codes(f64::from(band)) / 2.0).round().max(1.0) as u16;
        let period = |hz: f32| clock.period_ticks(hz).map(|q| q.raw);
        Ok(Self {
            reference,
            full_scale: adc.full_scale_code(),
            wide: half(cfg.wide_band_v),
            narrow: half(cfg.narrow_band_v),
            narrow_above_ticks: period(cfg.narrow_below_hz)?,
            widen_below_ticks: period(cfg.widen_above_hz)?,
            half: half(cfg.wide_band_v),
            demand: Gate::Off,
            upper_armed: false,
        })
    }

    fn lower(&self) -> u16 {
        self.reference.saturating_sub(self.half)
    }

    fn upper(&self) -> u16 {
        self.reference.saturating_add(self.half)
    }
}

impl Law for TwoBandHysteretic {
    fn on_sample(&mut self, code: u16, _now: Instant) -> Command {
        if code <= self.lower() {
            self.demand = Gate::On;
        } else if code >= self.upper() {
            self.demand = Gate::Off;
        }
        Command::hold(self.demand)
    }

    /// On a comparator's edges: `above` the armed threshold. Below the
    /// lower one, a pulse; above the upper one, its end.
    fn on_edge(&mut self, above: bool, _now: Instant) -> Command {
        match (self.upper_armed, above) {
            (true, true) => {
                self.demand = Gate::Off;
                self.upper_armed = false;
            }
            (false, false) => {
                self.demand = Gate::On;
                self.upper_armed = true;
            }
            (false, true) => self.demand = Gate::Off,
            (true, false) => {}
        }
        Command::hold(self.demand)
    }

    /// Any turn-off arms the lower threshold (a pulse the current limit
    /// cut short waits for the output to fall again).
    fn on_gate(&mut self, gate: Gate, _at: Instant) {
        if !gate.is_on() {
            self.upper_armed = false;
        }
    }

    fn comparator_code(&self) -> Option<u16> {
        Some(if self.upper_armed { self.upper() } else { self.lower() })
    }

    fn on_timer(&mut self, _now: Instant) -> Command {
        Command::hold(self.demand)
    }
}

impl Regulate for TwoBandHysteretic {
    fn reference_code(&self) -> u16 {
        self.reference
    }

    fn set_reference(&mut self, code: u16) {
        self.reference = code.min(self.full_scale);
    }

    /// Narrow the band when the window's mean period grew past the light-load
    /// threshold (or no cycle came at all), widen it when it fell below the
    /// other one. Integer only: one division.
    fn retune(&mut self, c: &Conditions) {
        let mean = c.period_ticks.checked_div(c.cycles).unwrap_or(u32::MAX);
        if mean > self.narrow_above_ticks {
            self.half = self.narrow;
        } else if mean < self.widen_below_ticks {
            self.half = self.wide;
        }
    }
}

/// The demo's bands: 40 mV normally, 16 mV below 25 kHz, back to 40 mV
/// above 100 kHz. In DCM a pulse's charge goes as its peak current squared,
/// and the peak as `band/ESR` plus the loop delay's overshoot: on the demo
/// rail the narrow band's pulses carry about a third of the wide band's
/// charge, so switching to it triples the frequency. The two thresholds lie
/// further apart than that (4×), so neither band's frequency reaches the
/// other band's threshold: no chatter.
pub fn demo_config(setpoint_v: f32) -> TwoBandConfig {
    TwoBandConfig {
        setpoint_v,
        wide_band_v: 0.040,
        narrow_band_v: 0.012,
        narrow_below_hz: 25e3,
        widen_above_hz: 120e3,
    }
}

/// Run `scenario` with the two-band law in place of its own (the
/// scenario's other settings, protections and slow path as they are).
pub fn run(scenario: &Scenario) -> Result<Summary, RunError> {
    let config = build::stack_config(scenario)?;
    let parts = build::stack_parts(scenario)?;
    let law =
        TwoBandHysteretic::new(&demo_config(config.setpoint_v), &config.output_adc, &config.clock)
            .map_err(|e| RunError::Config(sim::scenario::keyed(scenario, e)))?;
    let started = std::time::Instant::now();
    let out = sim::run_firmware(scenario, |p| StackFirmware::new(Stack::new(law, parts), p))?;
    Ok(Summary::of(&out, "two-band hysteretic", started.elapsed().as_secs_f64()))
}

/// The rail of `base` at `vin_v` with 100 mA of sensors (a light load),
/// the crate's law without a frequency lock and the window only reporting
/// long periods (the law alone sets the frequency; the default scenario's
/// lock and its light-load policy, smaller pulses, would lift the fixed
/// band's frequency too).
pub fn light_load(base: &Scenario, vin_v: f64) -> Scenario {
    let mut sc = sim::sweep::operating_point(base, vin_v, 0.1, 6e-3);
    sc.control.window.light_load = ripplectl::LightLoad::ReportOnly;
    if let LawParams::Hysteretic { lock_hz, .. } = &mut sc.control.law {
        *lock_hz = None;
    }
    sc
}

#[allow(dead_code)]
fn main() -> Result<(), RunError> {
    let scenario = light_load(&Scenario::default_demo(), 24.0);
    let window = scenario.control.window;
    println!("The crate's hysteretic law, 40 mV band, at 24 V and 100 mA:");
    let plain = sim::run(&scenario)?;
    print!("{}", report::table(&Summary::of(&plain, &scenario.name, 0.0), &window));
    println!("A law of your own, narrowing its band at light load:");
    print!("{}", report::table(&run(&scenario)?, &window));
    Ok(())
}
