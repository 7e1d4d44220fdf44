//! Reference frequency-window guard in seconds.

/// The guard's rules with absolute times in seconds.
///
/// Given the law's demand at time `t`, the gate turns on when the demand is
/// on, at least `min_off_s` has passed since the last turn-off and at least
/// `min_period_s` since the last turn-on; it turns off when the demand is off
/// and at least `min_on_s` has passed since the turn-on, or unconditionally
/// once `max_on_s` has passed. (The light-load policy is reporting only
/// here.)
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GuardModel {
    /// Minimum on-time, s.
    pub min_on_s: f64,
    /// Minimum off-time, s.
    pub min_off_s: f64,
    /// Maximum on-time, s.
    pub max_on_s: f64,
    /// Minimum period (1/f_max), s.
    pub min_period_s: f64,
    /// Gate state.
    pub on: bool,
    /// Time of the last turn-on, s (−∞ before the first).
    pub last_on_s: f64,
    /// Time of the last turn-off, s (−∞ before the first).
    pub last_off_s: f64,
}

impl GuardModel {
    /// A guard with the gate off and no edge yet; `min_period_s` is
    /// `1/f_max`.
    pub fn new(min_on_s: f64, min_off_s: f64, max_on_s: f64, min_period_s: f64) -> Self {
        Self {
            min_on_s,
            min_off_s,
            max_on_s,
            min_period_s,
            on: false,
            last_on_s: f64::NEG_INFINITY,
            last_off_s: f64::NEG_INFINITY,
        }
    }

    /// Apply the demand at time `t` (seconds, non-decreasing); returns the
    /// gate state.
    pub fn step(&mut self, demand_on: bool, t: f64) -> bool {
        if self.on {
            let on_for = t - self.last_on_s;
            if on_for >= self.max_on_s || (!demand_on && on_for >= self.min_on_s) {
                self.on = false;
                self.last_off_s = t;
            }
        }
        // A turn-off at this very instant still leaves min_off to wait out,
        // so this cannot turn straight back on unless min_off is zero.
        if !self.on
            && demand_on
            && t - self.last_off_s >= self.min_off_s
            && t - self.last_on_s >= self.min_period_s
        {
            self.on = true;
            self.last_on_s = t;
        }
        self.on
    }

    /// The next instant after `t` at which the state may change by time
    /// alone, given the demand stays `demand_on`.
    pub fn next_deadline(&self, demand_on: bool) -> Option<f64> {
        match (self.on, demand_on) {
            (true, true) => Some(self.last_on_s + self.max_on_s),
            (true, false) => Some(self.last_on_s + self.min_on_s),
            (false, true) => {
                Some((self.last_off_s + self.min_off_s).max(self.last_on_s + self.min_period_s))
            }
            (false, false) => None,
        }
    }
}
