//! Configuration errors: which parameter, and what is wrong with it.
//!
//! Every value handed to a constructor is checked once, at configuration
//! time. An impossible or inconsistent value returns a [`ConfigError`] that
//! names the parameter (as the configuration struct spells its field, e.g.
//! `band_v`, `f_min_hz`) and one [`ErrorKind`]; nothing is clamped silently
//! and nothing panics.
//!
//! Constructors are `const fn`, so a firmware can hold its configuration in
//! a `const` evaluated by the compiler. There, [`unwrap_config`] turns a
//! refusal into a build error whose message names the parameter:
//!
//! ```
//! use ripplectl::{unwrap_config, TimerClock};
//! const CLOCK: TimerClock = unwrap_config(TimerClock::new(64_000_000));
//! # assert_eq!(CLOCK.hz(), 64_000_000);
//! ```
//!
//! ```compile_fail
//! use ripplectl::{unwrap_config, TimerClock};
//! // error[E0080]: evaluation panicked: clock_hz: must be positive
//! const CLOCK: TimerClock = unwrap_config(TimerClock::new(0));
//! ```

use core::fmt;

/// What is wrong with a refused value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ErrorKind {
    /// NaN or infinite.
    NotFinite,
    /// Must be strictly positive.
    NotPositive,
    /// Must not be negative.
    Negative,
    /// Must lie within `[min, max]` (in the parameter's own unit).
    OutOfRange {
        /// Smallest value accepted.
        min: f32,
        /// Largest value accepted.
        max: f32,
    },
    /// Must be below the parameter named here (an inverted pair).
    NotBelow(&'static str),
    /// Must be above the parameter named here (an inverted pair).
    NotAbove(&'static str),
    /// Finer than the hardware resolves: rounds to zero timer ticks, or is
    /// narrower than one ADC code.
    BelowResolution,
    /// Needs more than 2³¹ − 1 timer ticks, beyond what wrapping tick
    /// arithmetic can compare.
    TooLong,
    /// The averaged model would not see the inductor current through the
    /// output voltage (the observer's resistance is zero).
    NotObservable,
    /// The output's own ripple is too small for a plain valley on-time loop
    /// (`ESR·C` not above half the on-time): configure emulated ripple.
    RippleTooSmall,
    /// Asks for an optional part that this build leaves out: turn on the
    /// crate feature named here (see the crate docs, *Optional parts*).
    NotBuilt(&'static str),
}

impl ErrorKind {
    /// What is wrong, as a phrase that follows the parameter's name.
    pub const fn phrase(self) -> &'static str {
        match self {
            Self::NotFinite => "must be a finite number",
            Self::NotPositive => "must be positive",
            Self::Negative => "must not be negative",
            Self::OutOfRange { .. } => "is out of range",
            Self::NotBelow(_) => "must be below",
            Self::NotAbove(_) => "must be above",
            Self::BelowResolution => "is finer than one timer tick or ADC code",
            Self::TooLong => "exceeds 2^31 - 1 timer ticks",
            Self::NotObservable => {
                "leaves the inductor current unobservable from the output voltage"
            }
            Self::RippleTooSmall => "gives too little ripple for a plain valley loop (ESR·C below half the on-time): configure emulated ripple",
            Self::NotBuilt(_) => "asks for a part this build leaves out: turn on the crate feature",
        }
    }
}

/// A refused configuration value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub struct ConfigError {
    /// The parameter, as its configuration struct spells the field.
    pub parameter: &'static str,
    /// What is wrong with it.
    pub kind: ErrorKind,
}

impl ConfigError {
    /// `parameter` refused for `kind`.
    pub const fn new(parameter: &'static str, kind: ErrorKind) -> Self {
        Self { parameter, kind }
    }

    /// The same refusal under another parameter name (a builder that
    /// derived the value from its own parameter).
    pub const fn renamed(self, parameter: &'static str) -> Self {
        Self { parameter, kind: self.kind }
    }

