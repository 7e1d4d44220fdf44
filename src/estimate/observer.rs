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
//! Configuration runs in `f64` (once); each update is a few dozen `f32`
//! multiply-adds.

use crate::error::{finite, ConfigError};

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
    pub fn poles_for_bandwidth(bandwidth_hz: f32, period_s: f32) -> [f32; 3] {
        let p = |k: f32| libm::expf(-2.0 * core::f32::consts::PI * bandwidth_hz * k * period_s);
        [p(1.0), p(1.5), p(2.0)]
    }
}

type M3 = [[f64; 3]; 3];

fn mul(a: &M3, b: &M3) -> M3 {
    core::array::from_fn(|r| core::array::from_fn(|c| (0..3).map(|k| a[r][k] * b[k][c]).sum()))
}

fn identity() -> M3 {
    core::array::from_fn(|r| core::array::from_fn(|c| if r == c { 1.0 } else { 0.0 }))
}

fn det(m: &M3) -> f64 {
    m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
}

/// The inverse, or `None` when `m` is singular relative to its scale (the
/// determinant below 10⁻⁹ of the product of the row norms).
fn inverse(m: &M3) -> Option<M3> {
    let d = det(m);
    let scale: f64 = m.iter().map(|r| libm::sqrt(r.iter().map(|x| x * x).sum::<f64>())).product();
    if !d.is_finite() || !scale.is_finite() || d.abs() <= 1e-9 * scale {
        return None;
    }
    let c =
        |r0: usize, r1: usize, c0: usize, c1: usize| m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0];
    let adj = [
        [c(1, 2, 1, 2), -c(0, 2, 1, 2), c(0, 1, 1, 2)],
        [-c(1, 2, 0, 2), c(0, 2, 0, 2), -c(0, 1, 0, 2)],
        [c(1, 2, 0, 1), -c(0, 2, 0, 1), c(0, 1, 0, 1)],
    ];
    Some(core::array::from_fn(|r| core::array::from_fn(|col| adj[r][col] / d)))
}

/// `(e^{A·h}, ∫₀ʰ e^{A·τ} dτ)` by their power series.
fn discretize(a: &M3, h: f64) -> (M3, M3) {
    let ah: M3 = core::array::from_fn(|r| core::array::from_fn(|c| a[r][c] * h));
    let mut phi = identity();
    let mut integral: M3 =
        core::array::from_fn(|r| core::array::from_fn(|c| if r == c { h } else { 0.0 }));
    let mut term = identity();
    for k in 1..40 {
        term = mul(&term, &ah);
        let kf = f64::from(k);
        for r in 0..3 {
            for c in 0..3 {
                term[r][c] /= kf;
                phi[r][c] += term[r][c];
                integral[r][c] += term[r][c] * h / (kf + 1.0);
            }
        }
    }
    (phi, integral)
}

/// The observer.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Observer {
    phi: [[f32; 3]; 3],
    gamma: [f32; 3],
    gain: [f32; 3],
    x: [f32; 3],
}

impl Observer {
    /// Build the observer.
    ///
    /// Errors: [`ConfigError::NotFinite`], [`ConfigError::InductanceNotPositive`],
    /// [`ConfigError::CapacitanceNotPositive`], [`ConfigError::ResistanceNegative`],
    /// [`ConfigError::DurationBelowOneTick`] for a non-positive period,
    /// [`ConfigError::ObserverPoleOutOfRange`], [`ConfigError::NotObservable`].
    pub fn new(cfg: &ObserverConfig) -> Result<Self, ConfigError> {
        if finite(cfg.l_h)? <= 0.0 {
            return Err(ConfigError::InductanceNotPositive);
        }
        if finite(cfg.c_f)? <= 0.0 {
            return Err(ConfigError::CapacitanceNotPositive);
        }
        if finite(cfg.r_ohm)? < 0.0 {
            return Err(ConfigError::ResistanceNegative);
        }
        if finite(cfg.period_s)? <= 0.0 {
            return Err(ConfigError::DurationBelowOneTick);
        }
        for p in cfg.poles {
            if !(finite(p)? > 0.0 && p < 1.0) {
                return Err(ConfigError::ObserverPoleOutOfRange);
            }
        }
        let (l, c, r) = (f64::from(cfg.l_h), f64::from(cfg.c_f), f64::from(cfg.r_ohm));
        let a: M3 = [[-r / l, -1.0 / l, 0.0], [1.0 / c, 0.0, -1.0 / c], [0.0; 3]];
        let (phi, integral) = discretize(&a, f64::from(cfg.period_s));
        // Γ = ∫e^{Aτ}dτ · B with B = [1/L, 0, 0]ᵀ.
        let gamma: [f64; 3] = core::array::from_fn(|k| integral[k][0] / l);
        // Ackermann (dual form): K = p(Φ)·O⁻¹·e₃ with O = [H; HΦ; HΦ²], H = [0 1 0].
        let phi2 = mul(&phi, &phi);
        let o: M3 = [[0.0, 1.0, 0.0], phi[1], phi2[1]];
        let o_inv = inverse(&o).ok_or(ConfigError::NotObservable)?;
        let [p1, p2, p3] = cfg.poles.map(f64::from);
        let (a2, a1, a0) = (-(p1 + p2 + p3), p1 * p2 + p1 * p3 + p2 * p3, -p1 * p2 * p3);
        let phi3 = mul(&phi2, &phi);
        let poly: M3 = core::array::from_fn(|i| {
            core::array::from_fn(|j| {
                phi3[i][j] + a2 * phi2[i][j] + a1 * phi[i][j] + a0 * identity()[i][j]
            })
        });
        let gain: [f64; 3] =
            core::array::from_fn(|i| (0..3).map(|k| poly[i][k] * o_inv[k][2]).sum());
        if gain.iter().any(|g| !g.is_finite()) {
            return Err(ConfigError::NotObservable);
        }
        Ok(Self {
            phi: phi.map(|row| row.map(|x| x as f32)),
            gamma: gamma.map(|x| x as f32),
            gain: gain.map(|x| x as f32),
            x: [0.0; 3],
        })
    }

    /// Start from a known state `[i_L, v_out, i_out]`.
    pub fn reset(&mut self, i_l: f32, v_out: f32, i_out: f32) {
        self.x = [i_l, v_out, i_out];
    }

    /// One step: `u` the window's average switch-node voltage, `v_out` its
    /// average measured output, `i_out` a measured output current if the
    /// board has one. Returns the inductor-current estimate, A.
    pub fn update(&mut self, u: f32, v_out: f32, i_out: Option<f32>) -> f32 {
        if let Some(i) = i_out {
            self.x[2] = i;
        }
        let innovation = v_out - self.x[1];
        let x = self.x;
        self.x = core::array::from_fn(|r| {
            self.phi[r][0] * x[0]
                + self.phi[r][1] * x[1]
                + self.phi[r][2] * x[2]
                + self.gamma[r] * u
                + self.gain[r] * innovation
        });
        self.x[0]
    }

    /// Estimated inductor current, A.
    pub fn current_a(&self) -> f32 {
        self.x[0]
    }

    /// Estimated load current, A.
    pub fn load_a(&self) -> f32 {
        self.x[2]
    }

    /// The observer gain `K`.
    pub fn gain(&self) -> [f32; 3] {
        self.gain
    }

    /// The error dynamics `Φ − K·H`, for checking the pole placement.
    pub fn error_dynamics(&self) -> [[f32; 3]; 3] {
        core::array::from_fn(|r| {
            core::array::from_fn(|c| self.phi[r][c] - if c == 1 { self.gain[r] } else { 0.0 })
        })
    }
}
