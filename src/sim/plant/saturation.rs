//! Inductor saturation: the incremental inductance `dλ/di`, constant within
//! current bands.
//!
//! `L₀` up to `I_sat`, then falling linearly to `floor·L₀` over `roll_off`
//! amperes in 20 bands, and `floor·L₀` beyond. Within a band the stage is
//! linear; the plant stops at each band edge and changes band. The magnetic
//! energy is `∫ i·L(i) di`, exact for that curve.

use serde::{Deserialize, Serialize};

/// Inductor saturation: incremental inductance falling above `i_sat_a`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Saturation {
    /// Current where the inductance starts to fall, A.
    pub i_sat_a: f64,
    /// Current span over which it falls to the floor, A.
    pub roll_off_a: f64,
    /// Inductance at and beyond `i_sat + roll_off`, as a fraction of `L₀`.
    pub floor: f64,
}

/// Number of bands the roll-off is divided into.
pub const ROLL_OFF_BANDS: u16 = 20;

/// The highest band index (beyond the roll-off).
pub const TOP_BAND: u16 = ROLL_OFF_BANDS + 1;

impl Saturation {
    fn band_width(&self) -> f64 {
        self.roll_off_a / f64::from(ROLL_OFF_BANDS)
    }

    /// Band index of a current magnitude: 0 below `i_sat`, 1..=20 in the
    /// roll-off, 21 beyond.
    pub fn band(&self, i_abs: f64) -> u16 {
        if i_abs < self.i_sat_a {
            return 0;
        }
        let k = ((i_abs - self.i_sat_a) / self.band_width()).floor() as u32 + 1;
        k.min(u32::from(TOP_BAND)) as u16
    }

    /// Current magnitude at the lower edge of `band` (band ≥ 1).
    pub fn lower_edge(&self, band: u16) -> f64 {
        self.i_sat_a + f64::from(band.saturating_sub(1)) * self.band_width()
    }

    /// Current-magnitude range `[lo, hi)` of `band`.
    pub fn range(&self, band: u16) -> (f64, f64) {
        let lo = if band == 0 { f64::NEG_INFINITY } else { self.lower_edge(band) };
        let hi = if band >= TOP_BAND { f64::INFINITY } else { self.lower_edge(band + 1) };
        (lo, hi)
    }

    /// Incremental inductance in `band`, as a fraction of `L₀`.
    pub fn fraction(&self, band: u16) -> f64 {
        match band {
            0 => 1.0,
            b if b > ROLL_OFF_BANDS => self.floor,
            b => 1.0 - (f64::from(b) - 0.5) / f64::from(ROLL_OFF_BANDS) * (1.0 - self.floor),
        }
    }

    /// `∫₀^|i| i·L(i) di` for the band-wise constant incremental
    /// inductance, with `L₀ = l0_h`, J.
    pub fn magnetic_j(&self, l0_h: f64, i_abs: f64) -> f64 {
        let mut energy = 0.5 * l0_h * i_abs.min(self.i_sat_a).powi(2);
        for band in 1..=self.band(i_abs) {
            let lo = self.lower_edge(band);
            let hi =
                if band > ROLL_OFF_BANDS { i_abs } else { (lo + self.band_width()).min(i_abs) };
            energy += 0.5 * l0_h * self.fraction(band) * (hi * hi - lo * lo);
        }
        energy
    }
}
