//! Maximum-likelihood fit of each candidate: starting values, optimiser and stops.

use super::binned::{toeplitz, Patterns};
use super::irregular::{profiled, shape_terms, Data, ExchangeableStats, Serial, Shape};
use super::structures::upper_triangle;
use crate::numeric::linalg::is_positive_definite;
use crate::numeric::optimize::{bfgs, grid_brent, nelder_mead};

/// Grid points of the 1-D searches.
pub(crate) const GRID_POINTS: usize = 30;
/// Exchangeable: the ratio nu2 / tau2 is searched on [1e-6, 1e6] in log scale.
const RATIO_BOUNDS: (f64, f64) = (1e-6, 1e6);
/// Nelder-Mead: largest vertex distance from the best at convergence (log/logit scale).
pub(crate) const NM_XTOL: f64 = 1e-6;

/// One candidate's maximum.
#[derive(Clone)]
pub(crate) struct Fitted {
    pub parameters: Vec<f64>,
    pub loglik: f64,
    pub iterations: usize,
    pub converged: bool,
    pub note: Option<String>,
}

impl Fitted {
    pub(crate) fn singular(n_params: usize, iterations: usize, why: &str) -> Fitted {
        Fitted {
            parameters: vec![f64::NAN; n_params],
            loglik: f64::NEG_INFINITY,
            iterations,
            converged: false,
            note: Some(why.to_string()),
        }
    }
}

/// Controls shared by the fits.
#[derive(Clone, Copy)]
pub(crate) struct Control {
    pub max_iterations: usize,
    pub tolerance: f64,
}

/// Data summaries the starting values and search intervals come from.
pub(crate) struct Moments {
    /// Smallest positive gap between consecutive visits of a subject (None: no such gap).
    pub min_gap: Option<f64>,
    /// Largest within-subject follow-up span.
    pub max_span: f64,
}

impl Moments {
    pub fn new(data: Data<'_>) -> Moments {
        let mut min_gap = f64::INFINITY;
        let mut max_span: f64 = 0.0;
        for i in 0..data.n_subjects() {
            let t = &data.time[data.rows(i)];
            for w in t.windows(2) {
                let d = w[1] - w[0];
                if d > 0.0 && d < min_gap {
                    min_gap = d;
                }
            }
            max_span = max_span.max(t[t.len() - 1] - t[0]);
        }
        Moments {
            min_gap: min_gap.is_finite().then_some(min_gap),
            max_span,
        }
    }

    /// The log-range interval searched: [ln(min gap / 10), ln(max span * 10)].
    pub fn log_range_bounds(&self) -> (f64, f64) {
        match self.min_gap {
            Some(d) => ((d / 10.0).ln(), (self.max_span * 10.0).ln()),
            None => (1e-3f64.ln(), 1e3f64.ln()),
        }
    }
}

/// Independence: s2 = mean(r^2), closed form.
pub(crate) fn independence(data: Data<'_>) -> Fitted {
    let ss: f64 = data.r.iter().map(|v| v * v).sum();
    let (l, s2) = profiled(data.n_obs(), 0.0, ss);
    Fitted {
        parameters: vec![s2],
        loglik: l,
        iterations: 0,
        converged: true,
        note: None,
    }
}

/// Exchangeable: tau2 profiled, the ratio g = nu2 / tau2 by grid + Brent on ln g, compared
/// with the boundary g = 0.
pub(crate) fn exchangeable(data: Data<'_>, stats: &ExchangeableStats, c: Control) -> Fitted {
    let n = data.n_obs();
    let negl = |u: f64| {
        let (ld, q) = stats.terms(u.exp());
        -profiled(n, ld, q).0
    };
    let m = grid_brent(
        negl,
        RATIO_BOUNDS.0.ln(),
        RATIO_BOUNDS.1.ln(),
        GRID_POINTS,
        c.max_iterations,
    );
    let (l0, tau0) = profiled(n, 0.0, stats.ss);
    if l0 >= -m.f {
        return Fitted {
            parameters: vec![0.0, tau0],
            loglik: l0,
            iterations: m.iterations,
            converged: true,
            note: Some("intercept_variance at its bound 0".into()),
        };
    }
    let g = m.x[0].exp();
    let (ld, q) = stats.terms(g);
    let (l, tau2) = profiled(n, ld, q);
    let note = (m.x[0] >= RATIO_BOUNDS.1.ln() - 1e-6)
        .then(|| "ratio intercept_variance / error_variance at the search limit 1e6".into());
    Fitted {
        parameters: vec![g * tau2, tau2],
        loglik: l,
        iterations: m.iterations,
        converged: m.converged,
        note,
    }
}

