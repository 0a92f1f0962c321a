"""Writes tests/fixtures/screen_loglik.json: Gaussian log-likelihoods of residuals under the
covariance structures of trajweave's covariance screening, computed independently of
trajweave's core with scipy:

- at fixed parameters: the sum over subjects of scipy.stats.multivariate_normal.logpdf with
  each subject's covariance built here from its visit times (or bins);
- maximised: scipy.optimize.minimize of minus that sum (Nelder-Mead from several starts,
  then BFGS from the best point, the best of all kept) on log-variances and log-ranges
  (toeplitz on the raw autocovariances; unstructured on a Cholesky factor with log diagonal;
  the intercept-slope correlation through atanh);
- the correlation each structure implies between two measurements at times t and t + u:
  V_01 / sqrt(V_00 V_11) of the 2 x 2 covariance built here for the times [t, t + u];
- intercept + slope + error maximised a second way, by statsmodels MixedLM (ML, no fixed
  effects, random intercept and slope: exog_re = [1, time]).

Three small generated panels are written into the fixture: an irregular one (numpy seeded
generator; random intercept + exponential serial process + error), one on the nominal
schedule 0, 1, 2, 3 (tolerance 0.2) with missed visits, for toeplitz and unstructured, and
an irregular one with a random intercept and slope, exponential serial process and error
(its own seeded generator, so the other two do not change).

Run from the repository root:

    .venv/bin/python tests/reference/screen_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/screen_py.py --check  # fail if it would change
"""

import json
import sys
from pathlib import Path

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy.optimize import minimize
from scipy.stats import multivariate_normal

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "screen_loglik.json"
SCHEDULE = [0.0, 1.0, 2.0, 3.0]
TOLERANCE = 0.2


def irregular_panel(rng):
    subject, time, resid = [], [], []
    nu2, s2, phi, tau2 = 4.0, 2.5, 1.2, 2.0
    for i in range(60):
        n = int(rng.integers(3, 9))
        t = np.cumsum(np.concatenate([[rng.uniform(0, 0.5)], rng.uniform(0.2, 1.5, n - 1)]))
        d = np.abs(t[:, None] - t[None, :])
        v = nu2 + s2 * np.exp(-d / phi) + tau2 * np.eye(n)
        r = rng.multivariate_normal(np.zeros(n), v)
        subject += [i + 1] * n
        time += [float(x) for x in t]
        resid += [float(x) for x in r]
    return {"subject": subject, "time": time, "resid": resid}


def schedule_panel(rng):
    subject, time, resid = [], [], []
    k = len(SCHEDULE)
    full = np.array([[2.0 + 3.0 * 0.6 ** abs(a - b) + (0.5 * a if a == b else 0.0)
                      for b in range(k)] for a in range(k)])
    for i in range(60):
        keep = rng.uniform(size=k) >= 0.25
        if not keep.any():
            keep[int(rng.integers(k))] = True
        y = rng.multivariate_normal(np.zeros(k), full)
        for a in range(k):
            if keep[a]:
                subject.append(i + 1)
                time.append(float(SCHEDULE[a] + rng.uniform(-0.15, 0.15)))
                resid.append(float(y[a]))
    return {"subject": subject, "time": time, "resid": resid}


def slope_panel(rng):
    """Random intercept and slope (G at time 0), exponential serial process, error."""
    subject, time, resid = [], [], []
    g = np.array([[5.0, 0.5], [0.5, 0.4]])
    s2, phi, tau2 = 2.0, 1.0, 1.0
    for i in range(120):
        n = int(rng.integers(3, 11))
        t = np.cumsum(np.concatenate([[rng.uniform(0, 0.5)], rng.uniform(0.2, 1.5, n - 1)]))
        z = np.column_stack([np.ones(n), t])
        d = np.abs(t[:, None] - t[None, :])
        v = z @ g @ z.T + s2 * np.exp(-d / phi) + tau2 * np.eye(n)
        r = rng.multivariate_normal(np.zeros(n), v)
        subject += [i + 1] * n
        time += [float(x) for x in t]
        resid += [float(x) for x in r]
    return {"subject": subject, "time": time, "resid": resid}


