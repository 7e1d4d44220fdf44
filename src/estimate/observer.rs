//! Averaged-model Luenberger observer for the inductor current's DC level
//! (slow path).
//!
//! State `x = [i_L, v_out, i_out]` of the switching-cycle-averaged buck:
//!
//! ```text
//! L·di/dt   = u − R·i − v        u: average switch-node voltage
//! C·dv/dt   = i − i_out
//!   di_out/dt = 0                (the load, an unknown slow disturbance)
//! ```
//!
//! `u` comes from the firmware's own gate timing and the measured input:
//! `u = D·V_in − D_off·V_f + D_idle·v` (on, conducting-off and DCM-idle
//! fractions of the window). The model is discretized exactly for the
//! housekeeping period (`e^{A·h}` by its series), and the observer
//! `x̂⁺ = Φ·x̂ + Γ·u + K·(y − v̂)` places the poles of `Φ − K·H` where
//! [`ObserverConfig::poles`] says, by Ackermann's formula (Luenberger,
//! "Observing the state of a linear system", 1964; Ackermann's formula as
//! in Franklin, Powell & Workman, *Digital Control of Dynamic Systems*,
//! 3rd ed., ch. 8). With a measured output current the `i_out` state is
//! set from the measurement each step, which makes the DC level observable
//! outright instead of through the resistive drop `R`.
//!
//! Configuration runs in `f64`, in a `const fn` (at compile time in a
//! firmware's `const`). Each update is integer only: the state in `I16F16`
//! (amperes and volts), the coefficients with a common number of fraction
//! bits chosen at configuration so the largest fits 31 bits (at least 24
//! fraction bits for coefficients up to 64), products in 64 bits.

use crate::error::{attempt, finite, non_negative, positive, ConfigError, ErrorKind};
use crate::math::config::{exp, sqrt};
use crate::units::{clamp_i32, to_fixed_i32, Amps, Volts};
use fixed::types::I16F16;

/// Observer settings, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "std", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "std", serde(deny_unknown_fields))]
pub struct ObserverConfig {
    /// Inductance, H.
    pub l_h: f32,
    /// Output capacitance, F.
    pub c_f: f32,
    /// Total resistance in the averaged current path, Ω (`D·R_on +
    /// (1 − D)·R_d + DCR` at the expected duty).
    pub r_ohm: f32,
    /// Update period (the housekeeping period), s.
    pub period_s: f32,
    /// Desired discrete-time poles of the estimation error, each in (0, 1).
    pub poles: [f32; 3],
}

impl ObserverConfig {
    /// Poles at `e^{−2π·f·h}` for `f = bandwidth_hz·{1, 1.5, 2}`.
    pub const fn poles_for_bandwidth(bandwidth_hz: f32, period_s: f32) -> [f32; 3] {
        let w = -2.0 * core::f64::consts::PI * bandwidth_hz as f64 * period_s as f64;
        [exp(w) as f32, exp(1.5 * w) as f32, exp(2.0 * w) as f32]
    }
}

type M3 = [[f64; 3]; 3];

const fn mul(a: &M3, b: &M3) -> M3 {
    let mut out = [[0.0; 3]; 3];
    let mut r = 0;
    while r < 3 {
        let mut c = 0;
        while c < 3 {
            out[r][c] = a[r][0] * b[0][c] + a[r][1] * b[1][c] + a[r][2] * b[2][c];
            c += 1;
        }
        r += 1;
    }
    out
}

const IDENTITY: M3 = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];

const fn det(m: &M3) -> f64 {
    m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
}

const fn row_norm(row: &[f64; 3]) -> f64 {
    sqrt(row[0] * row[0] + row[1] * row[1] + row[2] * row[2])
}

/// The inverse, or `None` when `m` is singular relative to its scale (the
/// determinant below 10⁻⁹ of the product of the row norms).
const fn inverse(m: &M3) -> Option<M3> {
    let d = det(m);
    let scale = row_norm(&m[0]) * row_norm(&m[1]) * row_norm(&m[2]);
    if !d.is_finite() || !scale.is_finite() || d.abs() <= 1e-9 * scale {
        return None;
    }
    let adj = [
        [cofactor(m, [1, 2], [1, 2]), -cofactor(m, [0, 2], [1, 2]), cofactor(m, [0, 1], [1, 2])],
        [-cofactor(m, [1, 2], [0, 2]), cofactor(m, [0, 2], [0, 2]), -cofactor(m, [0, 1], [0, 2])],
        [cofactor(m, [1, 2], [0, 1]), -cofactor(m, [0, 2], [0, 1]), cofactor(m, [0, 1], [0, 1])],
    ];
    let mut out = [[0.0; 3]; 3];
    let mut r = 0;
    while r < 3 {
        let mut col = 0;
        while col < 3 {
            out[r][col] = adj[r][col] / d;
            col += 1;
        }
        r += 1;
    }
    Some(out)
}