/// Exponential or gaussian: s2 profiled, ln(range) by grid + Brent.
pub(crate) fn serial(data: Data<'_>, kind: Serial, mo: &Moments, c: Control) -> Fitted {
    let n = data.n_obs();
    let shape = |u: f64| Shape {
        serial: kind,
        phi: u.exp(),
        w_nu: 0.0,
        w_s: 1.0,
        w_tau: 0.0,
    };
    let negl = |u: f64| match shape_terms(data, shape(u)) {
        Some((ld, q)) => -profiled(n, ld, q).0,
        None => f64::INFINITY,
    };
    let (lo, hi) = mo.log_range_bounds();
    let m = grid_brent(negl, lo, hi, GRID_POINTS, c.max_iterations);
    if !m.f.is_finite() {
        return Fitted::singular(
            2,
            m.iterations,
            "the correlation matrix is not positive definite at any range tried \
             (duplicated visit times make a pure serial structure singular)",
        );
    }
    let Some((ld, q)) = shape_terms(data, shape(m.x[0])) else {
        return Fitted::singular(2, m.iterations, "not positive definite at the optimum");
    };
    let (l, s2) = profiled(n, ld, q);
    let step = (hi - lo) / (GRID_POINTS - 1) as f64;
    let note = if mo.min_gap.is_none() {
        Some("range not identified: no subject has two distinct visit times".to_string())
    } else if m.x[0] < lo + 0.5 * step || m.x[0] > hi - 0.5 * step {
        Some(format!(
            "range at the edge of the searched interval [{:.3e}, {:.3e}]",
            lo.exp(),
            hi.exp()
        ))
    } else {
        None
    };
    Fitted {
        parameters: vec![s2, m.x[0].exp()],
        loglik: l,
        iterations: m.iterations,
        converged: m.converged,
        note,
    }
}

/// Largest |logit| of a variance share in the intercept + exponential + error fit.
pub(crate) const LOGIT_CAP: f64 = 30.0;

/// Weights (nu, serial, error) = softmax(a, b, 0).
fn weights(x: &[f64]) -> (f64, f64, f64) {
    let top = x[0].max(x[1]).max(0.0);
    let (ea, eb, e0) = ((x[0] - top).exp(), (x[1] - top).exp(), (-top).exp());
    let d = ea + eb + e0;
    (ea / d, eb / d, e0 / d)
}

/// Intercept + exponential + error: overall scale profiled, Nelder-Mead on
/// (logit-type weights a, b; ln range) from the best of eight starts, then restarted once.
pub(crate) fn intercept_exponential_error(
    data: Data<'_>,
    range_start: f64,
    mo: &Moments,
    c: Control,
) -> Fitted {
    let n = data.n_obs();
    let (lo, hi) = mo.log_range_bounds();
    // The range is kept in the searched interval and the share logits within +-LOGIT_CAP
    // (a share of about 1e-13): beyond them the likelihood is flat, so Nelder-Mead stops
    // instead of walking along a ridge (e.g. a range growing without bound when the serial
    // part acts as a second random intercept).
    let clamp = |x: &[f64]| -> [f64; 3] {
        [
            x[0].clamp(-LOGIT_CAP, LOGIT_CAP),
            x[1].clamp(-LOGIT_CAP, LOGIT_CAP),
            x[2].clamp(lo, hi),
        ]
    };
    let shape = |x: &[f64]| {
        let x = clamp(x);
        let (w_nu, w_s, w_tau) = weights(&x);
        Shape {
            serial: Serial::Exponential,
            phi: x[2].exp(),
            w_nu,
            w_s,
            w_tau,
        }
    };
    let negl = |x: &[f64]| {
        if !x.iter().all(|v| v.is_finite() && v.abs() < 700.0) {
            return f64::INFINITY;
        }
        match shape_terms(data, shape(x)) {
            Some((ld, q)) => -profiled(n, ld, q).0,
            None => f64::INFINITY,
        }
    };
    let mut starts = Vec::new();
    for u in [range_start.ln().clamp(lo, hi), 0.5 * (lo + hi)] {
        // (nu, serial, error) shares 1/3 each, or 0.6 for one of them and 0.2 for the others.
        for (a, b) in [
            (0.0, 0.0),
            (3f64.ln(), 0.0),
            (0.0, 3f64.ln()),
            (-(3f64.ln()), -(3f64.ln())),
        ] {
            starts.push(vec![a, b, u]);
        }
    }
    let mut evals = 0;
    let best = starts
        .iter()
        .map(|x| {
            evals += 1;
            (negl(x), x)
        })
        .min_by(|a, b| a.0.total_cmp(&b.0));
    let Some((f0, x0)) = best.filter(|b| b.0.is_finite()) else {
        return Fitted::singular(
            4,
            evals,
            "the covariance is not positive definite at any start",
        );
    };
    let _ = f0;
    let first = nelder_mead(negl, x0, 1.0, c.tolerance, NM_XTOL, c.max_iterations);
    let second = nelder_mead(negl, &first.x, 0.25, c.tolerance, NM_XTOL, c.max_iterations);
    let m = if second.f <= first.f {
        second.clone()
    } else {
        first.clone()
    };
    let Some((ld, q)) = shape_terms(data, shape(&m.x)) else {
        return Fitted::singular(4, evals, "not positive definite at the optimum");
    };
    let (l, scale) = profiled(n, ld, q);
    let x = clamp(&m.x);
    let (w_nu, w_s, w_tau) = weights(&x);
    let at_edge = x[2] <= lo || x[2] >= hi;
    Fitted {
        parameters: vec![scale * w_nu, scale * w_s, x[2].exp(), scale * w_tau],
        loglik: l,
        iterations: first.iterations + second.iterations,
        converged: second.converged,
        note: at_edge.then(|| {
            format!(
                "range at the edge of the searched interval [{:.3e}, {:.3e}]",
                lo.exp(),
                hi.exp()
            )
        }),
    }
}

