//! Closed-form solution of the plant's linear segments, at a cost that does
//! not depend on the step length.
//!
//! Within one switch state, with input voltage and load current at most
//! linear in time, the converter obeys `x' = A·x + b₀ + b₁·τ` with a 2×2
//! `A`. Two forms cover every such segment:
//!
//! - **Coupled** (`A` invertible): the affine particular solution
//!   `x_p(τ) = p₀ + p₁·τ` (`p₁ = −A⁻¹·b₁`, `p₀ = A⁻¹·(p₁ − b₀)`) plus the
//!   homogeneous part `e^{A·t}·(x₀ − x_p(τ₀))`. By Cayley–Hamilton, with
//!   `s = tr A / 2`, `N = A − s·I` and `N² = Δ·I` (`Δ = s² − det A`),
//!   `e^{A·t} = P(t)·I + Q(t)·N`: `P = e^{s·t}·cos(ω·t)`,
//!   `Q = e^{s·t}·sin(ω·t)/ω` for `Δ = −ω² < 0`, the hyperbolic
//!   counterparts `(e^{λ₁t} ± e^{λ₂t})/2` over the eigenvalues for `Δ > 0`.
//!   Short steps (`ρ·t ≤ 1/16`, `ρ` the larger eigenvalue magnitude) sum the
//!   Taylor series of `P` and `Q`, whose coefficients are prepared with
//!   the system; near `Δ·t² = 0` (critical damping) the even and odd series
//!   of `cosh(√Δ·t)` and `sinh(√Δ·t)/√Δ` replace the closed forms. So
//!   repeated and complex eigenvalues need no case of their own.
//! - **Held** (first row of `A` and first entries of `b₀`, `b₁` zero: the
//!   inductor current held, as in the idle mode): the first component is
//!   constant and the second obeys `v' = −g·v + f₀ + f₁·t`, solved with
//!   `e^{−g·t}` and `φ₁(t) = ∫₀ᵗ e^{−g(t−u)} du`,
//!   `φ₂(t) = ∫₀ᵗ e^{−g(t−u)}·u du`, by series near `g·t = 0`.
//!
//! A step costs a fixed number of flops in each regime (two polynomials for
//! short steps; one or two exponentials, or a sine and cosine, for long
//! ones), whatever `Δt` and whether it was seen before. The states at the
//! middle and at the end of a step come from one evaluation at the middle
//! and the doubling formulas `P(2h) = P² + Δ·Q²`, `Q(2h) = 2·P·Q`.

use core::f64::consts::PI;

#[cfg(test)]
mod tests;

/// A 2-vector.
pub type Vec2 = [f64; 2];
/// A 2×2 matrix, row-major.
pub type Mat2 = [[f64; 2]; 2];

/// `x' = A·x + b₀ + b₁·τ`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct System {
    /// State matrix `A`.
    pub a: Mat2,
    /// Constant input `b₀`.
    pub b0: Vec2,
    /// Input slope `b₁`, per second of `τ`.
    pub b1: Vec2,
}

impl System {
    /// `x'` at state `x` and time `τ`.
    pub fn rate(&self, x: &Vec2, tau: f64) -> Vec2 {
        let row =
            |r: usize| self.a[r][0] * x[0] + self.a[r][1] * x[1] + self.b0[r] + self.b1[r] * tau;
        [row(0), row(1)]
    }
}

/// An affine function of the state and time, `c·x + k₀ + k₁·τ`.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Affine {
    /// Weights of the state.
    pub c: Vec2,
    /// Constant.
    pub k0: f64,
    /// Weight of `τ`.
    pub k1: f64,
}

impl Affine {
    /// The value at state `x` and time `τ`.
    #[inline]
    pub fn value(&self, x: &Vec2, tau: f64) -> f64 {
        self.c[0] * x[0] + self.c[1] * x[1] + self.k0 + self.k1 * tau
    }

    /// Its time derivative where the state changes at `dx`.
    #[inline]
    pub fn rate(&self, dx: &Vec2) -> f64 {
        self.c[0] * dx[0] + self.c[1] * dx[1] + self.k1
    }

