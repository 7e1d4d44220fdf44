//! The readings the supervisor keeps for the slow path: the last output
//! and input codes, and their sums over a housekeeping window.
//!
//! Sums are `u32` and counts `u16`, both wrapping: take the averages at
//! least every 65 535 readings (65 ms at 1 MHz). Averages carry 16 fraction
//! bits (`u32`, code × 2¹⁶).

use crate::units::div_u32;

/// Readings and their window sums.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct Readings {
    pub(super) last_out: u16,
    pub(super) last_in: u16,
    out_sum: u32,
    out_count: u16,
    in_sum: u32,
    in_count: u16,
    // An output reading arrived at some time (set on the slow path).
    seen_output: bool,
}

impl Readings {
    pub(super) const fn new() -> Self {
        Self {
            last_out: 0,
            last_in: 0,
            out_sum: 0,
            out_count: 0,
            in_sum: 0,
            in_count: 0,
            seen_output: false,
        }
    }

    /// Fast path: an output reading.
    #[inline(always)]
    pub(super) fn note_output(&mut self, code: u16) {
        self.last_out = code;
        self.out_sum = self.out_sum.wrapping_add(u32::from(code));
        self.out_count = self.out_count.wrapping_add(1);
    }

    /// Fast path: an input reading.
    #[inline(always)]
    pub(super) fn note_input(&mut self, code: u16) {
        self.last_in = code;
        self.in_sum = self.in_sum.wrapping_add(u32::from(code));
        self.in_count = self.in_count.wrapping_add(1);
    }

    /// Slow path: whether any output reading arrived yet (set here rather
    /// than per reading: the fast path stays lighter).
    pub(super) fn has_output(&mut self) -> bool {
        self.seen_output |= self.out_count != 0;
        self.seen_output
    }

    /// Slow path: the output readings' average since the last call (the
    /// last reading when there were none), code × 2¹⁶.
    pub(super) fn take_output_average(&mut self) -> u32 {
        let avg = average(self.out_sum, self.out_count).unwrap_or(u32::from(self.last_out) << 16);
        (self.out_sum, self.out_count) = (0, 0);
        avg
    }

    /// Slow path: the input readings' average over the window so far, code
    /// × 2¹⁶, or `None` without any (the window goes on).
    pub(super) fn input_average(&self) -> Option<u32> {
        average(self.in_sum, self.in_count)
    }

    /// Slow path: end the input's window; whether any reading came in it.
    pub(super) fn end_input_window(&mut self) -> bool {
        let fresh = self.in_count != 0;
        (self.in_sum, self.in_count) = (0, 0);
        fresh
    }
}

/// `sum / count` with 16 fraction bits; `None` for no readings. Two 32-bit
/// divisions (whole part, then the remainder's fraction) rather than one
/// 64-bit: the remainder is below `count` < 2¹⁶.
fn average(sum: u32, count: u16) -> Option<u32> {
    if count == 0 {
        return None;
    }
    let count = u32::from(count);
    let whole = div_u32(sum, count);
    // whole · count ≤ sum: the remainder, below `count`.
    let rest = sum.wrapping_sub(whole.wrapping_mul(count));
    Some((whole << 16).wrapping_add(div_u32(rest << 16, count)))
}
