//! Minimisers of a negative log-likelihood: Brent's 1-D search after a grid bracket,
//! Nelder-Mead, and BFGS with a backtracking line search. An objective may return +inf (a
//! covariance not positive definite); every method treats that as "worse than anything".
//! Used by the covariance screening and the variogram model fit.

/// A minimiser's result.
#[derive(Debug, Clone)]
pub(crate) struct Minimum {
    pub x: Vec<f64>,
    pub f: f64,
    pub iterations: usize,
    pub converged: bool,
}

const GOLD: f64 = 0.381_966_011_250_105_1;

/// Minimises `f` over [lo, hi]: a grid of `points` equally spaced values, then Brent's method
/// (Brent 1973, ch. 5: golden section with parabolic steps) inside the grid cell pair around
/// the best grid point, stopping when the bracket is below 2 (1e-8 |x| + 1e-10) wide. The
/// iteration count includes the grid. `f` = +inf everywhere gives f = +inf.
pub(crate) fn grid_brent<F: FnMut(f64) -> f64>(
    mut f: F,
    lo: f64,
    hi: f64,
    points: usize,
    max_iter: usize,
) -> Minimum {
    let step = (hi - lo) / (points - 1) as f64;
    let xs: Vec<f64> = (0..points).map(|i| lo + step * i as f64).collect();
    let fs: Vec<f64> = xs.iter().map(|&x| f(x)).collect();
    let best = (0..points).fold(0, |b, i| if fs[i] < fs[b] { i } else { b });
    if !fs[best].is_finite() {
        return Minimum {
            x: vec![xs[best]],
            f: f64::INFINITY,
            iterations: points,
            converged: false,
        };
    }
    let a = xs[best.saturating_sub(1)];
    let b = xs[(best + 1).min(points - 1)];
    let (x, fx, it, conv) = brent(&mut f, a, xs[best], b, fs[best], max_iter);
    Minimum {
        x: vec![x],
        f: fx,
        iterations: points + it,
        converged: conv,
    }
}

/// Brent's localmin on [a, b] from the point x (value fx) inside it.
fn brent<F: FnMut(f64) -> f64>(
    f: &mut F,
    mut a: f64,
    x0: f64,
    mut b: f64,
    fx0: f64,
    max_iter: usize,
) -> (f64, f64, usize, bool) {
    let (mut x, mut w, mut v) = (x0, x0, x0);
    let (mut fx, mut fw, mut fv) = (fx0, fx0, fx0);
    let (mut d, mut e) = (0.0f64, 0.0f64);
    for it in 0..max_iter {
        let m = 0.5 * (a + b);
        let tol = 1e-8 * x.abs() + 1e-10;
        let tol2 = 2.0 * tol;
        if (x - m).abs() <= tol2 - 0.5 * (b - a) {
            return (x, fx, it, true);
        }
        let mut golden = true;
        if e.abs() > tol && fw.is_finite() && fv.is_finite() {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let e_old = e;
            if p.abs() < (0.5 * q * e_old).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = if x < m { tol } else { -tol };
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { b - x } else { a - x };
            d = GOLD * e;
        }
        let u = if d.abs() >= tol {
            x + d
        } else {
            x + tol.copysign(d)
        };
        let fu = f(u);
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            (v, fv, w, fw, x, fx) = (w, fw, x, fx, u, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, fv, w, fw) = (w, fw, u, fu);
            } else if fu <= fv || v == x || v == w {
                (v, fv) = (u, fu);
            }
        }
    }
    (x, fx, max_iter, false)
}

