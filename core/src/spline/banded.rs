//! Reinsch's banded system on x scaled to [0, 1]: assembly, the LDLᵀ factorisation of
//! `B = R + λ Qᵀ W⁻¹ Q`, the solve, and the band of `B⁻¹` (Hutchinson & de Hoog 1985).
//!
//! Indexing: `n` distinct points `0..n`, `m = n - 2` interior knots `0..m` (knot `j` is point
//! `j + 1`). Column `j` of `Q` holds `1/h_j`, `-(1/h_j + 1/h_{j+1})`, `1/h_{j+1}` in rows
//! `j, j+1, j+2`; `R` is tridiagonal with `R_jj = (h_j + h_{j+1})/3`, `R_{j,j+1} = h_{j+1}/6`.

/// The data of one fit on the internal scale; every array has length about `n`.
pub(crate) struct System {
    /// Knot spacings on [0, 1], length n - 1.
    h: Vec<f64>,
    /// Weights (tie counts), length n.
    w: Vec<f64>,
    /// `Qᵀ y`, length m.
    qy: Vec<f64>,
    /// Bands of `M = Qᵀ W⁻¹ Q`: diagonal (m), first (m - 1) and second (m - 2) off-diagonals.
    m0: Vec<f64>,
    m1: Vec<f64>,
    m2: Vec<f64>,
    /// `tr M / tr R`: sets the scale of λ at which the penalty starts to bite.
    pub(crate) ratio: f64,
}

/// What one evaluation at a penalty reports.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Eval {
    /// Internal penalty.
    pub(crate) lambda: f64,
    /// `tr H = 2 + tr(B⁻¹ R)`: no cancellation when df is small.
    pub(crate) df: f64,
    /// `n - tr H = λ tr(B⁻¹ M)`: no cancellation when df is close to n.
    pub(crate) n_minus_df: f64,
    /// `Σ w_i (ȳ_i - f_i)²` at the distinct x (centred y).
    pub(crate) rss_w: f64,
}

/// `B = L D Lᵀ` with unit lower `L` of bandwidth 2.
struct Factor {
    d: Vec<f64>,
    l1: Vec<f64>,
    l2: Vec<f64>,
}

impl System {
    /// Builds the system from distinct increasing `t` in [0, 1] (as spacings `h`), weights and
    /// centred means. Needs n >= 3.
    pub(crate) fn new(h: Vec<f64>, w: Vec<f64>, y: &[f64]) -> System {
        let n = w.len();
        let m = n - 2;
        let a = |j: usize| 1.0 / h[j];
        let c = |j: usize| 1.0 / h[j + 1];
        let b = |j: usize| -(a(j) + c(j));
        let mut m0 = Vec::with_capacity(m);
        let mut m1 = Vec::with_capacity(m.saturating_sub(1));
        let mut m2 = Vec::with_capacity(m.saturating_sub(2));
        let mut qy = Vec::with_capacity(m);
        let (mut tr_m, mut tr_r) = (0.0, 0.0);
        for j in 0..m {
            let d = a(j) * a(j) / w[j] + b(j) * b(j) / w[j + 1] + c(j) * c(j) / w[j + 2];
            m0.push(d);
            tr_m += d;
            tr_r += (h[j] + h[j + 1]) / 3.0;
            if j + 1 < m {
                m1.push(b(j) * a(j + 1) / w[j + 1] + c(j) * b(j + 1) / w[j + 2]);
            }
            if j + 2 < m {
                m2.push(c(j) * a(j + 2) / w[j + 2]);
            }
            // Difference of slopes: the second divided difference without forming y/h twice.
            qy.push((y[j + 2] - y[j + 1]) / h[j + 1] - (y[j + 1] - y[j]) / h[j]);
        }
        System {
            h,
            w,
            qy,
            m0,
            m1,
            m2,
            ratio: tr_m / tr_r,
        }
    }

    /// Number of distinct points.
    pub(crate) fn n(&self) -> usize {
        self.w.len()
    }

    fn r0(&self, j: usize) -> f64 {
        (self.h[j] + self.h[j + 1]) / 3.0
    }

    fn r1(&self, j: usize) -> f64 {
        self.h[j + 1] / 6.0
    }

    fn factor(&self, lambda: f64) -> Factor {
        let m = self.n() - 2;
        let mut d = vec![0.0; m];
        let mut l1 = vec![0.0; m];
        let mut l2 = vec![0.0; m];
        for i in 0..m {
            let a = self.r0(i) + lambda * self.m0[i];
            let b = if i + 1 < m {
                self.r1(i) + lambda * self.m1[i]
            } else {
                0.0
            };
            let c = if i + 2 < m { lambda * self.m2[i] } else { 0.0 };
            let mut di = a;
            let mut bi = b;
            if i >= 1 {
                di -= l1[i - 1] * l1[i - 1] * d[i - 1];
                bi -= l2[i - 1] * l1[i - 1] * d[i - 1];
            }
            if i >= 2 {
                di -= l2[i - 2] * l2[i - 2] * d[i - 2];
            }
            d[i] = di;
            l1[i] = bi / di;
            l2[i] = c / di;
        }
        Factor { d, l1, l2 }
    }