def split(panel):
    """Per subject (times, residuals), subjects in id order, visits by time."""
    out = {}
    for s, t, r in zip(panel["subject"], panel["time"], panel["resid"]):
        out.setdefault(s, []).append((t, r))
    res = []
    for s in sorted(out):
        rows = sorted(out[s])
        res.append((np.array([a for a, _ in rows]), np.array([b for _, b in rows])))
    return res


def bins_of(t):
    return np.array([int(np.argmin(np.abs(np.array(SCHEDULE) - x))) for x in t])


def cov_irregular(name, p, t):
    d = np.abs(t[:, None] - t[None, :])
    n = len(t)
    if name == "independence":
        return p[0] * np.eye(n)
    if name == "exchangeable":
        return p[0] * np.ones((n, n)) + p[1] * np.eye(n)
    if name == "exponential":
        return p[0] * np.exp(-d / p[1])
    if name == "gaussian":
        return p[0] * np.exp(-((d / p[1]) ** 2))
    if name == "intercept_exponential_error":
        return p[0] + p[1] * np.exp(-d / p[2]) + p[3] * np.eye(n)
    if name in ("intercept_slope_error", "intercept_slope_exponential_error"):
        c = p[2] * np.sqrt(p[0] * p[1])
        z = np.column_stack([np.ones(n), t])
        v = z @ np.array([[p[0], c], [c, p[1]]]) @ z.T
        if name == "intercept_slope_error":
            return v + p[3] * np.eye(n)
        return v + p[3] * np.exp(-d / p[4]) + p[5] * np.eye(n)
    raise ValueError(name)


def unstructured_matrix(p, k):
    s = np.zeros((k, k))
    idx = 0
    for a in range(k):
        for b in range(a, k):
            s[a, b] = s[b, a] = p[idx]
            idx += 1
    return s


def cov_binned(name, p, t):
    b = bins_of(t)
    k = len(SCHEDULE)
    if name == "toeplitz":
        return np.array([[p[abs(x - y)] for y in b] for x in b])
    s = unstructured_matrix(p, k)
    return s[np.ix_(b, b)]


def loglik(name, p, subjects):
    """Sum of scipy.stats.multivariate_normal.logpdf over subjects (-inf if a V is not PD)."""
    cov = cov_binned if name in ("toeplitz", "unstructured") else cov_irregular
    total = 0.0
    for t, r in subjects:
        v = cov(name, p, t)
        try:
            np.linalg.cholesky(v)
        except np.linalg.LinAlgError:
            return -np.inf
        total += multivariate_normal.logpdf(r, mean=np.zeros(len(r)), cov=v)
    return float(total)


def loglik_fast(name, p, subjects):
    """The same sum by numpy's Cholesky (faster, for the optimiser's many evaluations)."""
    cov = cov_binned if name in ("toeplitz", "unstructured") else cov_irregular
    total = 0.0
    for t, r in subjects:
        try:
            low = np.linalg.cholesky(cov(name, p, t))
        except np.linalg.LinAlgError:
            return -np.inf
        z = np.linalg.solve(low, r)
        total -= 0.5 * (len(r) * np.log(2 * np.pi) + 2 * np.log(np.diag(low)).sum() + z @ z)
    return float(total)


def natural(name, x):
    """Optimiser coordinates to the structure's parameters."""
    k = len(SCHEDULE)
    if name == "toeplitz":
        return list(x)
    if name == "unstructured":
        low = np.zeros((k, k))
        low[np.tril_indices(k)] = x
        low[np.diag_indices(k)] = np.exp(np.diag(low))
        s = low @ low.T
        return [s[a, b] for a in range(k) for b in range(a, k)]
    if name in ("intercept_slope_error", "intercept_slope_exponential_error"):
        # (ln nu0, ln nu1, atanh correlation, ln of the rest)
        v = list(np.exp(x))
        v[2] = float(np.tanh(x[2]))
        return v
    return list(np.exp(x))