/// Nelder-Mead (Nelder & Mead 1965; coefficients 1, 2, 1/2, 1/2 as in Lagarias et al. 1998)
/// from `x0` with an initial simplex of `step` along each axis. Stops when the spread of the
/// simplex values is at most `ftol (1 + |f_best|)` and its largest distance from the best
/// vertex (max norm) at most `xtol`, or after `max_iter` iterations.
pub(crate) fn nelder_mead<F: FnMut(&[f64]) -> f64>(
    mut f: F,
    x0: &[f64],
    step: f64,
    ftol: f64,
    xtol: f64,
    max_iter: usize,
) -> Minimum {
    let n = x0.len();
    let mut simplex: Vec<Vec<f64>> = vec![x0.to_vec()];
    for i in 0..n {
        let mut x = x0.to_vec();
        x[i] += step;
        simplex.push(x);
    }
    let mut fs: Vec<f64> = simplex.iter().map(|x| f(x)).collect();
    let mut order: Vec<usize> = (0..=n).collect();
    for it in 0..max_iter {
        order.sort_by(|&a, &b| fs[a].total_cmp(&fs[b]));
        let (best, worst, second) = (order[0], order[n], order[n - 1]);
        let spread = fs[worst] - fs[best];
        let size = simplex
            .iter()
            .flat_map(|x| x.iter().zip(&simplex[best]).map(|(a, b)| (a - b).abs()))
            .fold(0.0, f64::max);
        if fs[best].is_finite() && spread <= ftol * (1.0 + fs[best].abs()) && size <= xtol {
            return Minimum {
                x: simplex[best].clone(),
                f: fs[best],
                iterations: it,
                converged: true,
            };
        }
        let mut centroid = vec![0.0; n];
        for &i in &order[..n] {
            for (c, v) in centroid.iter_mut().zip(&simplex[i]) {
                *c += v / n as f64;
            }
        }
        let toward = |t: f64| -> Vec<f64> {
            centroid
                .iter()
                .zip(&simplex[worst])
                .map(|(c, w)| c + t * (w - c))
                .collect()
        };
        let xr = toward(-1.0);
        let fr = f(&xr);
        if fr < fs[best] {
            let xe = toward(-2.0);
            let fe = f(&xe);
            if fe < fr {
                (simplex[worst], fs[worst]) = (xe, fe);
            } else {
                (simplex[worst], fs[worst]) = (xr, fr);
            }
            continue;
        }
        if fr < fs[second] {
            (simplex[worst], fs[worst]) = (xr, fr);
            continue;
        }
        // Contraction: outside when the reflection helped at all, inside otherwise.
        let (xc, fc) = if fr < fs[worst] {
            let xc = toward(-0.5);
            let fc = f(&xc);
            (xc, fc.min(f64::INFINITY))
        } else {
            let xc = toward(0.5);
            let fc = f(&xc);
            (xc, fc)
        };
        if fc < fs[worst].min(fr) {
            (simplex[worst], fs[worst]) = (xc, fc);
            continue;
        }
        // Shrink toward the best vertex.
        let xb = simplex[best].clone();
        for i in 0..=n {
            if i != best {
                let x: Vec<f64> = simplex[i]
                    .iter()
                    .zip(&xb)
                    .map(|(v, b)| b + 0.5 * (v - b))
                    .collect();
                fs[i] = f(&x);
                simplex[i] = x;
            }
        }
    }
    let best = (0..=n).fold(0, |b, i| if fs[i] < fs[b] { i } else { b });
    Minimum {
        x: simplex[best].clone(),
        f: fs[best],
        iterations: max_iter,
        converged: false,
    }
}

