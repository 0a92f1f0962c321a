//! Residuals from a mean model: response minus the model's fitted value at each observation.
//!
//! Three mean models ([`MeanModel`]):
//! - **a curve** already fitted (for example `mean_curve(...).curve`), evaluated at each time by
//!   [`Curve::predict`] (linear between fitted points, end values held beyond them);
//! - **a polynomial** in time of degree 0 to 3, fitted by least squares. Time is first centred
//!   and scaled to u = (t - c) / s in [-1, 1] (c the mid-range, s the half-range), so that the
//!   columns 1, u, u^2, u^3 are well conditioned even for calendar years (t near 2000); the
//!   least-squares problem is then solved by Householder QR (Golub & Van Loan 2013, sec. 5.3),
//!   never by normal equations. The coefficients are reported on the original time scale,
//!   intercept first (the order of R's `coef(lm(y ~ poly(t, d, raw = TRUE)))`), by expanding
//!   the polynomial in u; the fitted values are computed in u, where they are accurate;
//! - **one curve per group**: the levels are the distinct values of a covariate (at most
//!   [`MAX_LEVELS`]), and each level's rows are fitted on their own with the given smoother.
//!
//! Sums over rows are formed in fixed blocks of [`BLOCK`] rows, run in parallel and added in
//! block order, so the result is the same for any number of threads. The cost is O(n d^2) for
//! a polynomial of degree d; a curve costs one binary search per row.

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::trend::curve::Curve;
use crate::trend::smoother::Smoother;

/// Most levels a [`MeanModel::ByGroup`] covariate may have.
pub const MAX_LEVELS: usize = 50;
/// Highest polynomial degree.
pub const MAX_DEGREE: usize = 3;
/// Rows per block of a parallel sum (fixed, so sums do not depend on the thread count).
pub const BLOCK: usize = 1 << 14;

/// The mean model residuals are taken from.
// One model is built per call, so the size of the Curve variant costs nothing worth a Box.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum MeanModel {
    /// A fitted curve of response on time (e.g. `mean_curve(...).curve`), evaluated by
    /// [`Curve::predict`].
    Curve(Curve),
    /// Least-squares polynomial in time of degree 0..=3, fitted by Householder QR on centred
    /// and scaled time.
    Polynomial {
        /// The degree, 0 to 3.
        degree: usize,
    },
    /// One curve per level of a covariate (its distinct values; at most 50 levels), each fitted
    /// with the smoother to that level's rows.
    ByGroup {
        /// The covariate's name.
        covariate: String,
        /// The smoother fitted within each level.
        smoother: Smoother,
    },
}

/// The fit of one level of a [`MeanModel::ByGroup`] covariate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GroupFit {
    /// The covariate value that defines the level.
    pub level: f64,
    /// Number of observations in the level.
    pub rows: usize,
    /// The curve fitted to them.
    pub curve: Curve,
}

/// Residuals and fitted values of a mean model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Residuals {
    /// Response minus fitted value, in panel order (see [`Panel::to_input_order`]).
    pub residuals: Vec<f64>,
    /// Fitted values, in panel order.
    pub fitted: Vec<f64>,
    /// The model, in words: `curve (kernel)`, `polynomial of degree 2`, `kernel by diet`.
    pub model: String,
    /// Polynomial only: coefficients on the original time scale, intercept first.
    pub coefficients: Option<Vec<f64>>,
    /// By-group only: each level's fit, levels increasing.
    pub groups: Option<Vec<GroupFit>>,
}

/// Residuals of the panel's response from a mean model.
///
/// # Examples
/// ```
/// use trajweave_core::individuals::residuals::{residuals, MeanModel};
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2)]);
/// let panel = Panel::new(ids, &[0.0, 1.0, 0.0, 1.0], &[1.0, 3.0, 2.0, 4.0], vec![], Missing::Error)?;
/// let r = residuals(&panel, &MeanModel::Polynomial { degree: 1 })?;
/// let c = r.coefficients.unwrap(); // y = 1.5 + 2 t
/// assert!((c[0] - 1.5).abs() < 1e-12 && (c[1] - 2.0).abs() < 1e-12);
/// assert!((r.residuals[0] + 0.5).abs() < 1e-12);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for a degree above 3, an unknown covariate (the message lists the
/// panel's covariates) or a covariate with more than 50 levels; [`Error::TooFew`] when the
/// panel has fewer distinct times than degree + 1; the smoother's errors for a level too thin
/// to fit (a `TooFew` names the level); [`Error::NonFinite`] when a curve gives a non-finite
/// fitted value (row counted from 1 in the caller's order).
pub fn residuals(panel: &Panel, mean: &MeanModel) -> Result<Residuals> {
    let (fitted, model, coefficients, groups) = match mean {
        MeanModel::Curve(curve) => {
            let fitted = predict_par(curve, panel.time());
            (fitted, format!("curve ({})", curve.method), None, None)
        }
        MeanModel::Polynomial { degree } => {
            let (fitted, coef) = polynomial(panel.time(), panel.response(), *degree)?;
            let model = format!("polynomial of degree {degree}");
            (fitted, model, Some(coef), None)
        }
        MeanModel::ByGroup {
            covariate,
            smoother,
        } => {
            let (fitted, groups) = by_group(panel, covariate, smoother)?;
            let model = format!("{} by {covariate}", smoother.family());
            (fitted, model, None, Some(groups))
        }
    };
    if let Some(k) = crate::individuals::ranking::first_non_finite(&fitted) {
        return Err(Error::NonFinite {
            argument: "fitted".into(),
            row: panel.order()[k] + 1,
            value: format!("{}", fitted[k]),
        });
    }
    let residuals = panel
        .response()
        .par_iter()
        .zip(&fitted)
        .map(|(y, f)| y - f)
        .collect();
    Ok(Residuals {
        residuals,
        fitted,
        model,
        coefficients,
        groups,
    })
}