    /// The same function less `level`.
    pub fn less(&self, level: f64) -> Self {
        Self { k0: self.k0 - level, ..*self }
    }
}

/// Largest `|Δ|·h²` (and `|g·h|`) evaluated by the even and odd (and the
/// `φ`) power series; beyond it the closed trigonometric, hyperbolic or
/// exponential forms are used.
const SERIES_LIMIT: f64 = 1.0 / 16.0;

/// The solution of a [`System`], prepared once; evaluating it costs the
/// same for any step.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Solution {
    system: System,
    form: Form,
}

// Held in a table per configuration and read every step: boxing the large
// variant would add an indirection to each step.
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Copy, Debug, PartialEq)]
enum Form {
    Coupled(Coupled),
    Held { g: f64 },
}

/// Terms of the Taylor series of `P` and `Q` kept for short steps.
const TAYLOR_TERMS: usize = 14;

/// Largest `ρ·h` (`ρ` the larger eigenvalue magnitude) evaluated by the
/// Taylor series; the first term left out is below `(1/4)¹⁴/14! < 5e-20`.
/// A quarter of the fastest time constant covers a look ahead or a panel
/// of the demo stage (see `plant::scan`), without an exponential.
const TAYLOR_LIMIT: f64 = 0.25;

/// Terms of the Taylor series kept for the shortest steps, up to
/// [`SHORT_LIMIT`]: the first term left out is below
/// `(1/16)¹⁰/10! < 3e-19`.
const SHORT_TERMS: usize = 10;

/// Largest `ρ·h` evaluated with [`SHORT_TERMS`] terms: the look ahead of
/// a scan and the refinement of a crossing inside it (see `plant::scan`).
const SHORT_LIMIT: f64 = 1.0 / 16.0;

// `estrin_short` sums five pairs.
const _: () = assert!(SHORT_TERMS == 10 && SHORT_TERMS <= TAYLOR_TERMS);

#[derive(Clone, Copy, Debug, PartialEq)]
struct Coupled {
    s: f64,
    delta: f64,
    /// `√|Δ|`.
    root: f64,
    /// The larger eigenvalue magnitude.
    radius: f64,
    n: Mat2,
    p0: Vec2,
    p1: Vec2,
    /// `[π_k, θ_k]`: `P(t) = Σ π_k·tᵏ`, `Q(t) = Σ θ_k·tᵏ`.
    taylor: [[f64; 2]; TAYLOR_TERMS],
}

/// The homogeneous flow over a time `t`: `e^{A·t} = p·I + q·N` (coupled),
/// or `e^{−g·t}`, `φ₁(t)`, `φ₂(t)` (held).
#[derive(Clone, Copy, Debug)]
struct Flow {
    p: f64,
    q: f64,
    r: f64,
}

impl Solution {
    /// Prepare the solution, or `None` when `A` is singular and the system
    /// is not of the held form.
    pub fn new(system: System) -> Option<Self> {
        let [[a00, a01], [a10, a11]] = system.a;
        let held = a00 == 0.0 && a01 == 0.0 && system.b0[0] == 0.0 && system.b1[0] == 0.0;
        if held {
            return Some(Self { system, form: Form::Held { g: -a11 } });
        }
        let det = a00 * a11 - a01 * a10;
        if det == 0.0 || !det.is_finite() {
            return None;
        }
        let half_diff = 0.5 * (a00 - a11);
        let delta = half_diff * half_diff + a01 * a10;
        let inv = |v: Vec2| [(a11 * v[0] - a01 * v[1]) / det, (a00 * v[1] - a10 * v[0]) / det];
        let p1 = inv([-system.b1[0], -system.b1[1]]);
        let p0 = inv([p1[0] - system.b0[0], p1[1] - system.b0[1]]);
        let s = 0.5 * (a00 + a11);
        let root = delta.abs().sqrt();
        let form = Form::Coupled(Coupled {
            s,
            delta,
            root,
            radius: if delta < 0.0 { det.sqrt() } else { s.abs() + root },
            n: [[half_diff, a01], [a10, -half_diff]],
            p0,
            p1,
            taylor: taylor_coefficients(s, det),
        });
        Some(Self { system, form })
    }

