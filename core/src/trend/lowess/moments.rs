//! The weighted sums behind one local fit, three ways.
//!
//! - [`pointwise`]: tricube (times robustness) weights point by point, in `LANES` partial sums.
//! - [`Blocks`]: for a run of `size` sorted points wholly on one side of x0 and inside the
//!   tricube's smooth part (0.001 h < |x - x0| <= 0.999 h), the weight is the polynomial
//!   `(1 - v^3)^3` with `v = |x - x0| / h` linear in x. With per-block power sums
//!   `P_j = sum rw z^j` and `Q_j = sum rw z^j (y - y_ref)`, `z = (x - c) / half` in [-1, 1],
//!   the block's contribution is a dot product of the polynomial's coefficients with them.
//!   Blocks wider than `MAX_HALF_WIDTH` h are summed point by point instead, so the expansion's
//!   terms shrink geometrically and lose nothing to cancellation.
//! - [`exact_fit`]: R's two-pass arithmetic, for fits where the one-pass sums would cancel.

/// Weighted sums over a window: x centred at x0, y at a fixed reference.
#[derive(Default, Clone, Copy)]
pub(super) struct Moments {
    pub s0: f64,
    pub s1: f64,
    pub s2: f64,
    pub t0: f64,
    pub t1: f64,
}

impl Moments {
    fn add(&mut self, o: &Moments) {
        self.s0 += o.s0;
        self.s1 += o.s1;
        self.s2 += o.s2;
        self.t0 += o.t0;
        self.t1 += o.t1;
    }
}

const LANES: usize = 4;

/// Points per block in a fit (chosen so a fit over 10^7 points visits ~2 x 10^4 blocks).
pub(super) const BLOCK: usize = 512;

/// Widest block (half its x extent, relative to h) summed by its polynomial.
const MAX_HALF_WIDTH: f64 = 0.05;

/// Pointwise moments of `x[win]`; `rw` is empty when there are no robustness weights.
#[inline(always)]
fn pointwise_kernel<const ROBUST: bool>(
    x: &[f64],
    y: &[f64],
    rw: &[f64],
    x0: f64,
    y_ref: f64,
    h: f64,
) -> Moments {
    let (h1, h9, inv_h) = (0.001 * h, 0.999 * h, 1.0 / h);
    let weight = |xj: f64| {
        let r = (xj - x0).abs();
        let u = r * inv_h;
        let t = 1.0 - u * u * u;
        let tri = t * t * t;
        // Selects of computed values, not branches, so the loop vectorises.
        let w = if r <= h1 { 1.0 } else { tri };
        if r > h9 {
            0.0
        } else {
            w
        }
    };
    let mut s0 = [0.0; LANES];
    let mut s1 = [0.0; LANES];
    let mut s2 = [0.0; LANES];
    let mut t0 = [0.0; LANES];
    let mut t1 = [0.0; LANES];
    let ones = [1.0; LANES];
    let full = x.len() / LANES * LANES;
    for c in (0..full).step_by(LANES) {
        let xc: &[f64; LANES] = x[c..c + LANES].try_into().unwrap_or(&ones);
        let yc: &[f64; LANES] = y[c..c + LANES].try_into().unwrap_or(&ones);
        let rc: &[f64; LANES] = if ROBUST {
            rw[c..c + LANES].try_into().unwrap_or(&ones)
        } else {
            &ones
        };
        for k in 0..LANES {
            let mut w = weight(xc[k]);
            if ROBUST {
                w *= rc[k];
            }
            let d = xc[k] - x0;
            let e = yc[k] - y_ref;
            let wd = w * d;
            s0[k] += w;
            s1[k] += wd;
            s2[k] += wd * d;
            t0[k] += w * e;
            t1[k] += wd * e;
        }
    }
    let mut m = Moments::default();
    for k in 0..LANES {
        m.add(&Moments {
            s0: s0[k],
            s1: s1[k],
            s2: s2[k],
            t0: t0[k],
            t1: t1[k],
        });
    }
    for j in full..x.len() {
        let mut w = weight(x[j]);
        if ROBUST {
            w *= rw[j];
        }
        let d = x[j] - x0;
        let e = y[j] - y_ref;
        m.add(&Moments {
            s0: w,
            s1: w * d,
            s2: w * d * d,
            t0: w * e,
            t1: w * d * e,
        });
    }
    m
}

/// Pointwise moments over `win`.
pub(super) fn pointwise(
    x: &[f64],
    y: &[f64],
    rw: Option<&[f64]>,
    win: std::ops::Range<usize>,
    x0: f64,
    y_ref: f64,
    h: f64,
) -> Moments {
    let (xw, yw) = (&x[win.clone()], &y[win.clone()]);
    match rw {
        None => pointwise_kernel::<false>(xw, yw, &[], x0, y_ref, h),
        Some(rw) => pointwise_kernel::<true>(xw, yw, &rw[win], x0, y_ref, h),
    }
}

/// Per-block power sums of the sorted points, for one set of robustness weights.
pub(super) struct Blocks {
    size: usize,
    center: Vec<f64>,
    half: Vec<f64>,
    /// `P_0..=P_11` then `Q_0..=Q_10` per block.
    sums: Vec<[f64; 23]>,
}

