//! The integration tests, built as one binary: each file beside this one is
//! a module of it (one link and one compilation of the simulator's generic
//! engine instead of one per file). A new test file needs its line here.
//!
//! Run one file's tests with `cargo test --test suite <file>::`, e.g.
//! `cargo test --test suite frequency_lock::`.

mod common;

mod audible;
mod ceramic;
mod cli;
mod cli_emission;
mod closed_loop;
mod comparator_lookahead;
mod config_errors;
mod cpu;
mod design_boards;
mod design_handbook;
mod design_outputs;
mod drive;
mod edge_timing;
mod emission;
mod emission_numpy;
mod estimates_in_loop;
mod estimator;
mod exact_record;
mod firmware_trait;
mod frequency_lock;
mod guard;
mod html_report;
mod hysteretic;
mod linear_segments;
mod mcu_errors;
mod ngspice;
mod on_time;
mod on_time_loop;
mod own_law;
mod plant_handbook;
mod protection;
mod reporting;
mod retrofit_start;
mod scale;
mod scenario_files;
mod slopes_after_housekeeping;
mod supervisor;
mod tolerance;
mod transients;
