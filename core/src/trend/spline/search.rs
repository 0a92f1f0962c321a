//! Choosing the penalty: a target df by Brent's root finder on log λ, GCV by a coarse grid and
//! Brent's minimiser (Brent 1973, *Algorithms for Minimization without Derivatives*, ch. 4
//! and 5). Each evaluation is one O(n) fit.
//!
//! The search variable is `u = log10(λ · ratio)` with `ratio = (π (n - 1))⁴ / N` on the
//! internal scale, so `u = 0` is where the penalty starts to bite at the mean spacing whatever
//! n is, and `df ∝ 10^{-u/4}` between the ends.

use super::filter::{Eval, System};

/// Absolute tolerance on a requested df.
pub(crate) const DF_TOL: f64 = 1e-9;
/// Tolerance on `u = log10 λ + const` when minimising GCV (λ to about 2e-5 relative).
const GCV_UTOL: f64 = 1e-5;
/// Lowest grid point of the GCV scan unless the scan has to reach further down: the onset of
/// smoothing at the mean spacing (df about 0.6 n for equally spaced x).
const GRID_START: f64 = 0.0;
/// Spacing of the GCV grid in decades of λ: about a factor 3 in df where `df ∝ λ^{-1/4}`.
const GRID_STEP: f64 = 2.0;
/// The GCV scan stops once the fit is this close to the least-squares line in df ...
const GRID_TOP_DF: f64 = 1e-2;
/// ... or, while its top point is the best, this close.
const GRID_FLAT_DF: f64 = 1e-5;
/// Hard limits on `u`, far beyond any penalty that changes the fit in double precision.
const U_MIN: f64 = -60.0;
const U_MAX: f64 = 200.0;

/// GCV at an evaluation: `N · RSS / (N - df)²`, N the number of observations and RSS over every
/// observation (`ssw` is the within-tie sum of squares).
pub(crate) fn gcv(e: &Eval, n_obs: f64, n_distinct: f64, ssw: f64) -> f64 {
    let rss = e.rss_w + ssw;
    // N - df from whichever trace has no cancellation.
    let resid_df = if e.df <= 0.5 * n_distinct {
        n_obs - e.df
    } else {
        (n_obs - n_distinct) + e.n_minus_df
    };
    n_obs * rss / (resid_df * resid_df)
}

pub(crate) fn lambda_of(u: f64, ratio: f64) -> f64 {
    10f64.powf(u) / ratio
}

/// Where the GCV optimum sits relative to the scanned interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct GcvSearch {
    /// Internal λ at the ends of the scanned interval.
    pub(crate) lambda_range: [f64; 2],
    /// `Some("lower")` / `Some("upper")` when the best grid point was an end of the scan.
    pub(crate) boundary: Option<&'static str>,
}

/// The internal λ giving `df = target` (2 < target < n), with the evaluations used.
pub(crate) fn solve_df(sys: &System, n_obs: f64, target: f64) -> (Eval, usize) {
    let n = sys.n() as f64;
    let mut evals = 0usize;
    let mut f = |u: f64| {
        evals += 1;
        let e = sys.eval(lambda_of(u, sys.ratio));
        // Both forms decrease in u; use the one free of cancellation.
        let v = if target <= 0.5 * n {
            e.df - target
        } else {
            (n - target) - e.n_minus_df
        };
        (v, e)
    };
    // Start near the equally spaced approximation df ≈ (N / λ)^{1/4} / π, then walk by decades.
    let guess = (sys.ratio * n_obs / (std::f64::consts::PI * (target - 1.0)).powi(4)).log10();
    let mut a = guess.clamp(U_MIN, U_MAX);
    let (mut fa, mut ea) = f(a);
    let step = if fa > 0.0 { 1.0 } else { -1.0 };
    let mut b = a;
    let (mut fb, mut eb) = (fa, ea);
    while fb * fa > 0.0 && fb != 0.0 {
        a = b;
        fa = fb;
        ea = eb;
        b += step;
        if !(U_MIN..=U_MAX).contains(&b) {
            // Unreachable in double precision: the closest end.
            return (eb, evals);
        }
        (fb, eb) = f(b);
    }
    if fa.abs() <= DF_TOL {
        return (ea, evals);
    }
    let (e, _) = zeroin(&mut f, (a, fa, ea), (b, fb, eb));
    (e, evals)
}

