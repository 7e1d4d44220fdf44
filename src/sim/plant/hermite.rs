//! The cubic through a level's values and rates at the two ends of an
//! interval (Hermite interpolation): where the level may turn back, and a
//! first estimate of where it crosses zero.
//!
//! On the plant's short intervals (a sixteenth of the fastest time
//! constant, see [`super::scan`]) the cubic errs by about `h⁴·f⁗/384`,
//! a few millionths of the level's scale: close enough to rule out a turn
//! back to a level with a margin, and to start the refinement of a
//! crossing on the closed form a Newton step or two from its end.

/// `p(s) = fa·(2s³ − 3s² + 1) + ra·(s³ − 2s² + s) + fb·(3s² − 2s³) +
/// rb·(s³ − s²)` for `s ∈ [0, 1]` across an interval of length `h`: `ra`,
/// `rb` are the rates times `h`.
#[derive(Clone, Copy, Debug)]
pub(super) struct Hermite {
    pub fa: f64,
    pub ra: f64,
    pub fb: f64,
    pub rb: f64,
}

impl Hermite {
    /// Through `fa` with rate `ra` (per second) at the start and `fb`,
    /// `rb` at the end of an interval of `h` seconds.
    pub fn new(fa: f64, ra: f64, fb: f64, rb: f64, h: f64) -> Self {
        Self { fa, ra: h * ra, fb, rb: h * rb }
    }

    /// `p(s)`.
    pub fn value(&self, s: f64) -> f64 {
        let Self { fa, ra, fb, rb } = *self;
        let (s2, s3) = (s * s, s * s * s);
        fa * (2.0 * s3 - 3.0 * s2 + 1.0)
            + ra * (s3 - 2.0 * s2 + s)
            + fb * (3.0 * s2 - 2.0 * s3)
            + rb * (s3 - s2)
    }

    /// `p'(s) = A·s² + B·s + C`: `[A, B, C]`.
    fn slope_coefficients(&self) -> [f64; 3] {
        let Self { fa, ra, fb, rb } = *self;
        [6.0 * (fa - fb) + 3.0 * (ra + rb), 6.0 * (fb - fa) - 4.0 * ra - 2.0 * rb, ra]
    }

    /// Where `p'` is zero (NaN for a root that is not there).
    pub fn turns(&self) -> [f64; 2] {
        let [qa, qb, qc] = self.slope_coefficients();
        if qa == 0.0 {
            [-qc / qb, f64::NAN]
        } else {
            let disc = (qb * qb - 4.0 * qa * qc).max(0.0).sqrt();
            [(-qb - disc) / (2.0 * qa), (-qb + disc) / (2.0 * qa)]
        }
    }

    /// The zero of `p` in `(0, 1)` when `p(0)` and `p(1)` have opposite
    /// signs: Newton's method from the chord's zero, three steps (the
    /// cubic is close to a straight line on these intervals), or `None`
    /// when a step leaves the interval.
    pub fn zero(&self) -> Option<f64> {
        let [qa, qb, qc] = self.slope_coefficients();
        let mut s = self.fa / (self.fa - self.fb);
        for _ in 0..3 {
            let slope = (qa * s + qb) * s + qc;
            s -= self.value(s) / slope;
        }
        (s > 0.0 && s < 1.0).then_some(s)
    }
}