impl Blocks {
    /// Power sums of every full block of `size` points.
    pub(super) fn new(x: &[f64], y: &[f64], rw: Option<&[f64]>, y_ref: f64, size: usize) -> Blocks {
        let count = x.len() / size;
        let mut b = Blocks {
            size,
            center: Vec::with_capacity(count),
            half: Vec::with_capacity(count),
            sums: Vec::with_capacity(count),
        };
        for k in 0..count {
            let r = k * size..(k + 1) * size;
            let xb = &x[r.clone()];
            let (lo, hi) = (xb[0], xb[size - 1]);
            let c = 0.5 * lo + 0.5 * hi;
            let half = 0.5 * hi - 0.5 * lo;
            let inv = if half > 0.0 { 1.0 / half } else { 0.0 };
            let mut s = [0.0; 23];
            for (j, (&xj, &yj)) in xb.iter().zip(&y[r.clone()]).enumerate() {
                let z = (xj - c) * inv;
                let mut p = rw.map_or(1.0, |w| w[r.start + j]);
                let mut q = p * (yj - y_ref);
                for m in 0..11 {
                    s[m] += p;
                    s[12 + m] += q;
                    p *= z;
                    q *= z;
                }
                s[11] += p;
            }
            b.center.push(c);
            b.half.push(half);
            b.sums.push(s);
        }
        b
    }

    /// Moments over `win` at x0 with radius h: eligible whole blocks by their polynomial, the
    /// rest point by point.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn moments(
        &self,
        x: &[f64],
        y: &[f64],
        rw: Option<&[f64]>,
        win: std::ops::Range<usize>,
        x0: f64,
        y_ref: f64,
        h: f64,
    ) -> Moments {
        let (h1, h9) = (0.001 * h, 0.999 * h);
        let size = self.size;
        let first = win.start.div_ceil(size);
        let end = (win.end / size).min(self.center.len());
        let mut m = Moments::default();
        let mut pending = win.start;
        for k in first..end {
            let (lo, hi) = (x[k * size], x[(k + 1) * size - 1]);
            // The same comparisons as the pointwise weights make, at the block's ends.
            let right = lo - x0 > h1 && hi - x0 <= h9;
            let left = x0 - hi > h1 && x0 - lo <= h9;
            if !(right || left) || self.half[k] > MAX_HALF_WIDTH * h {
                continue;
            }
            if pending < k * size {
                m.add(&pointwise(x, y, rw, pending..k * size, x0, y_ref, h));
            }
            m.add(&self.polynomial(k, x0, h, if right { 1.0 } else { -1.0 }));
            pending = (k + 1) * size;
        }
        if pending < win.end {
            m.add(&pointwise(x, y, rw, pending..win.end, x0, y_ref, h));
        }
        m
    }

    /// A block's moments from its power sums; `side` is +1 right of x0, -1 left.
    fn polynomial(&self, k: usize, x0: f64, h: f64, side: f64) -> Moments {
        let (e, half) = (self.center[k] - x0, self.half[k]);
        // v(z) = |x - x0| / h = a + g z.
        let (a, g) = (side * e / h, side * half / h);
        let p = [
            1.0 - a * a * a,
            -3.0 * a * a * g,
            -3.0 * a * g * g,
            -g * g * g,
        ];
        let p2: [f64; 7] = poly_mul(&p, &p);
        let w: [f64; 10] = poly_mul(&p2, &p);
        let d = [e, half];
        let wd: [f64; 11] = poly_mul(&w, &d);
        let wdd: [f64; 12] = poly_mul(&wd, &d);
        let s = &self.sums[k];
        let dot = |c: &[f64], off: usize| c.iter().zip(&s[off..]).map(|(a, b)| a * b).sum::<f64>();
        Moments {
            s0: dot(&w, 0),
            s1: dot(&wd, 0),
            s2: dot(&wdd, 0),
            t0: dot(&w, 12),
            t1: dot(&wd, 12),
        }
    }
}

/// The product of two polynomials given by coefficients, lowest degree first.
fn poly_mul<const N: usize>(a: &[f64], b: &[f64]) -> [f64; N] {
    let mut out = [0.0; N];
    for (i, &ai) in a.iter().enumerate() {
        for (j, &bj) in b.iter().enumerate() {
            out[i + j] += ai * bj;
        }
    }
    out
}

/// The local fit by R's two-pass arithmetic: normalised weights, their weighted mean of x,
/// the centred spread, then the line's weights applied to y. `None` when every weight is 0.
#[allow(clippy::too_many_arguments)]
pub(super) fn exact_fit(
    x: &[f64],
    y: &[f64],
    rw: Option<&[f64]>,
    x0: f64,
    win: std::ops::Range<usize>,
    h: f64,
    range: f64,
    scratch: &mut [f64],
) -> Option<f64> {
    let (h1, h9) = (0.001 * h, 0.999 * h);
    let mut a = 0.0;
    for j in win.clone() {
        let r = (x[j] - x0).abs();
        let mut w = if r > h9 {
            0.0
        } else if r <= h1 {
            1.0
        } else {
            let u = r / h;
            let t = 1.0 - u * u * u;
            t * t * t
        };
        if let Some(rw) = rw {
            w *= rw[j];
        }
        scratch[j] = w;
        a += w;
    }
    if a <= 0.0 {
        return None;
    }
    let w = &mut scratch[win.clone()];
    let xw = &x[win.clone()];
    w.iter_mut().for_each(|v| *v /= a);
    let mean: f64 = w.iter().zip(xw).map(|(v, xj)| v * xj).sum();
    let c: f64 = w
        .iter()
        .zip(xw)
        .map(|(v, xj)| v * (xj - mean) * (xj - mean))
        .sum();
    if c.sqrt() > 0.001 * range {
        let b = (x0 - mean) / c;
        w.iter_mut()
            .zip(xw)
            .for_each(|(v, xj)| *v *= b * (xj - mean) + 1.0);
    }
    Some(w.iter().zip(&y[win]).map(|(v, yj)| v * yj).sum())
}
