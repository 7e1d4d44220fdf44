//! Optional parts, chosen at compile time by cargo features.
//!
//! A part a firmware may leave out (the loss model, the observer, DC
//! correction, the light-load sizer; the laws' feed-forward, frequency
//! lock, dither and emulated ripple) is held in a [`Part`]: an `Option` of
//! it when its feature is on, nothing at all when it is off. Off, the part
//! takes no RAM, and the code that runs it sees a part that is never there,
//! so the compiler drops that code and the image links none of it. The
//! code is written once, for both cases (`if let Some(x) = part.get_mut()`).
//!
//! A configuration that asks for a part left out is refused, naming the
//! parameter that asked and the feature it needs
//! ([`ErrorKind::NotBuilt`]): in a firmware's `const` items, a build error.
//!
//! | feature | part |
//! |---|---|
//! | `loss-model` | the loss model behind the efficiency estimate (`SlowPathConfig::losses`) |
//! | `observer` | the averaged-model observer (`SlowPathConfig::observer_bandwidth_hz`) |
//! | `dc-correction` | the reference trim (`SlowPathConfig::dc_correction`) |
//! | `light-load` | smaller pulses at light load (`WindowConfig::light_load`) |
//! | `feed-forward` | the on-time law's input feed-forward |
//! | `frequency-lock` | the mean-frequency integrator: the on-time law's trim, the hysteretic law's lock |
//! | `dither` | the hysteretic law's band dither |
//! | `emulated-ripple` | the on-time law's emulated ripple |
//!
//! `all-parts` turns every one on; `std` (the simulator) implies it.

use crate::error::{ConfigError, ErrorKind};
use core::fmt;

/// `1` when a part's feature is on, `0` when off: a [`Part`]'s capacity.
const fn built(on: bool) -> usize {
    if on {
        1
    } else {
        0
    }
}

/// Capacity of the loss model's [`Part`] (feature `loss-model`).
pub(crate) const LOSS_MODEL: usize = built(cfg!(feature = "loss-model"));
/// Capacity of the observer's [`Part`] (feature `observer`).
pub(crate) const OBSERVER: usize = built(cfg!(feature = "observer"));
/// Capacity of the DC correction's [`Part`] (feature `dc-correction`).
pub(crate) const DC_CORRECTION: usize = built(cfg!(feature = "dc-correction"));
/// Capacity of the light-load sizer's [`Part`] (feature `light-load`).
pub(crate) const LIGHT_LOAD: usize = built(cfg!(feature = "light-load"));
/// Capacity of the on-time feed-forward's [`Part`] (feature `feed-forward`).
pub(crate) const FEED_FORWARD: usize = built(cfg!(feature = "feed-forward"));
/// Capacity of a frequency trim's or lock's [`Part`] (feature `frequency-lock`).
pub(crate) const FREQUENCY_LOCK: usize = built(cfg!(feature = "frequency-lock"));
/// Capacity of the dither's [`Part`] (feature `dither`).
pub(crate) const DITHER: usize = built(cfg!(feature = "dither"));
/// Capacity of the emulated ripple's [`Part`] (feature `emulated-ripple`).
pub(crate) const EMULATED_RIPPLE: usize = built(cfg!(feature = "emulated-ripple"));

/// An optional part `T` with room for `N` (1: its feature is on; 0: off,
/// and the part is zero-sized and always absent).
#[derive(Clone, Copy, PartialEq, Eq)]
pub(crate) struct Part<T, const N: usize>([Option<T>; N]);

impl<T: Copy, const N: usize> Part<T, N> {
    /// No part.
    pub(crate) const fn none() -> Self {
        Self([None; N])
    }

    /// `part` (a `const fn`). A part asked for but left out at compile
    /// time is refused on `parameter`, naming `feature`.
    pub(crate) const fn new(
        part: Option<T>,
        parameter: &'static str,
        feature: &'static str,
    ) -> Result<Self, ConfigError> {
        match part {
            Some(_) if N == 0 => Err(ConfigError::new(parameter, ErrorKind::NotBuilt(feature))),
            Some(p) => Ok(Self::some(p)),
            None => Ok(Self::none()),
        }
    }

    /// `part` where its feature is on, nothing where it is off: for a
    /// builder method that only exists with the feature (`N` is 1 there),
    /// and for a part every configuration describes (the loss model: its
    /// settings checked either way, kept only with the feature).
    pub(crate) const fn some(part: T) -> Self {
        let mut slot = [None; N];
        if let Some(s) = slot.first_mut() {
            *s = Some(part);
        }
        Self(slot)
    }

    /// The part, if built and configured.
    #[inline(always)]
    pub(crate) const fn get(&self) -> Option<&T> {
        match self.0.first() {
            Some(p) => p.as_ref(),
            None => None,
        }
    }

    /// The part, mutable.
    #[inline(always)]
    pub(crate) fn get_mut(&mut self) -> Option<&mut T> {
        self.0.first_mut().and_then(Option::as_mut)
    }

    /// Whether the part is built and configured.
    #[inline(always)]
    pub(crate) const fn is_some(&self) -> bool {
        self.get().is_some()
    }
}

impl<T: fmt::Debug + Copy, const N: usize> fmt::Debug for Part<T, N> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.get().fmt(f)
    }
}

#[cfg(feature = "defmt")]
impl<T: defmt::Format + Copy, const N: usize> defmt::Format for Part<T, N> {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "{}", self.get())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_part_left_out_is_refused_on_its_parameter_and_takes_no_room() {
        let absent = Part::<u32, 0>::new(Some(7), "observer_bandwidth_hz", "observer");
        assert_eq!(
            absent,
            Err(ConfigError::new("observer_bandwidth_hz", ErrorKind::NotBuilt("observer")))
        );
        let e = absent.unwrap_err();
        assert_eq!(
            e.to_string(),
            "`observer_bandwidth_hz` asks for a part this build leaves out: turn on the crate feature `observer`"
        );
        let none = Part::<u32, 0>::new(None, "observer_bandwidth_hz", "observer").unwrap();
        assert_eq!(none.get(), None);
        assert_eq!(core::mem::size_of::<Part<[u32; 20], 0>>(), 0);
    }

    #[test]
    fn a_part_built_holds_what_it_was_given() {
        let mut p = Part::<u32, 1>::new(Some(7), "p", "f").unwrap();
        assert_eq!(p.get(), Some(&7));
        *p.get_mut().unwrap() += 1;
        assert_eq!(p.get(), Some(&8));
        assert!(!Part::<u32, 1>::none().is_some());
        assert_eq!(format!("{p:?}"), "Some(8)");
    }
}
