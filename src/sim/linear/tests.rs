//! The closed forms against textbook solutions of small linear systems
//! (variation of constants), and against themselves (midpoint doubling, the
//! flow property). `tests/linear_segments.rs` checks the converter's own
//! systems against a 60-digit reference.

use super::*;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

/// Unforced system.
fn free(a: Mat2) -> Solution {
    Solution::new(System { a, b0: [0.0; 2], b1: [0.0; 2] }).unwrap()
}

/// `e^{A·t}` column by column from the solution.
fn exponential(sol: &Solution, t: f64) -> Mat2 {
    let c0 = sol.start_at([1.0, 0.0], 0.0).at(t);
    let c1 = sol.start_at([0.0, 1.0], 0.0).at(t);
    [[c0[0], c1[0]], [c0[1], c1[1]]]
}

/// Normwise relative error: the largest entry error over the largest
/// entry (an entry far below the norm carries the norm's rounding,
/// whatever the method).
fn assert_close(got: &Mat2, want: &Mat2, tol: f64) {
    let norm = want.iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
    for r in 0..2 {
        for c in 0..2 {
            let err = (got[r][c] - want[r][c]).abs() / norm;
            assert!(err < tol, "[{r}][{c}] {} vs {} ({err:e})", got[r][c], want[r][c]);
        }
    }
}

/// The error of a state relative to the state's scale (the largest of
/// `x₀`, `want` and 1 in magnitude).
fn assert_state_close(got: &Vec2, want: &Vec2, x0: &Vec2, tol: f64) {
    let scale = x0.iter().chain(want).fold(1.0f64, |m, x| m.max(x.abs()));
    for k in 0..2 {
        let err = (got[k] - want[k]).abs() / scale;
        assert!(err < tol, "[{k}] {} vs {} ({err:e})", got[k], want[k]);
    }
}

#[test]
fn damped_rotation_matches_the_textbook_solution() {
    // x' = −a·x + ω·y, y' = −ω·x − a·y has the solution
    // e^{−at}·[cos ωt, sin ωt; −sin ωt, cos ωt] (any linear-systems text).
    let (a, w) = (3.0e3, 2.0e4);
    let sol = free([[-a, w], [-w, -a]]);
    // Short steps use the series, long ones the sine and cosine.
    for t in [1e-9, 3.7e-7, 1e-5, 2.5e-5, 7.3e-4] {
        let d = (-a * t).exp();
        let (s, c) = (w * t).sin_cos();
        assert_close(&exponential(&sol, t), &[[d * c, d * s], [-d * s, d * c]], 1e-13);
    }
}

#[test]
fn triangular_matrices_match_their_textbook_exponentials() {
    // For A = [λ₁, 1; 0, λ₂]: e^{At} = [e^{λ₁t}, (e^{λ₁t} − e^{λ₂t})/(λ₁ − λ₂); 0, e^{λ₂t}]
    // (variation of constants: the second row first, then the first),
    // and for λ₁ = λ₂ = λ (a Jordan block) the corner is t·e^{λt}.
    for (l1, l2) in [(-1.0e3, -5.0e5), (-2.0e4, -2.0e4), (-2.0e4, -2.0e4 * (1.0 + 1e-9))] {
        let sol = free([[l1, 1.0], [0.0, l2]]);
        for t in [1e-9, 1e-6, 4e-5, 1e-3] {
            let (e1, e2) = ((l1 * t).exp(), (l2 * t).exp());
            // (e^{λ₁t} − e^{λ₂t})/(λ₁ − λ₂) = e^{λ₂t}·expm1((λ₁ − λ₂)t)/(λ₁ − λ₂),
            // free of cancellation when the eigenvalues nearly coincide.
            let corner = if l1 == l2 { t * e1 } else { e2 * ((l1 - l2) * t).exp_m1() / (l1 - l2) };
            let got = exponential(&sol, t);
            assert_close(&got, &[[e1, corner], [0.0, e2]], 1e-13);
            assert!(rel(got[0][1], corner) < 1e-9, "corner {} vs {corner}", got[0][1]);
        }
    }
}

#[test]
fn ramp_forcing_matches_the_integrating_factor() {
    // Decoupled first-order rows x' = −k·x + b₀ + b₁·τ: by the integrating
    // factor, from τ₀, x(t) = x₀e^{−kt} + (b₀ + b₁τ₀)(1 − e^{−kt})/k
    // + b₁(t/k − (1 − e^{−kt})/k²).
    let (k, m) = (4.0e3, 9.0e4);
    let (b0, b1, tau0) = ([2.0, -1.0], [3.0e3, 5.0e2], 1.7e-4);
    let sol = Solution::new(System { a: [[-k, 0.0], [0.0, -m]], b0, b1 }).unwrap();
    let x0 = [0.3, 5.0];
    for t in [1e-8, 2e-6, 3e-4] {
        let want: Vec2 = core::array::from_fn(|r| {
            let rate = [k, m][r];
            let e = (-rate * t).exp();
            x0[r] * e
                + (b0[r] + b1[r] * tau0) * (1.0 - e) / rate
                + b1[r] * (t / rate - (1.0 - e) / (rate * rate))
        });
        assert_state_close(&sol.start_at(x0, tau0).at(t), &want, &x0, 1e-14);
    }
}