    /// Rows of `Σ = B⁻¹` within the band, from the last to the first: calls
    /// `visit(j, Σ_jj, Σ_{j,j+1}, Σ_{j,j+2})` (zero beyond the matrix).
    /// From `Lᵀ Σ = D⁻¹ L⁻¹`, whose upper triangle is `D⁻¹` on the diagonal and 0 above it.
    fn inverse_band(f: &Factor, mut visit: impl FnMut(usize, f64, f64, f64)) {
        let m = f.d.len();
        // Rows j + 1 and j + 2 of the band: (diag, first off) of each, plus Σ_{j+1,j+3} unused.
        let (mut s11, mut s12, mut s22) = (0.0, 0.0, 0.0);
        for j in (0..m).rev() {
            let (a, b) = (f.l1[j], f.l2[j]);
            let s02 = -a * s12 - b * s22;
            let s01 = -a * s11 - b * s12;
            let s00 = 1.0 / f.d[j] - a * s01 - b * s02;
            visit(j, s00, s01, s02);
            s22 = s11;
            s12 = s01;
            s11 = s00;
        }
    }

    /// Fit quantities at internal penalty `lambda >= 0`; `gamma` receives `B⁻¹ Qᵀ y` (the
    /// second derivatives at the interior knots) when given.
    pub(crate) fn eval(&self, lambda: f64, gamma: Option<&mut Vec<f64>>) -> Eval {
        let f = self.factor(lambda);
        let m = self.n() - 2;
        let (mut tr_r, mut tr_m) = (Sum::default(), Sum::default());
        Self::inverse_band(&f, |j, s00, s01, s02| {
            let mut r = s00 * self.r0(j);
            let mut q = s00 * self.m0[j];
            if j + 1 < m {
                r += 2.0 * s01 * self.r1(j);
                q += 2.0 * s01 * self.m1[j];
            }
            if j + 2 < m {
                q += 2.0 * s02 * self.m2[j];
            }
            tr_r.add(r);
            tr_m.add(q);
        });
        let mut local = Vec::new();
        let g = gamma.unwrap_or(&mut local);
        self.solve(&f, g);
        let rss_w = if lambda == 0.0 {
            0.0
        } else {
            let mut s = Sum::default();
            for i in 0..self.n() {
                let r = self.residual(lambda, g, i);
                s.add(self.w[i] * r * r);
            }
            s.value()
        };
        Eval {
            lambda,
            df: 2.0 + tr_r.value(),
            n_minus_df: lambda * tr_m.value(),
            rss_w,
        }
    }

    /// `B γ = Qᵀ y` by the factor.
    fn solve(&self, f: &Factor, g: &mut Vec<f64>) {
        let m = f.d.len();
        g.clear();
        g.extend_from_slice(&self.qy);
        for i in 0..m {
            if i >= 1 {
                g[i] -= f.l1[i - 1] * g[i - 1];
            }
            if i >= 2 {
                g[i] -= f.l2[i - 2] * g[i - 2];
            }
        }
        for i in (0..m).rev() {
            g[i] /= f.d[i];
            if i + 1 < m {
                g[i] -= f.l1[i] * g[i + 1];
            }
            if i + 2 < m {
                g[i] -= f.l2[i] * g[i + 2];
            }
        }
    }

    /// Entries of row `i` of `Q` as (column, value) pairs inside the matrix.
    fn q_row(&self, i: usize) -> [(usize, f64); 3] {
        let m = self.n() - 2;
        let h = &self.h;
        let mut row = [(usize::MAX, 0.0); 3];
        if i < m {
            row[0] = (i, 1.0 / h[i]);
        }
        if i >= 1 && i - 1 < m {
            row[1] = (i - 1, -(1.0 / h[i - 1] + 1.0 / h[i]));
        }
        if i >= 2 && i - 2 < m {
            row[2] = (i - 2, 1.0 / h[i - 1]);
        }
        row
    }

    /// `ȳ_i - f_i = λ (Q γ)_i / w_i`, computed directly (not as a difference of near-equal
    /// numbers).
    pub(crate) fn residual(&self, lambda: f64, gamma: &[f64], i: usize) -> f64 {
        let qg: f64 = self
            .q_row(i)
            .iter()
            .filter(|(j, _)| *j != usize::MAX)
            .map(|&(j, v)| v * gamma[j])
            .sum();
        lambda * qg / self.w[i]
    }

    /// Diagonal of the hat matrix at the distinct x: `H_ii = 1 - λ (Q Σ Qᵀ)_ii / w_i`.
    pub(crate) fn leverages(&self, lambda: f64) -> Vec<f64> {
        let n = self.n();
        if lambda == 0.0 {
            return vec![1.0; n];
        }
        let m = n - 2;
        let f = self.factor(lambda);
        let (mut s0, mut s1, mut s2) = (vec![0.0; m], vec![0.0; m], vec![0.0; m]);
        Self::inverse_band(&f, |j, a, b, c| {
            s0[j] = a;
            s1[j] = b;
            s2[j] = c;
        });
        let sigma = |j: usize, k: usize| {
            let (lo, hi) = if j <= k { (j, k) } else { (k, j) };
            match hi - lo {
                0 => s0[lo],
                1 => s1[lo],
                _ => s2[lo],
            }
        };
        (0..n)
            .map(|i| {
                let row = self.q_row(i);
                let mut s = 0.0;
                for &(j, u) in row.iter().filter(|(j, _)| *j != usize::MAX) {
                    for &(k, v) in row.iter().filter(|(k, _)| *k != usize::MAX) {
                        s += u * v * sigma(j, k);
                    }
                }
                1.0 - lambda * s / self.w[i]
            })
            .collect()
    }
}

/// Neumaier's compensated sum: traces over 10^7 terms keep their last digits.
#[derive(Default)]
pub(crate) struct Sum {
    s: f64,
    c: f64,
}

impl Sum {
    pub(crate) fn add(&mut self, v: f64) {
        let t = self.s + v;
        if self.s.abs() >= v.abs() {
            self.c += (self.s - t) + v;
        } else {
            self.c += (v - t) + self.s;
        }
        self.s = t;
    }

    pub(crate) fn value(&self) -> f64 {
        self.s + self.c
    }
}
