//! Design: closed-form predictions.
//!
//! | module | what |
//! |---|---|
//! | [`closed_form`] | CCM/DCM relations, ripple, the laws' frequencies (re-exported here) |
//! | [`delayed`] | the hysteretic loop's steady cycle with a loop delay and capacitor ripple |

pub mod closed_form;
pub mod delayed;

pub use closed_form::*;
pub use delayed::{ccm_output_ripple, hysteretic_cycle_ccm, HystereticCycle, NoCycle};

