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
//! **Through a soft-start.** A light load's start is itself a light load
//! plus the charge the ramp puts into the output capacitor
//! (`C·setpoint/ramp time`): the ramp's rising cap would let each pulse
//! grow to far more than that needs, and the frequency fall below the
//! window. With a law whose pulses end at a threshold and that reports
//! cut pulses ([`LockState::cut_reported`]), each window of the ramp
//! sizes its pulses for the lock's target in one step: in DCM the
//! frequency goes as the mean current over the pulse's charge, and the
//! charge as the peak squared, so the cap becomes the window's mean peak
//! times `√(f/f_target)`. The ramp's last sixteenth runs at the cap for
//! the load alone (the window's mean current, `½·peak·(duty + off
//! share)` in DCM, less the ramp's charging current), so the output
//! finishes its rise from below on pulses sized for what follows, rather
//! than ending the ramp one ramp-sized pulse above the band (a wait of
//! `pulse charge / load` for the next pulse). A window mostly in CCM (a
//! heavy load) leaves the ramp's own cap; one whose mean current does not
//! exceed the ramp's charging current (`C` above its configured value, or
//! the estimate low: an inductance below the model's) cannot tell the load
//! from the charge, and ends the ramp at the full limit.
//!
//! **A starved output.** The end's size rests on the estimate and on `C`.
//! Where it fell short, the output stops below the setpoint under capped
//! pulses: a window whose output mean is more than 1/32 short and rose by
//! less than a quarter of the way raises the cap by half (2.25 times the
//! charge a pulse), before anything else is weighed.
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
use crate::units::{ratio, scale, sqrt_fraction, Fraction};

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
    /// The output's mean over the last window, code × 2¹⁶.
    last_output: u32,
    /// A soft-start's charging current from zero, `C·setpoint/ramp time`.
    start_charge: Amps,
    /// The ramp's cap while a soft-start runs.
    start_cap: Amps,
}

