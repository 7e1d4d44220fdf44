//! Reference constant on-time law in volts and seconds.

/// On at the valley, off after the on-time; the gate follows the demand
/// at once (no guard). A turn-off and the next turn-on never fall in the
/// same step.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OnTimeModel {
    /// Reference (valley), volts at the sensed output.
    pub reference_v: f64,
    /// On-time, s.
    pub on_time_s: f64,
    /// Gate on.
    pub on: bool,
    /// Time of the last turn-on, s.
    pub on_since_s: f64,
}

impl OnTimeModel {
    /// Off, with a reference and an on-time.
    pub fn new(reference_v: f64, on_time_s: f64) -> Self {
        Self { reference_v, on_time_s, on: false, on_since_s: f64::NEG_INFINITY }
    }

    /// One sample `v` at time `t`; returns the gate.
    pub fn sample(&mut self, v: f64, t: f64) -> bool {
        if self.on {
            if t - self.on_since_s >= self.on_time_s {
                self.on = false;
            }
            return self.on;
        }
        if v <= self.reference_v {
            self.on = true;
            self.on_since_s = t;
        }
        self.on
    }
}
