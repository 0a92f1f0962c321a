//! Running-lines passes over points sorted by x (the formula is in the parent module's doc).
//!
//! The window of point j holds points `lo(j) .. lo(j) + len` with `len = min(2k + 1, n)` and
//! `lo(j) = clamp(j - k, 0, n - len)`; moving to j + 1 drops at most one point and takes one.

/// `1 - h` at or below this counts as leverage 1 (the point alone fixes its fit, as when it is
/// the only one at its x in a window of ties). Exactly 1 in theory, such leverages come out a
/// rounding error either side of it; the tolerance makes the choice deterministic.
const FULL_LEVERAGE: f64 = 1e-10;

/// Passes at least this long are cut into two fixed blocks run in parallel. The cut depends on
/// the data alone, never on the thread count, so results are the same for any pool size.
const BLOCK_MIN: usize = 50_000;

/// Half-width k of the window for `span` over n points, truncated as the reference does.
fn half_width(span: f64, n: usize) -> usize {
    ((0.5 * span * n as f64 + 0.5) as usize).max(2)
}

/// Running sums of a window: count, means, and centred sums of squares and cross-products,
/// updated one point at a time (centred updates, so large x offsets do not cancel).
#[derive(Default)]
struct Window {
    count: f64,
    inv_count: f64,
    xm: f64,
    ym: f64,
    var: f64,
    cvar: f64,
}

impl Window {
    /// Welford's update; the one division does not depend on the data, so it stays off the
    /// dependency chains.
    fn add(&mut self, x: f64, y: f64) {
        self.count += 1.0;
        self.inv_count = 1.0 / self.count;
        let (dx, dy) = (x - self.xm, y - self.ym);
        self.xm += dx * self.inv_count;
        self.ym += dy * self.inv_count;
        self.var += dx * (x - self.xm);
        self.cvar += dx * (y - self.ym);
    }

    #[cfg(test)]
    fn remove(&mut self, x: f64, y: f64) {
        let before = self.count;
        self.count -= 1.0;
        self.inv_count = 1.0 / self.count;
        if self.count > 0.0 {
            let t = before * (x - self.xm) / self.count;
            self.var -= t * (x - self.xm);
            self.cvar -= t * (y - self.ym);
            self.xm = (before * self.xm - x) / self.count;
            self.ym = (before * self.ym - y) / self.count;
        }
    }

    /// Replaces the point (xo, yo) by (xi, yi), the count unchanged. With means m, m' before
    /// and after, `Sxx' = Sxx + (xi - mx)(xi - mx') - (xo - mx)(xo - mx')` and
    /// `Sxy' = Sxy + (xi - mx)(yi - my') - (xo - mx)(yo - my')` exactly; this form needs no
    /// division and keeps the dependency chains one addition long.
    fn slide(&mut self, xo: f64, yo: f64, xi: f64, yi: f64) {
        let xm = self.xm + (xi - xo) * self.inv_count;
        let ym = self.ym + (yi - yo) * self.inv_count;
        self.var += (xi - self.xm) * (xi - xm) - (xo - self.xm) * (xo - xm);
        self.cvar += (xi - self.xm) * (yi - ym) - (xo - self.xm) * (yo - ym);
        self.xm = xm;
        self.ym = ym;
    }

    /// The window's line at `x`, and with `leverage` also `1 - h` for a point at `x` (h its
    /// leverage); a window too narrow in x (variance at most `vsmlsq`) gives its mean.
    #[inline]
    fn line(&self, x: f64, vsmlsq: f64) -> (f64, f64) {
        let dx = x - self.xm;
        if self.var > vsmlsq {
            let inv = 1.0 / self.var;
            (
                self.cvar * inv * dx + self.ym,
                1.0 - (self.inv_count + dx * dx * inv),
            )
        } else {
            (self.ym, 1.0 - self.inv_count)
        }
    }
}

/// Window geometry of one pass.
#[derive(Clone, Copy)]
struct Geometry {
    half: usize,
    len: usize,
    n: usize,
}