/// BFGS (Nocedal & Wright 2006, alg. 6.1) with an Armijo backtracking line search; `fg`
/// returns the value and gradient, or `None` where the objective is +inf. The first step is
/// scaled to move no coordinate by more than 0.1, and the inverse Hessian starts as
/// (s'y / y'y) I after it (Nocedal & Wright eq. 6.20). Stops when the predicted decrease
/// g' H g is at most `tol (1 + |f|)`, or after `max_iter` iterations.
pub(crate) fn bfgs<F: FnMut(&[f64]) -> Option<(f64, Vec<f64>)>>(
    mut fg: F,
    x0: &[f64],
    tol: f64,
    max_iter: usize,
) -> Minimum {
    let n = x0.len();
    let mut x = x0.to_vec();
    let Some((mut f, mut g)) = fg(&x) else {
        return Minimum {
            x,
            f: f64::INFINITY,
            iterations: 0,
            converged: false,
        };
    };
    let mut h: Option<Vec<f64>> = None;
    for it in 0..max_iter {
        let p: Vec<f64> = match &h {
            Some(h) => (0..n)
                .map(|i| -(0..n).map(|j| h[i * n + j] * g[j]).sum::<f64>())
                .collect(),
            None => {
                let gmax = g.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                if gmax == 0.0 {
                    return Minimum {
                        x,
                        f,
                        iterations: it,
                        converged: true,
                    };
                }
                g.iter().map(|v| -0.1 * v / gmax).collect()
            }
        };
        let slope: f64 = p.iter().zip(&g).map(|(a, b)| a * b).sum();
        if h.is_some() && -slope <= tol * (1.0 + f.abs()) {
            return Minimum {
                x,
                f,
                iterations: it,
                converged: true,
            };
        }
        if slope >= 0.0 {
            // Not a descent direction: restart from a scaled gradient step.
            h = None;
            continue;
        }
        let mut alpha = 1.0;
        let mut next = None;
        for _ in 0..60 {
            let xn: Vec<f64> = x.iter().zip(&p).map(|(a, b)| a + alpha * b).collect();
            if let Some((fnew, gnew)) = fg(&xn) {
                if fnew <= f + 1e-4 * alpha * slope {
                    next = Some((xn, fnew, gnew));
                    break;
                }
            }
            alpha *= 0.5;
        }
        let Some((xn, fnew, gnew)) = next else {
            return Minimum {
                x,
                f,
                iterations: it,
                converged: false,
            };
        };
        let s: Vec<f64> = xn.iter().zip(&x).map(|(a, b)| a - b).collect();
        let y: Vec<f64> = gnew.iter().zip(&g).map(|(a, b)| a - b).collect();
        let sy: f64 = s.iter().zip(&y).map(|(a, b)| a * b).sum();
        (x, f, g) = (xn, fnew, gnew);
        if sy
            <= 1e-12
                * s.iter().map(|v| v * v).sum::<f64>().sqrt()
                * y.iter().map(|v| v * v).sum::<f64>().sqrt()
        {
            continue;
        }
        let hm = h.get_or_insert_with(|| {
            let yy: f64 = y.iter().map(|v| v * v).sum();
            let mut m = vec![0.0; n * n];
            (0..n).for_each(|i| m[i * n + i] = sy / yy);
            m
        });
        // H <- (I - rho s y') H (I - rho y s') + rho s s'.
        let rho = 1.0 / sy;
        let hy: Vec<f64> = (0..n)
            .map(|i| (0..n).map(|j| hm[i * n + j] * y[j]).sum())
            .collect();
        let yhy: f64 = y.iter().zip(&hy).map(|(a, b)| a * b).sum();
        for i in 0..n {
            for j in 0..n {
                hm[i * n + j] +=
                    -rho * (hy[i] * s[j] + s[i] * hy[j]) + (rho * rho * yhy + rho) * s[i] * s[j];
            }
        }
    }
    Minimum {
        x,
        f,
        iterations: max_iter,
        converged: false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn brent_finds_a_parabola_minimum() {
        // (x - 0.3)^2 + 1: minimum at 0.3 (closed form).
        let m = grid_brent(|x| (x - 0.3) * (x - 0.3) + 1.0, -5.0, 5.0, 11, 100);
        assert!(m.converged && (m.x[0] - 0.3).abs() < 1e-7);
    }

    #[test]
    fn nelder_mead_and_bfgs_find_the_rosenbrock_minimum() {
        // Rosenbrock (1960): minimum 0 at (1, 1).
        let f = |x: &[f64]| 100.0 * (x[1] - x[0] * x[0]).powi(2) + (1.0 - x[0]).powi(2);
        let m = nelder_mead(f, &[-1.2, 1.0], 0.5, 1e-14, 1e-8, 5000);
        assert!(m.converged && (m.x[0] - 1.0).abs() < 1e-6 && (m.x[1] - 1.0).abs() < 1e-6);
        let fg = |x: &[f64]| {
            let g = vec![
                -400.0 * x[0] * (x[1] - x[0] * x[0]) - 2.0 * (1.0 - x[0]),
                200.0 * (x[1] - x[0] * x[0]),
            ];
            Some((f(x), g))
        };
        let m = bfgs(fg, &[-1.2, 1.0], 1e-16, 1000);
        assert!(m.converged && (m.x[0] - 1.0).abs() < 1e-6, "{m:?}");
    }
}
