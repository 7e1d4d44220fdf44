//! The cubic through a level's values and rates at the two ends of an
//! interval (Hermite interpolation): where the level may turn back, and a
//! first estimate of where it crosses zero.
//!
//! On the plant's short intervals (a sixteenth of the fastest time
//! constant as a rule, a quarter at most, see `super::scan`) the cubic
//! errs by about `h⁴·f⁗/384`, some 4e-8 of the level's oscillation at a
//! sixteenth and 1e-5 at a quarter: close enough to rule out a turn back
//! to a level with a margin, and to start the refinement of a crossing on
//! the closed form a Newton step or two from its end.

/// `p(s) = fa·(2s³ − 3s² + 1) + ra·(s³ − 2s² + s) + fb·(3s² − 2s³) +
/// rb·(s³ − s²)` for `s ∈ [0, 1]` across an interval of length `h`: `ra`,
/// `rb` are the rates times `h`. Held by its powers,
/// `p(s) = c₀ + c₁·s + c₂·s² + c₃·s³` (`c₀ = fa`, `c₁ = ra`,
/// `c₂ = 3·(fb − fa) − 2·ra − rb`, `c₃ = 2·(fa − fb) + ra + rb`), so a
/// value costs three multiply-adds: the refinement of a crossing starts
/// from its zero, found by two Newton steps.
#[derive(Clone, Copy, Debug)]
pub(super) struct Hermite {
    /// `[c₀, c₁, c₂, c₃]`.
    c: [f64; 4],
}

impl Hermite {
    /// Through `fa` with rate `ra` (per second) at the start and `fb`,
    /// `rb` at the end of an interval of `h` seconds.
    pub fn new(fa: f64, ra: f64, fb: f64, rb: f64, h: f64) -> Self {
        let (ra, rb) = (h * ra, h * rb);
        let rise = fb - fa;
        Self { c: [fa, ra, 3.0 * rise - 2.0 * ra - rb, ra + rb - 2.0 * rise] }
    }

    /// `p(0)`, `p(1)`: the values at the ends.
    fn ends(&self) -> (f64, f64) {
        let [c0, c1, c2, c3] = self.c;
        (c0, c0 + c1 + c2 + c3)
    }

    /// `p(s)`.
    pub fn value(&self, s: f64) -> f64 {
        let [c0, c1, c2, c3] = self.c;
        ((c3 * s + c2) * s + c1) * s + c0
    }

    /// `p'(s)`.
    fn slope(&self, s: f64) -> f64 {
        let [_, c1, c2, c3] = self.c;
        (3.0 * c3 * s + 2.0 * c2) * s + c1
    }

    /// Where `p'` is zero (NaN for a root that is not there).
    pub fn turns(&self) -> [f64; 2] {
        let [_, qc, c2, c3] = self.c;
        let (qa, qb) = (3.0 * c3, 2.0 * c2);
        if qa == 0.0 {
            [-qc / qb, f64::NAN]
        } else {
            let disc = (qb * qb - 4.0 * qa * qc).max(0.0).sqrt();
            [(-qb - disc) / (2.0 * qa), (-qb + disc) / (2.0 * qa)]
        }
    }

    /// The zero of `p` in `(0, 1)` when `p(0)` and `p(1)` have opposite
    /// signs: Newton's method from the chord's zero, two steps, or `None`
    /// when the last step lands outside the interval (`p(1)` is taken as
    /// the sum of the coefficients, the end value within rounding: where
    /// that flips a tiny end's sign the start lands outside, and the
    /// caller takes the chord's zero). The cubic is close to a straight
    /// line on these intervals: on the default scenario the chord's zero
    /// lies a twentieth of the interval from the crossing (median), two
    /// steps bring it to a few millionths, the cubic's own error, and a
    /// third step comes no closer to the crossing.
    pub fn zero(&self) -> Option<f64> {
        let (fa, fb) = self.ends();
        let mut s = fa / (fa - fb);
        for _ in 0..2 {
            s -= self.value(s) / self.slope(s);
        }
        (s > 0.0 && s < 1.0).then_some(s)
    }
}