fn predict_par(curve: &Curve, t: &[f64]) -> Vec<f64> {
    t.par_chunks(BLOCK)
        .flat_map_iter(|c| curve.predict(c))
        .collect()
}

/// Least-squares polynomial of degree `degree` of y on t: fitted values and coefficients on
/// the original scale, intercept first.
fn polynomial(t: &[f64], y: &[f64], degree: usize) -> Result<(Vec<f64>, Vec<f64>)> {
    if degree > MAX_DEGREE {
        return Err(Error::option(
            "degree",
            degree,
            "a polynomial degree from 0 to 3",
        ));
    }
    let p = degree + 1;
    let distinct = count_distinct_up_to(t, p);
    if distinct < p {
        return Err(Error::TooFew {
            what: "distinct times".into(),
            estimate: format!("a polynomial of degree {degree}"),
            needed: p,
            found: distinct,
        });
    }
    let (lo, hi) = t
        .par_chunks(BLOCK)
        .map(|c| {
            c.iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
                    (l.min(v), h.max(v))
                })
        })
        .reduce(
            || (f64::INFINITY, f64::NEG_INFINITY),
            |a, b| (a.0.min(b.0), a.1.max(b.1)),
        );
    let c = (lo + hi) / 2.0;
    // One distinct time (degree 0 only): any scale will do.
    let s = if hi > lo { (hi - lo) / 2.0 } else { 1.0 };
    let beta = tsqr_ls(t, y, c, s, p);
    let fitted = t
        .par_chunks(BLOCK)
        .flat_map_iter(|ch| ch.iter().map(|&v| horner(&beta, (v - c) / s)))
        .collect();
    Ok((fitted, to_original_scale(&beta, c, s)))
}

fn horner(beta: &[f64], u: f64) -> f64 {
    beta.iter().rev().fold(0.0, |acc, &b| acc * u + b)
}

/// Distinct values among `t`, counting no further than `cap` (so O(n cap)).
fn count_distinct_up_to(t: &[f64], cap: usize) -> usize {
    let mut seen: Vec<f64> = Vec::with_capacity(cap);
    for &v in t {
        if seen.len() >= cap {
            break;
        }
        if !seen.contains(&v) {
            seen.push(v);
        }
    }
    seen.len()
}

/// Rows per block of the tall-skinny QR: the block's design fits in cache.
const QR_BLOCK: usize = 2048;

/// Least squares of y on the columns u^0..u^(p-1), u = (t - c) / s, by Householder QR in the
/// tall-skinny form (Demmel, Grigori, Hoemmen & Langou 2012, SIAM J. Sci. Comput. 34:A206):
/// each block of rows is reduced by Householder reflections to its p x (p + 1) triangle
/// [R_b | (Q_b' y)_b], the triangles are stacked in block order and reduced the same way.
/// One pass over the data, blocks in parallel, and the same result for any thread count.
fn tsqr_ls(t: &[f64], y: &[f64], c: f64, s: f64, p: usize) -> Vec<f64> {
    let tops: Vec<Vec<Vec<f64>>> = t
        .par_chunks(QR_BLOCK)
        .zip(y.par_chunks(QR_BLOCK))
        .map(|(tc, yc)| {
            let mut cols: Vec<Vec<f64>> = (0..p)
                .map(|j| tc.iter().map(|&v| ((v - c) / s).powi(j as i32)).collect())
                .collect();
            cols.push(yc.to_vec());
            householder_top(&mut cols, p)
        })
        .collect();
    // Stack the blocks' triangles (columns), in block order, and reduce again.
    let mut stacked: Vec<Vec<f64>> = (0..=p)
        .map(|j| tops.iter().flat_map(|top| top[j].iter().copied()).collect())
        .collect();
    let top = householder_top(&mut stacked, p);
    let mut beta = vec![0.0; p];
    for k in (0..p).rev() {
        let acc: f64 = (k + 1..p).map(|j| top[j][k] * beta[j]).sum();
        beta[k] = (top[p][k] - acc) / top[k][k];
    }
    beta
}