    /// The system solved.
    pub fn system(&self) -> &System {
        &self.system
    }

    /// The fastest rate of the homogeneous response, 1/s: the larger
    /// eigenvalue magnitude (coupled), `|g|` (held; zero for a constant).
    pub fn fastest_rate(&self) -> f64 {
        match &self.form {
            Form::Coupled(c) => c.radius,
            Form::Held { g } => g.abs(),
        }
    }

    /// The trajectory from state `x0` at time `tau0`.
    #[inline]
    pub fn start_at(&self, x0: Vec2, tau0: f64) -> Trajectory<'_> {
        Trajectory { solution: self, x0, tau0 }
    }

    /// The map from the state at `tau0` to the state `t` later, given the
    /// flow over `t`.
    #[inline]
    fn propagator(&self, f: &Flow, tau0: f64, t: f64) -> Propagator {
        match &self.form {
            Form::Coupled(c) => {
                // x(t) = Φ·x₀ + x_p(τ₀ + t) − Φ·x_p(τ₀), Φ = P·I + Q·N.
                let n = &c.n;
                let phi =
                    [[f.p + f.q * n[0][0], f.q * n[0][1]], [f.q * n[1][0], f.p + f.q * n[1][1]]];
                let xp = [c.p0[0] + c.p1[0] * tau0, c.p0[1] + c.p1[1] * tau0];
                let offset = [
                    xp[0] + c.p1[0] * t - phi[0][0] * xp[0] - phi[0][1] * xp[1],
                    xp[1] + c.p1[1] * t - phi[1][0] * xp[0] - phi[1][1] * xp[1],
                ];
                Propagator { phi, offset }
            }
            Form::Held { .. } => {
                // v(t) = e^{−gt}·v₀ + φ₁·(a₁₀·i₀ + b₀ + b₁·τ₀) + φ₂·b₁.
                let (a10, b0, b1) = (self.system.a[1][0], self.system.b0[1], self.system.b1[1]);
                Propagator {
                    phi: [[1.0, 0.0], [f.q * a10, f.p]],
                    offset: [0.0, f.q * (b0 + b1 * tau0) + f.r * b1],
                }
            }
        }
    }

    #[inline]
    fn flow(&self, t: f64) -> Flow {
        match &self.form {
            Form::Coupled(c) => c.flow(t),
            Form::Held { g } => held_flow(*g, t),
        }
    }

    /// [`flow`](Self::flow) with the coupled form's series in line (the
    /// same sums `Coupled::flow` takes for them), the closed forms called:
    /// for a scan's end, the refinements inside it and a panel's half
    /// step, which are short.
    #[inline(always)]
    fn near_flow(&self, t: f64) -> Flow {
        match &self.form {
            Form::Coupled(c) => c.series_flow(t).unwrap_or_else(|| c.closed_flow(t)),
            Form::Held { g } => held_flow(*g, t),
        }
    }

    /// The time derivative of the flow `f` over `t`: for the coupled form
    /// `d/dt e^{A·t} = A·e^{A·t}` with `A = s·I + N`, `N² = Δ·I`, gives
    /// `P' = s·P + Δ·Q`, `Q' = P + s·Q`; for the held form
    /// `(e^{−gt})' = −g·e^{−gt}`, `φ₁' = e^{−gt}`, `φ₂' = φ₁`.
    #[inline]
    fn flow_rate(&self, f: &Flow) -> Flow {
        match &self.form {
            Form::Coupled(c) => Flow { p: c.s * f.p + c.delta * f.q, q: f.p + c.s * f.q, r: 0.0 },
            Form::Held { g } => Flow { p: -g * f.p, q: f.p, r: f.q },
        }
    }

    /// The flow over `2h` from the flow over `h`.
    #[inline]
    fn doubled(&self, f: &Flow, h: f64) -> Flow {
        match &self.form {
            Form::Coupled(c) => {
                Flow { p: f.p * f.p + c.delta * f.q * f.q, q: 2.0 * f.p * f.q, r: 0.0 }
            }
            Form::Held { .. } => {
                Flow { p: f.p * f.p, q: f.q * (1.0 + f.p), r: f.p * f.r + f.r + h * f.q }
            }
        }
    }
}

