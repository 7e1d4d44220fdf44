//! Resistor dividers from the E24 series (IEC 60063's 24 values a decade,
//! values from memory of the standard's table).

/// The E24 values of one decade.
pub const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

/// A divider: `top` from the sensed node to the pin, `bottom` from the pin
/// to ground.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Divider {
    /// Upper resistor, Ω.
    pub top_ohm: f64,
    /// Lower resistor, Ω.
    pub bottom_ohm: f64,
}

impl Divider {
    /// Pin volts per sensed volt.
    pub fn ratio(&self) -> f64 {
        self.bottom_ohm / (self.top_ohm + self.bottom_ohm)
    }

    /// With `top_ohm` fixed, the E24 bottom resistor (from a hundredth of
    /// `top_ohm` up to `top_ohm`) giving the largest ratio not above
    /// `max_ratio`; `None` if even the smallest exceeds it.
    pub fn at_most(top_ohm: f64, max_ratio: f64) -> Option<Self> {
        [0.01, 0.1]
            .iter()
            .flat_map(|decade| E24.iter().map(move |v| v * decade * top_ohm))
            .chain(std::iter::once(top_ohm))
            .map(|bottom_ohm| Self { top_ohm, bottom_ohm })
            .filter(|d| d.ratio() <= max_ratio * (1.0 + 1e-12))
            .max_by(|a, b| a.ratio().total_cmp(&b.ratio()))
    }

    /// Both resistors as a label, e.g. `10 k over 4.7 k`.
    pub fn label(&self) -> String {
        format!("{} over {}", ohms(self.top_ohm), ohms(self.bottom_ohm))
    }
}

/// A resistance as a part label (`4.7 k`, `100 k`, `820`).
fn ohms(r: f64) -> String {
    if r >= 1e3 {
        format!("{} k", round3(r / 1e3))
    } else {
        format!("{}", round3(r))
    }
}

fn round3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_demo_dividers() {
        // The demo's output divider, 10 k over 4.7 k, puts 5 V at about half
        // of a 3.3 V reference; its input divider 100 k over 8.2 k reads
        // up to 43.5 V.
        let out = Divider::at_most(10e3, 0.5 * 3.3 / 5.0).unwrap();
        assert_eq!(out.bottom_ohm, 4.7e3);
        assert_eq!(out.label(), "10 k over 4.7 k");
        let input = Divider::at_most(100e3, 3.3 / 42.6).unwrap();
        assert!((input.bottom_ohm - 8.2e3).abs() < 1e-9);
        assert!((3.3 / input.ratio() - 43.54).abs() < 0.01);
    }
}
