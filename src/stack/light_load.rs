//! Light load without the audible band: smaller pulses, not fewer.
//!
//! In DCM a pulse carries a charge set by its peak current, and pulses come
//! only as often as the load draws that charge: as the load falls the
//! frequency falls with it, into the audible band. Under
//! [`LightLoad::SmallerPulses`](crate::LightLoad::SmallerPulses) the slow
//! path watches each window: while most of its cycles are DCM (light load:
//! a low frequency in CCM is no sign of it, and a smaller cap there would
//! only starve the load) and periods run long (a period past `1/f_min`, or
//! a window's frequency below 1.25·`f_min`), or a window has no cycle at
//! all, it lowers the current limit's cap, so each pulse ends at a lower
//! peak and carries less charge (the charge goes as the peak squared), and
//! the loop must switch more often. The step is taken from the lower of the
//! cap and the window's mean peak (a cap above the pulses' own peak ends
//! none of them); after a period past `1/f_min` it is the one that would
//! bring the window's frequency to the sizer's aim at once, `√(f/aim)`
//! (the lock's target, or midway between the 1.25 and 2.5·`f_min` lines;
//! between a quarter and 7/8), otherwise an eighth. Once the frequency is
//! back above 2.5·`f_min`, or most cycles are CCM again, it raises the cap
//! again by an eighth, up to the configured limit (so a load step finds the
//! full limit within a few windows). With a law that locks its mean
//! frequency ([`Regulate::frequency_lock`](crate::law::Regulate::frequency_lock))
//! the lock moves the frequency and the sizer only takes over where the
//! lock has run out of range: the cap falls while the lock sits at its
//! lower bound and the window's frequency is below 31/32 of the target, or
//! the frequency is below 1.25·`f_min` whatever the lock says (a lock that
//! does not reach its target there, as an on-time trim with pulses at the
//! cap's edge), or a period ran long; it rises while the lock sits at its upper bound,
//! or the frequency passes 5/4 of the target, or most cycles are CCM.
//! The thresholds are demo values; the eighth, the step (common practice
//! for a multiplicative adaptation: slow against the window, fast against a
//! load change).
//!
//! **Where it ends.** The cap does not go below a floor of 1/32 of the
//! limit. If periods still run long there (almost no load: even the
//! smallest pulses outlast it), forced pulses at the minimum on-time are
//! the last resort, and those push a diode stage's output up unless
//! something absorbs them: no load at all needs a bleeder resistor or a
//! synchronous stage. **What it costs.** More pulses for the same charge:
//! switching and gate losses per watt delivered grow as the pulse shrinks,
//! so light-load efficiency falls (the README gives the demo's figures).

use crate::estimate::{Amps, Phases};
use crate::law::LockState;
use crate::units::div_u32;

/// The adaptation's state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PulseSizer {
    limit: Amps,
    floor: Amps,
    cap: Amps,
    /// Below this window frequency the cap falls, Hz.
    f_low: u32,
    /// Above this one it rises again, Hz.
    f_high: u32,
}

/// What a window asks of the stage.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct PulseSize {
    /// End pulses at this current.
    pub cap: Amps,
    /// Force a minimum pulse when a period would pass `1/f_min`.
    pub forced: bool,
}

impl PulseSizer {
    /// For a current `limit` and a window floor `f_min_hz`.
    pub const fn new(limit: Amps, f_min_hz: f32) -> Self {
        Self {
            limit,
            floor: Amps::from_bits(limit.to_bits() / 32),
            cap: limit,
            f_low: (f_min_hz * 1.25) as u32,
            f_high: (f_min_hz * 2.5) as u32,
        }
    }

    /// One window while regulating: its cycles ([`Phases`]: frequency,
    /// how many were DCM, their mean peak), whether a period ran past
    /// `1/f_min`, and the law's frequency lock, if it has one (see the
    /// module notes).
    pub fn update(&mut self, window: &Phases, slow: bool, lock: Option<LockState>) -> PulseSize {
        let (cycles, f_sw_hz) = (window.cycles, window.f_sw_hz);
        let light = window.dcm_cycles >= cycles - cycles / 2;
        let (low, high) = match lock {
            // The cap ends the pulses: it sets the frequency, toward the
            // lock's target within ±1/32.
            Some(l) if l.pulses_cut => {
                let f = l.target_hz;
                (f_sw_hz < f - f / 32, f_sw_hz > f + f / 32)
            }
            Some(l) => {
                let f = l.target_hz;
                let low = l.at_min && f_sw_hz < f - f / 32;
                (low || f_sw_hz < self.f_low, l.at_max || f_sw_hz > f + f / 4)
            }
            None => (f_sw_hz < self.f_low, f_sw_hz > self.f_high),
        };
        let too_slow = cycles == 0 || (light && (slow || low));
        if too_slow {
            let target = lock.map_or(self.f_low / 2 + self.f_high / 2, |l| l.target_hz);
            self.lower(window, slow, lock.is_some_and(|l| l.pulses_cut), target);
        } else if !light || high {
            // Up by an eighth: clear of the band's own peak, so the lock
            // (or the plain law) sets the frequency again.
            let eighth = Amps::from_bits((self.cap.to_bits() / 8).max(1));
            self.cap = self.cap.saturating_add(eighth).min(self.limit);
        }
        PulseSize { cap: self.cap, forced: too_slow && self.cap <= self.floor }
    }

