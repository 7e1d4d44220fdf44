//! Progress on stderr for work that takes longer than about a second, and
//! the Ctrl-C flag every command obeys.
//!
//! On a terminal the progress is a bar with the time left; otherwise (a pipe,
//! a log file, CI) one plain line every ten seconds.

use indicatif::{HumanDuration, ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// Set by Ctrl-C: runs stop at their next look, and nothing is written.
pub static INTERRUPTED: AtomicBool = AtomicBool::new(false);

/// Exit code of an interrupted command: 128 + SIGINT, the shells' convention.
pub const INTERRUPTED_EXIT: u8 = 130;

/// Catch Ctrl-C: the first asks the work to stop cleanly, a second ends the
/// program at once.
pub fn catch_interrupt() {
    // Without a handler (none can be installed) Ctrl-C ends the program as
    // usual, which writes nothing either: output files are renamed into
    // place only when complete.
    let _ = ctrlc::set_handler(|| {
        if INTERRUPTED.swap(true, Ordering::SeqCst) {
            std::process::exit(i32::from(INTERRUPTED_EXIT));
        }
    });
}

/// Whether Ctrl-C was pressed.
pub fn interrupted() -> bool {
    INTERRUPTED.load(Ordering::SeqCst)
}

/// Nothing is shown for work shorter than this.
const SHOW_AFTER: Duration = Duration::from_secs(1);
/// Plain lines (not a terminal) come this far apart.
const LINE_EVERY: Duration = Duration::from_secs(10);
/// Bar resolution: positions per whole.
const STEPS: u64 = 1_000_000;

/// Progress of one piece of work measured in `total` units.
pub struct Progress {
    bar: ProgressBar,
    total: f64,
    /// How much is done, in words (e.g. "30.2 s of 1.000e9 s simulated").
    describe: Box<dyn Fn(f64) -> String + Send + Sync>,
    started: Instant,
    /// When the bar was put on the terminal, or the last plain line written.
    shown: Mutex<Option<Instant>>,
}

impl Progress {
    /// Work of `total` units; `describe` says how much `done` units are.
    pub fn new(total: f64, describe: impl Fn(f64) -> String + Send + Sync + 'static) -> Self {
        let bar = ProgressBar::with_draw_target(Some(STEPS), ProgressDrawTarget::hidden());
        if let Ok(style) = ProgressStyle::with_template("{bar:40} {msg}") {
            bar.set_style(style);
        }
        let describe = Box::new(describe);
        Self { bar, total, describe, started: Instant::now(), shown: Mutex::new(None) }
    }

    /// Work counted in whole items (runs, points).
    pub fn items(total: u64, what: &'static str) -> Self {
        Self::new(total as f64, move |done| format!("{done} of {total} {what}"))
    }

    /// `done` of the total units are complete.
    pub fn set(&self, done: f64) {
        let fraction = if self.total > 0.0 { (done / self.total).clamp(0.0, 1.0) } else { 1.0 };
        self.bar.set_position((fraction * STEPS as f64) as u64);
        let elapsed = self.started.elapsed();
        if elapsed < SHOW_AFTER {
            return;
        }
        let Ok(mut shown) = self.shown.lock() else { return };
        let text = format!(
            "{} ({:.1} %) after {}, {}",
            (self.describe)(done),
            100.0 * fraction,
            HumanDuration(elapsed),
            left(elapsed, fraction)
        );
        if std::io::stderr().is_terminal() {
            self.bar.set_message(text);
            if shown.is_none() {
                self.bar.set_draw_target(ProgressDrawTarget::stderr());
                *shown = Some(Instant::now());
            }
        } else if shown.is_none_or(|t| t.elapsed() >= LINE_EVERY) {
            *shown = Some(Instant::now());
            eprintln!("ripplectl: {text}");
        }
    }

    /// Clear the bar.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}

/// The time left at the rate so far.
fn left(elapsed: Duration, fraction: f64) -> String {
    if fraction <= 0.0 {
        return "time left not yet known".to_string();
    }
    let left = elapsed.as_secs_f64() * (1.0 - fraction) / fraction;
    match Duration::try_from_secs_f64(left) {
        Ok(d) => format!("about {} to go", HumanDuration(d)),
        Err(_) => "far longer than a lifetime to go".to_string(),
    }
}
