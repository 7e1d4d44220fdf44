//! `ripplectl`: run the firmware's control code against a simulated buck
//! converter before flashing it.

mod compare;
mod design;
mod failure;
mod progress;
mod simulate;
mod sweep;
mod tolerance;

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;

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
        /// Write waveforms (CSV), plots (SVG), the emission spectrum, the
        /// report (text and HTML) and the JSON summary into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print the summary as JSON on stdout instead of the table.
        #[arg(long)]
        json: bool,
    },
    /// Run two scenarios and print their figures side by side with the
    /// differences (second minus first).
    Compare {
        /// First scenario file (TOML), e.g. the board's existing loop.
        first: PathBuf,
        /// Second scenario file (TOML), e.g. the firmware loop.
        second: PathBuf,
        /// Write one HTML report with both runs overlaid into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print both summaries as JSON (`first`, `second`) instead of the table.
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
    /// Run the scenario many times with its parts, the microcontroller's
    /// errors and the conditions drawn within their spreads ([tolerance]
    /// table), and report the yield against the pass criteria.
    Tolerance {
        /// Scenario file (TOML), with an optional [tolerance] table.
        #[arg(long)]
        scenario: Option<PathBuf>,
        /// Number of random runs.
        #[arg(long, default_value_t = 200)]
        runs: u64,
        /// Seed of the draws: the same seed gives the same runs.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Run every combination of the spreads' extremes instead of random
        /// draws.
        #[arg(long)]
        corners: bool,
        /// Write the report (text and HTML), histograms (SVG), every run
        /// (CSV) and a scenario file per failing run into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print the report as JSON on stdout instead of the table.
        #[arg(long)]
        json: bool,
    },
    /// Propose a first configuration from a few board facts: law and its
    /// parameters, input and rates that fit the core, window, protections,
    /// soft-start, with the reason for each and the predicted frequency,
    /// ripple and currents over the input × load range.
    Design {
        /// Input range, V, as MIN:MAX (e.g. 18:32).
        #[arg(long, value_name = "MIN:MAX", value_parser = design::input_range)]
        vin: (f64, f64),
        /// Output voltage, V.
        #[arg(long)]
        vout: f64,
        /// Full-load output current, A.
        #[arg(long)]
        iout: f64,
        /// Inductance, H (e.g. 47e-6).
        #[arg(long = "l", value_name = "H")]
        l: f64,
        /// Output capacitance left at the output voltage, F (e.g. 220e-6).
        #[arg(long = "c", value_name = "F")]
        c: f64,
        /// Output capacitor ESR, Ω.
        #[arg(long, value_name = "OHM")]
        esr: f64,
        /// Core: cortex-m0, cortex-m0+, cortex-m4 or rv32 (default: the
        /// demo MCU's cortex-m4).
        #[arg(long, value_parser = design::core)]
        core: Option<ripplectl::sim::cores::Core>,
        /// Core clock, Hz, which the timer counts (default 170e6).
        #[arg(long, value_name = "HZ", value_parser = design::clock)]
        clock: Option<u32>,
        /// ADC resolution, bits (default 12).
        #[arg(long)]
        adc_bits: Option<u8>,
        /// ADC reference, V (default 3.3).
        #[arg(long, value_name = "V")]
        adc_ref: Option<f64>,
        /// Highest ADC sample rate, Hz (default 1e6).
        #[arg(long, value_name = "HZ")]
        sample_rate: Option<f64>,
        /// auto (the first loop that fits), hysteretic or on-time.
        #[arg(long, default_value = "auto", value_parser = design::law)]
        law: ripplectl::design::facts::LawRequest,
        /// Write the scenario (scenario.toml) and the firmware's const
        /// configuration (config.rs) into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    progress::catch_interrupt();
    let result = match &cli.command {
        Command::Design {
            vin,
            vout,
            iout,
            l,
            c,
            esr,
            core,
            clock,
            adc_bits,
            adc_ref,
            sample_rate,
            law,
            out,
        } => {
            let mcu = design::McuOptions {
                core: *core,
                clock_hz: *clock,
                adc_bits: *adc_bits,
                adc_reference_v: *adc_ref,
                sample_rate_hz: *sample_rate,
            };
            let facts = design::facts(*vin, *vout, *iout, *l, *c, *esr, mcu, *law);
            design::design(&facts, out.as_deref())
        }
        Command::Simulate { scenario, out, json } => {
            simulate::simulate(scenario.as_deref(), out.as_deref(), *json)
        }
        Command::Compare { first, second, out, json } => {
            compare::compare(first, second, out.as_deref(), *json)
        }
        Command::Sweep { scenario, vin, load, duration, out, json } => {
            sweep::sweep(scenario.as_deref(), vin, load, *duration, out.as_deref(), *json)
        }
        Command::Tolerance { scenario, runs, seed, corners, out, json } => {
            tolerance::tolerance(&tolerance::Options {
                scenario: scenario.as_deref(),
                runs: *runs,
                seed: *seed,
                corners: *corners,
                json: *json,
                out: out.as_deref(),
            })
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
