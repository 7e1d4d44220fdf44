//! The study's HTML report (`tolerance --out`, `report.html`): the yield,
//! each figure's distribution, the worst runs and the histograms, in one
//! self-contained page ([`crate::sim::html`]).

use super::summary::ToleranceReport;
use crate::sim::html::{Block, Report, Section};
use crate::sim::pages::CAUTION;

/// Why a simulated yield is no qualification (the report's first caution).
pub const YIELD_CAUTION: &str = "A simulated yield is not a qualification: it holds only as far \
as the models, the spreads and the criteria hold. Build and measure boards at the corners before \
committing a design.";

/// The page of a study, with its histograms (`(figure key, SVG)`, as
/// [`super::histogram::of_study`] gives them).
pub fn report(study: &ToleranceReport, histograms: &[(&str, String)]) -> Report {
    let mut plots = Section::new("Histograms");
    for (name, svg) in histograms {
        plots = plots.with(Block::Figure {
            id: format!("histogram-{name}"),
            caption: format!("{name} over {} runs; a criterion's limit dashed", study.runs),
            svg: svg.clone(),
        });
    }
    Report {
        title: format!("ripplectl tolerance: {}", study.scenario),
        sections: vec![yield_section(study), figures_section(study), worst_section(study), plots],
        footer: format!("{YIELD_CAUTION} {CAUTION}"),
    }
}

fn text_row(label: &str, text: String) -> Vec<String> {
    vec![label.to_string(), text]
}

fn yield_section(study: &ToleranceReport) -> Section {
    let failing = study.failures.len();
    let rows = vec![
        text_row("scenario", study.scenario.clone()),
        text_row("runs", study.runs_text()),
        text_row("yield", study.yield_text()),
    ];
    let files = if failing == 0 {
        "No run failed.".to_string()
    } else {
        format!(
            "{failing} runs failed; each has its scenario beside this page \
             (failing-run-<run>.toml), which `ripplectl simulate --scenario` reproduces exactly."
        )
    };
    Section::new("Yield").with(Block::Table { head: vec![], rows }).with(Block::Note(files))
}

fn figures_section(study: &ToleranceReport) -> Section {
    let head = ["figure", "min", "5 %", "median", "95 %", "max", "runs without a value"];
    let rows = study
        .figures
        .iter()
        .map(|f| {
            let mut row = vec![f.name.to_string()];
            row.extend(f.cells());
            row.push(f.missing_text().unwrap_or_default());
            row
        })
        .collect();
    Section::new("Figures over the runs")
        .with(Block::Table { head: head.map(String::from).to_vec(), rows })
}

fn worst_section(study: &ToleranceReport) -> Section {
    let head = ["run", "margin", "verdict"].map(String::from).to_vec();
    let rows = study
        .worst
        .iter()
        .map(|w| vec![w.run.to_string(), format!("{:+.1} %", 100.0 * w.margin), w.verdict_text()])
        .collect();
    Section::new("Worst runs (margin: how far inside the tightest limit)")
        .with(Block::Table { head, rows })
}