    /// One step down, toward `target_hz`. A cap above the pulses' own peak
    /// ends none of them (after a start the cap stands at the limit while
    /// the band ends the pulses far below it), so the step is taken from
    /// the lower of the cap and the window's mean peak. In DCM at a given
    /// load the frequency goes as 1/peak², so after a long period the step
    /// is the one that would bring the window's frequency to the target at
    /// once, `√(f/target)` (between a quarter and 7/8; half without a
    /// cycle); while the cap sets a locked frequency, fine steps of 1/32
    /// (about 6 % of frequency); an eighth otherwise.
    fn lower(&mut self, window: &Phases, slow: bool, cut: bool, target_hz: u32) {
        let from = match window.cycles {
            0 => self.cap,
            _ => self.cap.min(window.peak.max(self.floor)),
        };
        let to = match (window.cycles, slow, cut) {
            (0, ..) => from / 2,
            (_, true, _) => scale(from, toward(window.f_sw_hz, target_hz)),
            (_, false, true) => from - Amps::from_bits((from.to_bits() / 32).max(1)),
            (_, false, false) => from - Amps::from_bits((from.to_bits() / 8).max(1)),
        };
        self.cap = to.max(self.floor);
    }

    /// Back to the full limit (out of regulation).
    pub fn reset(&mut self) {
        self.cap = self.limit;
    }

    /// The cap now.
    pub const fn cap(&self) -> Amps {
        self.cap
    }
}

/// `√(f/target)` in 2⁻¹⁶, held between ¼ and ⅞ (a window as slow as 1/16
/// of the target, or slower, takes a quarter; one within 3/4 of it still
/// an eighth).
fn toward(f_hz: u32, target_hz: u32) -> u32 {
    let (mut f, mut target) = (f_hz, target_hz.max(1));
    if f >= target {
        return 7 << 13;
    }
    // f < target < 2¹⁶ after the shifts: f·2¹⁶ fits 32 bits.
    while target >= 1 << 16 {
        (f, target) = (f >> 1, target >> 1);
    }
    square_root(div_u32(f << 16, target) << 16).clamp(1 << 14, 7 << 13)
}

/// `⌊√n⌋`, digit by digit (two bits of `n` a turn, 16 turns). Not
/// `u32::isqrt`: core's takes a 512-byte table, a sixteenth of a small
/// core's flash, for a root taken once a window.
fn square_root(mut n: u32) -> u32 {
    let (mut root, mut bit) = (0u32, 1u32 << 30);
    while bit != 0 {
        if n >= root + bit {
            n -= root + bit;
            root = (root >> 1) + bit;
        } else {
            root >>= 1;
        }
        bit >>= 2;
    }
    root
}