/// The Taylor coefficients of `P` and `Q` in `e^{A·t} = P·I + Q·N`. By
/// Cayley–Hamilton `Aᵏ = v_k·A − det·v_{k−1}·I` with `v₀ = 0`, `v₁ = 1`,
/// `v_k = tr·v_{k−1} − det·v_{k−2}`; with `A = N + s·I`, the coefficient of
/// `tᵏ/k!` is `s·v_k − det·v_{k−1}` in `P` and `v_k` in `Q`.
fn taylor_coefficients(s: f64, det: f64) -> [[f64; 2]; TAYLOR_TERMS] {
    let mut out = [[0.0; 2]; TAYLOR_TERMS];
    out[0] = [1.0, 0.0];
    let (mut v_prev, mut v) = (0.0, 1.0);
    for (k, c) in out.iter_mut().enumerate().skip(1) {
        let inv_k = inv_factorial(k as u32);
        *c = [(s * v - det * v_prev) * inv_k, v * inv_k];
        (v_prev, v) = (v, 2.0 * s * v - det * v_prev);
    }
    out
}

impl Coupled {
    /// The flow over a step within the Taylor series' reach
    /// (`ρ·t ≤ TAYLOR_LIMIT`), by the shortest series that holds it, else
    /// `None`.
    #[inline(always)]
    fn series_flow(&self, t: f64) -> Option<Flow> {
        let reach = self.radius * t;
        let [p, q] = if reach <= SHORT_LIMIT {
            estrin_short(&self.taylor, t)
        } else if reach <= TAYLOR_LIMIT {
            estrin(&self.taylor, t)
        } else {
            return None;
        };
        Some(Flow { p, q, r: 0.0 })
    }

    /// The flow over `t`. Called, not in line: only the scan's and the
    /// panels' steps take the series in line (`Solution::near_flow`); a
    /// turn's step is one call.
    #[inline(never)]
    fn flow(&self, t: f64) -> Flow {
        self.series_flow(t).unwrap_or_else(|| self.closed_flow(t))
    }

    /// The flow over a step past the series' reach, by its closed forms
    /// (called: such steps are rare, and their library calls dwarf a
    /// call's cost).
    #[inline(never)]
    fn closed_flow(&self, t: f64) -> Flow {
        let x = self.delta * t * t;
        if x.abs() <= SERIES_LIMIT {
            let (c, s) = even_odd_series(x);
            let e = (self.s * t).exp();
            return Flow { p: e * c, q: e * s * t, r: 0.0 };
        }
        if self.delta < 0.0 {
            let (sin, cos) = (self.root * t).sin_cos();
            let e = (self.s * t).exp();
            return Flow { p: e * cos, q: e * sin / self.root, r: 0.0 };
        }
        // Real eigenvalues s ± √Δ, each exponential taken on its own so a
        // long step cannot overflow cosh while e^{s·t} underflows.
        let (e1, e2) = (((self.s + self.root) * t).exp(), ((self.s - self.root) * t).exp());
        Flow { p: 0.5 * (e1 + e2), q: 0.5 * (e1 - e2) / self.root, r: 0.0 }
    }
}

