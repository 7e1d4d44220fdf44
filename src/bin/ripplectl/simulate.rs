//! `ripplectl simulate`: one scenario, its report and files.

use crate::failure::{failed, interrupted, load_scenario, run_failure, Failure};
use crate::progress::{self, Progress, INTERRUPTED};
use ripplectl::sim::{self, report, RunControl, Summary};
use std::path::Path;
use std::time::Instant;

pub fn simulate(scenario: Option<&Path>, out: Option<&Path>, json: bool) -> Result<(), Failure> {
    let scenario = load_scenario(scenario)?;
    let started = Instant::now();
    let total = scenario.duration_s;
    let bar =
        Progress::new(total, move |t| format!("{} of {} simulated", seconds(t), seconds(total)));
    let show = |t_s: f64| bar.set(t_s);
    let control = RunControl { progress: Some(&show), cancel: Some(&INTERRUPTED) };
    let output = sim::run_with(&scenario, &control).map_err(run_failure);
    bar.finish();
    let output = output?;
    let summary = Summary::of(&output, &scenario.name, started.elapsed().as_secs_f64());
    let window = scenario.control.window;
    let table = report::table(&summary, &window);
    let summary_json = serde_json::to_string_pretty(&summary).map_err(failed)?;
    if progress::interrupted() {
        return Err(interrupted());
    }
    if let Some(dir) = out {
        let svg =
            sim::plot::run_svg(&output.recorder.slices, &output.recorder.cycles, &summary, &window)
                .map_err(failed)?;
        report::write_all(
            dir,
            &[
                ("waveforms.csv", report::slices_csv(&output.recorder.slices).into_bytes()),
                ("cycles.csv", report::cycles_csv(&output.recorder.cycles).into_bytes()),
                ("run.svg", svg.into_bytes()),
                ("report.txt", table.clone().into_bytes()),
                ("summary.json", summary_json.clone().into_bytes()),
            ],
        )
        .map_err(|e| failed(format!("{}: {e}", dir.display())))?;
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
        report::eng(t, "s")
    } else {
        format!("{t:.3e} s")
    }
}
