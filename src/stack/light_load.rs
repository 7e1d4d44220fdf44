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
//! all, it lowers the current limit's cap by an eighth, so each pulse ends
//! at a lower peak and carries less charge (the charge goes as the peak
//! squared), and the loop must switch more often; once the frequency is
//! back above 2.5·`f_min`, or most cycles are CCM again, it raises the cap
//! again by an eighth, up to the configured limit (so a load step finds the
//! full limit within a few windows). With a law that locks its mean
//! frequency ([`Regulate::frequency_lock`](crate::law::Regulate::frequency_lock))
//! the lock moves the frequency and the sizer only takes over where the
//! lock has run out of range: the cap falls while the lock sits at its
//! lower bound and the window's frequency is below 31/32 of the target (or
//! a period ran long), and rises while the lock sits at its upper bound,
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

use crate::estimate::Amps;
use crate::law::LockState;

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

    /// One window while regulating: its frequency (Hz), its cycles, how
    /// many of them were DCM, whether a period ran past `1/f_min`, and the
    /// law's frequency lock, if it has one (see the module notes).
    pub fn update(
        &mut self,
        f_sw_hz: u32,
        cycles: u32,
        dcm_cycles: u32,
        slow: bool,
        lock: Option<LockState>,
    ) -> PulseSize {
        let light = dcm_cycles >= cycles - cycles / 2;
        let (low, high) = match lock {
            // The cap ends the pulses: it sets the frequency, toward the
            // lock's target within ±1/32.
            Some(l) if l.pulses_cut => {
                let f = l.target_hz;
                (f_sw_hz < f - f / 32, f_sw_hz > f + f / 32)
            }
            Some(l) => {
                let f = l.target_hz;
                (l.at_min && f_sw_hz < f - f / 32, l.at_max || f_sw_hz > f + f / 4)
            }
            None => (f_sw_hz < self.f_low, f_sw_hz > self.f_high),
        };
        let too_slow = cycles == 0 || (light && (slow || low));
        let eighth = Amps::from_bits((self.cap.to_bits() / 8).max(1));
        if too_slow {
            // Fine steps down while the cap sets a locked frequency (the
            // frequency goes as 1/cap², so 1/32 of the cap moves it about
            // 6 %); a full eighth after a long period.
            let fine = lock.is_some_and(|l| l.pulses_cut) && !slow && cycles != 0;
            let step =
                if fine { Amps::from_bits((self.cap.to_bits() / 32).max(1)) } else { eighth };
            self.cap = self.cap.saturating_sub(step).max(self.floor);
        } else if !light || high {
            // Up by an eighth: clear of the band's own peak, so the lock
            // (or the plain law) sets the frequency again.
            self.cap = self.cap.saturating_add(eighth).min(self.limit);
        }
        PulseSize { cap: self.cap, forced: too_slow && self.cap <= self.floor }
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_cap_falls_while_slow_and_recovers() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        let mut last = s.cap();
        for _ in 0..10 {
            let size = s.update(15_000, 2, 2, true, None);
            assert!(size.cap < last || size.cap == Amps::from_num(0.125));
            last = size.cap;
        }
        for _ in 0..40 {
            s.update(10_000, 1, 1, true, None);
        }
        assert_eq!(s.cap(), Amps::from_num(0.125), "held at the floor, 1/32 of the limit");
        assert!(s.update(10_000, 1, 1, true, None).forced, "forced pulses only at the floor");
        // In the middle band nothing moves; above 50 kHz it rises.
        assert_eq!(s.update(40_000, 4, 4, false, None).cap, Amps::from_num(0.125));
        for _ in 0..60 {
            s.update(80_000, 8, 8, false, None);
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
            s.update(15_000, 3, 3, true, Some(lock(true)));
        }
        assert!(s.cap() < Amps::from_num(2.4));
        // Cut pulses, too low a frequency: the cap falls by 1/32 a window
        // (a frequency that goes as 1/cap² moves about 6 %).
        let before = s.cap();
        s.update(30_000, 6, 6, false, Some(lock(true)));
        assert_eq!(s.cap(), before - before / 32);
        // Within ±1/32 of the target it holds; above, it rises by an
        // eighth, clear of the band's own peak.
        let held = s.cap();
        assert_eq!(s.update(36_000, 7, 7, false, Some(lock(true))).cap, held);
        assert_eq!(s.update(34_000, 7, 7, false, Some(lock(true))).cap, held);
        assert_eq!(s.update(36_500, 8, 8, false, Some(lock(true))).cap, held + held / 8);
        // A period past 1/f_min: a full eighth down.
        let now = s.cap();
        assert_eq!(s.update(30_000, 6, 6, true, Some(lock(true))).cap, now - now / 8);
        // The band, not the cap, ends the pulses: a frequency below the
        // target with the lock not at its bound leaves the cap alone.
        let now = s.cap();
        assert_eq!(s.update(30_000, 6, 6, false, Some(lock(false))).cap, now);
    }

    #[test]
    fn a_slow_ccm_window_is_no_light_load() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3);
        // Heavy load at a low frequency: the cap stays at the limit.
        for _ in 0..10 {
            assert_eq!(s.update(15_000, 15, 0, true, None).cap, Amps::from_num(4));
        }
        // Light load lowers it; the load coming back (CCM) raises it again
        // whatever the frequency.
        for _ in 0..10 {
            s.update(15_000, 15, 15, true, None);
        }
        assert!(s.cap() < Amps::from_num(2));
        for _ in 0..40 {
            s.update(30_000, 30, 10, false, None);
        }
        assert_eq!(s.cap(), Amps::from_num(4));
    }
}
