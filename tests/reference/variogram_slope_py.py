"""Writes tests/fixtures/variogram_slope_py.json: variogram model fits by Cressie's (1985)
weighted least squares, sum_h N_h (gammahat_h / gamma(u_h) - 1)^2, computed independently of
trajweave's core with numpy and scipy, for core/tests/variogram_fit_reference.rs.

Models: gamma(u) = tau^2 + sigma^2 (1 - rho(u; phi)) + omega^2 u^2 / 2 (random slope) and the
same without the last term (stationary), rho exponential or Gaussian; the range is bounded by
10 x the maximum lag as in trajweave.

Input: a panel generated here with numpy's seeded generator (random intercept and slope,
correlated; an exponential serial process drawn exactly at irregular times; measurement
error; mean 0, so the values are the residuals). Its empirical variogram is computed here by
enumerating every within-subject pair (15 equal-width lag bins to 6; per bin the pair count,
mean lag, classical estimate and the Cressie-Hawkins robust estimate; fewer than 30 pairs: no
estimate), the process variance by enumerating every between-subject pair, and the mean and
variance of the visit times over the rows of those pairs (each pair contributes both of its
times). The bins are written into the fixture as the input of the fits.

Fits: scipy.optimize.least_squares (trust-region reflective, bounds tau^2, sigma^2,
omega^2 >= 0 and 0 < phi <= cap, tolerances 1e-15) on the residuals sqrt(N_h) (gammahat_h /
gamma(u_h) - 1) from a grid of starts, then scipy.optimize.minimize (Nelder-Mead, tolerances
1e-14) on square-root and log coordinates from the best; the lowest criterion is kept.

Run from the repository root:

    .venv/bin/python tests/reference/variogram_slope_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/variogram_slope_py.py --check  # fail if it would change
"""

import json
import sys
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import least_squares, minimize

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "variogram_slope_py.json"
MAX_LAG = 6.0
BINS = 15
MIN_PAIRS = 30
RANGE_CAP = 10.0


def panel(rng):
    """Subjects with visits from 0 every 0.2-0.9 years up to a follow-up in [2, 8] years."""
    sd0, sd1, corr = 8.0, 1.3, 0.3
    s2, phi, tau2 = 9.0, 1.2, 4.0
    subject, time, resid = [], [], []
    for i in range(500):
        follow = rng.uniform(2.0, 8.0)
        t = [0.0]
        while True:
            nxt = t[-1] + rng.uniform(0.2, 0.9)
            if nxt > follow:
                break
            t.append(nxt)
        t = np.array(t)
        z = rng.standard_normal(2)
        b0 = sd0 * z[0]
        b1 = sd1 * (corr * z[0] + np.sqrt(1 - corr * corr) * z[1])
        w = np.empty(len(t))
        w[0] = np.sqrt(s2) * rng.standard_normal()
        for j in range(1, len(t)):
            rho = np.exp(-(t[j] - t[j - 1]) / phi)
            w[j] = rho * w[j - 1] + np.sqrt(s2 * (1 - rho * rho)) * rng.standard_normal()
        y = b0 + b1 * t + w + np.sqrt(tau2) * rng.standard_normal(len(t))
        subject += [i] * len(t)
        time += t.tolist()
        resid += y.tolist()
    return np.array(subject), np.array(time), np.array(resid)


def empirical(subject, time, resid):
    """Bins by enumeration of within-subject pairs; process variance and weighted time moments
    by enumeration of between-subject pairs."""
    edges = np.linspace(0.0, MAX_LAG, BINS + 1)
    lags, vs, roots = [], [], []
    for s in np.unique(subject):
        t, r = time[subject == s], resid[subject == s]
        j, k = np.triu_indices(len(t), 1)
        lags.append(np.abs(t[k] - t[j]))
        vs.append((r[k] - r[j]) ** 2 / 2)
        roots.append(np.sqrt(np.abs(r[k] - r[j])))
    u, v, root = np.concatenate(lags), np.concatenate(vs), np.concatenate(roots)
    keep = u <= MAX_LAG
    u, v, root = u[keep], v[keep], root[keep]
    which = np.minimum(np.searchsorted(edges, u, side="right") - 1, BINS - 1)
    out = {"lag": [], "pairs": [], "classical": [], "robust": []}
    for b in range(BINS):
        m = which == b
        n = int(m.sum())
        out["pairs"].append(n)
        out["lag"].append(float(u[m].mean()) if n else None)
        ok = n >= MIN_PAIRS
        out["classical"].append(float(v[m].mean()) if ok else None)
        out["robust"].append(float(root[m].mean() ** 4 / (0.457 + 0.494 / n) / 2) if ok else None)
    a, b = np.triu_indices(len(resid), 1)
    between = subject[a] != subject[b]
    a, b = a[between], b[between]
    out["process_variance"] = float(np.mean((resid[a] - resid[b]) ** 2 / 2))
    both = np.concatenate([time[a], time[b]])
    out["time_mean"] = float(both.mean())
    out["time_variance"] = float(both.var())
    out["max_lag"] = MAX_LAG
    return out


