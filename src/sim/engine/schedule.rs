//! The microcontroller's pending events, in absolute ticks since t = 0,
//! each a small struct of its own.

/// A conversion's results, waiting for their interrupt.
#[derive(Clone, Copy, Debug)]
pub(super) struct Conversion {
    /// The conversion-complete interrupt's tick.
    pub irq_at: u64,
    /// Output channel's code.
    pub output: u16,
    /// Input channel's code.
    pub input: u16,
}

/// A comparator interrupt, pending.
#[derive(Clone, Copy, Debug)]
pub(super) struct EdgeIrq {
    /// Its tick.
    pub at: u64,
    /// The comparator's level it reports.
    pub level: bool,
}

/// A breakpoint of the input or load profile.
#[derive(Clone, Copy, Debug)]
pub(super) struct Breakpoint {
    /// The tick it falls on.
    pub tick: u64,
    /// Its exact time, s (the tick may round to just before it).
    pub at_s: f64,
}

/// A boundary of a steady window (the recorder snapshots the energies).
#[derive(Clone, Copy, Debug)]
pub(super) struct WindowEdge {
    /// The tick it falls on.
    pub tick: u64,
    /// The window's index.
    pub window: usize,
    /// Its start (else its end).
    pub is_start: bool,
}

/// Pending microcontroller events.
#[derive(Clone, Debug)]
pub(super) struct Schedule {
    pub next_sample: u64,
    pub next_housekeeping: u64,
    pub conversion: Option<Conversion>,
    /// The armed compare's tick.
    pub compare: Option<u64>,
    /// The compare interrupt's entry.
    pub compare_irq: Option<u64>,
    pub edge: Option<EdgeIrq>,
    pub dead_time_end: Option<u64>,
    /// Profile breakpoints in time order, from `next_break` on still to
    /// come.
    breaks: Vec<Breakpoint>,
    next_break: usize,
    /// Window boundaries in time order, from `next_window_edge` on still to
    /// come.
    window_edges: Vec<WindowEdge>,
    next_window_edge: usize,
    /// Stops where nothing happens (see
    /// [`RunControl::probe_every_ticks`](crate::sim::RunControl::probe_every_ticks)):
    /// their period and the next one's tick.
    probe: Option<(u64, u64)>,
    pub end: u64,
    /// The next breakpoint's, window boundary's or probe stop's tick
    /// (`u64::MAX`: none), kept as they are taken: these events are rare,
    /// and every pass of the loop asks for the first of them twice.
    next_rare: u64,
}

impl Schedule {
    /// Nothing pending yet; the run ends at tick `end`.
    pub fn new(breaks: Vec<Breakpoint>, window_edges: Vec<WindowEdge>, end: u64) -> Self {
        let mut schedule = Self {
            next_sample: 0,
            next_housekeeping: 0,
            conversion: None,
            compare: None,
            compare_irq: None,
            edge: None,
            dead_time_end: None,
            breaks,
            next_break: 0,
            window_edges,
            next_window_edge: 0,
            probe: None,
            end,
            next_rare: u64::MAX,
        };
        schedule.find_next_rare_tick();
        schedule
    }

    /// Stop at every multiple of `period` ticks (> 0), counted from tick 0.
    pub fn probe_every(&mut self, period: u64) {
        debug_assert!(period > 0, "a probe period of zero ticks");
        self.probe = Some((period, period));
        self.find_next_rare_tick();
    }

    /// The next tick something other than an ADC sampling instant happens
    /// (the run's end included); interrupts wait for the core while it is
    /// busy until `busy_until`.
    #[inline]
    pub fn next_but_sample(&self, busy_until: u64) -> u64 {
        let entry = |t: u64| t.max(busy_until);
        // The housekeeping tick, too, waits for a handler in progress.
        let mut next = self.end.min(entry(self.next_housekeeping));
        if let Some(c) = &self.conversion {
            next = next.min(entry(c.irq_at));
        }
        if let Some(t) = self.compare_irq {
            next = next.min(entry(t));
        }
        if let Some(e) = &self.edge {
            next = next.min(entry(e.at));
        }
        if let Some(t) = self.compare {
            next = next.min(t);
        }
        if let Some(t) = self.dead_time_end {
            next = next.min(t);
        }
        next.min(self.next_rare_tick())
    }

    /// The next breakpoint's, window boundary's or probe stop's tick
    /// (`u64::MAX`: none).
    #[inline]
    pub fn next_rare_tick(&self) -> u64 {
        self.next_rare
    }

    /// Find [`next_rare_tick`](Self::next_rare_tick) again, after one was
    /// taken.
    fn find_next_rare_tick(&mut self) {
        let b = self.breaks.get(self.next_break).map_or(u64::MAX, |b| b.tick);
        let w = self.window_edges.get(self.next_window_edge).map_or(u64::MAX, |w| w.tick);
        let p = self.probe.map_or(u64::MAX, |(_, next)| next);
        self.next_rare = b.min(w).min(p);
    }

    /// Whether a probe stop is due by `tick`; it is taken, the next one
    /// set at the next multiple of the period after the tick.
    pub fn take_probe(&mut self, tick: u64) -> bool {
        let Some((period, next)) = self.probe.as_mut().filter(|(_, next)| *next <= tick) else {
            return false;
        };
        *next = (tick / *period + 1) * *period;
        self.find_next_rare_tick();
        true
    }

    /// The breakpoint due by `tick`, taken from the schedule.
    pub fn take_break(&mut self, tick: u64) -> Option<Breakpoint> {
        let b = *self.breaks.get(self.next_break).filter(|b| b.tick <= tick)?;
        self.next_break += 1;
        self.find_next_rare_tick();
        Some(b)
    }

    /// The window boundary due by `tick`, taken from the schedule.
    pub fn take_window_edge(&mut self, tick: u64) -> Option<WindowEdge> {
        let w = *self.window_edges.get(self.next_window_edge).filter(|w| w.tick <= tick)?;
        self.next_window_edge += 1;
        self.find_next_rare_tick();
        Some(w)
    }
}
