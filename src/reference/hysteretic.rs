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

    /// Something other than the law ended the pulse (a current limit, a
    /// maximum on-time): the next pulse waits for the output to fall to the
    /// lower threshold again.
    pub fn cut_short(&mut self) {
        self.on = false;
    }
}

/// Reference frequency lock in SI units: the band scaled by an integral
/// loop on the mean period,
/// `trim ← clamp(trim − g·(T − T₀)/T₀, min, max)`, held while the window
/// binds, one full step down after a period past the window's longest;
/// band = configured band · trim.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LockModel {
    /// Target period, seconds.
    pub target_period_s: f64,
    /// Gain per window.
    pub gain: f64,
    /// Lower bound of the trim.
    pub min: f64,
    /// Upper bound of the trim.
    pub max: f64,
    /// The trim now.
    pub trim: f64,
}

impl LockModel {
    /// Lock to `target_hz` with `gain` per window within `[min, max]`.
    pub fn new(target_hz: f64, gain: f64, min: f64, max: f64) -> Self {
        Self { target_period_s: 1.0 / target_hz, gain, min, max, trim: 1.0 }
    }

    /// One window: `cycles` periods summing to `period_s`; `binding`: the
    /// window's limits acted; `long`: a period ran past `1/f_min`. Returns
    /// the trim.
    pub fn update(&mut self, cycles: u32, period_s: f64, binding: bool, long: bool) -> f64 {
        if long {
            self.trim = (self.trim - self.gain).max(self.min);
        } else if cycles > 0 && !binding {
            let target = f64::from(cycles) * self.target_period_s;
            let error = (period_s - target) / target;
            self.trim = (self.trim - self.gain * error).clamp(self.min, self.max);
        }
        self.trim
    }
}
