//! `ripplectl tolerance`: the scenario run many times with its parts and
//! conditions drawn within their spreads; the yield, each figure's spread,
//! the worst runs, and (with `--out`) histograms, an HTML report and a
//! scenario file per failing run.

use crate::failure::{bad_input, failed, interrupted, load_scenario, Failure};
use crate::progress::{self, Progress, INTERRUPTED};
use ripplectl::sim::report;
use ripplectl::sim::tolerance::criteria::FIGURES;
use ripplectl::sim::tolerance::summary::ToleranceReport;
use ripplectl::sim::tolerance::{
    draw, histogram, page, run_scenario, run_study, Mode, Outcome, StudyControl, StudyError,
};
use ripplectl::sim::Scenario;
use std::fmt::Write as _;
use std::path::Path;
use std::time::Instant;

/// What the command was asked.
pub struct Options<'a> {
    pub scenario: Option<&'a Path>,
    pub runs: u64,
    pub seed: u64,
    pub corners: bool,
    pub json: bool,
    pub out: Option<&'a Path>,
}

pub fn tolerance(o: &Options) -> Result<(), Failure> {
    let base = load_scenario(o.scenario)?;
    let (mode, total) = if o.corners {
        let spreads = base.tolerance.unwrap_or_default().spread;
        let n = draw::corner_dimensions(&spreads, &base);
        (Mode::Corners, 1u64.checked_shl(n).unwrap_or(u64::MAX))
    } else if o.runs == 0 {
        return Err(bad_input("--runs must be at least 1"));
    } else {
        (Mode::Random { runs: o.runs, seed: o.seed }, o.runs)
    };
    let bar = Progress::items(total, "runs");
    let show = |n: u64| bar.set(n as f64);
    let control = StudyControl { progress: Some(&show), cancel: Some(&INTERRUPTED) };
    let started = Instant::now();
    let outcome = run_study(&base, mode, &control);
    bar.finish();
    let outcome = outcome.map_err(|e| match e {
        StudyError::Cancelled => interrupted(),
        e => bad_input(e),
    })?;
    let report = ToleranceReport::of(&outcome, &base.name, started.elapsed().as_secs_f64());
    let json = serde_json::to_string_pretty(&report).map_err(failed)?;
    if progress::interrupted() {
        return Err(interrupted());
    }
    if let Some(dir) = o.out {
        let files = output_files(&base, &outcome, &report, &json)?;
        let refs: Vec<(&str, Vec<u8>)> =
            files.iter().map(|(n, b)| (n.as_str(), b.clone())).collect();
        report::write_all(dir, &refs).map_err(|e| failed(format!("{}: {e}", dir.display())))?;
    }
    if o.json {
        println!("{json}");
    } else {
        print!("{}", report.table());
        if let Some(dir) = o.out {
            println!("  written to {}", dir.display());
        }
    }
    Ok(())
}

fn output_files(
    base: &Scenario,
    outcome: &Outcome,
    report: &ToleranceReport,
    json: &str,
) -> Result<Vec<(String, Vec<u8>)>, Failure> {
    let mut files = vec![
        ("report.txt".to_string(), report.table().into_bytes()),
        ("tolerance.json".to_string(), json.as_bytes().to_vec()),
        ("runs.csv".to_string(), runs_csv(outcome).into_bytes()),
    ];
    let histograms = histogram::of_study(outcome).map_err(failed)?;
    files
        .push(("report.html".to_string(), page::report(report, &histograms).render().into_bytes()));
    for (name, svg) in histograms {
        files.push((format!("histogram-{name}.svg"), svg.into_bytes()));
    }
    for run in outcome.runs.iter().filter(|r| !r.verdict.passed()) {
        let scenario = run_scenario(base, run);
        let text = toml::to_string(&scenario).map_err(failed)?;
        let header = format!(
            "# Tolerance run {} of \"{}\": fails ({}).\n# `ripplectl simulate --scenario` this file reproduces the run.\n\n",
            run.index,
            base.name,
            run.verdict.failures.join("; ")
        );
        files.push((format!("failing-run-{}.toml", run.index), (header + &text).into_bytes()));
    }
    Ok(files)
}

/// Every run: index, pass, margin, the drawn values, the figures.
fn runs_csv(outcome: &Outcome) -> String {
    let mut out = String::from("run,passed,margin");
    let names: Vec<&str> = outcome.nominal.settings.iter().map(|s| s.name).collect();
    for name in &names {
        let _ = write!(out, ",{name}");
    }
    for (name, _, _) in FIGURES {
        let _ = write!(out, ",{name}");
    }
    out.push('\n');
    for r in &outcome.runs {
        let _ = write!(out, "{},{},{}", r.index, r.verdict.passed(), r.verdict.margin);
        for s in &r.settings {
            let _ = write!(out, ",{}", s.value);
        }
        for (_, _, get) in FIGURES {
            let _ = write!(out, ",{}", r.figures.as_ref().map_or(f64::NAN, get));
        }
        out.push('\n');
    }
    out
}