/// The 2×2 minor of rows `r` and columns `c`.
const fn cofactor(m: &M3, r: [usize; 2], c: [usize; 2]) -> f64 {
    m[r[0]][c[0]] * m[r[1]][c[1]] - m[r[0]][c[1]] * m[r[1]][c[0]]
}

/// `(e^{A·h}, ∫₀ʰ e^{A·τ} dτ)` by their power series.
const fn discretize(a: &M3, h: f64) -> (M3, M3) {
    let mut ah = [[0.0; 3]; 3];
    let mut integral = [[0.0; 3]; 3];
    let mut r = 0;
    while r < 3 {
        let mut c = 0;
        while c < 3 {
            ah[r][c] = a[r][c] * h;
            c += 1;
        }
        integral[r][r] = h;
        r += 1;
    }
    let mut phi = IDENTITY;
    let mut term = IDENTITY;
    let mut k = 1;
    while k < 40 {
        term = mul(&term, &ah);
        let kf = k as f64;
        let mut r = 0;
        while r < 3 {
            let mut c = 0;
            while c < 3 {
                term[r][c] /= kf;
                phi[r][c] += term[r][c];
                integral[r][c] += term[r][c] * h / (kf + 1.0);
                c += 1;
            }
            r += 1;
        }
        k += 1;
    }
    (phi, integral)
}

/// Ackermann's formula (dual form) for the output `H = [0 1 0]`:
/// `K = p(Φ)·O⁻¹·e₃` with `O = [H; HΦ; HΦ²]`.
const fn ackermann(phi: &M3, poles: [f64; 3]) -> Option<[f64; 3]> {
    let phi2 = mul(phi, phi);
    let o: M3 = [[0.0, 1.0, 0.0], phi[1], phi2[1]];
    let Some(o_inv) = inverse(&o) else { return None };
    let [p1, p2, p3] = poles;
    let (a2, a1, a0) = (-(p1 + p2 + p3), p1 * p2 + p1 * p3 + p2 * p3, -p1 * p2 * p3);
    let phi3 = mul(&phi2, phi);
    let mut gain = [0.0; 3];
    let mut i = 0;
    while i < 3 {
        let mut k = 0;
        while k < 3 {
            let poly = phi3[i][k] + a2 * phi2[i][k] + a1 * phi[i][k] + a0 * IDENTITY[i][k];
            gain[i] += poly * o_inv[k][2];
            k += 1;
        }
        if !gain[i].is_finite() {
            return None;
        }
        i += 1;
    }
    Some(gain)
}

/// The fraction bits that fit the largest coefficient in 31 bits (at most
/// 30, at least 0).
const fn fraction_bits(largest: f64) -> u32 {
    let mut bits = 30;
    while bits > 0 && largest * (1u64 << bits) as f64 >= 2_147_483_647.0 {
        bits -= 1;
    }
    bits
}

/// Three coefficients with `frac` fraction bits.
const fn quantize(v: [f64; 3], frac: u32) -> [i32; 3] {
    [to_fixed_i32(v[0], frac), to_fixed_i32(v[1], frac), to_fixed_i32(v[2], frac)]
}

/// The observer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Observer {
    // Φ, Γ and K with `frac` fraction bits each.
    phi: [[i32; 3]; 3],
    gamma: [i32; 3],
    gain: [i32; 3],
    frac: u32,
    // State [i_L, v_out, i_out], I16F16 bits.
    x: [i32; 3],
}

