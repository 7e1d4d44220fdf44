//! The closed-form segment solution on the converter's own systems against
//! an independent 60-digit reference: the exponential of the augmented
//! matrix by Taylor series with scaling and squaring (Moler & Van Loan,
//! "Nineteen dubious ways to compute the exponential of a matrix, twenty-five
//! years later", SIAM Review 45(1), 2003, method 3), in Python's decimal
//! arithmetic; `tests/reference/augmented_expm.py` prints the table below.

use ripplectl::sim::linear::{Solution, System};

/// A 47 µH / 220 µF stage, ESR 40 mΩ, a 2.5 Ω load in parallel with a
/// current sink of 0.3 A rising at 200 A/s; switch-node resistance `r` and
/// source `e₀ + e₁·τ`.
fn stage(r: f64, e0: f64, e1: f64) -> System {
    let (l, c, esr, g, i0, i1) = (47e-6, 220e-6, 0.04, 0.4, 0.3, 2e2);
    let alpha = 1.0 / (1.0 + esr * g);
    System {
        a: [[-(r + alpha * esr) / l, -alpha / l], [alpha / c, -alpha * g / c]],
        b0: [(e0 + alpha * esr * i0) / l, -alpha * i0 / c],
        b1: [(e1 + alpha * esr * i1) / l, -alpha * i1 / c],
    }
}

/// (switch-node resistance Ω, step s, [i_L, v_C] from [1.9 A, 4.97 V] at
/// τ₀ = 310 µs). Sources: 0.14 Ω → 24 V rising 6 kV/s (on); 0.06 Ω →
/// −0.45 V (diode); 50 Ω → 0 V (overdamped).
const REFERENCE: [(f64, f64, [f64; 2]); 15] = [
    (0.14, 1e-9, [1.9004391847051383, 4.969997987741119]),
    (0.14, 1.5625e-8, [1.9068620889101415, 4.969968783258486]),
    (0.14, 1e-6, [2.338426506898569, 4.968968825539678]),
    (0.14, 3.3e-5, [15.378424183318069, 5.907123128224183]),
    (0.14, 1e-3, [13.774437493007646, 30.98630378207093]),
    (0.06, 1e-9, [1.8998826324119498, 4.969997986496147]),
    (0.06, 1.5625e-8, [1.8981661646321162, 4.969968479317692]),
    (0.06, 1e-6, [1.7827792214641833, 4.9677259413553685]),
    (0.06, 3.3e-5, [-1.756743223848599, 4.634465659560235]),
    (0.06, 1e-3, [0.5490593631399467, -1.2605431024462215]),
    (50.0, 1e-9, [1.8978744873749944, 4.969997982003214]),
    (50.0, 1.5625e-8, [1.8670460491820586, 4.969967388420455]),
    (50.0, 1e-6, [0.5913760377041225, 4.964553096829716]),
    (50.0, 3.3e-5, [-0.09091295749438363, 4.627026599377242]),
    (50.0, 1e-3, [0.004928631863602005, -0.23005601729786485]),
];

#[test]
fn converter_segments_match_the_60_digit_reference() {
    for (r, t, want) in REFERENCE {
        let (e0, e1) = match r {
            0.14 => (24.0, 6e3),
            0.06 => (-0.45, 0.0),
            _ => (0.0, 0.0),
        };
        let solution = Solution::new(stage(r, e0, e1)).unwrap();
        let x0 = [1.9, 4.97];
        let got = solution.start_at(x0, 3.1e-4).at(t);
        // Relative to the state's scale (a component may pass zero).
        let scale = x0.iter().chain(&want).fold(0.0f64, |m, x| m.max(x.abs()));
        for k in 0..2 {
            let err = (got[k] - want[k]).abs() / scale;
            assert!(err < 1e-13, "r {r} t {t} [{k}]: {} vs {} ({err:.1e})", got[k], want[k]);
        }
    }
}