/// Householder reflections on the first p columns of `cols` (all of one length), applied to
/// every column; returns the first min(rows, p) rows of each column afterwards (column-wise):
/// the triangle R and the head of Q'y.
fn householder_top(cols: &mut [Vec<f64>], p: usize) -> Vec<Vec<f64>> {
    let rows = cols[0].len();
    let kmax = rows.min(p);
    for k in 0..kmax {
        let norm2: f64 = cols[k][k..].iter().map(|v| v * v).sum();
        if norm2 == 0.0 {
            continue; // Nothing to reflect: the column is already zero below row k.
        }
        let x0 = cols[k][k];
        let alpha = if x0 >= 0.0 {
            -norm2.sqrt()
        } else {
            norm2.sqrt()
        };
        // v = x - alpha e1 (in place of x); v'v = 2 (|x|^2 - alpha x0).
        cols[k][k] = x0 - alpha;
        let vtv = 2.0 * (norm2 - alpha * x0);
        let (head, rest) = cols.split_at_mut(k + 1);
        let v = &head[k][k..];
        for col in rest.iter_mut() {
            let w: f64 = v.iter().zip(&col[k..]).map(|(a, b)| a * b).sum();
            let f = 2.0 * w / vtv;
            col[k..].iter_mut().zip(v).for_each(|(a, b)| *a -= f * b);
        }
        head[k][k] = alpha;
        for x in head[k][k + 1..].iter_mut() {
            *x = 0.0;
        }
    }
    cols.iter().map(|col| col[..kmax].to_vec()).collect()
}

/// Coefficients of sum beta_j ((t - c) / s)^j as a polynomial in t, intercept first.
fn to_original_scale(beta: &[f64], c: f64, s: f64) -> Vec<f64> {
    // Horner on polynomials: acc <- acc * (t / s - c / s) + beta_j.
    let mut acc: Vec<f64> = vec![0.0];
    for &b in beta.iter().rev() {
        let mut next = vec![0.0; acc.len() + 1];
        for (i, &a) in acc.iter().enumerate() {
            next[i] += -a * c / s;
            next[i + 1] += a / s;
        }
        next[0] += b;
        acc = next;
    }
    acc.truncate(beta.len());
    acc
}

fn by_group(panel: &Panel, name: &str, smoother: &Smoother) -> Result<(Vec<f64>, Vec<GroupFit>)> {
    let cov = crate::covariates::bands::find_covariate(panel, name)?;
    let mut levels: Vec<f64> = Vec::new();
    for &v in &cov.values {
        if !levels.contains(&v) {
            if levels.len() == MAX_LEVELS {
                return Err(Error::option(
                    "covariate",
                    format!("{name:?} (more than {MAX_LEVELS} distinct values)"),
                    "a covariate with at most 50 levels; group a continuous covariate into bands first",
                ));
            }
            levels.push(v);
        }
    }
    levels.sort_unstable_by(f64::total_cmp);
    let (t, y) = (panel.time(), panel.response());
    let fits: Vec<Result<(Vec<usize>, Curve)>> = levels
        .par_iter()
        .map(|&level| {
            let rows: Vec<usize> = (0..t.len()).filter(|&k| cov.values[k] == level).collect();
            let x: Vec<f64> = rows.iter().map(|&k| t[k]).collect();
            let yy: Vec<f64> = rows.iter().map(|&k| y[k]).collect();
            let curve = smoother
                .fit(&x, &yy)
                .map_err(|e| e.within(&format!("level {level} of `{name}`")))?;
            Ok((rows, curve))
        })
        .collect();
    let mut fitted = vec![f64::NAN; t.len()];
    let mut groups = Vec::with_capacity(levels.len());
    for (fit, &level) in fits.into_iter().zip(&levels) {
        let (rows, curve) = fit?;
        let x: Vec<f64> = rows.iter().map(|&k| t[k]).collect();
        for (&k, f) in rows.iter().zip(curve.predict(&x)) {
            fitted[k] = f;
        }
        groups.push(GroupFit {
            level,
            rows: rows.len(),
            curve,
        });
    }
    Ok((fitted, groups))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scale_expansion_matches_closed_form() {
        // ((t - 2) / 4)^2 = t^2 / 16 - t / 4 + 1 / 4 (closed form).
        let a = to_original_scale(&[0.0, 0.0, 1.0], 2.0, 4.0);
        assert_eq!(a, vec![0.25, -0.25, 0.0625]);
    }

    #[test]
    fn exact_quadratic_is_reproduced() {
        // y = 1 - 2 t + 0.5 t^2 exactly: residuals vanish (closed form).
        let t: Vec<f64> = (0..20).map(|i| i as f64 * 0.5).collect();
        let y: Vec<f64> = t.iter().map(|v| 1.0 - 2.0 * v + 0.5 * v * v).collect();
        let (f, c) = polynomial(&t, &y, 2).unwrap();
        for (a, b) in f.iter().zip(&y) {
            assert!((a - b).abs() < 1e-12);
        }
        for (a, b) in c.iter().zip([1.0, -2.0, 0.5]) {
            assert!((a - b).abs() < 1e-12);
        }
    }
}