impl Geometry {
    fn new(span: f64, n: usize) -> Geometry {
        let half = half_width(span, n);
        Geometry {
            half,
            len: (2 * half + 1).min(n),
            n,
        }
    }

    fn lo(&self, j: usize) -> usize {
        j.saturating_sub(self.half).min(self.n - self.len)
    }

    /// The window of point j, summed afresh.
    fn window_at(&self, xs: &[f64], ys: &[f64], j: usize) -> Window {
        let lo = self.lo(j);
        let mut w = Window::default();
        for i in lo..lo + self.len {
            w.add(xs[i], ys[i]);
        }
        w
    }
}

/// Smooths all of `ys` into `fit` and writes each point's absolute leave-one-out residual
/// `|y_j - fit_j| / (1 - h_jj)` into `resid` (where the leverage is 1, the previous point's
/// residual, or 0 at the first point). Tied x then share the mean of their fits.
pub(super) fn smooth_with_cv(
    xs: &[f64],
    ys: &[f64],
    fit: &mut [f64],
    resid: &mut [f64],
    ties: &[(usize, usize)],
    span: f64,
    vsmlsq: f64,
) {
    let g = Geometry::new(span, xs.len());
    let mut w = g.window_at(xs, ys, 0);
    let mut lo = 0;
    for j in 0..xs.len() {
        let l = g.lo(j);
        if l != lo {
            w.slide(xs[lo], ys[lo], xs[lo + g.len], ys[lo + g.len]);
            lo = l;
        }
        let (s, a) = w.line(xs[j], vsmlsq);
        fit[j] = s;
        resid[j] = if a > FULL_LEVERAGE {
            (ys[j] - s).abs() / a
        } else if j > 0 {
            resid[j - 1]
        } else {
            0.0
        };
    }
    average_ties(fit, ties, 0);
}

/// Replaces `values` by their smooth, keeping only the originals of the last `k + 1` points
/// (still needed when they leave the window) instead of a second array.
pub(super) fn smooth_in_place(
    xs: &[f64],
    values: &mut [f64],
    ties: &[(usize, usize)],
    span: f64,
    vsmlsq: f64,
) {
    let g = Geometry::new(span, xs.len());
    let mut w = g.window_at(xs, values, 0);
    let mut lo = 0;
    // Point i's original sits in slot i mod (k + 1); the point leaving at j is j - (k + 1).
    let keep = g.half + 1;
    let mut kept = vec![0.0; keep];
    let mut slot = 0;
    for j in 0..xs.len() {
        let l = g.lo(j);
        if l != lo {
            w.slide(xs[lo], kept[slot], xs[lo + g.len], values[lo + g.len]);
            lo = l;
        }
        kept[slot] = values[j];
        slot = if slot + 1 == keep { 0 } else { slot + 1 };
        values[j] = w.line(xs[j], vsmlsq).0;
    }
    average_ties(values, ties, 0);
}

/// Smooths `input` into `out`; long inputs are cut into two blocks at a change of x (so tie
/// runs stay whole) and run in parallel, the second starting from its window summed afresh.
pub(super) fn smooth_into(
    xs: &[f64],
    input: &[f64],
    out: &mut [f64],
    ties: &[(usize, usize)],
    span: f64,
    vsmlsq: f64,
) {
    let n = xs.len();
    let g = Geometry::new(span, n);
    let mut cut = n / 2;
    while cut < n && xs[cut] == xs[cut - 1] {
        cut += 1;
    }
    if n < BLOCK_MIN || cut == n {
        smooth_block(xs, input, 0, out, g, vsmlsq);
        average_ties(out, ties, 0);
        return;
    }
    let (left, right) = out.split_at_mut(cut);
    let split = ties.partition_point(|t| t.0 < cut);
    rayon::join(
        || {
            smooth_block(xs, input, 0, left, g, vsmlsq);
            average_ties(left, &ties[..split], 0);
        },
        || {
            smooth_block(xs, input, cut, right, g, vsmlsq);
            average_ties(right, &ties[split..], cut);
        },
    );
}

