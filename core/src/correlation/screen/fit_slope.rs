//! Maximum-likelihood fits of the random-slope structures (intercept + slope + error, and
//! with an exponential serial process): starting values, Nelder-Mead and stops.
//!
//! The overall scale c of V = c M is profiled out; Nelder-Mead (restarted once from its result
//! with a quarter-size simplex) searches the shares of the variance components, the
//! correlation of intercept and slope and (with the serial part) ln range:
//! (g00, g11, [s2,] tau2) / c = softmax(a0, a1, [a2,] 0), r = tanh(z), g01 = r sqrt(g00 g11),
//! all on the centred and scaled time of [`TimeScale`]. Logits are held within +-30, z within
//! +-10 (|r| <= 1 - 4e-9) and ln range within its searched interval, so a maximum on the
//! boundary ends on a flat edge instead of a walk to infinity.

use super::fit::{Control, Fitted, Moments, GRID_POINTS, LOGIT_CAP, NM_XTOL};
use super::irregular::{profiled, Data};
use super::random_slope::{
    covariance_of, slope_terms, variances_and_correlation, SlopeShape, SlopeStats, TimeScale,
};
use crate::numeric::optimize::nelder_mead;

/// Largest |z| of the correlation r = tanh(z) searched.
const CORR_CAP: f64 = 10.0;
/// Smallest share a start gives a component (so its logit is finite).
const START_SHARE: f64 = 1e-4;
/// Largest |correlation| of a start.
const START_CORR: f64 = 0.9;

/// Variance components on the scaled time: G_u, serial variance, range, error variance.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Components {
    pub g: [f64; 3],
    pub s2: f64,
    pub phi: f64,
    pub tau2: f64,
}

/// Starting values from the data alone.
pub(crate) struct SlopeMoments {
    /// Method-of-moments G_u from per-subject least-squares lines (None: no subject has three
    /// visits at two or more distinct times).
    pub g: Option<[f64; 3]>,
    /// Pooled residual variance about those lines (else the mean squared residual).
    pub tau2: f64,
    /// Mean squared residual.
    pub total: f64,
    /// Mean gap between consecutive visits of a subject (None: no gap).
    pub mean_gap: Option<f64>,
}

impl SlopeMoments {
    /// Per subject with n >= 3 visits and spread in time: the least-squares line r = a + b u
    /// (u the scaled time), its residual sum of squares and the sampling covariance factor
    /// (X'X)^-1. Then sigma2 = sum RSS / sum (n - 2) and G_u = mean (a, b)(a, b)' - sigma2 mean
    /// (X'X)^-1 (the residuals have mean zero), variances floored at 1e-3 of the mean squared
    /// residual and the correlation clamped to +-0.9.
    pub fn new(data: Data<'_>, scale: TimeScale) -> SlopeMoments {
        let total = data.r.iter().map(|v| v * v).sum::<f64>() / data.n_obs() as f64;
        let (mut aa, mut ab, mut bb) = (0.0, 0.0, 0.0);
        let (mut xa, mut xab, mut xb) = (0.0, 0.0, 0.0);
        let (mut rss, mut dof, mut m) = (0.0, 0.0, 0.0);
        let (mut gaps, mut gap_sum) = (0.0, 0.0);
        for i in 0..data.n_subjects() {
            let rows = data.rows(i);
            let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
            for w in t.windows(2) {
                gaps += 1.0;
                gap_sum += w[1] - w[0];
            }
            let n = t.len() as f64;
            if t.len() < 3 {
                continue;
            }
            let u: Vec<f64> = t
                .iter()
                .map(|x| (x - scale.centre) / scale.spread)
                .collect();
            let ubar = u.iter().sum::<f64>() / n;
            let rbar = r.iter().sum::<f64>() / n;
            let sxx: f64 = u.iter().map(|x| (x - ubar) * (x - ubar)).sum();
            if sxx <= 1e-12 * n {
                continue;
            }
            let sxy: f64 = u.iter().zip(r).map(|(x, y)| (x - ubar) * y).sum();
            let b = sxy / sxx;
            let a = rbar - b * ubar;
            rss += u
                .iter()
                .zip(r)
                .map(|(x, y)| (y - a - b * x) * (y - a - b * x))
                .sum::<f64>();
            dof += n - 2.0;
            m += 1.0;
            aa += a * a;
            ab += a * b;
            bb += b * b;
            xa += 1.0 / n + ubar * ubar / sxx;
            xab -= ubar / sxx;
            xb += 1.0 / sxx;
        }
        let mean_gap = (gaps > 0.0 && gap_sum > 0.0).then(|| gap_sum / gaps);
        if m < 2.0 || dof <= 0.0 {
            return SlopeMoments {
                g: None,
                tau2: total,
                total,
                mean_gap,
            };
        }
        let sigma2 = rss / dof;
        let floor = 1e-3 * total;
        let v0 = ((aa - sigma2 * xa) / m).max(floor);
        let v1 = ((bb - sigma2 * xb) / m).max(floor);
        let r = ((ab - sigma2 * xab) / m / (v0 * v1).sqrt()).clamp(-START_CORR, START_CORR);
        SlopeMoments {
            g: Some(covariance_of(v0, v1, r)),
            tau2: sigma2.max(floor),
            total,
            mean_gap,
        }
    }
}

