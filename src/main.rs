//! `ripplectl`: run the firmware's control code against a simulated buck
//! converter before flashing it.

use clap::{Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};
use ripplectl::sim::{self, report, Scenario, Summary};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

#[derive(Parser)]
#[command(
    name = "ripplectl",
    version,
    about = "Simulate ripple-based buck control firmware before flashing it"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Run one scenario (the built-in greenhouse demo unless --scenario).
    Simulate {
        /// Scenario file (TOML); see the README for the schema.
        #[arg(long)]
        scenario: Option<PathBuf>,
        /// Write waveforms (CSV), a plot (SVG), the report and the JSON
        /// summary into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print the summary as JSON on stdout instead of the table.
        #[arg(long)]
        json: bool,
    },
    /// Run a grid of input voltage × load and compare the switching
    /// frequency with the closed-form prediction.
    Sweep {
        /// Scenario file (TOML) to take the converter and firmware from.
        #[arg(long)]
        scenario: Option<PathBuf>,
        /// Input voltages, V (default: 5 points across the scenario's input range).
        #[arg(long, value_delimiter = ',')]
        vin: Vec<f64>,
        /// Load currents, A (default: 10 %, 50 % and 100 % of 2 A).
        #[arg(long, value_delimiter = ',')]
        load: Vec<f64>,
        /// Simulated time per point, s.
        #[arg(long, default_value_t = 4e-3)]
        duration: f64,
        /// Write the table (CSV), the plot (SVG) and the JSON into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print the grid as JSON on stdout instead of the table.
        #[arg(long)]
        json: bool,
    },
}

/// A failure and the exit code it maps to.
struct Failure {
    code: u8,
    message: String,
}

fn bad_input(message: impl std::fmt::Display) -> Failure {
    Failure { code: 2, message: message.to_string() }
}

fn failed(message: impl std::fmt::Display) -> Failure {
    Failure { code: 1, message: message.to_string() }
}

fn load_scenario(path: Option<&Path>) -> Result<Scenario, Failure> {
    let Some(path) = path else { return Ok(Scenario::default_demo()) };
    let text =
        std::fs::read_to_string(path).map_err(|e| bad_input(format!("{}: {e}", path.display())))?;
    Scenario::from_toml(&text).map_err(|e| bad_input(format!("{}: {e}", path.display())))
}

fn simulate(scenario: Option<&Path>, out: Option<&Path>, json: bool) -> Result<(), Failure> {
    let scenario = load_scenario(scenario)?;
    let started = Instant::now();
    let output = sim::run(&scenario).map_err(bad_input)?;
    let summary = Summary::of(&output, &scenario.name, started.elapsed().as_secs_f64());
    let window = scenario.control.window;
    let table = report::table(&summary, &window);
    let summary_json = serde_json::to_string_pretty(&summary).map_err(failed)?;
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

fn sweep_table(points: &[sim::sweep::SweepPoint]) -> String {
    let mut s = String::from(
        "   vin V   load A   f predicted   f simulated   error     ripple    efficiency\n",
    );
    for p in points {
        let err = 100.0 * (p.fsw_simulated_hz - p.fsw_predicted_hz) / p.fsw_predicted_hz;
        s += &format!(
            "  {:6.1}   {:6.2}   {:>11}   {:>11}   {:+5.1} %   {:>8}   {:6.1} %\n",
            p.vin_v,
            p.load_a,
            report::eng(p.fsw_predicted_hz, "Hz"),
            report::eng(p.fsw_simulated_hz, "Hz"),
            err,
            report::eng(p.vout_ripple_pp_v, "V"),
            100.0 * p.efficiency_true
        );
    }
    s
}

fn sweep_csv(points: &[sim::sweep::SweepPoint]) -> String {
    let mut s = String::from("vin_v,load_a,fsw_predicted_hz,fsw_simulated_hz,vout_mean_v,vout_ripple_pp_v,efficiency_true,il_peak_a\n");
    for p in points {
        s += &format!(
            "{},{},{},{},{},{},{},{}\n",
            p.vin_v,
            p.load_a,
            p.fsw_predicted_hz,
            p.fsw_simulated_hz,
            p.vout_mean_v,
            p.vout_ripple_pp_v,
            p.efficiency_true,
            p.il_peak_a
        );
    }
    s
}

fn sweep(
    scenario: Option<&Path>,
    vin: &[f64],
    load: &[f64],
    duration: f64,
    out: Option<&Path>,
    json: bool,
) -> Result<(), Failure> {
    let base = load_scenario(scenario)?;
    if !(duration.is_finite() && duration > 0.0) {
        return Err(bad_input("--duration must be a positive number of seconds"));
    }
    let vins: Vec<f64> = if vin.is_empty() {
        let (lo, hi) = base.profile().input_range();
        (0..5).map(|k| lo + (hi - lo) * f64::from(k) / 4.0).collect()
    } else {
        vin.to_vec()
    };
    let loads: Vec<f64> = if load.is_empty() { vec![0.2, 1.0, 2.0] } else { load.to_vec() };
    let setpoint = base.control.law.setpoint_v();
    if let Some(v) = vins.iter().find(|&&v| !(v.is_finite() && v > setpoint)) {
        return Err(bad_input(format!("--vin {v}: must exceed the {setpoint} V setpoint")));
    }
    if let Some(l) = loads.iter().find(|&&l| !(l.is_finite() && l > 0.0)) {
        return Err(bad_input(format!("--load {l}: must be a positive current")));
    }
    let bar = ProgressBar::new((vins.len() * loads.len()) as u64);
    bar.set_style(
        ProgressStyle::with_template("{bar:40} {pos}/{len} points {elapsed}").map_err(failed)?,
    );
    let points =
        sim::sweep::sweep(&base, &vins, &loads, duration, &|| bar.inc(1)).map_err(bad_input)?;
    bar.finish_and_clear();
    let grid_json = serde_json::to_string_pretty(&points).map_err(failed)?;
    if let Some(dir) = out {
        let svg = sim::plot::sweep_svg(&points, &format!("{}: switching frequency", base.name))
            .map_err(failed)?;
        report::write_all(
            dir,
            &[
                ("sweep.csv", sweep_csv(&points).into_bytes()),
                ("sweep.svg", svg.into_bytes()),
                ("sweep.json", grid_json.clone().into_bytes()),
            ],
        )
        .map_err(|e| failed(format!("{}: {e}", dir.display())))?;
    }
    if json {
        println!("{grid_json}");
    } else {
        print!("{}", sweep_table(&points));
    }
    Ok(())
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match &cli.command {
        Command::Simulate { scenario, out, json } => {
            simulate(scenario.as_deref(), out.as_deref(), *json)
        }
        Command::Sweep { scenario, vin, load, duration, out, json } => {
            sweep(scenario.as_deref(), vin, load, *duration, out.as_deref(), *json)
        }
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            eprintln!("ripplectl: {}", f.message);
            ExitCode::from(f.code)
        }
    }
}