/// The caps a soft-start window asks for ([`PulseSizer::size_start`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct StartCaps {
    /// End the ramp's pulses at this current (the ramp's own rising cap
    /// still applies below it).
    pub ramp: Amps,
    /// In the ramp's last sixteenth and on from its end: pulses for the
    /// load alone.
    pub end: Amps,
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
    /// For a current `limit`, a window floor `f_min_hz` and the
    /// soft-start's charging current `start_charge`.
    pub const fn new(limit: Amps, f_min_hz: f32, start_charge: Amps) -> Self {
        Self {
            limit,
            floor: Amps::from_bits(limit.to_bits() / 32),
            cap: limit,
            f_low: (f_min_hz * 1.25) as u32,
            f_high: (f_min_hz * 2.5) as u32,
            last_output: 0,
            start_charge,
            start_cap: limit,
        }
    }

    /// One window of a soft-start (see the module notes): the caps for the
    /// ramp and for its end, the latter also the cap regulation begins
    /// with; `output` is the window's output mean (code × 2¹⁶, kept for the
    /// first window of regulation), `span` the share of the setpoint the
    /// start covers (a start from a pre-biased output charges less).
    /// Without a law that reports cut pulses both are the limit; a window
    /// of fewer than two cycles changes nothing.
    pub fn size_start(
        &mut self,
        w: &Phases,
        lock: Option<LockState>,
        (output, span): (u32, Fraction),
    ) -> StartCaps {
        self.last_output = output;
        let target = match lock {
            Some(l) if l.cut_reported => l.target_hz,
            _ => {
                self.reset();
                return StartCaps { ramp: self.limit, end: self.limit };
            }
        };
        if w.cycles >= 2 {
            // DCM, or pulses back to back from about zero (the output
            // lagging the ramp): the charge law holds.
            let light = w.dcm_cycles >= w.cycles - w.cycles / 2 || w.valley < w.peak / 8;
            let f = u64::from(w.f_sw_hz);
            let ramp = self.sized(w.peak, ratio(f, u64::from(target)));
            // Mostly CCM (the output still low, or a heavy load): the
            // charge law does not hold; the pulses may grow, by half a
            // window at most, but not shrink.
            let grown = w.peak.saturating_add(w.peak / 2);
            self.start_cap = if light { ramp } else { ramp.min(grown).max(w.peak) };
            let charge = scale(self.start_charge, span);
            self.cap = match self.load_share(w, f, target, charge) {
                Some(share) if light => self.sized(w.peak, share),
                _ => self.limit,
            };
        }
        StartCaps { ramp: self.start_cap, end: self.cap }
    }

    /// `f/f_target` times the load's share of the window's mean current
    /// (the rest charges the ramp), `Q16.16`; none where the mean does not
    /// exceed the ramp's charging current (the estimate then cannot tell
    /// the load from the charge: the current estimated low, or the output
    /// capacitance above its configured value).
    fn load_share(&self, w: &Phases, f: u64, target: u32, charge: Amps) -> Option<u32> {
        let mean = w.average().max(Amps::from_bits(1));
        if mean <= charge {
            return None;
        }
        let load = (mean - charge).max(mean / 64);
        let share = u64::from(ratio(load.to_bits() as u64, mean.to_bits() as u64));
        Some(ratio(f * share, u64::from(target) << 17))
    }

    /// `peak·√share`, within the floor and the limit.
    fn sized(&self, peak: Amps, share: u32) -> Amps {
        scale(peak, sqrt_fraction(share)).max(self.floor).min(self.limit)
    }

    /// One window while regulating: its frequency (Hz), its cycles, how
    /// many of them were DCM, whether a period ran past `1/f_min`, whether
    /// the window's shortest period or longest on-time bound (the
    /// frequency was then the guard's: a high one raises no cap), the
    /// output's mean over the window and its setpoint (codes × 2¹⁶: a mean
    /// more than 1/32 below, rising less than a quarter of the way a
    /// window, is a load the cap starves), and the law's frequency lock, if
    /// it has one (see the module notes).
    pub fn update(
        &mut self,
        f_sw_hz: u32,
        (cycles, dcm_cycles): (u32, u32),
        slow: bool,
        binding: bool,
        (output, setpoint): (u32, u32),
        lock: Option<LockState>,
    ) -> PulseSize {
        let rise = output.saturating_sub(core::mem::replace(&mut self.last_output, output));
        let short = setpoint.saturating_sub(output);
        if short > setpoint / 32 && rise < short / 4 && self.cap < self.limit {
            // The output below the setpoint, and rising too slowly to reach
            // it within four windows, under capped pulses: the load needs
            // more than the cap lets through (a soft-start's end sized on a
            // load estimate that fell short). Half as much again, each such
            // window: the charge a pulse carries 2.25-fold.
            self.cap = self.cap.saturating_add(self.cap / 2).min(self.limit);
            return PulseSize { cap: self.cap, forced: false };
        }
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
        } else if !light || (high && !binding) {
            // Up by an eighth: clear of the band's own peak, so the lock
            // (or the plain law) sets the frequency again.
            self.cap = self.cap.saturating_add(eighth).min(self.limit);
        }
        PulseSize { cap: self.cap, forced: too_slow && self.cap <= self.floor }
    }

    /// Back to the full limit (out of regulation).
    pub fn reset(&mut self) {
        self.cap = self.limit;
        self.start_cap = self.limit;
    }

    /// The cap now.
    pub const fn cap(&self) -> Amps {
        self.cap
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::ONE;

    /// An output at its setpoint (code 1 000 × 2¹⁶).
    const AT_SETPOINT: (u32, u32) = (1_000 << 16, 1_000 << 16);

    #[test]
    fn the_cap_falls_while_slow_and_recovers() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.75));
        let mut last = s.cap();
        for _ in 0..10 {
            let size = s.update(15_000, (2, 2), true, false, AT_SETPOINT, None);
            assert!(size.cap < last || size.cap == Amps::from_num(0.125));
            last = size.cap;
        }
        for _ in 0..40 {
            s.update(10_000, (1, 1), true, false, AT_SETPOINT, None);
        }
        assert_eq!(s.cap(), Amps::from_num(0.125), "held at the floor, 1/32 of the limit");
        assert!(
            s.update(10_000, (1, 1), true, false, AT_SETPOINT, None).forced,
            "forced pulses only at the floor"
        );
        // In the middle band nothing moves; above 50 kHz it rises.
        assert_eq!(
            s.update(40_000, (4, 4), false, false, AT_SETPOINT, None).cap,
            Amps::from_num(0.125)
        );
        for _ in 0..60 {
            s.update(80_000, (8, 8), false, false, AT_SETPOINT, None);
        }
        assert_eq!(s.cap(), Amps::from_num(4));
    }

    #[test]
    fn with_cut_pulses_the_cap_steers_a_locked_frequency_finely() {
        let lock = |pulses_cut| LockState {
            target_hz: 35_000,
            at_min: false,
            at_max: false,
            pulses_cut,
            cut_reported: true,
        };
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.75));
        // Long periods at light load: the cap falls an eighth a window.
        for _ in 0..4 {
            s.update(15_000, (3, 3), true, false, AT_SETPOINT, Some(lock(true)));
        }
        assert!(s.cap() < Amps::from_num(2.4));
        // Cut pulses, too low a frequency: the cap falls by 1/32 a window
        // (a frequency that goes as 1/cap² moves about 6 %).
        let before = s.cap();
        s.update(30_000, (6, 6), false, false, AT_SETPOINT, Some(lock(true)));
        assert_eq!(s.cap(), before - before / 32);
        // Within ±1/32 of the target it holds; above, it rises by an
        // eighth, clear of the band's own peak.
        let held = s.cap();
        assert_eq!(s.update(36_000, (7, 7), false, false, AT_SETPOINT, Some(lock(true))).cap, held);
        assert_eq!(s.update(34_000, (7, 7), false, false, AT_SETPOINT, Some(lock(true))).cap, held);
        assert_eq!(
            s.update(36_500, (8, 8), false, false, AT_SETPOINT, Some(lock(true))).cap,
            held + held / 8
        );
        // A period past 1/f_min: a full eighth down.
        let now = s.cap();
        assert_eq!(
            s.update(30_000, (6, 6), true, false, AT_SETPOINT, Some(lock(true))).cap,
            now - now / 8
        );
        // The band, not the cap, ends the pulses: a frequency below the
        // target with the lock not at its bound leaves the cap alone.
        let now = s.cap();
        assert_eq!(s.update(30_000, (6, 6), false, false, AT_SETPOINT, Some(lock(false))).cap, now);
    }

    #[test]
    fn a_slow_ccm_window_is_no_light_load() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.75));
        // Heavy load at a low frequency: the cap stays at the limit.
        for _ in 0..10 {
            assert_eq!(
                s.update(15_000, (15, 0), true, false, AT_SETPOINT, None).cap,
                Amps::from_num(4)
            );
        }
        // Light load lowers it; the load coming back (CCM) raises it again
        // whatever the frequency.
        for _ in 0..10 {
            s.update(15_000, (15, 15), true, false, AT_SETPOINT, None);
        }
        assert!(s.cap() < Amps::from_num(2));
        for _ in 0..40 {
            s.update(30_000, (30, 10), false, false, AT_SETPOINT, None);
        }
        assert_eq!(s.cap(), Amps::from_num(4));
    }

    impl PulseSizer {
        /// A window of a start, its output at code 500.
        fn size_start_at(&mut self, w: &Phases, lock: Option<LockState>) -> StartCaps {
            self.size_start(w, lock, (500 << 16, ONE))
        }
    }

    /// A window of the start.
    fn start_window(f_sw_hz: u32, cycles: u32, dcm: u32, peak: f64, valley: f64) -> Phases {
        Phases {
            cycles,
            dcm_cycles: dcm,
            f_sw_hz,
            peak: Amps::from_num(peak),
            valley: Amps::from_num(valley),
            duty: 6_554,
            off_fraction: if dcm == cycles { 19_661 } else { 58_982 },
            ..Phases::default()
        }
    }

    #[test]
    fn a_start_sizes_its_pulses_by_the_charge_law() {
        let lock = Some(LockState {
            target_hz: 35_000,
            at_min: false,
            at_max: false,
            pulses_cut: true,
            cut_reported: true,
        });
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.25));
        // DCM at 17.5 kHz, 2 A peaks: a DCM pulse's charge goes as its
        // peak squared, so half the charge (twice the frequency) takes
        // the peak times √½ (Erickson & Maksimović, Fundamentals of Power
        // Electronics, the DCM buck: the pulse's charge ½·i_pk·(t_on +
        // t_off), each time ∝ i_pk).
        let caps = s.size_start_at(&start_window(17_500, 4, 4, 2.0, 0.0), lock);
        let want = 2.0 * 0.5f64.sqrt();
        assert!((caps.ramp.to_num::<f64>() - want).abs() < 1e-3, "{}", caps.ramp);
        // Its end: the load alone, the window's mean current
        // (½·2 A·(0.1 + 0.3) = 0.4 A) less the ramp's 0.25 A, a share of
        // 0.375, at twice the target.
        let end = 2.0 * (0.5 * 0.375 / 2.0f64).sqrt();
        assert!((caps.end.to_num::<f64>() - end).abs() < 2e-3, "{} vs {end}", caps.end);
        // Mostly CCM (the output lagging): the pulses grow by half a
        // window's peak at most, and do not shrink below it.
        let caps = s.size_start_at(&start_window(100_000, 20, 0, 1.0, 0.8), lock);
        assert_eq!(caps.ramp, Amps::from_num(1.5));
        assert_eq!(caps.end, Amps::from_num(4));
        let caps = s.size_start_at(&start_window(30_000, 6, 0, 1.0, 0.8), lock);
        assert_eq!(caps.ramp, Amps::from_num(1));
        // A window of one cycle changes nothing.
        assert_eq!(
            s.size_start_at(&start_window(5_000, 1, 1, 3.0, 0.0), lock).ramp,
            Amps::from_num(1)
        );
        // A ramp charging more than the window's whole mean current: the
        // estimate cannot tell the load from the charge, so the end is the
        // limit.
        let mut t = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.5));
        let caps = t.size_start_at(&start_window(17_500, 4, 4, 2.0, 0.0), lock);
        assert!((caps.ramp.to_num::<f64>() - want).abs() < 1e-3);
        assert_eq!(caps.end, Amps::from_num(4));
        // A law that does not report cut pulses: the limit, and reset.
        let plain = lock.map(|l| LockState { cut_reported: false, ..l });
        let caps = s.size_start_at(&start_window(17_500, 4, 4, 2.0, 0.0), plain);
        assert_eq!((caps.ramp, caps.end), (Amps::from_num(4), Amps::from_num(4)));
    }

    #[test]
    fn a_starved_output_raises_the_cap_by_half() {
        let mut s = PulseSizer::new(Amps::from_num(4), 20e3, Amps::from_num(0.5));
        for _ in 0..10 {
            s.update(15_000, (2, 2), true, false, AT_SETPOINT, None);
        }
        let low = s.cap();
        assert!(low < Amps::from_num(2));
        let at = |code: u32| (code << 16, 1_000 << 16);
        // 5 % short and not rising: half as much again.
        assert_eq!(s.update(40_000, (8, 8), false, false, at(950), None).cap, low + low / 2);
        // Still 4 % short, but it rose a quarter of the way: left alone
        // (40 kHz is inside the plain sizer's band).
        let raised = s.cap();
        assert_eq!(s.update(40_000, (8, 8), false, false, at(960), None).cap, raised);
        // Within 1/32: no starving, however slowly it rises.
        assert_eq!(s.update(40_000, (8, 8), false, false, at(970), None).cap, raised);
    }
}
