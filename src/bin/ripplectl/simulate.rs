//! `ripplectl simulate`: one scenario, its report and files.

use crate::failure::{bad_input, failed, load_scenario, Failure};
use ripplectl::sim::emission::{self, Estimate};
use ripplectl::sim::{self, pages, report, RunOutput, Scenario, Summary};
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

/// Run a scenario (the built-in one without a path) and estimate its
/// emission.
pub fn run(path: Option<&Path>) -> Result<Outcome, Failure> {
    let scenario = load_scenario(path)?;
    let started = Instant::now();
    let output = sim::run(&scenario).map_err(bad_input)?;
    let emission = emission::estimate(&scenario, &output.recorder);
    let summary = Summary::of(&output, &scenario.name, started.elapsed().as_secs_f64())
        .with_emission(&emission);
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
