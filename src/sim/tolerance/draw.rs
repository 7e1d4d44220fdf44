//! One run's draw: a value for each varied parameter, taken at random from
//! a seed derived from (study seed, run index) or at a corner, and the
//! scenario it makes.
//!
//! Each run's generator is seeded from its own index, never from the order
//! threads take runs in, so a study gives the same runs on any number of
//! threads.

use super::params::{Spreads, PARAMS};
use crate::sim::Scenario;
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use serde::Serialize;

/// A parameter's value in one run.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Setting {
    /// Key in `[tolerance.spread]`.
    pub name: &'static str,
    /// Nominal value (after the DC-bias loss, for `c_f`).
    pub nominal: f64,
    /// Drawn value.
    pub value: f64,
}

/// SplitMix64's output function (Steele, Lea & Flood, "Fast splittable
/// pseudorandom number generators", OOPSLA 2014): a bijective mix of 64
/// bits.
fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// The generator of run `index` of a study seeded with `seed`.
pub fn run_rng(seed: u64, index: u64) -> Xoshiro256PlusPlus {
    Xoshiro256PlusPlus::seed_from_u64(splitmix64(splitmix64(seed) ^ index))
}

/// The parameters that apply to `base` and their limits, in draw order.
fn varied<'a>(
    spreads: &'a Spreads,
    base: &'a Scenario,
) -> impl Iterator<Item = (usize, f64, f64)> + 'a {
    PARAMS.iter().enumerate().filter_map(move |(k, p)| {
        let spread = (p.spread)(spreads);
        let nominal = (p.nominal)(base)? * (1.0 - spread.dc_bias_loss.unwrap_or(0.0));
        Some((k, nominal, spread.limit(nominal)))
    })
}

/// A random draw for run `index`.
pub fn random(spreads: &Spreads, base: &Scenario, seed: u64, index: u64) -> Vec<Setting> {
    let mut rng = run_rng(seed, index);
    varied(spreads, base)
        .map(|(k, nominal, limit)| {
            let d = (PARAMS[k].spread)(spreads).deviation(limit, &mut rng);
            Setting { name: PARAMS[k].name, nominal, value: nominal + d }
        })
        .collect()
}

/// How many parameters have a non-zero limit: `2^n` corners.
pub fn corner_dimensions(spreads: &Spreads, base: &Scenario) -> u32 {
    varied(spreads, base).filter(|&(_, _, limit)| limit > 0.0).count() as u32
}

/// Corner `index`: bit `j` of the index puts the `j`-th parameter with a
/// non-zero limit at nominal + limit (set) or nominal − limit (clear).
pub fn corner(spreads: &Spreads, base: &Scenario, index: u64) -> Vec<Setting> {
    let mut bit = 0;
    varied(spreads, base)
        .map(|(k, nominal, limit)| {
            let mut value = nominal;
            if limit > 0.0 {
                value += if index >> bit & 1 == 1 { limit } else { -limit };
                bit += 1;
            }
            Setting { name: PARAMS[k].name, nominal, value }
        })
        .collect()
}

/// The scenario of a draw: `base` with each setting put in, the firmware
/// still configured with the nominal stage (the capacitor's settings keep
/// it on theirs, see [`super::params`]), and no `[tolerance]` table.
pub fn apply(base: &Scenario, settings: &[Setting]) -> Scenario {
    let mut s = base.clone();
    s.firmware.model = Some(base.firmware_model());
    s.tolerance = None;
    for setting in settings {
        if let Some(p) = PARAMS.iter().find(|p| p.name == setting.name) {
            (p.set)(&mut s, setting.nominal, setting.value);
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_cover_both_ends_of_each_limit() {
        let base = Scenario::default_demo();
        let spreads = Spreads::default();
        let n = corner_dimensions(&spreads, &base);
        // Non-synchronous demo: no low-side switch; vin and load not varied.
        assert_eq!(n, 10);
        let low = corner(&spreads, &base, 0);
        let high = corner(&spreads, &base, (1 << n) - 1);
        let l = |c: &[Setting]| c.iter().find(|s| s.name == "l_h").unwrap().value;
        assert!((l(&low) - 0.8 * 47e-6).abs() < 1e-15 && (l(&high) - 1.2 * 47e-6).abs() < 1e-15);
    }

    #[test]
    fn seeds_differ_by_run_and_repeat_by_index() {
        let (base, spreads) = (Scenario::default_demo(), Spreads::default());
        assert_eq!(random(&spreads, &base, 7, 3), random(&spreads, &base, 7, 3));
        assert_ne!(random(&spreads, &base, 7, 3), random(&spreads, &base, 7, 4));
        assert_ne!(random(&spreads, &base, 7, 3), random(&spreads, &base, 8, 3));
    }

    /// A drawn capacitor is not what the firmware was built with: its
    /// charge current, light-load sizing, loss model and ripple check keep
    /// the nominal C and ESR while the plant's vary.
    #[test]
    fn the_firmware_keeps_the_nominal_capacitor() {
        let base = Scenario::default_demo();
        let corner = corner(&Spreads::default(), &base, 0);
        let drawn = apply(&base, &corner);
        assert!((drawn.plant.c_f - 0.8 * base.plant.c_f).abs() < 1e-12 * base.plant.c_f);
        assert!((drawn.plant.esr_ohm - 0.7 * base.plant.esr_ohm).abs() < 1e-12);
        let config = crate::sim::build::stack_config(&drawn).expect("the demo configures");
        assert_eq!(config.slow.output_capacitance_f, base.plant.c_f as f32);
        assert_eq!(config.slow.losses.esr_ohm, base.plant.esr_ohm as f32);
    }

    /// A capacitor that loses capacitance under DC bias: the firmware is
    /// configured with the nominal value at the output voltage, the plant
    /// draws around it.
    #[test]
    fn the_firmware_takes_the_capacitance_left_under_bias() {
        let base = Scenario::default_demo();
        let mut spreads = Spreads::default();
        spreads.c_f.dc_bias_loss = Some(0.45);
        let drawn = apply(&base, &corner(&spreads, &base, 0));
        let left = 0.55 * base.plant.c_f;
        assert!((drawn.firmware_c_f() - left).abs() < 1e-12 * left);
        assert!((drawn.plant.c_f - 0.8 * left).abs() < 1e-12 * left);
    }
}
