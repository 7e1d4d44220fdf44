//! What `ripplectl_init` says about a refused configuration: a kind, the
//! parameter's name, and the range or the other parameter where the kind
//! has one.

use core::ffi::c_char;
use ripplectl::{ConfigError, ErrorKind};

/// Bytes of a name in `ripplectl_config_error`, the terminating NUL included
/// (the crate's longest parameter name is 33 characters).
pub const RIPPLECTL_NAME_LEN: usize = 48;

/// Why `ripplectl_init` refused (one byte; `RIPPLECTL_ERROR_OK` when it
/// accepted).
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Error {
    /// Accepted: the state is ready.
    Ok = 0,
    /// NaN or infinite.
    NotFinite = 1,
    /// Must be strictly positive.
    NotPositive = 2,
    /// Must not be negative.
    Negative = 3,
    /// Must lie within `[min, max]` of the error record (in the parameter's
    /// own unit; for a `*_kind`, `sensing` or `light_load` code: the codes
    /// this header defines).
    OutOfRange = 4,
    /// Must be below the parameter named in `other`.
    NotBelow = 5,
    /// Must be above the parameter named in `other`.
    NotAbove = 6,
    /// Finer than the hardware resolves: rounds to zero timer ticks, or is
    /// narrower than one ADC code.
    BelowResolution = 7,
    /// Needs more than 2³¹ − 1 timer ticks.
    TooLong = 8,
    /// The averaged-model observer would not see the inductor current
    /// through the output voltage (its resistance is zero).
    NotObservable = 9,
    /// The output's own ripple is too small for a plain valley on-time loop
    /// (`ESR·C` not above half the on-time): configure emulated ripple.
    RippleTooSmall = 10,
    /// A pointer argument or a board callback is NULL (`parameter` names it).
    Missing = 11,
    /// The board's `set_gate` failed to drive the gate off at start.
    PinFailed = 12,
    /// A refusal this header does not list (a newer crate); `parameter`
    /// names the value.
    Other = 13,
}

/// A refused configuration value, as `ripplectl_init` reports it.
#[repr(C)]
#[derive(Clone, Copy, Debug)]
pub struct ConfigErrorInfo {
    /// What is wrong (`RIPPLECTL_ERROR_OK`: nothing).
    pub kind: Error,
    /// The refused parameter, NUL-terminated: the field's name in
    /// `ripplectl_config` (prefixed by its member where two members share
    /// field names, as in `input_adc.adc_bits`), or the crate's name for a
    /// value derived from several fields (`c_f`: the observer's
    /// capacitance, `1/f_min_hz - min_on_s`, ...). Empty when accepted.
    pub parameter: [c_char; RIPPLECTL_NAME_LEN],
    /// For `NOT_BELOW` and `NOT_ABOVE`: the parameter it must be below or
    /// above, NUL-terminated; empty otherwise.
    pub other: [c_char; RIPPLECTL_NAME_LEN],
    /// For `OUT_OF_RANGE`: the smallest value accepted; 0 otherwise.
    pub min: f32,
    /// For `OUT_OF_RANGE`: the largest value accepted; 0 otherwise.
    pub max: f32,
}

impl ConfigErrorInfo {
    /// The record of `kind` on `parameter` (no range, no other name).
    pub fn new(kind: Error, parameter: &str) -> Self {
        let mut info = Self {
            kind,
            parameter: [0; RIPPLECTL_NAME_LEN],
            other: [0; RIPPLECTL_NAME_LEN],
            min: 0.0,
            max: 0.0,
        };
        copy_name(&mut info.parameter, parameter);
        info
    }

    /// The record of the crate's refusal.
    pub fn from_config(e: &ConfigError) -> Self {
        let mut info = Self::new(kind_of(&e.kind), e.parameter);
        match e.kind {
            ErrorKind::OutOfRange { min, max } => (info.min, info.max) = (min, max),
            ErrorKind::NotBelow(other) | ErrorKind::NotAbove(other) => {
                copy_name(&mut info.other, other)
            }
            _ => {}
        }
        info
    }
}

/// The C kind of the crate's refusal.
fn kind_of(kind: &ErrorKind) -> Error {
    match kind {
        ErrorKind::NotFinite => Error::NotFinite,
        ErrorKind::NotPositive => Error::NotPositive,
        ErrorKind::Negative => Error::Negative,
        ErrorKind::OutOfRange { .. } => Error::OutOfRange,
        ErrorKind::NotBelow(_) => Error::NotBelow,
        ErrorKind::NotAbove(_) => Error::NotAbove,
        ErrorKind::BelowResolution => Error::BelowResolution,
        ErrorKind::TooLong => Error::TooLong,
        ErrorKind::NotObservable => Error::NotObservable,
        ErrorKind::RippleTooSmall => Error::RippleTooSmall,
        _ => Error::Other,
    }
}

/// `name` into `buf`, cut to leave room for the terminating NUL.
fn copy_name(buf: &mut [c_char; RIPPLECTL_NAME_LEN], name: &str) {
    for (dst, &src) in buf.iter_mut().zip(name.as_bytes().iter().take(RIPPLECTL_NAME_LEN - 1)) {
        *dst = src as c_char;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn text(buf: &[c_char; RIPPLECTL_NAME_LEN]) -> &str {
        let bytes: &[u8] = unsafe { &*(buf as *const [c_char] as *const [u8]) };
        let end = bytes.iter().position(|&b| b == 0).expect("NUL-terminated");
        core::str::from_utf8(&bytes[..end]).unwrap()
    }

    #[test]
    fn names_the_parameter_and_its_partner() {
        let e = ConfigError::new("f_min_hz", ErrorKind::NotBelow("f_max_hz"));
        let info = ConfigErrorInfo::from_config(&e);
        assert_eq!(info.kind, Error::NotBelow);
        assert_eq!(text(&info.parameter), "f_min_hz");
        assert_eq!(text(&info.other), "f_max_hz");
    }

    #[test]
    fn carries_the_range() {
        let e = ConfigError::new("adc_bits", ErrorKind::OutOfRange { min: 1.0, max: 16.0 });
        let info = ConfigErrorInfo::from_config(&e);
        assert_eq!((info.kind, info.min, info.max), (Error::OutOfRange, 1.0, 16.0));
        assert_eq!(text(&info.other), "");
    }

    #[test]
    fn a_long_name_is_cut_and_terminated() {
        let long = "x".repeat(2 * RIPPLECTL_NAME_LEN);
        let info = ConfigErrorInfo::new(Error::Missing, &long);
        assert_eq!(text(&info.parameter).len(), RIPPLECTL_NAME_LEN - 1);
    }
}