def rho(model, u, phi):
    return np.exp(-u / phi) if model == "exponential" else np.exp(-(u / phi) ** 2)


def gamma(model, u, tau2, s2, phi, w):
    return tau2 + s2 * (1 - rho(model, u, phi)) + w * u * u / 2


def fit(vg, model, estimate, slope):
    g = np.array([np.nan if x is None else x for x in vg[estimate]])
    lag = np.array([np.nan if x is None else x for x in vg["lag"]])
    n = np.array(vg["pairs"], dtype=float)
    ok = ~np.isnan(g)
    u, g, n = lag[ok], g[ok], n[ok]
    cap = RANGE_CAP * vg["max_lag"]

    def full(p):
        return p if slope else np.append(p, 0.0)

    def residuals(p):
        tau2, s2, phi, w = full(p)
        return np.sqrt(n) * (g / gamma(model, u, tau2, s2, phi, w) - 1)

    def criterion(p):
        return float(np.sum(residuals(p) ** 2))

    lower = [0.0, 0.0, 1e-6] + ([0.0] if slope else [])
    upper = [np.inf, np.inf, cap] + ([np.inf] if slope else [])
    level = float(np.mean(g))
    best = None
    for share in (0.1, 0.3, 1.0):
        for split in (0.25, 0.5):
            start = [split * level, (1 - split) * level, share * vg["max_lag"]]
            if slope:
                start.append(0.1 * level / vg["max_lag"] ** 2)
            r = least_squares(residuals, start, bounds=(lower, upper), method="trf",
                              x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000)
            if best is None or criterion(r.x) < criterion(best):
                best = r.x

    # Nelder-Mead on (sqrt tau^2, sqrt sigma^2, ln phi[, sqrt omega^2]) from the best point.
    def to_natural(x):
        p = [x[0] ** 2, x[1] ** 2, min(np.exp(x[2]), cap)]
        return np.array(p + ([x[3] ** 2] if slope else []))

    x0 = [np.sqrt(best[0]), np.sqrt(best[1]), np.log(best[2])] + ([np.sqrt(best[3])] if slope else [])
    nm = minimize(lambda x: criterion(to_natural(x)), x0, method="Nelder-Mead",
                  options={"xatol": 1e-14, "fatol": 1e-14, "maxiter": 100000, "maxfev": 100000})
    if criterion(to_natural(nm.x)) < criterion(best):
        best = to_natural(nm.x)
    tau2, s2, phi, w = full(best)
    return {
        "model": model, "estimate": estimate, "random_slope": slope,
        "error_variance": float(tau2), "serial_variance": float(s2), "range": float(phi),
        "slope_variance": float(w), "criterion": criterion(best),
    }


def main():
    rng = np.random.default_rng(20260611)
    vg = empirical(*panel(rng))
    cases = [fit(vg, m, e, s)
             for (m, e) in [("exponential", "classical"), ("gaussian", "robust")]
             for s in (True, False)]
    out = {
        "source": f"numpy {np.__version__} enumeration, scipy {scipy.__version__} "
        "optimize.least_squares + minimize(Nelder-Mead); written by "
        "tests/reference/variogram_slope_py.py",
        "variogram": vg,
        "fits": cases,
    }
    text = json.dumps(out, indent=1) + "\n"
    if "--check" in sys.argv:
        if not FIXTURE.exists() or FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} differs from what tests/reference/variogram_slope_py.py would write")
        print(f"{FIXTURE} is up to date")
    else:
        FIXTURE.write_text(text)


if __name__ == "__main__":
    main()