/// Shrinks the off-diagonal part of a start by 0.9 until positive definite.
fn shrink_to_pd(mut s: Vec<f64>, k: usize) -> Vec<f64> {
    for _ in 0..400 {
        if is_positive_definite(&s, k) {
            break;
        }
        for a in 0..k {
            for b in 0..k {
                if a != b {
                    s[a * k + b] *= 0.9;
                }
            }
        }
    }
    s
}

/// Toeplitz: BFGS with the analytic gradient on c / c0_start, from the lag moments.
pub(crate) fn toeplitz_fit(p: &Patterns, c: Control) -> Result<Fitted, String> {
    let k = p.k;
    let (moments, missing) = p.lag_moments();
    if let Some(h) = missing.first() {
        return Err(format!("no subject has two visits {h} bins apart"));
    }
    let full = shrink_to_pd(toeplitz(&moments), k);
    let start: Vec<f64> = full[..k].to_vec();
    let v = start[0];
    let fg = |x: &[f64]| {
        let cs: Vec<f64> = x.iter().map(|z| z * v).collect();
        let mut g = vec![0.0; k * k];
        let l = p.loglik(&toeplitz(&cs), Some(&mut g))?;
        let mut grad = vec![0.0; k];
        for a in 0..k {
            for b in 0..k {
                grad[a.abs_diff(b)] -= g[a * k + b] * v;
            }
        }
        Some((-l, grad))
    };
    let x0: Vec<f64> = start.iter().map(|z| z / v).collect();
    let m = bfgs(fg, &x0, c.tolerance, c.max_iterations);
    if !m.f.is_finite() {
        return Ok(Fitted::singular(
            k,
            m.iterations,
            "not positive definite at the start",
        ));
    }
    Ok(Fitted {
        parameters: m.x.iter().map(|z| z * v).collect(),
        loglik: -m.f,
        iterations: m.iterations,
        converged: m.converged,
        note: None,
    })
}

/// Unstructured: EM for incomplete multivariate normal data from the pairwise covariance,
/// stopping at a relative change of l below the tolerance.
pub(crate) fn unstructured_fit(p: &Patterns, c: Control) -> Result<Fitted, String> {
    let k = p.k;
    if let Some((a, b)) = p.unseen_pairs().first() {
        return Err(format!("no subject has visits in both bins {a} and {b}"));
    }
    let mut s = shrink_to_pd(p.pairwise().0, k);
    let mut prev = f64::NEG_INFINITY;
    for it in 0..c.max_iterations {
        let Some((l, next)) = p.em_step(&s) else {
            return Ok(Fitted::singular(
                k * (k + 1) / 2,
                it,
                "not positive definite during EM",
            ));
        };
        if (l - prev).abs() <= c.tolerance * l.abs() {
            return Ok(Fitted {
                parameters: upper_triangle(k, &s),
                loglik: l,
                iterations: it,
                converged: true,
                note: None,
            });
        }
        prev = l;
        s = next;
    }
    let l = p.loglik(&s, None).unwrap_or(f64::NEG_INFINITY);
    Ok(Fitted {
        parameters: upper_triangle(k, &s),
        loglik: l,
        iterations: c.max_iterations,
        converged: false,
        note: None,
    })
}