/// out = softmax(x, 0) (the last share has logit 0).
fn shares(x: &[f64], out: &mut [f64]) {
    let top = x.iter().fold(0.0f64, |a, &b| a.max(b));
    let mut d = (-top).exp();
    for (o, v) in out.iter_mut().zip(x) {
        *o = (v - top).exp();
        d += *o;
    }
    out[x.len()] = (-top).exp();
    for o in out.iter_mut() {
        *o /= d;
    }
}

/// Optimiser coordinates of a start: logits of the shares relative to the error share (each
/// share at least [`START_SHARE`]), atanh of the correlation (within +-[`START_CORR`]), and ln
/// range when `serial`.
fn coordinates(c: Components, serial: bool, lo: f64, hi: f64) -> Vec<f64> {
    let (v0, v1, r) = variances_and_correlation(c.g);
    let parts: Vec<f64> = if serial {
        vec![v0, v1, c.s2, c.tau2]
    } else {
        vec![v0, v1, c.tau2]
    };
    let total: f64 = parts.iter().sum();
    let share = |v: f64| (v / total).max(START_SHARE);
    let last = share(parts[parts.len() - 1]);
    let mut x: Vec<f64> = parts[..parts.len() - 1]
        .iter()
        .map(|&v| (share(v) / last).ln())
        .collect();
    x.push(r.clamp(-START_CORR, START_CORR).atanh());
    if serial {
        x.push(c.phi.ln().clamp(lo, hi));
    }
    x
}