/// Brent's zeroin on a bracket (`fa`, `fb` of opposite signs); returns the evaluation with the
/// smallest |f| once |f| ≤ [`DF_TOL`] or the bracket has shrunk to rounding.
fn zeroin(
    f: &mut impl FnMut(f64) -> (f64, Eval),
    (mut a, mut fa, ea): (f64, f64, Eval),
    (mut b, mut fb, eb): (f64, f64, Eval),
) -> (Eval, usize) {
    let mut best = if fa.abs() < fb.abs() {
        (fa, ea)
    } else {
        (fb, eb)
    };
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    let mut iters = 0;
    for _ in 0..200 {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5e-13;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb.abs() <= DF_TOL {
            break;
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * xm * q - (tol1 * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        let (v, ev) = f(b);
        iters += 1;
        fb = v;
        if v.abs() < best.0.abs() {
            best = (v, ev);
        }
    }
    (best.1, iters)
}

/// The GCV-minimising internal λ: a scan by decades of λ from near interpolation to near the
/// straight line, then Brent's minimiser between the neighbours of the best grid point.
pub(crate) fn search_gcv(sys: &System, n_obs: f64, ssw: f64) -> (Eval, usize, GcvSearch) {
    let n = sys.n() as f64;
    let mut evals = 0usize;
    let mut score = |u: f64| {
        evals += 1;
        let e = sys.eval(lambda_of(u, sys.ratio));
        (gcv(&e, n_obs, n, ssw), e)
    };
    // Up from near interpolation to near the line, every GRID_STEP decades of λ.
    let mut grid: Vec<(f64, f64, Eval)> = Vec::new();
    let mut u = GRID_START;
    loop {
        let (g, e) = score(u);
        grid.push((u, g, e));
        let top_best = best_of(&grid) == grid.len() - 1;
        let flat = if top_best { GRID_FLAT_DF } else { GRID_TOP_DF };
        if e.df - 2.0 <= flat || u >= U_MAX {
            break;
        }
        u += GRID_STEP;
    }
    let mut k = best_of(&grid);
    // While the lowest point is the best, reach further down, until the fit is within 0.1% of
    // interpolation in df (clustered x need penalties far below the onset at mean spacing).
    while k == 0 && grid[0].2.n_minus_df > 1e-3 * (n - 2.0) && grid[0].0 > U_MIN {
        let u = grid[0].0 - GRID_STEP;
        let (g, e) = score(u);
        grid.insert(0, (u, g, e));
        k = best_of(&grid);
    }
    let last = grid.len() - 1;
    let boundary = if k == 0 {
        Some("lower")
    } else if k == last {
        Some("upper")
    } else {
        None
    };
    let (lo, hi) = (k.saturating_sub(1), (k + 1).min(last));
    // The neighbours as Brent's w (the lower score) and v.
    let (nw, nv) = if grid[lo].1 <= grid[hi].1 || hi == k {
        (lo, hi)
    } else {
        (hi, lo)
    };
    let (_, best) = fmin(
        &mut score,
        grid[lo].0,
        grid[hi].0,
        (grid[k].0, grid[k].1, grid[k].2),
        (grid[nw].0, grid[nw].1),
        (grid[nv].0, grid[nv].1),
    );
    let search = GcvSearch {
        lambda_range: [
            lambda_of(grid[0].0, sys.ratio),
            lambda_of(grid[last].0, sys.ratio),
        ],
        boundary,
    };
    (best, evals, search)
}

/// Index of the first minimum among finite scores (a NaN score never wins).
fn best_of(grid: &[(f64, f64, Eval)]) -> usize {
    (0..grid.len())
        .filter(|&i| grid[i].1.is_finite())
        .fold(None, |best: Option<usize>, i| match best {
            Some(j) if grid[j].1 <= grid[i].1 => Some(j),
            _ => Some(i),
        })
        .unwrap_or(0)
}

/// Brent's minimiser on `[a, b]` started from a known best point `x0` inside it and two more
/// known points (`w0` second best, `v0` the other): the first step can then be parabolic
/// instead of golden, which saves several fits.
fn fmin(
    f: &mut impl FnMut(f64) -> (f64, Eval),
    mut a: f64,
    mut b: f64,
    (x0, f0, e0): (f64, f64, Eval),
    (w0, fw0): (f64, f64),
    (v0, fv0): (f64, f64),
) -> (f64, Eval) {
    let golden = 0.5 * (3.0 - 5f64.sqrt());
    let (mut x, mut w, mut v) = (x0, w0, v0);
    let (mut fx, mut fw, mut fv) = (f0, fw0, fv0);
    let mut ex = e0;
    // A previous step as long as the bracket lets the parabola through on the first pass.
    let (mut d, mut e) = (0.0f64, b - a);
    for _ in 0..200 {
        let xm = 0.5 * (a + b);
        let tol1 = f64::EPSILON.sqrt() * 1e-3 * x.abs() + GCV_UTOL / 3.0;
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden_step = true;
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            let etemp = e;
            if p.abs() < (0.5 * q * etemp).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol1.copysign(xm - x);
                }
                golden_step = false;
            }
        }
        if golden_step {
            e = if x >= xm { a - x } else { b - x };
            d = golden * e;
        }
        let u = x + if d.abs() >= tol1 { d } else { tol1.copysign(d) };
        let (fu, eu) = f(u);
        // A NaN score counts as worse than any number.
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
            ex = eu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    (fx, ex)
}
