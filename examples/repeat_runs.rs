//! One scenario run again and again, for a profiler or an instruction
//! counter: what the simulator's throughput figures in the README count.
//!
//! ```sh
//! cargo build --release --example repeat_runs
//! target/release/examples/repeat_runs                      # the built-in default, 1 run
//! target/release/examples/repeat_runs tests/fixtures/sampled-1mhz.toml 3
//! target/release/examples/repeat_runs - 3                  # `-`: the built-in default
//! ```
//!
//! Instructions of the simulation loop alone, by valgrind's callgrind
//! (Debian's `valgrind`), counted over the runs made:
//!
//! ```sh
//! valgrind --tool=callgrind --callgrind-out-file=/dev/null \
//!     --toggle-collect='*run_firmware_with*' target/release/examples/repeat_runs - 3
//! ```
//!
//! The first run also reads the committed instruction counts once (a few
//! hundred thousand instructions): one run's count is the difference
//! between three runs and one, halved. Unlike wall time, the count does
//! not swing with the machine's load. `bash benches/instructions.sh` does
//! this for the two configurations `benches/simulator.rs` times.

use ripplectl::sim::{self, Scenario};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let scenario = match args.next().as_deref() {
        None | Some("-") => Scenario::default_demo(),
        Some(path) => Scenario::from_toml(&std::fs::read_to_string(path)?)?,
    };
    let runs: u32 = args.next().map_or(Ok(1), |n| n.parse())?;
    let mut cycles = 0;
    for _ in 0..runs {
        cycles += sim::run(&scenario)?.recorder.cycles.len();
    }
    println!("{runs} runs, {cycles} switching cycles");
    Ok(())
}