def maximise(name, subjects, starts):
    def f(x):
        v = -loglik_fast(name, natural(name, x), subjects)
        return v if np.isfinite(v) else 1e300

    best = None
    for x0 in starts:
        res = minimize(f, x0, method="Nelder-Mead",
                       options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 6000,
                                "maxfev": 6000, "adaptive": len(x0) > 3})
        if best is None or res.fun < best.fun:
            best = res
    pol = minimize(f, best.x, method="BFGS", options={"gtol": 1e-9})
    if pol.fun < best.fun:
        best = pol
    res = minimize(f, best.x, method="Nelder-Mead",
                   options={"xatol": 1e-11, "fatol": 1e-13, "maxiter": 6000,
                            "maxfev": 6000, "adaptive": len(best.x) > 3})
    if res.fun < best.fun:
        best = res
    # The maximum reported is evaluated by scipy's logpdf at the optimiser's point.
    return {"structure": name, "loglik": loglik(name, natural(name, best.x), subjects),
            "parameters": [float(v) for v in natural(name, best.x)]}


def mixedlm_maximum(panel):
    """statsmodels MixedLM, ML, no fixed effects, random intercept and slope on time."""
    r = np.array(panel["resid"])
    t = np.array(panel["time"])
    groups = np.array(panel["subject"])
    model = sm.MixedLM(r, np.zeros((len(r), 0)), groups=groups,
                       exog_re=np.column_stack([np.ones(len(r)), t]))
    best = model.fit(reml=False, method=["bfgs"], maxiter=20000, gtol=1e-10)
    g = np.asarray(best.cov_re)
    return {"panel": "slope", "structure": "intercept_slope_error", "loglik": float(best.llf),
            "parameters": [float(g[0, 0]), float(g[1, 1]),
                           float(g[0, 1] / np.sqrt(g[0, 0] * g[1, 1])), float(best.scale)]}


