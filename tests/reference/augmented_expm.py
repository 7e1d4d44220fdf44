"""Reference states for tests/linear_segments.rs, at 60 significant digits.

The converter's segment x' = A x + b0 + b1 tau is written as the augmented
system z' = M z, z = [i, v, 1, tau], and solved as z(t) = exp(M t) z(0) by a
Taylor series (40 terms) after scaling M t to norm <= 0.01, then squaring
(Moler & Van Loan's method 3), all in Python's decimal arithmetic at 60
digits, so rounding stays far below double precision. Prints the Rust table.

    python3 tests/reference/augmented_expm.py
"""

from decimal import Decimal as D, getcontext

getcontext().prec = 60


def mul(a, b):
    n = len(a)
    return [[sum(a[r][k] * b[k][c] for k in range(n)) for c in range(n)] for r in range(n)]


def expm(m, t):
    n = len(m)
    a = [[x * t for x in row] for row in m]
    norm = max(sum(abs(x) for x in row) for row in a)
    squarings = 0
    while norm > D("0.01"):
        norm /= 2
        squarings += 1
    a = [[x / (D(2) ** squarings) for x in row] for row in a]
    term = [[D(int(r == c)) for c in range(n)] for r in range(n)]
    total = [row[:] for row in term]
    for k in range(1, 40):
        term = [[x / k for x in row] for row in mul(term, a)]
        total = [[total[r][c] + term[r][c] for c in range(n)] for r in range(n)]
    for _ in range(squarings):
        total = mul(total, total)
    return total


# Must match the stage in tests/linear_segments.rs.
L, C, ESR, G = D("47e-6"), D("220e-6"), D("0.04"), D("0.4")
I0, I1 = D("0.3"), D("2e2")
X0, TAU0 = (D("1.9"), D("4.97")), D("3.1e-4")
MODES = [("0.14", "24", "6e3"), ("0.06", "-0.45", "0"), ("50", "0", "0")]
STEPS = ["1e-9", "1.5625e-8", "1e-6", "3.3e-5", "1e-3"]

alpha = 1 / (1 + ESR * G)
for r, e0, e1 in MODES:
    r, e0, e1 = D(r), D(e0), D(e1)
    m = [
        [-(r + alpha * ESR) / L, -alpha / L, (e0 + alpha * ESR * I0) / L, (e1 + alpha * ESR * I1) / L],
        [alpha / C, -alpha * G / C, -alpha * I0 / C, -alpha * I1 / C],
        [D(0)] * 4,
        [D(0), D(0), D(1), D(0)],
    ]
    for t in STEPS:
        e = expm(m, D(t))
        z = [X0[0], X0[1], D(1), TAU0]
        i, v = (sum(e[row][k] * z[k] for k in range(4)) for row in range(2))
        # The nearest doubles, shortest round-trip form.
        print(f"    ({float(r)!r}, {t}, [{float(i)!r}, {float(v)!r}]),")
