//! One scenario run again and again, for a profiler or an instruction
//! counter: what the simulator's throughput figures in the README count.
//!
//! ```sh
//! cargo build --release --example repeat_runs
//! target/release/examples/repeat_runs                      # the built-in default, 1 run
//! target/release/examples/repeat_runs tests/fixtures/sampled-1mhz.toml 3
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
//! not swing with the machine's load.

use ripplectl::sim::{self, Scenario};

fn main() {
    let mut args = std::env::args().skip(1);
    let scenario = match args.next().as_deref() {
        None | Some("-") => Scenario::default_demo(),
        Some(path) => {
            let text =
                std::fs::read_to_string(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
            Scenario::from_toml(&text).unwrap_or_else(|e| panic!("{path}: {e}"))
        }
    };
    let runs: u32 = match args.next() {
        None => 1,
        Some(n) => n.parse().unwrap_or_else(|_| panic!("runs: a whole number, not {n:?}")),
    };
    let mut cycles = 0;
    for _ in 0..runs {
        let out = sim::run(&scenario).unwrap_or_else(|e| panic!("the run failed: {e}"));
        cycles += out.recorder.cycles.len();
    }
    println!("{runs} runs, {cycles} switching cycles");
}