def main():
    rng = np.random.default_rng(20260)
    irregular = irregular_panel(rng)
    schedule = schedule_panel(rng)
    slope = slope_panel(np.random.default_rng(20261))
    irr, sch, slo = split(irregular), split(schedule), split(slope)
    fixed_irregular = [
        ("independence", [2.0]),
        ("exchangeable", [3.0, 1.5]),
        ("exponential", [5.0, 0.9]),
        ("gaussian", [5.0, 0.6]),
        ("intercept_exponential_error", [4.0, 2.5, 1.2, 0.8]),
    ]
    fixed_schedule = [
        ("toeplitz", [4.0, 2.2, 1.5, 1.0]),
        ("unstructured", list(unstructured_matrix_params())),
    ]
    fixed = [{"panel": "irregular", "structure": n, "parameters": p, "loglik": loglik(n, p, irr)}
             for n, p in fixed_irregular]
    fixed += [{"panel": "schedule", "structure": n, "parameters": p, "loglik": loglik(n, p, sch)}
              for n, p in fixed_schedule]
    fixed_slope = [
        ("irregular", "intercept_slope_error", [4.0, 0.3, -0.4, 2.5]),
        ("irregular", "intercept_slope_exponential_error", [3.0, 0.2, 0.5, 2.0, 1.1, 0.7]),
        ("slope", "intercept_slope_error", [5.0, 0.4, 0.35, 3.0]),
        ("slope", "intercept_slope_exponential_error", [5.0, 0.4, 0.35, 2.0, 1.0, 1.0]),
        ("slope", "intercept_slope_exponential_error", [0.0, 0.5, 0.0, 1.5, 0.7, 0.0]),
    ]
    by_name = {"irregular": irr, "slope": slo}
    fixed += [{"panel": pn, "structure": n, "parameters": p, "loglik": loglik(n, p, by_name[pn])}
              for pn, n, p in fixed_slope]

    implied = []
    for name, p in fixed_irregular + [(n, q) for pn, n, q in fixed_slope if pn == "slope"]:
        for t0 in (0.0, 2.5):
            lags = [0.0, 0.4, 1.0, 3.0, -1.5]
            corr = []
            for u in lags:
                v = cov_irregular(name, p, np.array([t0, t0 + u]))
                corr.append(float(v[0, 1] / np.sqrt(v[0, 0] * v[1, 1])))
            implied.append({"structure": name, "parameters": p, "time": t0, "lags": lags,
                            "correlation": corr})

    ln = np.log
    maxima = [
        dict(maximise("independence", irr, [[0.0], [2.0]]), panel="irregular"),
        dict(maximise("exchangeable", irr, [[0.0, 0.0], [ln(4), ln(1)]]), panel="irregular"),
        dict(maximise("exponential", irr, [[ln(5), 0.0], [ln(5), ln(5)]]), panel="irregular"),
        dict(maximise("gaussian", irr, [[ln(5), 0.0], [ln(5), ln(3)]]), panel="irregular"),
        dict(maximise("intercept_exponential_error", irr,
                      [[0.0, 0.0, 0.0, 0.0], [ln(4), ln(2), ln(1), ln(1)]]), panel="irregular"),
        dict(maximise("toeplitz", sch, [[4.0, 2.0, 1.5, 1.0], [5.0, 3.0, 2.0, 2.0]]),
             panel="schedule"),
        dict(maximise("unstructured", sch,
                      [list(start_chol())]), panel="schedule"),
        dict(maximise("intercept_slope_error", slo,
                      [[ln(5), ln(0.4), 0.3, ln(3)], [0.0, 0.0, 0.0, 0.0]]), panel="slope"),
        dict(maximise("intercept_slope_exponential_error", slo,
                      [[ln(5), ln(0.4), 0.3, ln(2), 0.0, ln(1)],
                       [0.0, ln(0.2), 0.0, 0.0, ln(2), 0.0]]), panel="slope"),
    ]
    out = {
        "source": f"scipy {scipy.__version__} stats.multivariate_normal.logpdf and "
        "optimize.minimize (Nelder-Mead, BFGS), numpy "
        f"{np.__version__}, statsmodels {statsmodels.__version__} MixedLM; written by "
        "tests/reference/screen_py.py",
        "schedule": {"times": SCHEDULE, "tolerance": TOLERANCE},
        "panels": {"irregular": irregular, "schedule": schedule, "slope": slope},
        "fixed": fixed,
        "maxima": maxima,
        "implied": implied,
        "mixedlm": [mixedlm_maximum(slope)],
    }
    text = json.dumps(out, indent=1) + "\n"
    if "--check" in sys.argv:
        if not FIXTURE.exists() or FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} differs from what tests/reference/screen_py.py would write")
        print(f"{FIXTURE} is up to date")
    else:
        FIXTURE.write_text(text)


def unstructured_matrix_params():
    s = np.array([[5.0, 2.5, 2.0, 1.5], [2.5, 5.5, 2.6, 2.0],
                  [2.0, 2.6, 6.0, 2.8], [1.5, 2.0, 2.8, 6.5]])
    return [float(s[a, b]) for a in range(4) for b in range(a, 4)]


def start_chol():
    """Cholesky coordinates (log diagonal) of 2 J + 3 I, a start for unstructured."""
    low = np.linalg.cholesky(2.0 * np.ones((4, 4)) + 3.0 * np.eye(4))
    low[np.diag_indices(4)] = np.log(np.diag(low))
    return low[np.tril_indices(4)]


if __name__ == "__main__":
    main()
