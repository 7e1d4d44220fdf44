//! Tolerance analysis: the same scenario run many times with its parts,
//! the microcontroller's errors and the operating conditions drawn within
//! their spreads, each run judged against pass criteria.
//!
//! | module | what |
//! |---|---|
//! | [`settings`] | the scenario's `[tolerance]` table: spreads and criteria as written, with their defaults |
//! | [`spread`] | a parameter's limit and distribution |
//! | [`params`] | the varied parameters, their default spreads and sources, how a value enters a scenario |
//! | [`draw`] | one run's values (random from (seed, index), or a corner) |
//! | [`criteria`] | what each pass criterion means and its default, a run's figures, limits, margins |
//! | [`stats`] | Wilson's interval for the yield, quantiles |
//! | [`histogram`] | SVG histograms |
//! | [`summary`] | the study's report: text and JSON |
//! | [`page`] | the study's report as one HTML page |
//!
//! Runs go in parallel (rayon); each run's values come from its own index,
//! so the result is the same on any number of threads.

pub mod criteria;
pub mod draw;
pub mod histogram;
pub mod page;
pub mod params;
pub mod settings;
pub mod spread;
pub mod stats;
pub mod summary;

use self::criteria::{Figures, Limits, Verdict};
use self::draw::Setting;
use self::params::PARAMS;
use self::settings::Spreads;
pub use self::settings::ToleranceParams;
use super::build::run_with;
use super::engine::RunError;
use super::run_control::RunControl;
use super::scenario::ScenarioError;
use super::{Scenario, Summary};
use rayon::prelude::*;
use serde::Serialize;
use std::sync::atomic::AtomicBool;

impl ToleranceParams {
    /// Check every spread and criterion, naming the key.
    pub fn validate(&self) -> Result<(), ScenarioError> {
        for p in &PARAMS {
            let spread = (p.spread)(&self.spread);
            if let Some((sub, message)) = spread.problem(p.positive) {
                return Err(invalid(&format!("tolerance.spread.{}.{sub}", p.name), message));
            }
            if spread.dc_bias_loss.is_some() && p.name != "c_f" {
                let key = format!("tolerance.spread.{}.dc_bias_loss", p.name);
                return Err(invalid(&key, "applies to c_f only".to_string()));
            }
        }
        let c = &self.criteria;
        let limits = [
            ("regulation_pct", Some(c.regulation_pct)),
            ("ripple_max_v", c.ripple_max_v),
            ("il_peak_max_a", c.il_peak_max_a),
            ("undershoot_max_v", c.undershoot_max_v),
            ("overshoot_max_v", c.overshoot_max_v),
            ("recovery_max_s", c.recovery_max_s),
        ];
        for (key, value) in limits {
            if let Some(x) = value.filter(|x| !(x.is_finite() && *x > 0.0)) {
                let message = format!("must be a positive number, got {x}");
                return Err(invalid(&format!("tolerance.criteria.{key}"), message));
            }
        }
        Ok(())
    }
}

fn invalid(key: &str, message: String) -> ScenarioError {
    ScenarioError { key: key.to_string(), line: None, message }
}

/// How the runs' values are chosen.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Mode {
    /// `runs` random draws from `seed`.
    Random {
        /// Number of runs.
        runs: u64,
        /// Study seed.
        seed: u64,
    },
    /// Every combination of each varied parameter at either end of its
    /// limit.
    Corners,
}

/// Most parameters `--corners` combines: 2^16 = 65 536 runs.
pub const MAX_CORNER_DIMENSIONS: u32 = 16;

/// What the caller sees of a study while it runs.
#[derive(Clone, Copy, Default)]
pub struct StudyControl<'a> {
    /// Called after each run with the number of runs done.
    pub progress: Option<&'a (dyn Fn(u64) + Sync)>,
    /// Once set, the study stops with [`StudyError::Cancelled`].
    pub cancel: Option<&'a AtomicBool>,
}

/// Why a study could not be carried out.
#[derive(Clone, Debug, PartialEq)]
pub enum StudyError {
    /// The nominal scenario does not run: why.
    Nominal(String),
    /// `--corners` over more parameters than [`MAX_CORNER_DIMENSIONS`].
    TooManyCorners(u32),
    /// The caller cancelled the study.
    Cancelled,
}