/// `Σ c_k·tᵏ` for two polynomials at once, by Estrin's scheme: pairs
/// `c_k + c_{k+1}·t` combined with `t²`, `t⁴`, `t⁸`, so the dependency chain
/// is four multiply-adds deep instead of Horner's fourteen.
#[inline]
fn estrin(c: &[[f64; 2]; TAYLOR_TERMS], t: f64) -> [f64; 2] {
    let (t2, pair) = (t * t, |k: usize| [c[k][0] + c[k + 1][0] * t, c[k][1] + c[k + 1][1] * t]);
    let (t4, [a, b, d, e]) = (t2 * t2, [pair(0), pair(2), pair(4), pair(6)]);
    let [f, g, h] = [pair(8), pair(10), pair(12)];
    let t8 = t4 * t4;
    core::array::from_fn(|j| {
        let low = (a[j] + b[j] * t2) + (d[j] + e[j] * t2) * t4;
        let high = (f[j] + g[j] * t2) + h[j] * t4;
        low + high * t8
    })
}

/// [`estrin`] on the first [`SHORT_TERMS`] coefficients: five pairs
/// combined with `t²`, `t⁴`, `t⁸`.
#[inline]
fn estrin_short(c: &[[f64; 2]; TAYLOR_TERMS], t: f64) -> [f64; 2] {
    let (t2, pair) = (t * t, |k: usize| [c[k][0] + c[k + 1][0] * t, c[k][1] + c[k + 1][1] * t]);
    let (t4, [a, b, d, e, f]) = (t2 * t2, [pair(0), pair(2), pair(4), pair(6), pair(8)]);
    let t8 = t4 * t4;
    core::array::from_fn(|j| {
        let low = (a[j] + b[j] * t2) + (d[j] + e[j] * t2) * t4;
        low + f[j] * t8
    })
}

/// `(Σ xᵏ/(2k)!, Σ xᵏ/(2k+1)!)` for `|x| ≤ SERIES_LIMIT`: `cosh(√x)` and
/// `sinh(√x)/√x`, summed to k = 6 (the next terms are below 1e-19).
fn even_odd_series(x: f64) -> (f64, f64) {
    let (mut c, mut s) = (inv_factorial(12), inv_factorial(13));
    for k in (0..6).rev() {
        c = c * x + inv_factorial(2 * k);
        s = s * x + inv_factorial(2 * k + 1);
    }
    (c, s)
}

/// `1/n!` for `n < 14`.
fn inv_factorial(n: u32) -> f64 {
    INV_FACTORIAL[n as usize]
}

const INV_FACTORIAL: [f64; TAYLOR_TERMS] = {
    let mut t = [1.0; TAYLOR_TERMS];
    let mut n = 1;
    while n < TAYLOR_TERMS {
        t[n] = t[n - 1] / n as f64;
        n += 1;
    }
    t
};

/// `e^{−g·t}`, `φ₁(t)`, `φ₂(t)` of the held form.
fn held_flow(g: f64, t: f64) -> Flow {
    let x = -g * t;
    if x.abs() <= SERIES_LIMIT {
        // e^x = Σ xᵏ/k!, φ₁ = t·Σ xᵏ/(k+1)!, φ₂ = t²·Σ xᵏ/(k+2)!, to k = 9
        // (the next terms are below 3e-19 of the sums).
        let (mut e, mut f1, mut f2) = (0.0, 0.0, 0.0);
        for k in (0..10).rev() {
            e = e * x + inv_factorial(k);
            f1 = f1 * x + inv_factorial(k + 1);
            f2 = f2 * x + inv_factorial(k + 2);
        }
        return Flow { p: e, q: f1 * t, r: f2 * t * t };
    }
    let e = x.exp();
    let f1 = (1.0 - e) / g;
    Flow { p: e, q: f1, r: (t - f1) / g }
}

/// The affine map from a segment's start state to its state some time
/// later: `x(t) = Φ·x₀ + offset`. It depends on the start time and the
/// step, not on the start state, so applying it is one 2×2 product.
#[derive(Clone, Copy, Debug)]
struct Propagator {
    phi: Mat2,
    offset: Vec2,
}

impl Propagator {
    #[inline]
    fn apply(&self, x: &Vec2) -> Vec2 {
        let row = |r: usize| self.phi[r][0] * x[0] + self.phi[r][1] * x[1] + self.offset[r];
        [row(0), row(1)]
    }
}

