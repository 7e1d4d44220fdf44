//! Reference hysteretic comparator in volts.

/// Hysteretic decision on the sensed output voltage.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HystereticModel {
    /// Lower threshold, volts at the sensed output.
    pub lower_v: f64,
    /// Upper threshold, volts at the sensed output.
    pub upper_v: f64,
    /// Current demand: true = gate on.
    pub on: bool,
}

impl HystereticModel {
    /// Thresholds at `setpoint ± band/2`; demand starts off.
    pub fn new(setpoint_v: f64, band_v: f64) -> Self {
        Self { lower_v: setpoint_v - band_v / 2.0, upper_v: setpoint_v + band_v / 2.0, on: false }
    }

    /// Decide on one sample of the output; returns the demand.
    pub fn sample(&mut self, v: f64) -> bool {
        if v <= self.lower_v {
            self.on = true;
        } else if v >= self.upper_v {
            self.on = false;
        }
        self.on
    }
}
