//! # ripplectl
//!
//! Ripple-based control of step-down (buck) converters from a
//! microcontroller: fixed-point laws that run in an interrupt on a Cortex-M0+
//! without an FPU, a guard that keeps the switching frequency inside a chosen
//! window, and (with the default `std` feature) a host simulator that runs the
//! same code against a switched converter model.
//!
//! ## Where things live
//!
//! | module | what |
//! |---|---|
//! | [`scale`] | volts ⇄ ADC codes, seconds ⇄ timer ticks, at configuration |
//! | [`tick`] | wrapping timer readings |
//! | [`law`] | the [`Law`] trait and the switching laws |
//! | [`guard`] | the frequency-window guard around any law |
//! | [`reference`](mod@reference) | `f64` models in SI units: the oracle for tests |
//! | [`estimate`] | inductor current (fast path), observer and efficiency (slow path) |
//! | [`supervisor`] | start-up, UVLO, soft-start, OVP, OCP, hiccup, sensor faults, fault log |
//! | [`stack`] | the whole firmware: supervisor, guarded law, estimator, slow path, interrupt entry points |
//! | [`drive`] | commands to hardware: gate pin (embedded-hal) and one-shot timer |
//! | [`error`] | configuration errors: the parameter and what is wrong |
//! | [`units`] | the slow path's fixed-point quantities |
//! | [`math`] | `const fn` functions for configuration; fixed-point `log₂`/`2^x` |
//! | [`design`] | closed-form predictions: frequency, ripple, CCM/DCM, peak current; with `std`, a first configuration from a board's facts |
//! | `sim` | (feature `std`) switched plant, MCU model, scenarios, reports, plots |
//!
//! ## Fast path and slow path
//!
//! Methods marked *fast path* run in the switching interrupt: integer
//! arithmetic only, no division, no float, no panic, no loop. The *slow
//! path* (housekeeping, 1–20 kHz) may divide but stays integer: no float at
//! run time anywhere in the [`stack`]. *Configuration* (SI units in, codes,
//! ticks and fixed-point coefficients out) is `const fn`: a firmware
//! evaluates it at compile time in `const` items, so its image carries no
//! floating-point code; the host runs the same functions at start-up.
//! Configuration is checked once; a refused value gives a [`ConfigError`]
//! naming the parameter, never a panic or a silent clamp.
//!
//! ## Optional parts (cargo features)
//!
//! Parts a firmware may do without are cargo features, all on by default
//! (`std` implies them) and all off under `default-features = false`, so
//! that a firmware names what it links: `all-parts`, or any of
//! `loss-model` (the efficiency estimate), `observer`, `dc-correction`,
//! `light-load` (smaller pulses at light load), `feed-forward` and
//! `frequency-lock` (the on-time law's feed-forward and trim; the lock is
//! also the hysteretic law's), `dither` and `emulated-ripple`. A part left
//! out takes no flash and no RAM; a configuration that asks for it is
//! refused on its parameter ([`ErrorKind::NotBuilt`], naming the feature),
//! a build error in a `const` item; the laws' builder methods of a part
//! left out (`with_lock`, `with_feed_forward`, ...) do not exist. The
//! fast path, the guard, the supervisor and the current estimator are
//! always built.
//!
//! ```toml
//! # A hysteretic firmware on a small Cortex-M0+: no optional part.
//! ripplectl = { version = "0.1", default-features = false }
//! ```
//!
//! ## Safety
//!
//! Firmware control of a power stage can burn, shock and destroy loads. Power
//! a new board first from a current-limited bench supply, keep a hardware
//! current limit that does not depend on this firmware, and defer to local
//! codes and licensed practice for anything mains-connected or
//! safety-relevant.
#![cfg_attr(not(feature = "std"), no_std)]
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod design;
pub mod drive;
pub mod error;
pub mod estimate;
pub mod guard;
pub mod law;
pub mod math;
mod part;
pub mod reference;
pub mod scale;
pub mod stack;
pub mod supervisor;
pub mod tick;
pub mod units;

#[cfg(feature = "std")]
pub mod sim;

pub use error::{unwrap_config, ConfigError, ErrorKind};
pub use guard::{ClampCounts, FrequencyGuard, LightLoad, Window, WindowConfig};
pub use law::{Command, Gate, Law};
pub use scale::{AdcChannel, Quantized, TimerClock};
pub use tick::Instant;

/// The README's code blocks, compiled and run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;