#[test]
fn held_form_matches_the_integrating_factor() {
    // First component held; v' = −g·v + a₁₀·i + b₀ + b₁·τ: the same
    // integrating-factor solution, and for g = 0 the polynomial
    // v₀ + f₀·t + b₁·t²/2.
    for g in [0.0, 1.0e3, 3.0e5] {
        let (a10, b0, b1, tau0) = (4.5e3, -2.0e3, 8.0e5, 2.0e-5);
        let sol =
            Solution::new(System { a: [[0.0, 0.0], [a10, -g]], b0: [0.0, b0], b1: [0.0, b1] })
                .unwrap();
        let x0 = [0.25, 4.9];
        let f0 = a10 * x0[0] + b0 + b1 * tau0;
        for t in [1e-9, 1e-6, 5e-5, 2e-3] {
            let want = if g == 0.0 {
                x0[1] + f0 * t + 0.5 * b1 * t * t
            } else {
                let e = (-g * t).exp();
                x0[1] * e + f0 * (1.0 - e) / g + b1 * (t / g - (1.0 - e) / (g * g))
            };
            let got = sol.start_at(x0, tau0).at(t);
            assert_eq!(got[0], x0[0], "held component must not move");
            assert_state_close(&got, &[x0[0], want], &x0, 1e-14);
        }
    }
}

#[test]
fn midpoint_and_end_agree_with_direct_evaluation() {
    let sol = Solution::new(System {
        a: [[-3.4e3, -2.1e4], [4.5e3, -1.8e3]],
        b0: [5.1e5, -4.0e3],
        b1: [1.0e8, 0.0],
    })
    .unwrap();
    let held =
        Solution::new(System { a: [[0.0, 0.0], [0.0, -1.8e3]], b0: [0.0, -9.0e3], b1: [0.0, 2e6] })
            .unwrap();
    for s in [sol, held] {
        let tr = s.start_at([1.2, 5.01], 2e-4);
        for t in [1e-9, 1e-6, 6e-5, 2e-3] {
            let (mid, end) = tr.midpoint_and_end(t);
            let (want_mid, want_end) = (tr.at(0.5 * t), tr.at(t));
            for k in 0..2 {
                assert!((mid[k] - want_mid[k]).abs() <= 1e-13 * want_mid[k].abs().max(1.0));
                assert!((end[k] - want_end[k]).abs() <= 1e-13 * want_end[k].abs().max(1.0));
            }
        }
    }
}

#[test]
fn a_step_split_in_two_lands_where_the_whole_step_does() {
    // The flow property x(t₁ + t₂) = x_{from x(t₁)}(t₂): the forced response
    // carries its time base.
    let sol = Solution::new(System {
        a: [[-3.4e3, -2.1e4], [4.5e3, -1.8e3]],
        b0: [5.1e5, -4.0e3],
        b1: [1.0e8, -3.0e5],
    })
    .unwrap();
    let (x0, tau0, t1, t2) = ([1.2, 5.01], 2e-4, 3.3e-7, 7.9e-6);
    let whole = sol.start_at(x0, tau0).at(t1 + t2);
    let first = sol.start_at(x0, tau0).at(t1);
    let split = sol.start_at(first, tau0 + t1).at(t2);
    for k in 0..2 {
        assert!((whole[k] - split[k]).abs() < 1e-13 * whole[k].abs(), "{whole:?} vs {split:?}");
    }
}

/// A coupled system under a ramped forcing.
fn ramped_coupled() -> Solution {
    Solution::new(System {
        a: [[-3.4e3, -2.1e4], [4.5e3, -1.8e3]],
        b0: [5.1e5, -4.0e3],
        b1: [1.0e8, -3.0e5],
    })
    .unwrap()
}

/// A held system (the first component constant) under a ramped forcing.
fn ramped_held() -> Solution {
    Solution::new(System { a: [[0.0, 0.0], [4.5e3, -1.8e3]], b0: [0.0, -9.0e3], b1: [0.0, 2e6] })
        .unwrap()
}

