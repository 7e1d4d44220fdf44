//! Arithmetic the crate needs beyond `core`, in two kinds:
//!
//! | module | when it runs | what |
//! |---|---|---|
//! | [`config`] | configuration: at compile time in a firmware's `const`, or at start-up on a host | `const fn` `exp`, `ln`, `sqrt`, `powf` on `f64` |
//! | [`log2`] | the slow path, on the target | fixed-point `log2` and `exp2`, integer only |
//!
//! Neither allocates, loops without bound, or panics.

pub mod config;
pub mod log2;