/// A solution started from a given state and time.
#[derive(Clone, Copy, Debug)]
pub struct Trajectory<'a> {
    solution: &'a Solution,
    x0: Vec2,
    tau0: f64,
}

impl Trajectory<'_> {
    /// The state `t` after the start.
    // In line always: a scan's end and the state at a tick call it once
    // each, and a call (its frame, the state through memory) costs a
    // good part of the flow itself.
    #[inline(always)]
    pub fn at(&self, t: f64) -> Vec2 {
        self.solution.propagator(&self.solution.near_flow(t), self.tau0, t).apply(&self.x0)
    }

    /// The states at `t/2` and at `t`.
    // In line always: each panel of a plant's move calls it once, and a
    // call (its frame, both states back through memory) cost a tenth of
    // its work.
    #[inline(always)]
    pub fn midpoint_and_end(&self, t: f64) -> (Vec2, Vec2) {
        let (s, h) = (self.solution, 0.5 * t);
        // The series in line, as at a scan's end: a panel's half step is
        // within their reach as a rule.
        let half = s.near_flow(h);
        let full = s.doubled(&half, h);
        let (to_mid, to_end) =
            (s.propagator(&half, self.tau0, h), s.propagator(&full, self.tau0, t));
        (to_mid.apply(&self.x0), to_end.apply(&self.x0))
    }

    /// `x'` at state `x`, `t` after the start.
    pub fn rate(&self, x: &Vec2, t: f64) -> Vec2 {
        self.solution.system.rate(x, self.tau0 + t)
    }

    /// An affine function of the state and time followed along the
    /// trajectory, as a function of the time since its start.
    // In line always: a crossing's refinement, a panel's turn and a
    // segment's root take it once each, from values their callers hold in
    // registers.
    #[inline(always)]
    pub fn follow(&self, f: &Affine) -> Followed<'_> {
        let (x0, tau0) = (&self.x0, self.tau0);
        let terms = match &self.solution.form {
            Form::Coupled(c) => {
                // x(t) = x_p(τ₀ + t) + (P(t)·I + Q(t)·N)·d, d = x₀ − x_p(τ₀).
                let xp = [c.p0[0] + c.p1[0] * tau0, c.p0[1] + c.p1[1] * tau0];
                let d = [x0[0] - xp[0], x0[1] - xp[1]];
                let nd = [c.n[0][0] * d[0] + c.n[0][1] * d[1], c.n[1][0] * d[0] + c.n[1][1] * d[1]];
                let weight = |v: &Vec2| f.c[0] * v[0] + f.c[1] * v[1];
                [f.value(&xp, tau0), f.rate(&c.p1), weight(&d), weight(&nd), 0.0]
            }
            Form::Held { .. } => {
                // v(t) = e^{−gt}·v₀ + φ₁·(a₁₀·i₀ + b₀ + b₁·τ₀) + φ₂·b₁, i held.
                let s = &self.solution.system;
                let forcing = s.a[1][0] * x0[0] + s.b0[1] + s.b1[1] * tau0;
                let held = f.c[0] * x0[0] + f.k0 + f.k1 * tau0;
                [held, f.k1, f.c[1] * x0[1], f.c[1] * forcing, f.c[1] * s.b1[1]]
            }
        };
        Followed { solution: self.solution, terms }
    }
}

/// An affine function of the state followed along a trajectory: with the
/// flow `(p, q, r)` over `t`, `f(t) = α + β·t + γ·p + δ·q + ε·r`. Its value
/// and rate cost one flow and a few products, where the state would cost a
/// propagator too.
#[derive(Clone, Copy, Debug)]
pub struct Followed<'a> {
    solution: &'a Solution,
    /// `[α, β, γ, δ, ε]`.
    terms: [f64; 5],
}