    /// Stop a compile-time evaluation with a message that names the
    /// parameter and the kind (`band_v: must be positive`).
    pub const fn fail(self) -> ! {
        let mut buf = [b' '; 192];
        let mut n = 0;
        let other = match self.kind {
            ErrorKind::NotBelow(o) | ErrorKind::NotAbove(o) | ErrorKind::NotBuilt(o) => o,
            _ => "",
        };
        let parts = [self.parameter, ": ", self.kind.phrase(), " ", other];
        let mut i = 0;
        while i < parts.len() {
            let bytes = parts[i].as_bytes();
            let mut j = 0;
            while j < bytes.len() && n < buf.len() {
                buf[n] = bytes[j];
                n += 1;
                j += 1;
            }
            i += 1;
        }
        let (text, _) = buf.split_at(n);
        match core::str::from_utf8(text) {
            Ok(message) => panic!("{}", message),
            Err(_) => panic!("{}", self.parameter),
        }
    }
}

impl fmt::Display for ErrorKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.phrase())?;
        match *self {
            Self::NotBelow(other) | Self::NotAbove(other) | Self::NotBuilt(other) => {
                write!(f, " `{other}`")
            }
            Self::OutOfRange { min, max } => write!(f, " [{min}, {max}]"),
            _ => Ok(()),
        }
    }
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "`{}` {}", self.parameter, self.kind)
    }
}

impl core::error::Error for ConfigError {}

/// The value of a configuration result, for `const` items: a refusal stops
/// the build with a message naming the parameter ([`ConfigError::fail`]).
/// At run time it panics the same way; use the `Result` there instead.
pub const fn unwrap_config<T: Copy>(result: Result<T, ConfigError>) -> T {
    match result {
        Ok(value) => value,
        Err(e) => e.fail(),
    }
}

/// `?` for `const fn`: return the error, or give the value.
macro_rules! attempt {
    ($e:expr) => {
        match $e {
            Ok(v) => v,
            Err(e) => return Err(e),
        }
    };
}
pub(crate) use attempt;

/// Refuse NaN and infinities, under the parameter's name.
pub(crate) const fn finite(parameter: &'static str, x: f64) -> Result<f64, ConfigError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(ConfigError::new(parameter, ErrorKind::NotFinite))
    }
}

/// Require a finite `x > 0`.
pub(crate) const fn positive(parameter: &'static str, x: f64) -> Result<f64, ConfigError> {
    let x = attempt!(finite(parameter, x));
    if x > 0.0 {
        Ok(x)
    } else {
        Err(ConfigError::new(parameter, ErrorKind::NotPositive))
    }
}

/// Require a finite `x ≥ 0`.
pub(crate) const fn non_negative(parameter: &'static str, x: f64) -> Result<f64, ConfigError> {
    let x = attempt!(finite(parameter, x));
    if x >= 0.0 {
        Ok(x)
    } else {
        Err(ConfigError::new(parameter, ErrorKind::Negative))
    }
}

/// Require a finite `x` within `[min, max]`.
pub(crate) const fn within(
    parameter: &'static str,
    x: f64,
    min: f64,
    max: f64,
) -> Result<f64, ConfigError> {
    let x = attempt!(finite(parameter, x));
    if x >= min && x <= max {
        Ok(x)
    } else {
        Err(ConfigError::new(parameter, ErrorKind::OutOfRange { min: min as f32, max: max as f32 }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_names_the_parameter() {
        let e = ConfigError::new("f_min_hz", ErrorKind::NotBelow("f_max_hz"));
        assert_eq!(e.to_string(), "`f_min_hz` must be below `f_max_hz`");
        let e = ConfigError::new("adc_bits", ErrorKind::OutOfRange { min: 1.0, max: 16.0 });
        assert_eq!(e.to_string(), "`adc_bits` is out of range [1, 16]");
    }
}
