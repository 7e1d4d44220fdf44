//! Closed-form solution of the plant's linear segments.
//!
//! Within one switch state, with input voltage and load current at most
//! linear in time, the converter obeys `x' = A·x + b₀ + b₁·τ`. Augmenting the
//! state to `z = [i_L, v_C, 1, τ]` turns this into `z' = M·z` with a constant
//! 4×4 `M`, whose exact solution over `Δt` is `z(Δt) = e^{M·Δt}·z(0)`. The
//! exponential is evaluated by scaling and squaring of a Taylor series, to
//! double precision.

/// A 4×4 matrix, row-major.
pub type Mat4 = [[f64; 4]; 4];
/// A 4-vector.
pub type Vec4 = [f64; 4];

/// `m · v`.
#[inline]
pub fn mul_vec(m: &Mat4, v: &Vec4) -> Vec4 {
    let mut out = [0.0; 4];
    for (o, row) in out.iter_mut().zip(m) {
        *o = row[0] * v[0] + row[1] * v[1] + row[2] * v[2] + row[3] * v[3];
    }
    out
}

fn mul(a: &Mat4, b: &Mat4) -> Mat4 {
    let mut out = [[0.0; 4]; 4];
    for (r, row) in out.iter_mut().enumerate() {
        for (c, cell) in row.iter_mut().enumerate() {
            *cell = (0..4).map(|k| a[r][k] * b[k][c]).sum();
        }
    }
    out
}

fn norm_inf(m: &Mat4) -> f64 {
    m.iter().map(|row| row.iter().map(|x| x.abs()).sum::<f64>()).fold(0.0, f64::max)
}

/// `e^{m·t}·z` for an augmented state `z = [x₀, x₁, 1, τ]` and the
/// exponential of an augmented matrix: only the first two rows carry
/// information (`1` stays 1, `τ` advances by `dt`).
#[inline]
pub fn propagate(e: &Mat4, z: &Vec4, dt: f64) -> Vec4 {
    let row = |r: &[f64; 4]| r[0] * z[0] + r[1] * z[1] + r[2] * z[2] + r[3] * z[3];
    [row(&e[0]), row(&e[1]), z[2], z[3] + dt]
}

/// `e^{m·t}`.
pub fn expm(m: &Mat4, t: f64) -> Mat4 {
    let norm = norm_inf(m) * t.abs();
    // Scale so the Taylor series of the scaled matrix converges fast.
    let squarings = if norm > 0.25 { (norm / 0.25).log2().ceil() as u32 } else { 0 };
    let scale = t / 2f64.powi(squarings as i32);
    let a: Mat4 = core::array::from_fn(|r| core::array::from_fn(|c| m[r][c] * scale));
    let mut result: Mat4 =
        core::array::from_fn(|r| core::array::from_fn(|c| f64::from(u8::from(r == c))));
    let mut term = result;
    for k in 1..=14 {
        term = mul(&term, &a);
        let inv_k = 1.0 / f64::from(k);
        for row in term.iter_mut() {
            for x in row.iter_mut() {
                *x *= inv_k;
            }
        }
        for (rr, tr) in result.iter_mut().zip(&term) {
            for (x, y) in rr.iter_mut().zip(tr) {
                *x += y;
            }
        }
    }
    for _ in 0..squarings {
        result = mul(&result, &result);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponential_of_a_rotation_and_decay() {
        // x' = −a·x + ω·y, y' = −ω·x − a·y: a damped rotation with the
        // textbook solution e^{−at}[cos ωt, sin ωt; −sin ωt, cos ωt].
        let (a, w, t) = (3.0e3, 2.0e4, 7.3e-4);
        let m = [[-a, w, 0.0, 0.0], [-w, -a, 0.0, 0.0], [0.0; 4], [0.0; 4]];
        let e = expm(&m, t);
        let d = (-a * t).exp();
        assert!((e[0][0] - d * (w * t).cos()).abs() < 1e-12);
        assert!((e[0][1] - d * (w * t).sin()).abs() < 1e-12);
        assert!((e[1][0] + d * (w * t).sin()).abs() < 1e-12);
    }

    #[test]
    fn ramp_input_integrates_exactly() {
        // x' = 1 + 2τ with z = [x, _, 1, τ]: x(t) = x0 + t + t² (τ0 = 0).
        let m = [[0.0, 0.0, 1.0, 2.0], [0.0; 4], [0.0; 4], [0.0, 0.0, 1.0, 0.0]];
        let z = mul_vec(&expm(&m, 1.5), &[0.25, 0.0, 1.0, 0.0]);
        assert!((z[0] - (0.25 + 1.5 + 2.25)).abs() < 1e-12);
        assert!((z[3] - 1.5).abs() < 1e-12);
    }
}
