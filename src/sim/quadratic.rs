//! A quantity over one panel of the plant's motion, as the quadratic
//! through its values at the panel's start, middle and end: its integral
//! (Simpson's rule, exact for it), its extremes and its level crossings.
//!
//! The plant's panels are short against its time constants (see
//! [`crate::sim::plant::PANEL_OF_FASTEST`]), so the quadratic follows the
//! closed-form solution closely: the interpolation error is of the third
//! order in the panel's length.

/// `c₀ + c₁·s + c₂·s²` over `s ∈ [0, h]`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Quadratic {
    /// Coefficients `[c₀, c₁, c₂]`.
    pub c: [f64; 3],
    /// Length of the panel, s.
    pub h: f64,
}

impl Quadratic {
    /// The quadratic through `[f(0), f(h/2), f(h)]`.
    #[inline]
    pub fn through(h: f64, [f0, fm, f1]: [f64; 3]) -> Self {
        if h <= 0.0 {
            return Self { c: [f1, 0.0, 0.0], h: 0.0 };
        }
        let c1 = (4.0 * fm - 3.0 * f0 - f1) / h;
        let c2 = 2.0 * (f0 - 2.0 * fm + f1) / (h * h);
        Self { c: [f0, c1, c2], h }
    }

    /// The value at `s`.
    #[inline]
    pub fn at(&self, s: f64) -> f64 {
        self.c[0] + s * (self.c[1] + s * self.c[2])
    }

    /// `∫₀ˢ`.
    #[inline]
    pub fn antiderivative(&self, s: f64) -> f64 {
        s * (self.c[0] + s * (0.5 * self.c[1] + s * (self.c[2] / 3.0)))
    }

    /// `∫ₐᵇ`.
    #[inline]
    pub fn integral(&self, a: f64, b: f64) -> f64 {
        self.antiderivative(b) - self.antiderivative(a)
    }

    /// `∫₀ʰ`: Simpson's rule on the three values (exact for a quadratic).
    #[inline]
    pub fn total(&self) -> f64 {
        self.antiderivative(self.h)
    }

    /// The turning point strictly inside the panel, if any: `(s, value)`.
    #[inline]
    pub fn turn(&self) -> Option<(f64, f64)> {
        if self.c[2] == 0.0 {
            return None;
        }
        let s = -0.5 * self.c[1] / self.c[2];
        (s > 0.0 && s < self.h).then(|| (s, self.at(s)))
    }

    /// The lowest and highest value over the panel.
    pub fn range(&self) -> (f64, f64) {
        self.extremes().range
    }

    /// Where the extremes over the panel lie besides the start (the end's
    /// value and the turning point), and the range they make: found once
    /// for both.
    #[inline]
    pub fn extremes(&self) -> Extremes {
        let (a, b) = (self.c[0], self.at(self.h));
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        let turn = self.turn();
        let range = match turn {
            Some((_, v)) => (lo.min(v), hi.max(v)),
            None => (lo, hi),
        };
        Extremes { end: b, turn, range }
    }

    /// The last `s` in `[0, h]` where the quadratic equals `level`, if any.
    pub fn last_crossing(&self, level: f64) -> Option<f64> {
        let [a, b, c] = [self.c[2], self.c[1], self.c[0] - level];
        let inside = |s: f64| (0.0..=self.h).contains(&s);
        if a == 0.0 {
            return if b == 0.0 { None } else { Some(-c / b).filter(|&s| inside(s)) };
        }
        let disc = b * b - 4.0 * a * c;
        if disc < 0.0 {
            return None;
        }
        // Roots without cancellation: q = −(b + sign(b)·√disc)/2.
        let q = -0.5 * (b + b.signum() * disc.sqrt());
        let roots = [q / a, if q == 0.0 { 0.0 } else { c / q }];
        roots.into_iter().filter(|&s| inside(s)).reduce(f64::max)
    }
}

/// A quadratic's extremes over its panel ([`Quadratic::extremes`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Extremes {
    /// The value at the end.
    pub end: f64,
    /// The turning point strictly inside, if any: `(s, value)`.
    pub turn: Option<(f64, f64)>,
    /// The lowest and highest value.
    pub range: (f64, f64),
}

/// `∫ₐᵇ (e(s) − q(s))² ds` for `e` linear from `ea` at `a` to `eb` at `b`
/// and `q` a quadratic: three-point Gauss–Legendre quadrature, exact for
/// the quartic integrand (Abramowitz & Stegun, table 25.4).
#[inline]
pub fn squared_difference(q: &Quadratic, a: f64, b: f64, ea: f64, eb: f64) -> f64 {
    const NODE: f64 = 0.774_596_669_241_483_4; // √(3/5)
    let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
    let diff = |x: f64| {
        let s = mid + half * x;
        let e = ea + (eb - ea) * (0.5 + 0.5 * x);
        let d = e - q.at(s);
        d * d
    };
    half * (5.0 / 9.0 * (diff(-NODE) + diff(NODE)) + 8.0 / 9.0 * diff(0.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(f: impl Fn(f64) -> f64, h: f64) -> [f64; 3] {
        [f(0.0), f(0.5 * h), f(h)]
    }

    #[test]
    fn a_quadratic_is_reproduced_and_integrated_exactly() {
        let f = |s: f64| 2.0 - 3.0e5 * s + 4.0e11 * s * s;
        let h = 2.0e-6;
        let q = Quadratic::through(h, sample(f, h));
        for s in [0.0, 0.3e-6, 1.1e-6, h] {
            assert!((q.at(s) - f(s)).abs() < 1e-12, "{s}");
        }
        // ∫₀ʰ by hand: 2h − 1.5e5·h² + 4e11·h³/3.
        let want = 2.0 * h - 1.5e5 * h * h + 4.0e11 * h * h * h / 3.0;
        assert!((q.total() - want).abs() < 1e-18);
        // Its turning point: s = 3e5 / 8e11 = 0.375 µs.
        let (s, v) = q.turn().unwrap();
        assert!((s - 0.375e-6).abs() < 1e-15 && (v - f(0.375e-6)).abs() < 1e-12);
    }

    #[test]
    fn the_last_crossing_of_a_level_is_found() {
        // (s − 1)(s − 3) = s² − 4s + 3 crosses 0 at 1 and 3.
        let q = Quadratic { c: [3.0, -4.0, 1.0], h: 4.0 };
        assert_eq!(q.last_crossing(0.0), Some(3.0));
        assert_eq!(Quadratic { h: 2.0, ..q }.last_crossing(0.0), Some(1.0));
        assert_eq!(q.last_crossing(-2.0), None);
    }

    #[test]
    fn gauss_legendre_integrates_the_squared_difference_exactly() {
        // e − q = 1 − s² on [0, 1]: ∫ (1 − s²)² = 1 − 2/3 + 1/5 = 8/15.
        let q = Quadratic { c: [0.0, 0.0, 1.0], h: 1.0 };
        let got = squared_difference(&q, 0.0, 1.0, 1.0, 1.0);
        assert!((got - 8.0 / 15.0).abs() < 1e-15, "{got}");
    }
}
