"""Recomputes tests/fixtures/spline_exact.json: the cubic smoothing spline at n = 2000 in
60-digit decimal arithmetic, independent of trajweave's core.

Method: Reinsch's algorithm as in Green & Silverman (1994) section 2.3.3: with spacings h_j,
the tridiagonal Q and R of their section 2.1.2 and unit weights, the second derivatives at the
interior knots solve (R + lam Q^T Q) gamma = Q^T y and the fit is y - lam Q gamma. The
pentadiagonal matrix is factored as L D L^T; df = 2 + tr(B^-1 R) from the band of B^-1
(Hutchinson & de Hoog 1985). In double precision this system loses about log10(cond) ~ 13
digits at n = 2000 under heavy smoothing; with 60 digits every stored value is exact to the
last bit of a double. Inputs are doubles converted exactly (Decimal(float)).

Data: x_i = 10 u, y_i = x (10 - x) / 25 + (v - 0.5), u and v from the 64-bit LCG
s <- s * 6364136223846793005 + 1442695040888963407 (mod 2^64), u = (s >> 11) / 2^53, drawn in
the order u_1, v_1, u_2, v_2, ...; every operation is exact or correctly rounded, so the Rust
test rebuilds the same doubles. lam is on the x scale given (scipy's make_smoothing_spline
criterion). Run from the repository root:

    .venv/bin/python tests/reference/spline_exact.py          # rewrite the fixture
    .venv/bin/python tests/reference/spline_exact.py --check  # fail if it would change
"""

import json
import sys
from decimal import Decimal, getcontext
from pathlib import Path

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "spline_exact.json"
N = 2000
SEED = 0x2545F4914F6CDD1D
LAMS = [1e-3, 10.0, 1e4]
getcontext().prec = 60


def data():
    s = SEED
    x, y = [], []
    for _ in range(N):
        s = (s * 6364136223846793005 + 1442695040888963407) % 2**64
        u = (s >> 11) / 2.0**53
        s = (s * 6364136223846793005 + 1442695040888963407) % 2**64
        v = (s >> 11) / 2.0**53
        xi = 10.0 * u
        x.append(xi)
        y.append(xi * (10.0 - xi) / 25.0 + (v - 0.5))
    return x, y


def fit(x, y, lam):
    order = sorted(range(N), key=lambda i: x[i])
    xs = [Decimal(x[i]) for i in order]
    ys = [Decimal(y[i]) for i in order]
    lam = Decimal(lam)
    n, m = N, N - 2
    h = [xs[j + 1] - xs[j] for j in range(n - 1)]
    a = [1 / h[j] for j in range(m)]
    c = [1 / h[j + 1] for j in range(m)]
    b = [-(a[j] + c[j]) for j in range(m)]
    # Bands of M = Q^T Q and R.
    m0 = [a[j] ** 2 + b[j] ** 2 + c[j] ** 2 for j in range(m)]
    m1 = [b[j] * a[j + 1] + c[j] * b[j + 1] for j in range(m - 1)]
    m2 = [c[j] * a[j + 2] for j in range(m - 2)]
    r0 = [(h[j] + h[j + 1]) / 3 for j in range(m)]
    r1 = [h[j + 1] / 6 for j in range(m - 1)]
    qy = [(ys[j + 2] - ys[j + 1]) / h[j + 1] - (ys[j + 1] - ys[j]) / h[j] for j in range(m)]
    zero = Decimal(0)
    d, l1, l2 = [zero] * m, [zero] * m, [zero] * m
    for i in range(m):
        di = r0[i] + lam * m0[i]
        bi = r1[i] + lam * m1[i] if i + 1 < m else zero
        ci = lam * m2[i] if i + 2 < m else zero
        if i >= 1:
            di -= l1[i - 1] ** 2 * d[i - 1]
            bi -= l2[i - 1] * l1[i - 1] * d[i - 1]
        if i >= 2:
            di -= l2[i - 2] ** 2 * d[i - 2]
        d[i], l1[i], l2[i] = di, bi / di, ci / di
    g = list(qy)
    for i in range(m):
        if i >= 1:
            g[i] -= l1[i - 1] * g[i - 1]
        if i >= 2:
            g[i] -= l2[i - 2] * g[i - 2]
    for i in reversed(range(m)):
        g[i] /= d[i]
        if i + 1 < m:
            g[i] -= l1[i] * g[i + 1]
        if i + 2 < m:
            g[i] -= l2[i] * g[i + 2]
    fitted = []
    for i in range(n):
        qg = zero
        if i < m:
            qg += a[i] * g[i]
        if 1 <= i <= m:
            qg += b[i - 1] * g[i - 1]
        if 2 <= i <= m + 1:
            qg += c[i - 2] * g[i - 2]
        fitted.append(ys[i] - lam * qg)
    # Band of B^-1 from L^T S = D^-1 L^-1, last row first; tr(B^-1 R) from it.
    s11 = s12 = s22 = zero
    tr = zero
    for j in reversed(range(m)):
        s02 = -l1[j] * s12 - l2[j] * s22
        s01 = -l1[j] * s11 - l2[j] * s12
        s00 = 1 / d[j] - l1[j] * s01 - l2[j] * s02
        tr += s00 * r0[j] + (2 * s01 * r1[j] if j + 1 < m else zero)
        s22, s12, s11 = s11, s01, s00
    return {"lam": float(lam), "df": float(2 + tr), "fitted": [float(v) for v in fitted]}


def build():
    x, y = data()
    return {
        "source": "Reinsch's algorithm (Green & Silverman 1994, 2.3.3) in 60-digit decimal "
                  "arithmetic; tests/reference/spline_exact.py",
        "n": N,
        "seed": SEED,
        "x_check": [x[0], x[1], x[N - 1]],
        "y_check": [y[0], y[1], y[N - 1]],
        "fits": [fit(x, y, lam) for lam in LAMS],
    }


if __name__ == "__main__":
    text = json.dumps(build(), indent=1) + "\n"
    if "--check" in sys.argv:
        if not FIXTURE.exists() or FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