/// Smooths points `start .. start + out.len()` (a block beginning and ending at a change of x).
fn smooth_block(xs: &[f64], input: &[f64], start: usize, out: &mut [f64], g: Geometry, v: f64) {
    let mut w = g.window_at(xs, input, start);
    let mut lo = g.lo(start);
    for (k, o) in out.iter_mut().enumerate() {
        let j = start + k;
        let l = g.lo(j);
        if l != lo {
            w.slide(xs[lo], input[lo], xs[lo + g.len], input[lo + g.len]);
            lo = l;
        }
        *o = w.line(xs[j], v).0;
    }
}

/// Gives every run of tied x (`start..end` in whole-array positions; `values` begins at
/// position `offset`) the mean of its values.
fn average_ties(values: &mut [f64], ties: &[(usize, usize)], offset: usize) {
    for &(start, end) in ties {
        let run = &mut values[start - offset..end - offset];
        let mut sum = 0.0;
        for v in run.iter() {
            sum += v;
        }
        let mean = sum / run.len() as f64;
        run.fill(mean);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn window_matches_direct_least_squares() {
        // Closed form: slope = Sxy / Sxx over the points, computed directly.
        let (x, y) = ([0.0, 1.0, 3.0, 4.0, 7.0], [1.0, 0.5, 2.0, 4.5, 3.0]);
        let mut w = Window::default();
        for i in 0..5 {
            w.add(x[i], y[i]);
        }
        w.slide(x[0], y[0], 9.0, 6.0);
        let mut v = Window::default();
        for i in 0..5 {
            v.add(x[i], y[i]);
        }
        v.remove(x[0], y[0]);
        v.add(9.0, 6.0);
        assert!((v.var - w.var).abs() < 1e-12 && (v.cvar - w.cvar).abs() < 1e-12);
        let (xx, yy) = ([1.0, 3.0, 4.0, 7.0, 9.0], [0.5, 2.0, 4.5, 3.0, 6.0]);
        let (mx, my) = (xx.iter().sum::<f64>() / 5.0, yy.iter().sum::<f64>() / 5.0);
        let sxx: f64 = xx.iter().map(|a| (a - mx) * (a - mx)).sum();
        let sxy: f64 = xx.iter().zip(&yy).map(|(a, b)| (a - mx) * (b - my)).sum();
        assert!((w.xm - mx).abs() < 1e-12 && (w.ym - my).abs() < 1e-12);
        assert!((w.var - sxx).abs() < 1e-10 && (w.cvar - sxy).abs() < 1e-10);
    }

    #[test]
    fn the_three_pass_kinds_agree() {
        // Same windows by three routes (in place, two blocks, with residuals); they differ
        // only by rounding (the second block's window is summed afresh).
        let n = BLOCK_MIN + 1001;
        let xs: Vec<f64> = (0..n).map(|i| ((i / 3) as f64).sqrt()).collect();
        let ties: Vec<(usize, usize)> = (0..n / 3).map(|i| (3 * i, 3 * i + 3)).collect();
        let ys: Vec<f64> = xs.iter().map(|x| (x * 0.7).sin() + 0.01 * x).collect();
        let v = 1e-12;
        let mut a = ys.clone();
        smooth_in_place(&xs, &mut a, &ties, 0.2, v);
        let mut b = vec![0.0; n];
        smooth_into(&xs, &ys, &mut b, &ties, 0.2, v);
        let (mut c, mut r) = (vec![0.0; n], vec![0.0; n]);
        smooth_with_cv(&xs, &ys, &mut c, &mut r, &ties, 0.2, v);
        assert_eq!(a, c);
        let worst = a
            .iter()
            .zip(&b)
            .map(|(p, q)| (p - q).abs())
            .fold(0.0, f64::max);
        assert!(worst < 1e-9, "{worst}");
    }
}