/// `cap · factor`, the factor in 2⁻¹⁶ (≤ 1).
fn scale(cap: Amps, factor: u32) -> Amps {
    Amps::from_bits(((i64::from(cap.to_bits()) * i64::from(factor)) >> 16) as i32)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A window of `cycles` at `f_hz`, `dcm` of them DCM, their peaks
    /// at the 4 A limit (the band's own peak above any cap here).
    fn window(f_hz: u32, cycles: u32, dcm: u32) -> Phases {
        peaked(f_hz, cycles, dcm, 4.0)
    }

    fn peaked(f_hz: u32, cycles: u32, dcm: u32, peak: f64) -> Phases {
        let peak = Amps::from_num(peak);
        Phases { cycles, dcm_cycles: dcm, f_sw_hz: f_hz, peak, ..Phases::default() }
    }

    #[test]
    fn the_cap_falls_while_slow_and_recovers() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        let mut last = s.cap();
        for _ in 0..10 {
            let size = s.update(&window(15_000, 2, 2), true, None);
            assert!(size.cap < last || size.cap == Amps::from_num(0.125));
            last = size.cap;
        }
        for _ in 0..40 {
            s.update(&window(10_000, 1, 1), true, None);
        }
        assert_eq!(s.cap(), Amps::from_num(0.125), "held at the floor, 1/32 of the limit");
        assert!(
            s.update(&window(10_000, 1, 1), true, None).forced,
            "forced pulses only at the floor"
        );
        // In the middle band nothing moves; above 50 kHz it rises.
        assert_eq!(s.update(&window(40_000, 4, 4), false, None).cap, Amps::from_num(0.125));
        for _ in 0..60 {
            s.update(&window(80_000, 8, 8), false, None);
        }
        assert_eq!(s.cap(), Amps::from_num(4));
    }

    #[test]
    fn with_cut_pulses_the_cap_steers_a_locked_frequency_finely() {
        let lock =
            |pulses_cut| LockState { target_hz: 35_000, at_min: false, at_max: false, pulses_cut };
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        // Long periods at light load: the cap falls an eighth a window.
        for _ in 0..4 {
            s.update(&window(15_000, 3, 3), true, Some(lock(true)));
        }
        assert!(s.cap() < Amps::from_num(2.4));
        // Cut pulses, too low a frequency: the cap falls by 1/32 a window
        // (a frequency that goes as 1/cap² moves about 6 %).
        let before = s.cap();
        s.update(&window(30_000, 6, 6), false, Some(lock(true)));
        assert_eq!(s.cap(), before - before / 32);
        // Within ±1/32 of the target it holds; above, it rises by an
        // eighth, clear of the band's own peak.
        let held = s.cap();
        assert_eq!(s.update(&window(36_000, 7, 7), false, Some(lock(true))).cap, held);
        assert_eq!(s.update(&window(34_000, 7, 7), false, Some(lock(true))).cap, held);
        assert_eq!(s.update(&window(36_500, 8, 8), false, Some(lock(true))).cap, held + held / 8);
        // A period past 1/f_min with the window near the target: the
        // one-shot step's least, an eighth down.
        let now = s.cap();
        let cap = s.update(&window(30_000, 6, 6), true, Some(lock(true))).cap;
        assert_close(cap, now.to_num::<f64>() * 7.0 / 8.0);
        // The band, not the cap, ends the pulses: a frequency below the
        // target with the lock not at its bound leaves the cap alone.
        let now = s.cap();
        assert_eq!(s.update(&window(30_000, 6, 6), false, Some(lock(false))).cap, now);
    }

    #[test]
    fn a_slow_ccm_window_is_no_light_load() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        // Heavy load at a low frequency: the cap stays at the limit.
        for _ in 0..10 {
            assert_eq!(s.update(&window(15_000, 15, 0), true, None).cap, Amps::from_num(4));
        }
        // Light load lowers it; the load coming back (CCM) raises it again
        // whatever the frequency.
        for _ in 0..10 {
            s.update(&window(15_000, 15, 15), true, None);
        }
        assert!(s.cap() < Amps::from_num(2));
        for _ in 0..40 {
            s.update(&window(30_000, 30, 10), false, None);
        }
        assert_eq!(s.cap(), Amps::from_num(4));
    }

    #[test]
    fn the_first_step_down_starts_from_the_pulses_own_peak() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        // After a start the cap stands at the 4 A limit while the band ends
        // the pulses near 1 A: one long-period window (12 kHz) takes the
        // cap from that peak, not from 3.5 A, which would end none, to the
        // peak that brings a DCM stage's frequency to the sizer's aim
        // (37.5 kHz, between its 25 and 50 kHz lines) at the same load: a
        // DCM pulse carries L·I²·Vin / (2·Vout·(Vin − Vout)) (from the
        // triangle's area, Erickson & Maksimović ch. 5), so the frequency
        // goes as 1/I² and the peak as √(f/aim).
        let cap = s.update(&peaked(12_000, 2, 2, 1.0), true, None).cap;
        assert_close(cap, (12_000.0f64 / 37_500.0).sqrt());
        // Far too slow (1/16 of the aim or less): a quarter at most.
        let mut t = PulseSizer::new(Amps::from_num(4), 20e3);
        assert_close(t.update(&peaked(2_000, 1, 1, 1.0), true, None).cap, 0.25);
        // A window without cycles has no peak: half the cap.
        assert_close(s.update(&peaked(0, 0, 0, 0.0), true, None).cap, cap.to_num::<f64>() / 2.0);
        // Never below the floor, whatever the window's peak reads.
        for _ in 0..3 {
            s.update(&peaked(12_000, 2, 2, 0.0), true, None);
        }
        assert_eq!(s.cap(), Amps::from_num(0.125));
    }

    /// Within two LSBs of `Amps` (2⁻¹⁶ A each) plus the root's own
    /// 2⁻¹⁶ (an integer square root truncates).
    fn assert_close(cap: Amps, expected: f64) {
        let err = (cap.to_num::<f64>() - expected).abs();
        assert!(err < 4.0 / 65_536.0, "cap {cap} A, expected {expected} A");
    }

    #[test]
    fn the_square_root_is_core_s() {
        // Against `u32::isqrt` (core's): the ends, squares and their
        // neighbours, and a spread of values.
        let mut cases = vec![0, 1, 2, 3, u32::MAX, u32::MAX - 1];
        for r in [1u32, 2, 255, 256, 4095, 65_535] {
            cases.extend([r * r - 1, r * r, r * r + 1]);
        }
        cases.extend((0..2000u32).map(|i| i.wrapping_mul(2_654_435_761)));
        for n in cases {
            assert_eq!(square_root(n), n.isqrt(), "n = {n}");
        }
    }
}
