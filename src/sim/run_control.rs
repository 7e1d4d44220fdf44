//! Progress and cancellation of a run: what the event loop reports, and the
//! flag it obeys.
//!
//! The loop looks at its [`RunControl`] every [`CHECK_EVERY`] events (a few
//! milliseconds of wall time at most), so a long run shows progress and a
//! cancelled one stops promptly, at no measurable cost to a short one.

use std::sync::atomic::{AtomicBool, Ordering};

/// Simulation events between two looks at the control.
pub const CHECK_EVERY: u32 = 4096;

/// What a run reports to and takes from its caller. The default reports
/// nothing and is never cancelled.
#[derive(Clone, Copy, Default)]
pub struct RunControl<'a> {
    /// Called with the simulated time reached, s, at each look.
    pub progress: Option<&'a dyn Fn(f64)>,
    /// Once set, the run stops at its next look with
    /// [`super::RunError::Cancelled`].
    pub cancel: Option<&'a AtomicBool>,
    /// For checks of the simulator itself: also stop every this many timer
    /// ticks and bring the plant there, where nothing happens. A run's
    /// figures must not depend on it (the record is exact between stops);
    /// it only slows the run.
    pub probe_every_ticks: Option<u64>,
}

impl RunControl<'_> {
    /// Whether the caller asked the run to stop.
    pub fn is_cancelled(&self) -> bool {
        self.cancel.is_some_and(|c| c.load(Ordering::Relaxed))
    }

    /// One look: report `t_s` (simulated seconds reached); true when the run
    /// must stop.
    pub fn check(&self, t_s: f64) -> bool {
        if let Some(progress) = self.progress {
            progress(t_s);
        }
        self.is_cancelled()
    }
}

impl std::fmt::Debug for RunControl<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("RunControl")
            .field("progress", &self.progress.is_some())
            .field("cancelled", &self.is_cancelled())
            .field("probe_every_ticks", &self.probe_every_ticks)
            .finish()
    }
}
