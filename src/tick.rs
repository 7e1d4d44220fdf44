//! Timer readings that wrap.
//!
//! Firmware timestamps are free-running `u32` timer counts. They wrap every
//! 2³² ticks (67 s at 64 MHz), so two readings are only ever compared through
//! their wrapping difference: [`Instant::ticks_since`]. Durations are plain
//! `u32` tick counts and must stay below 2³¹ so the difference is unambiguous;
//! configuration refuses longer ones ([`crate::ErrorKind::TooLong`]).

/// A reading of the free-running timer, in ticks of the configured clock.
///
/// Format: unsigned 32-bit count, scaling `t = ticks / f_clock`, wraps from
/// `u32::MAX` to 0. Only differences between readings carry meaning.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Instant(pub u32);

/// Longest duration, in ticks, that wrapping comparison handles: 2³¹ − 1.
pub const MAX_DURATION_TICKS: u32 = i32::MAX as u32;

impl Instant {
    /// Ticks elapsed from `earlier` to `self`, correct across one wrap.
    #[inline(always)]
    pub const fn ticks_since(self, earlier: Instant) -> u32 {
        self.0.wrapping_sub(earlier.0)
    }

    /// The reading `ticks` after this one (wrapping).
    #[inline(always)]
    pub const fn after(self, ticks: u32) -> Instant {
        Instant(self.0.wrapping_add(ticks))
    }

    /// Whether `self` is at or past `deadline`, a deadline set less than
    /// 2³¹ ticks before it came due (one subtraction and a sign test).
    #[inline(always)]
    pub const fn has_reached(self, deadline: Instant) -> bool {
        self.ticks_since(deadline) <= MAX_DURATION_TICKS
    }

    /// Of two future instants, the one that comes first as seen from `self`.
    #[inline(always)]
    pub const fn earlier_of(self, a: Instant, b: Instant) -> Instant {
        if a.ticks_since(self) <= b.ticks_since(self) {
            a
        } else {
            b
        }
    }
}

/// Of two optional deadlines, the one due first as seen from `now` (either
/// alone if the other is absent): how stages merge their wake-ups.
#[inline(always)]
pub(crate) fn earliest(now: Instant, a: Option<Instant>, b: Option<Instant>) -> Option<Instant> {
    match (a, b) {
        (Some(a), Some(b)) => Some(now.earlier_of(a, b)),
        (a, None) => a,
        (None, b) => b,
    }
}