impl Observer {
    /// Build the observer (a `const fn`).
    ///
    /// Errors: `l_h`, `c_f` or `period_s` not positive; `r_ohm` negative;
    /// a value not finite; a pole outside (0, 1) (parameter `poles`,
    /// [`ErrorKind::OutOfRange`]); `r_ohm` zero or the model otherwise not
    /// observable ([`ErrorKind::NotObservable`], on `r_ohm`).
    pub const fn new(cfg: &ObserverConfig) -> Result<Self, ConfigError> {
        let l = attempt!(positive("l_h", cfg.l_h as f64));
        let c = attempt!(positive("c_f", cfg.c_f as f64));
        let r = attempt!(non_negative("r_ohm", cfg.r_ohm as f64));
        let h = attempt!(positive("period_s", cfg.period_s as f64));
        let mut poles = [0.0; 3];
        let mut k = 0;
        while k < 3 {
            let p = attempt!(finite("poles", cfg.poles[k] as f64));
            if !(p > 0.0 && p < 1.0) {
                return Err(ConfigError::new(
                    "poles",
                    ErrorKind::OutOfRange { min: 0.0, max: 1.0 },
                ));
            }
            poles[k] = p;
            k += 1;
        }
        let a: M3 = [[-r / l, -1.0 / l, 0.0], [1.0 / c, 0.0, -1.0 / c], [0.0; 3]];
        let (phi, integral) = discretize(&a, h);
        // Γ = ∫e^{Aτ}dτ · B with B = [1/L, 0, 0]ᵀ.
        let gamma = [integral[0][0] / l, integral[1][0] / l, integral[2][0] / l];
        let Some(gain) = ackermann(&phi, poles) else {
            return Err(ConfigError::new("r_ohm", ErrorKind::NotObservable));
        };
        let mut largest = 0.0f64;
        let mut i = 0;
        while i < 3 {
            largest = largest.max(gamma[i].abs()).max(gain[i].abs());
            let mut j = 0;
            while j < 3 {
                largest = largest.max(phi[i][j].abs());
                j += 1;
            }
            i += 1;
        }
        let frac = fraction_bits(largest);
        Ok(Self {
            phi: [quantize(phi[0], frac), quantize(phi[1], frac), quantize(phi[2], frac)],
            gamma: quantize(gamma, frac),
            gain: quantize(gain, frac),
            frac,
            x: [0; 3],
        })
    }

    /// Start from a known state.
    pub fn reset(&mut self, i_l: Amps, v_out: Volts, i_out: Amps) {
        self.x = [i_l.to_bits(), v_out.to_bits(), i_out.to_bits()];
    }

    /// One step: `u` the window's average switch-node voltage, `v_out` its
    /// average measured output, `i_out` a measured output current if the
    /// board has one. Returns the inductor-current estimate.
    pub fn update(&mut self, u: Volts, v_out: Volts, i_out: Option<Amps>) -> Amps {
        if let Some(i) = i_out {
            self.x[2] = i.to_bits();
        }
        let innovation = v_out.to_bits().saturating_sub(self.x[1]);
        let x = self.x;
        let inputs = [u.to_bits(), innovation];
        let rows = self.phi.iter().zip(self.gamma.iter().zip(&self.gain));
        for (next, (phi, (gamma, gain))) in self.x.iter_mut().zip(rows) {
            let sum = row_sum(phi, &x, [*gamma, *gain], inputs);
            *next = clamp_i32(sum >> self.frac);
        }
        Amps::from_bits(self.x[0])
    }

    /// Estimated inductor current.
    pub fn current(&self) -> Amps {
        Amps::from_bits(self.x[0])
    }

    /// Estimated output voltage.
    pub fn voltage(&self) -> Volts {
        Volts::from_bits(self.x[1])
    }

    /// Estimated load current.
    pub fn load(&self) -> Amps {
        Amps::from_bits(self.x[2])
    }

    /// The observer gain `K` (host checks).
    pub fn gain(&self) -> [f64; 3] {
        self.gain.map(|g| self.coefficient(g))
    }

    /// The error dynamics `Φ − K·H` (host checks of the pole placement).
    pub fn error_dynamics(&self) -> [[f64; 3]; 3] {
        core::array::from_fn(|r| {
            core::array::from_fn(|c| {
                let k = if c == 1 { self.gain[r] } else { 0 };
                self.coefficient(self.phi[r][c]) - self.coefficient(k)
            })
        })
    }

    fn coefficient(&self, bits: i32) -> f64 {
        f64::from(bits) / (1u64 << self.frac) as f64
    }
}

/// `I16F16` is the state's format.
/// One row of the update, `Φᵣ·x + Γᵣ·u + Kᵣ·(y − v̂)`, each product 64-bit
/// and the sum saturating, in that order. Out of line: the three rows share
/// one copy (64-bit arithmetic is long on a Cortex-M0).
#[inline(never)]
fn row_sum(phi: &[i32; 3], x: &[i32; 3], gamma_gain: [i32; 2], inputs: [i32; 2]) -> i64 {
    let term = |c: i32, v: i32| i64::from(c) * i64::from(v);
    term(phi[0], x[0])
        .saturating_add(term(phi[1], x[1]))
        .saturating_add(term(phi[2], x[2]))
        .saturating_add(term(gamma_gain[0], inputs[0]))
        .saturating_add(term(gamma_gain[1], inputs[1]))
}

const _: () = assert!(I16F16::FRAC_NBITS == 16);
