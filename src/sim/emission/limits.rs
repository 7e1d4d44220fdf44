//! CISPR 32 conducted-emission limits for AC mains power ports, 150 kHz to
//! 30 MHz, measured with the 50 Ω/50 µH network.
//!
//! Values (dBµV), from memory of the standard's tables, which carried over
//! the CISPR 22 (EN 55022) limits; checked against a public summary of the
//! EN 55022 levels. Check them against the edition a test house applies.
//!
//! | class | band | quasi-peak | average |
//! |---|---|---|---|
//! | A | 0.15–0.5 MHz | 79 | 66 |
//! | A | 0.5–30 MHz | 73 | 60 |
//! | B | 0.15–0.5 MHz | 66 → 56 | 56 → 46 |
//! | B | 0.5–5 MHz | 56 | 46 |
//! | B | 5–30 MHz | 60 | 50 |
//!
//! "→": falling linearly with the logarithm of frequency. At a band edge the
//! lower limit applies.
//!
//! These limits are written for AC mains power ports. A DC bus such as the
//! demo's may fall under other limits (CISPR 32's DC power port limits, or
//! the product's own standard); they serve here as the common yardstick.

use serde::{Deserialize, Serialize};

/// Equipment class: A (commercial and industrial), B (residential).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum Class {
    /// Class A: limits for equipment outside residential environments.
    A,
    /// Class B: limits for residential environments (the stricter).
    #[default]
    B,
}

/// Which detector a limit is for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Detector {
    /// Quasi-peak (read here with the peak detector, its upper bound).
    QuasiPeak,
    /// Average.
    Average,
}

impl Detector {
    /// Name for reports.
    pub fn name(self) -> &'static str {
        match self {
            Self::QuasiPeak => "quasi-peak (peak reading)",
            Self::Average => "average",
        }
    }
}

/// The limit at `f_hz` (inside 150 kHz to 30 MHz), dBµV.
pub fn limit_dbuv(class: Class, detector: Detector, f_hz: f64) -> f64 {
    let offset = match detector {
        Detector::QuasiPeak => 0.0,
        Detector::Average => match class {
            Class::A => -13.0,
            Class::B => -10.0,
        },
    };
    let quasi_peak = match class {
        Class::A => {
            if f_hz < 500e3 {
                79.0
            } else {
                73.0
            }
        }
        Class::B => {
            if f_hz < 500e3 {
                66.0 - 10.0 * (f_hz / 150e3).log10() / (500e3f64 / 150e3).log10()
            } else if f_hz <= 5e6 {
                56.0
            } else {
                60.0
            }
        }
    };
    quasi_peak + offset
}