#[test]
fn a_followed_level_matches_the_state_and_its_rate_a_central_difference() {
    // The level c·x + k₀ + k₁·τ along a trajectory, from the scalar form,
    // against the same function of the state there; its rate against the
    // central difference (f(t + h) − f(t − h))/2h, whose error is
    // h²·f‴/6 (any numerical-analysis text).
    let (coupled, held) = (ramped_coupled(), ramped_held());
    let level = Affine { c: [0.04, 0.98], k0: -5.0, k1: -2.0e2 };
    for s in [coupled, held] {
        let (x0, tau0) = ([1.2, 5.01], 2e-4);
        let tr = s.start_at(x0, tau0);
        let path = tr.follow(&level);
        for t in [1e-9, 1e-6, 6e-5, 2e-3] {
            let want = level.value(&tr.at(t), tau0 + t);
            let (value, rate) = path.value_and_rate(t);
            assert!((value - want).abs() < 1e-13 * want.abs().max(1.0), "{value} vs {want}");
            assert_eq!(path.value(t), value);
            let h = 1e-4 * t;
            let central = (path.value(t + h) - path.value(t - h)) / (2.0 * h);
            assert!(rel(rate, central) < 1e-5, "rate {rate} vs {central} at {t}");
        }
    }
}

#[test]
fn singular_coupled_systems_are_refused() {
    assert!(Solution::new(System { a: [[1.0, 2.0], [2.0, 4.0]], b0: [1.0, 0.0], b1: [0.0; 2] })
        .is_none());
}

#[test]
fn closed_form_turns_are_where_the_rate_changes_sign() {
    // With constant forcing a level's rate vanishes where the closed forms
    // of the second-order linear ODE put it (e^{st}·cos ωt, e^{st}·cosh rt,
    // e^{st}·t: the forms in this module's documentation, as in any
    // linear-systems text). Independently of them, the rate is the level's
    // weights on x' = A·x + b at the propagated state: over each interval
    // where it changes sign, bisection on it must land on the closed-form
    // turn, and where it keeps its sign there must be no turn.
    let cases = [
        // Under-damped (Δ < 0), over-damped (Δ > 0), critically damped
        // (Δ = 0), and barely under-damped (Δ = −1e-4: ω·t near zero).
        ([[-3.4e3, -2.1e4], [4.5e3, -1.8e3]], [1.0, 0.1], -5.0),
        ([[-9.0e3, 2.0e3], [3.0e3, -1.0e3]], [1.0, 0.1], -5.0),
        ([[-2.0e3, 1.0e4], [0.0, -2.0e3]], [1.0, 0.1], -5.0),
        ([[-2.0e3, 1.0e4], [-1.0e-8, -2.0e3]], [-1.0, -0.1], 5.0),
    ];
    // Starts on either side of the forced state; the second puts the
    // over-damped system's fast mode against its slow one, so it turns.
    let starts = [[-40.0, 9.0], [2067.0, -626.0], [-900.0, -400.0]];
    let h = 2e-5;
    for (a, c, k0) in cases {
        let s = Solution::new(System { a, b0: [5.1e5, -4.0e3], b1: [0.0; 2] }).unwrap();
        let level = Affine { c, k0, k1: 0.0 };
        let mut turns = 0;
        for x0 in starts {
            let trajectory = s.start_at(x0, 1e-4);
            let path = trajectory.follow(&level);
            let rising = |t: f64| level.rate(&trajectory.rate(&trajectory.at(t), t)) > 0.0;
            for k in 0..100 {
                let (lo, hi) = (k as f64 * h, (k + 1) as f64 * h);
                if rising(lo) == rising(hi) {
                    assert_eq!(path.turn_within(lo, hi), None, "in {a:?} from {x0:?}");
                    continue;
                }
                let t = path.turn_within(lo, hi).expect("a turn inside");
                let (mut l, mut u) = (lo, hi);
                for _ in 0..80 {
                    let m = 0.5 * (l + u);
                    if rising(m) == rising(l) {
                        l = m;
                    } else {
                        u = m;
                    }
                }
                assert!((t - 0.5 * (l + u)).abs() < 1e-12 * hi, "{t} vs {l} in {a:?}");
                turns += 1;
            }
        }
        assert!(turns >= 1, "no turn seen in {a:?}");
    }
}

#[test]
fn no_closed_form_turn_for_a_ramp_or_the_held_form() {
    // A ramped forcing adds β·t to the level, and the held form has no
    // coupled solution: both are left to the caller's search.
    let (ramped, held) = (ramped_coupled(), ramped_held());
    let level = Affine { c: [1.0, 0.1], k0: -5.0, k1: 0.0 };
    for s in [ramped, held] {
        let trajectory = s.start_at([-40.0, 9.0], 1e-4);
        assert_eq!(trajectory.follow(&level).turn_within(0.0, 1e-3), None);
    }
    // The held form's rate is a constant plus one exponential: one zero
    // at most, however long; a ramped coupled one may have two, however
    // short.
    let turns_once =
        |s: &Solution, h: f64| s.start_at([-40.0, 9.0], 1e-4).follow(&level).turns_at_most_once(h);
    assert!(turns_once(&held, 1.0));
    assert!(!turns_once(&ramped, 1e-9));
}
