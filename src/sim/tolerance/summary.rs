//! A study's report: the yield with its interval, each figure's
//! distribution, the failures and the worst runs; as a table and as JSON.

use super::criteria::{Limits, FIGURES};
use super::draw::Setting;
use super::stats::{wilson, FigureStats, Z_95};
use super::{Mode, Outcome, RunResult};
use crate::sim::notation::eng;
use serde::Serialize;
use std::fmt::Write as _;

/// The confidence method the yield's interval uses.
pub const INTERVAL_METHOD: &str = "Wilson score interval, 95 %";

/// Runs listed as the worst.
pub const WORST: usize = 5;

/// A failing run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FailureEntry {
    /// Run index.
    pub run: u64,
    /// Why it failed.
    pub reasons: Vec<String>,
    /// Its values.
    pub settings: Vec<Setting>,
}

/// A run near or past a limit.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct WorstEntry {
    /// Run index.
    pub run: u64,
    /// Smallest margin, a fraction of the limit (negative: failed).
    pub margin: f64,
    /// Why it failed (empty: passed).
    pub reasons: Vec<String>,
}

/// The report (the JSON of `ripplectl tolerance --json`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ToleranceReport {
    /// Scenario name.
    pub scenario: String,
    /// How values were chosen.
    pub mode: Mode,
    /// Runs made.
    pub runs: u64,
    /// Runs that passed every criterion.
    pub passed: u64,
    /// Fraction that passed.
    #[serde(rename = "yield")]
    pub yield_fraction: f64,
    /// Its confidence interval (random draws only: corners are no sample).
    pub yield_interval: Option<[f64; 2]>,
    /// How the interval was found.
    pub interval_method: &'static str,
    /// The criteria as resolved.
    pub criteria: Limits,
    /// The nominal run's figures.
    pub nominal: RunResult,
    /// Each figure's distribution over the runs.
    pub figures: Vec<FigureStats>,
    /// Every failing run.
    pub failures: Vec<FailureEntry>,
    /// The runs with the smallest margins.
    pub worst: Vec<WorstEntry>,
    /// Wall time of the study, s.
    pub wall_s: f64,
}

impl ToleranceReport {
    /// Summarise a study of `scenario` that took `wall_s`.
    pub fn of(outcome: &Outcome, scenario: &str, wall_s: f64) -> Self {
        let runs = outcome.runs.len() as u64;
        let passed = outcome.runs.iter().filter(|r| r.verdict.passed()).count() as u64;
        let interval = match outcome.mode {
            Mode::Random { .. } => wilson(passed, runs, Z_95).map(|(a, b)| [a, b]),
            Mode::Corners => None,
        };
        let figures = FIGURES
            .iter()
            .map(|(name, unit, get)| {
                let values: Vec<f64> =
                    outcome.runs.iter().map(|r| r.figures.as_ref().map_or(f64::NAN, get)).collect();
                FigureStats::of(name, unit, &values)
            })
            .collect();
        let failures = outcome
            .runs
            .iter()
            .filter(|r| !r.verdict.passed())
            .map(|r| FailureEntry {
                run: r.index,
                reasons: r.verdict.failures.clone(),
                settings: r.settings.clone(),
            })
            .collect();
        let mut by_margin: Vec<&RunResult> = outcome.runs.iter().collect();
        by_margin.sort_by(|a, b| a.verdict.margin.total_cmp(&b.verdict.margin));
        let worst = by_margin
            .iter()
            .take(WORST)
            .map(|r| WorstEntry {
                run: r.index,
                margin: r.verdict.margin,
                reasons: r.verdict.failures.clone(),
            })
            .collect();
        Self {
            scenario: scenario.to_string(),
            mode: outcome.mode,
            runs,
            passed,
            yield_fraction: if runs > 0 { passed as f64 / runs as f64 } else { f64::NAN },
            yield_interval: interval,
            interval_method: INTERVAL_METHOD,
            criteria: outcome.limits,
            nominal: outcome.nominal.clone(),
            figures,
            failures,
            worst,
            wall_s,
        }
    }

    /// How the values were chosen, the wall time: `1000 random draws,
    /// seed 1, 1.706 s wall`.
    pub fn runs_text(&self) -> String {
        let how = match self.mode {
            Mode::Random { runs, seed } => format!("{runs} random draws, seed {seed}"),
            Mode::Corners => format!("all {} corners", self.runs),
        };
        format!("{how}, {} wall", eng(self.wall_s, "s"))
    }

    /// The yield with its interval: `524 of 1000 pass: 52.4 %   (…)`.
    pub fn yield_text(&self) -> String {
        let interval = self.yield_interval.map_or(String::new(), |[a, b]| {
            format!("   ({:.1} % to {:.1} %, {INTERVAL_METHOD})", 100.0 * a, 100.0 * b)
        });
        format!(
            "{} of {} pass: {:.1} %{interval}",
            self.passed,
            self.runs,
            100.0 * self.yield_fraction
        )
    }

    /// The human-readable report.
    pub fn table(&self) -> String {
        let mut out = String::new();
        let rule = "─".repeat(72);
        let _ = writeln!(out, "{rule}\n  scenario      {}", self.scenario);
        let _ = writeln!(out, "  runs          {}", self.runs_text());
        let _ = writeln!(out, "  yield         {}", self.yield_text());
        let _ = writeln!(
            out,
            "\n  {:<20}{:>11}{:>11}{:>11}{:>11}{:>11}",
            "figure", "min", "5 %", "median", "95 %", "max"
        );
        for f in &self.figures {
            let [min, p5, p50, p95, max] = f.cells();
            let _ = writeln!(
                out,
                "  {:<20}{min:>11}{p5:>11}{p50:>11}{p95:>11}{max:>11}{}",
                f.name,
                f.missing_text().map_or(String::new(), |m| format!("  ({m})"))
            );
        }
        let _ = writeln!(out, "\n  worst runs (margin: how far inside the tightest limit)");
        for w in &self.worst {
            let _ = writeln!(
                out,
                "  run {:<6} margin {:+7.1} %   {}",
                w.run,
                100.0 * w.margin,
                w.verdict_text()
            );
        }
        let _ = writeln!(out, "{rule}");
        out
    }
}

impl WorstEntry {
    /// `passes`, or why the run failed.
    pub fn verdict_text(&self) -> String {
        if self.reasons.is_empty() {
            "passes".to_string()
        } else {
            self.reasons.join("; ")
        }
    }
}

impl FigureStats {
    /// A value of this figure as the report writes it.
    pub fn show(&self, x: f64) -> String {
        match self.unit {
            "%" => format!("{x:+.2} %"),
            "" if x.is_finite() => format!("{:.1} %", 100.0 * x),
            "" => "n/a".into(),
            unit => eng(x, unit),
        }
    }

    /// Minimum, 5th percentile, median, 95th percentile, maximum, written.
    pub fn cells(&self) -> [String; 5] {
        [self.min, self.p5, self.p50, self.p95, self.max].map(|x| self.show(x))
    }

    /// How many runs had no value, and why, if any.
    pub fn missing_text(&self) -> Option<String> {
        match (self.missing, self.name) {
            (0, _) => None,
            (n, "recovery_s") => Some(format!("{n} never back in band")),
            (n, _) => Some(format!("{n} without a value")),
        }
    }
}