impl std::fmt::Display for StudyError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Nominal(e) => write!(f, "the nominal scenario does not run: {e}"),
            Self::TooManyCorners(n) => write!(
                f,
                "{n} varied parameters make 2^{n} corners; at most {MAX_CORNER_DIMENSIONS} (set some spreads to zero)"
            ),
            Self::Cancelled => f.write_str("interrupted"),
        }
    }
}

impl std::error::Error for StudyError {}

/// One run of a study.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RunResult {
    /// Run index (random mode: with the seed, it fixes the draw; corners:
    /// the corner's bits).
    pub index: u64,
    /// The values drawn.
    pub settings: Vec<Setting>,
    /// Its figures (none when the drawn scenario could not run).
    pub figures: Option<Figures>,
    /// How it fared.
    pub verdict: Verdict,
}

/// A whole study.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// How values were chosen.
    pub mode: Mode,
    /// The criteria, resolved for the scenario.
    pub limits: Limits,
    /// The nominal run (every value at nominal).
    pub nominal: RunResult,
    /// Every run, in index order.
    pub runs: Vec<RunResult>,
}

/// The scenario of one run: exactly what it ran (write it to a file and
/// `simulate` reproduces the run).
pub fn run_scenario(base: &Scenario, run: &RunResult) -> Scenario {
    let mut s = draw::apply(base, &run.settings);
    s.name = format!("{}, tolerance run {}", base.name, run.index);
    s
}

fn judge_run(
    base: &Scenario,
    limits: &Limits,
    index: u64,
    settings: Vec<Setting>,
    cancel: Option<&AtomicBool>,
) -> Result<RunResult, StudyError> {
    let scenario = draw::apply(base, &settings);
    let outcome =
        scenario.validate().map_err(|e| format!("drawn scenario invalid: {e}")).and_then(|()| {
            match run_with(&scenario, &RunControl { cancel, ..RunControl::default() }) {
                Ok(out) => Ok(Figures::of(&Summary::without_audible(&out, &scenario.name, 0.0))),
                Err(RunError::Cancelled) => Err(String::new()),
                Err(e) => Err(e.to_string()),
            }
        });
    let (figures, verdict) = match outcome {
        Ok(f) => {
            let v = limits.judge(&f);
            (Some(f), v)
        }
        Err(why) if why.is_empty() => return Err(StudyError::Cancelled),
        Err(why) => (None, Verdict { margin: -1.0, failures: vec![why] }),
    };
    Ok(RunResult { index, settings, figures, verdict })
}

/// Run a study of `base` (its `[tolerance]` table, or the defaults).
pub fn run_study(
    base: &Scenario,
    mode: Mode,
    control: &StudyControl,
) -> Result<Outcome, StudyError> {
    let params = base.tolerance.unwrap_or_default();
    let spreads = params.spread;
    let limits = Limits::new(params.criteria, base);
    let nominal_settings = draw::random(&Spreads::zero(), base, 0, 0);
    let nominal = judge_run(base, &limits, 0, nominal_settings, control.cancel)?;
    if nominal.figures.is_none() {
        return Err(StudyError::Nominal(nominal.verdict.failures.join("; ")));
    }
    let count = match mode {
        Mode::Random { runs, .. } => runs,
        Mode::Corners => {
            let n = draw::corner_dimensions(&spreads, base);
            if n > MAX_CORNER_DIMENSIONS {
                return Err(StudyError::TooManyCorners(n));
            }
            1 << n
        }
    };
    let done = std::sync::atomic::AtomicU64::new(0);
    let runs = (0..count)
        .into_par_iter()
        .map(|index| {
            let settings = match mode {
                Mode::Random { seed, .. } => draw::random(&spreads, base, seed, index),
                Mode::Corners => draw::corner(&spreads, base, index),
            };
            let r = judge_run(base, &limits, index, settings, control.cancel);
            let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            if let Some(progress) = control.progress {
                progress(n);
            }
            r
        })
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Outcome { mode, limits, nominal, runs })
}
