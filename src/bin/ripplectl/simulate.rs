//! `ripplectl simulate`: one scenario, its report and files.

use crate::failure::{failed, interrupted, load_scenario, run_failure, Failure};
use crate::progress::{self, Progress, INTERRUPTED};
use ripplectl::sim::emission::{self, Estimate};
use ripplectl::sim::{self, notation, pages, report, RunControl, RunOutput, Scenario, Summary};
use std::path::Path;
use std::time::Instant;

/// A scenario run, summarised, with its emission estimate.
pub struct Outcome {
    pub scenario: Scenario,
    pub output: RunOutput,
    pub summary: Summary,
    pub emission: Result<Estimate, String>,
}

impl Outcome {
    pub fn page(&self) -> pages::Run<'_> {
        pages::Run {
            scenario: &self.scenario,
            output: &self.output,
            summary: &self.summary,
            emission: &self.emission,
        }
    }
}

/// Run a scenario (the built-in one without a path), with a progress line
/// for a long run and Ctrl-C honoured, and estimate its emission.
pub fn run(path: Option<&Path>) -> Result<Outcome, Failure> {
    let scenario = load_scenario(path)?;
    let started = Instant::now();
    let total = scenario.duration_s;
    let bar =
        Progress::new(total, move |t| format!("{} of {} simulated", seconds(t), seconds(total)));
    let show = |t_s: f64| bar.set(t_s);
    let control =
        RunControl { progress: Some(&show), cancel: Some(&INTERRUPTED), ..RunControl::default() };
    let output = sim::run_with(&scenario, &control).map_err(run_failure);
    bar.finish();
    let output = output?;
    // The run's own wall time: the estimates after it are not the
    // simulator's.
    let wall_s = started.elapsed().as_secs_f64();
    let emission = emission::estimate(&scenario, &output.recorder);
    let summary = Summary::of(&output, &scenario.name, wall_s).with_emission(&emission);
    if progress::interrupted() {
        return Err(interrupted());
    }
    Ok(Outcome { scenario, output, summary, emission })
}

pub fn simulate(scenario: Option<&Path>, out: Option<&Path>, json: bool) -> Result<(), Failure> {
    let run = run(scenario)?;
    let (output, summary) = (&run.output, &run.summary);
    let window = run.scenario.control.window;
    let table = report::table(summary, &window);
    let summary_json = serde_json::to_string_pretty(summary).map_err(failed)?;
    if let Some(dir) = out {
        let svg =
            sim::plot::run_svg(&output.recorder.slices, &output.recorder.cycles, summary, &window)
                .map_err(failed)?;
        let html = pages::run_report(&run.page()).map_err(failed)?.render();
        let mut files = vec![
            ("waveforms.csv", report::slices_csv(&output.recorder.slices).into_bytes()),
            ("cycles.csv", report::cycles_csv(&output.recorder.cycles).into_bytes()),
            ("run.svg", svg.into_bytes()),
            ("report.txt", table.clone().into_bytes()),
            ("summary.json", summary_json.clone().into_bytes()),
            ("report.html", html.into_bytes()),
        ];
        if let Ok(e) = &run.emission {
            let title = format!("{}: LISN voltage", run.scenario.name);
            let svg =
                emission::plot::spectrum_svg(&[(&run.scenario.name, e)], &title).map_err(failed)?;
            files.push(("emission.svg", svg.into_bytes()));
            files.push(("emission.csv", emission::scan_csv(&e.scan, e.class).into_bytes()));
            files.push(("switch_current.csv", emission::current_csv(&e.windows).into_bytes()));
        }
        if progress::interrupted() {
            return Err(interrupted());
        }
        report::write_all(dir, &files).map_err(|e| failed(format!("{}: {e}", dir.display())))?;
    }
    if json {
        println!("{summary_json}");
    } else {
        print!("{table}");
        if let Some(dir) = out {
            println!("  written to {}", dir.display());
        }
    }
    Ok(())
}

/// Seconds for a progress line: engineering prefixes up to an hour, then
/// plain exponent notation (no "Ms").
fn seconds(t: f64) -> String {
    if t < 3600.0 {
        notation::eng(t, "s")
    } else {
        format!("{t:.3e} s")
    }
}
