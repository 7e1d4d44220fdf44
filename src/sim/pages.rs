//! The HTML reports of `simulate` (one run) and `compare` (two runs
//! overlaid), assembled from the run's figures and plots.

use super::emission::{self, Estimate};
use super::engine::RunOutput;
use super::html::{Block, Report, Section};
use super::metrics::Summary;
use super::scenario::Scenario;
use super::zoom::{self, RunView};
use super::{compare, notation, plot, report};

/// One run and what was made of it.
#[derive(Clone, Copy, Debug)]
pub struct Run<'a> {
    /// The scenario it ran.
    pub scenario: &'a Scenario,
    /// What the simulator recorded.
    pub output: &'a RunOutput,
    /// Its summary.
    pub summary: &'a Summary,
    /// Its emission estimate, or why there is none.
    pub emission: &'a Result<Estimate, String>,
}

impl<'a> Run<'a> {
    fn view(&self) -> RunView<'a> {
        RunView {
            name: &self.scenario.name,
            slices: &self.output.recorder.slices,
            cycles: &self.output.recorder.cycles,
        }
    }

    fn disturbances(&self) -> Vec<f64> {
        let end = self.output.simulated_s;
        self.scenario.profile().disturbances().into_iter().filter(|&t| t < end).collect()
    }
}

type PageResult = Result<Report, Box<dyn std::error::Error>>;

/// The cautions every report ends with.
pub const CAUTION: &str = "A simulation on a model, not a measurement. The emission figures are a \
pre-compliance estimate of differential-mode conducted emission: the real board, its layout and a \
test house decide compliance. Switch-mode supplies can burn, shock and destroy what they power: \
first power-up from a current-limited bench supply, keep a hardware current limit that does not \
depend on firmware, and defer to local codes and licensed practice for anything mains-connected or \
safety-relevant.";

/// The report of one run.
pub fn run_report(run: &Run<'_>) -> PageResult {
    let window = run.scenario.control.window;
    let rows = report::rows(run.summary, &window)
        .into_iter()
        .map(|(label, text)| vec![label, text])
        .collect();
    let waveforms = plot::run_svg(
        &run.output.recorder.slices,
        &run.output.recorder.cycles,
        run.summary,
        &window,
    )?;
    let sections = vec![
        Section::new("Summary").with(Block::Table { head: vec![], rows }),
        Section::new("Waveforms").with(figure(
            "waveforms",
            "Output voltage and inductor current (min/max per slice), duty cycle and switching frequency per cycle",
            waveforms,
        )),
        zoom_section(&[*run], &run.disturbances())?,
        emission_section(&[*run])?,
    ];
    Ok(Report {
        title: format!("ripplectl: {}", run.scenario.name),
        sections,
        footer: CAUTION.to_string(),
    })
}

/// The report of two runs, side by side and overlaid.
pub fn compare_report(first: &Run<'_>, second: &Run<'_>) -> PageResult {
    let runs = [*first, *second];
    let head = vec![
        String::new(),
        first.scenario.name.clone(),
        second.scenario.name.clone(),
        "second − first".to_string(),
    ];
    let rows = compare::rows(first.summary, second.summary).into_iter().map(Vec::from).collect();
    let views = [first.view(), second.view()];
    let duration = first.output.simulated_s.max(second.output.simulated_s);
    let mut times = first.disturbances();
    times.extend(second.disturbances());
    times.sort_by(f64::total_cmp);
    times.dedup();
    let sections = vec![
        Section::new("Side by side").with(Block::Table { head, rows }),
        Section::new("Waveforms").with(figure(
            "waveforms",
            "Output voltage and inductor current (min/max per slice) and switching frequency per cycle, both runs",
            zoom::runs_svg(&views, duration, "both runs")?,
        )),
        zoom_section(&runs, &times)?,
        emission_section(&runs)?,
    ];
    Ok(Report {
        title: format!("ripplectl: {} against {}", first.scenario.name, second.scenario.name),
        sections,
        footer: CAUTION.to_string(),
    })
}

fn figure(id: &str, caption: &str, svg: String) -> Block {
    Block::Figure { id: id.to_string(), caption: caption.to_string(), svg }
}

/// A zoom on each disturbance time, every run on it.
fn zoom_section(runs: &[Run<'_>], times: &[f64]) -> Result<Section, Box<dyn std::error::Error>> {
    let mut section = Section::new("Around each disturbance");
    if times.is_empty() {
        return Ok(section.with(Block::Note("The profile has no disturbance after t = 0.".into())));
    }
    let views: Vec<RunView<'_>> = runs.iter().map(Run::view).collect();
    let duration = runs.iter().map(|r| r.output.simulated_s).fold(0.0, f64::max);
    for (k, &t) in times.iter().enumerate() {
        let (from, to) = zoom::zoom_span(t, duration);
        let title = format!("disturbance at {}", notation::eng(t, "s"));
        let svg = zoom::zoom_svg(&views, from, to, &title)?;
        section = section.with(figure(
            &format!("zoom-{}", k + 1),
            &format!(
                "Per-cycle extremes from {} to {}",
                notation::eng(from, "s"),
                notation::eng(to, "s")
            ),
            svg,
        ));
    }
    Ok(section)
}

/// The spectrum of every run with an estimate, and why the others have
/// none.
fn emission_section(runs: &[Run<'_>]) -> Result<Section, Box<dyn std::error::Error>> {
    let mut section = Section::new("Conducted emission (pre-compliance estimate)");
    for run in runs {
        let text = report::emission_text(&run.summary.emission);
        section = section.with(Block::Note(format!("{}: {text}", run.scenario.name)));
    }
    let estimated: Vec<(&str, &Estimate)> = runs
        .iter()
        .filter_map(|r| r.emission.as_ref().ok().map(|e| (r.scenario.name.as_str(), e)))
        .collect();
    if estimated.is_empty() {
        return Ok(section);
    }
    let svg = emission::plot::spectrum_svg(&estimated, "LISN voltage, worst steady window")?;
    Ok(section
        .with(figure(
            "emission",
            "Peak and average readings (9 kHz bandwidth) against the CISPR 32 limits for AC mains \
             ports; the peak reading stands for quasi-peak as its upper bound",
            svg,
        ))
        .with(Block::Note(
            "Differential-mode conducted emission through two 50 Ω ∥ 50 µH networks (CISPR 16-1-2) \
             from the switch current the model draws; not a measurement."
                .into(),
        )))
}