impl Followed<'_> {
    /// The value `t` after the start.
    pub fn value(&self, t: f64) -> f64 {
        self.combine(&self.solution.flow(t), t)
    }

    /// The value and its time derivative `t` after the start.
    pub fn value_and_rate(&self, t: f64) -> (f64, f64) {
        let f = self.solution.near_flow(t);
        let d = self.solution.flow_rate(&f);
        let [_, beta, gamma, delta, epsilon] = self.terms;
        (self.combine(&f, t), beta + gamma * d.p + delta * d.q + epsilon * d.r)
    }

    /// The value, rate and curvature (second time derivative) `t` after
    /// the start.
    pub fn value_rate_curvature(&self, t: f64) -> [f64; 3] {
        let f = self.solution.flow(t);
        let d = self.solution.flow_rate(&f);
        let dd = self.solution.flow_rate(&d);
        let [_, beta, gamma, delta, epsilon] = self.terms;
        [
            self.combine(&f, t),
            beta + gamma * d.p + delta * d.q + epsilon * d.r,
            gamma * dd.p + delta * dd.q + epsilon * dd.r,
        ]
    }

    /// Where the value turns (its rate is zero) inside `(a, b)`, in closed
    /// form, when the followed function has no ramp (`β = 0`) and the
    /// solution is coupled: the rate is then `A·P(t) + B·Q(t)` with
    /// `A = γ·s + δ`, `B = γ·Δ + δ·s` (from `P' = s·P + Δ·Q`,
    /// `Q' = P + s·Q`), zero where `A·cos ωt + (B/ω)·sin ωt = 0`
    /// (`Δ = −ω² < 0`), where `tanh(r·t) = −A·r/B` (`Δ = r² > 0`), or at
    /// `t = −A/B` (`Δ = 0`). `None` when no closed form applies or it
    /// finds no turn inside (the caller then searches).
    pub fn turn_within(&self, a: f64, b: f64) -> Option<f64> {
        let Form::Coupled(c) = &self.solution.form else { return None };
        let [_, beta, gamma, delta, _] = self.terms;
        if beta != 0.0 {
            return None;
        }
        let (ra, rb) = (gamma * c.s + delta, gamma * c.delta + delta * c.s);
        let t = if c.delta < 0.0 {
            // A·cos θ + (B/ω)·sin θ = 0 at θ = θ₀ + kπ, θ₀ = atan(−A·ω/B)
            // in (−π/2, π/2): the first k past `a`. (θ₀ + kπ does not cancel
            // near critical damping, where ω·t is small; A = B = 0 gives
            // NaN, no turn.)
            let w = c.root;
            let theta = (-ra * w / rb).atan();
            let k = ((w * a - theta) / PI).ceil();
            (theta + k * PI) / w
        } else if c.delta > 0.0 {
            let x = -ra * c.root / rb;
            if x.is_nan() || x.abs() >= 1.0 {
                return None;
            }
            x.atanh() / c.root
        } else {
            -ra / rb
        };
        (t > a && t < b).then_some(t)
    }

    /// Whether the value turns at most once in any interval of length `h`
    /// (its rate has at most one zero there). Without a ramp its rate is
    /// `e^{st}` times `A·cos ωt + (B/ω)·sin ωt` (`Δ < 0`: zeros `π/ω`
    /// apart, so at most one when `ω·h < π`), `A·cosh rt + (B/r)·sinh rt`
    /// or `A + B·t` (`Δ ≥ 0`: at most one zero); in the held form a
    /// constant plus one exponential, ramp or not. A ramp adds a constant
    /// to the coupled form's rate, which may then meet the oscillation or
    /// the two exponentials' sum twice: `false`.
    pub fn turns_at_most_once(&self, h: f64) -> bool {
        match &self.solution.form {
            Form::Coupled(c) => self.terms[1] == 0.0 && (c.delta >= 0.0 || c.root * h < PI),
            Form::Held { .. } => true,
        }
    }

    fn combine(&self, f: &Flow, t: f64) -> f64 {
        let [alpha, beta, gamma, delta, epsilon] = self.terms;
        alpha + beta * t + gamma * f.p + delta * f.q + epsilon * f.r
    }
}