/// The fit of either random-slope structure from the given starts (the best is searched).
pub(crate) fn random_slope(
    data: Data<'_>,
    scale: TimeScale,
    serial: bool,
    starts: &[Components],
    mo: &Moments,
    c: Control,
) -> Fitted {
    let n = data.n_obs();
    let (lo, hi) = mo.log_range_bounds();
    let k = if serial { 3 } else { 2 };
    let n_params = if serial { 6 } else { 4 };
    // The shape at clamped coordinates, and the profiled l there.
    let shape = |x: &[f64]| {
        let mut logit = [0.0; 3];
        for (l, v) in logit.iter_mut().zip(&x[..k]) {
            *l = v.clamp(-LOGIT_CAP, LOGIT_CAP);
        }
        let mut w = [0.0; 4];
        shares(&logit[..k], &mut w[..=k]);
        let r = x[k].clamp(-CORR_CAP, CORR_CAP).tanh();
        SlopeShape {
            g: covariance_of(w[0], w[1], r),
            w_s: if serial { w[2] } else { 0.0 },
            phi: if serial {
                x[k + 1].clamp(lo, hi).exp()
            } else {
                1.0
            },
            w_tau: w[k],
        }
    };
    // Without the serial part, per-subject sums make each evaluation O(1) per subject.
    let stats = (!serial).then(|| SlopeStats::new(data, scale));
    let terms = |sh: SlopeShape| match &stats {
        Some(st) => st.terms(data, sh),
        None => slope_terms(data, scale, sh),
    };
    let negl = |x: &[f64]| {
        if !x.iter().all(|v| v.is_finite() && v.abs() < 700.0) {
            return f64::INFINITY;
        }
        match terms(shape(x)) {
            Some((ld, q)) => -profiled(n, ld, q).0,
            None => f64::INFINITY,
        }
    };
    let mut best: Option<(f64, Vec<f64>)> = None;
    for s in starts {
        let x = coordinates(*s, serial, lo, hi);
        let f = negl(&x);
        if f.is_finite() && best.as_ref().is_none_or(|b| f < b.0) {
            best = Some((f, x));
        }
    }
    let Some((_, x0)) = best else {
        return Fitted::singular(
            n_params,
            starts.len(),
            "the covariance is not positive definite at any start",
        );
    };
    let first = nelder_mead(negl, &x0, 1.0, c.tolerance, NM_XTOL, c.max_iterations);
    let second = nelder_mead(negl, &first.x, 0.25, c.tolerance, NM_XTOL, c.max_iterations);
    let m = if second.f <= first.f { &second } else { &first };
    let sh = shape(&m.x);
    let Some((ld, q)) = terms(sh) else {
        return Fitted::singular(
            n_params,
            starts.len(),
            "not positive definite at the optimum",
        );
    };
    let (l, total) = profiled(n, ld, q);
    let g0 = scale.to_origin(sh.g.map(|v| v * total));
    let (v0, v1, r) = variances_and_correlation(g0);
    let mut parameters = vec![v0, v1, r];
    let mut note = None;
    if serial {
        let u = sh.phi.ln();
        parameters.extend([total * sh.w_s, sh.phi, total * sh.w_tau]);
        let half_step = 0.5 * (hi - lo) / (GRID_POINTS - 1) as f64;
        if u <= lo + half_step || u >= hi - half_step {
            note = Some(format!(
                "range at the edge of the searched interval [{:.3e}, {:.3e}]",
                lo.exp(),
                hi.exp()
            ));
        }
    } else {
        parameters.push(total * sh.w_tau);
    }
    if mo.min_gap.is_none() {
        note = Some(
            "the random slope is not identified within subjects: no subject has two distinct \
             visit times"
                .into(),
        );
    }
    Fitted {
        parameters,
        loglik: l,
        iterations: starts.len() + first.iterations + second.iterations,
        converged: second.converged,
        note,
    }
}

/// Starts of intercept + slope + error: the moment estimate, the exchangeable fit with a
/// slope share of 5 %, and equal shares; `exchangeable` is (nu2, tau2) of that fit.
pub(crate) fn slope_error_starts(
    sm: &SlopeMoments,
    exchangeable: Option<[f64; 2]>,
) -> Vec<Components> {
    let t = sm.total;
    let mut out = Vec::new();
    let plain = |g: [f64; 3], tau2: f64| Components {
        g,
        s2: 0.0,
        phi: 1.0,
        tau2,
    };
    if let Some(g) = sm.g {
        out.push(plain(g, sm.tau2));
    }
    if let Some([nu, tau]) = exchangeable {
        out.push(plain([nu, 0.0, 0.05 * t], tau));
    }
    out.push(plain([t / 3.0, 0.0, t / 3.0], t / 3.0));
    out
}

/// Starts of intercept + slope + exponential + error: from the intercept + slope + error fit
/// (G_u and tau2, given) and from the moment estimate, the error split between serial and error
/// parts as 1/2 : 1/2 or 0.8 : 0.2, each at the exponential fit's range, the mean gap between
/// visits and the middle of the searched interval (ln scale).
pub(crate) fn slope_serial_starts(
    sm: &SlopeMoments,
    slope_error: Option<([f64; 3], f64)>,
    exponential_range: Option<f64>,
    mo: &Moments,
) -> Vec<Components> {
    let (lo, hi) = mo.log_range_bounds();
    let mut ranges = Vec::new();
    ranges.extend(exponential_range);
    ranges.extend(sm.mean_gap);
    ranges.push((0.5 * (lo + hi)).exp());
    let mut sources = Vec::new();
    sources.extend(slope_error);
    sources.extend(sm.g.map(|g| (g, sm.tau2)));
    if sources.is_empty() {
        let t = sm.total;
        sources.push(([t / 4.0, 0.0, t / 4.0], t / 2.0));
    }
    let mut out = Vec::new();
    for (g, tau2) in sources {
        for serial_share in [0.5, 0.8] {
            for &phi in &ranges {
                out.push(Components {
                    g,
                    s2: serial_share * tau2,
                    phi,
                    tau2: (1.0 - serial_share) * tau2,
                });
            }
        }
    }
    out
}
