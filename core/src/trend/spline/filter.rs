//! The state-space solve of the smoothing spline on x scaled to [0, 1]: a forward information
//! filter, the same filter run on the reflected data, and their combination at every point
//! (the two-filter smoother).
//!
//! Model (Wecker & Ansley 1983, JASA 78:81-89): the state `s = (f, f')` moves over a gap `h` by
//! `s' = F s + η`, `F = [[1, h], [0, 1]]`, `η ~ N(0, q [[h³/3, h²/2], [h²/2, h]])`, `q = 1/λ`,
//! and `ȳ_i` observes `f(x_i)` with variance `1/w_i`. With a flat prior on the initial state
//! the posterior mean of `f` is the spline. Each filter carries the information form `(Y, z)`
//! of what the data on one side say about the state at the current point, starting from zero
//! information, which is the flat prior exactly. After an observation `Y_ff += w`,
//! `z_f += w ȳ`, `det Y += w Y_dd`; over a gap, with `M = F⁻ᵀ Y F⁻¹`,
//! `Y' = (M⁻¹ + Q)⁻¹ = (M + det M · adj Q) / Δ`, `Δ = det(I + M Q) = 1 + tr(MQ) + det M det Q`,
//! `z' = (I + M Q)⁻¹ F⁻ᵀ z`, `det Y' = det M / Δ`.
//!
//! Sign structure: `Y_fd <= 0` is kept by both steps (the data lie on one side), so every entry
//! of `Y`, `det Y`, `tr(MQ)` and `Δ` is a sum of non-negative terms: no cancellation, and `Y`
//! stays positive semi-definite by construction (no clamping is needed). Reflection `x -> -x`
//! maps the model to itself with `f' -> -f'`, so the backward filter is the forward one on the
//! reversed data. At point `i` the two predicted informations (neither holds `ȳ_i`) add to the
//! leave-one-out posterior of `s_i`, variance `V_i` and mean `m_i`; then
//! `H_ii = w V / (1 + w V)`, `1 - H_ii = 1 / (1 + w V)` and `ȳ_i - f_i = (ȳ_i - m_i)/(1 + w V)`:
//! the leverages (Wahba 1983: the posterior covariance at the data is `A(λ) W⁻¹`), df, `n - df`
//! and the residuals each come without a difference of near-equal numbers.

use std::cell::RefCell;

/// Smallest internal penalty used: below it the fit is the interpolant to double precision for
/// any spacing above about 1e-25 (the deviation scales as `λ / h³`), and the information
/// entries stay clear of overflow.
pub(crate) const LAMBDA_T_MIN: f64 = 1e-90;

/// What the data on one side of a point say about its state, in information form.
#[derive(Clone, Copy, Default)]
struct Info {
    ff: f64,
    fd: f64,
    dd: f64,
    zf: f64,
    zd: f64,
    det: f64,
}

/// One filter's running state: the predicted information at the current point is
/// `inv · (n_ff, n_fd, n_dd, n_det)` and `(zf, zd)`.
///
/// Keeping the numerators and `inv = 1/Δ` apart lets the next `Δ` be formed as
/// `1 + q w h³/3 + inv · s`, with `s` from the numerators, so only one multiply and one add sit
/// between consecutive divisions (the recursion is latency-bound, not flop-bound).
#[derive(Clone, Copy)]
struct Filter {
    n_ff: f64,
    n_fd: f64,
    n_dd: f64,
    n_det: f64,
    inv: f64,
    zf: f64,
    zd: f64,
}

impl Filter {
    /// Zero information: the flat prior.
    fn flat() -> Filter {
        Filter {
            n_ff: 0.0,
            n_fd: 0.0,
            n_dd: 0.0,
            n_det: 0.0,
            inv: 1.0,
            zf: 0.0,
            zd: 0.0,
        }
    }

    /// The predicted information at the current point.
    fn info(&self) -> Info {
        Info {
            ff: self.inv * self.n_ff,
            fd: self.inv * self.n_fd,
            dd: self.inv * self.n_dd,
            zf: self.zf,
            zd: self.zd,
            det: self.inv * self.n_det,
        }
    }

    /// Observes `y` with weight `w` at the current point, then moves over a gap `h >= 0` with
    /// process scale `q`.
    #[inline]
    fn step(&mut self, w: f64, y: f64, h: f64, q: f64) {
        let inv = self.inv;
        // After the observation: Y_ff += w, det += w Y_dd, z_f += w y.
        let n_det = self.n_det + w * self.n_dd;
        let ff = inv * self.n_ff + w;
        let fd = inv * self.n_fd;
        let dd = inv * self.n_dd;
        let det = inv * n_det;
        let zf = self.zf + w * y;
        let (qff, qfd, qdd) = (q * h * h * h / 3.0, q * h * h / 2.0, q * h);
        let det_q = q * q * h * h * h * h / 12.0;
        // Δ = 1 + tr(MQ) + det M det Q, tr(MQ) = q h (v'Mv + h² M_ff / 12), v = (h/2, 1), i.e.
        // q h (h² Y_ff / 3 - h Y_fd + Y_dd) after the observation; fd <= 0 keeps every sum
        // sign-definite.
        let s = qdd * (h * h * self.n_ff / 3.0 - h * self.n_fd + self.n_dd) + det_q * n_det;
        let delta = (1.0 + qff * w) + inv * s;
        let inv_new = 1.0 / delta;
        // M = F⁻ᵀ Y F⁻¹, then Y' = (M + det M · adj Q) / Δ.
        let mfd = fd - h * ff;
        let mdd = dd - 2.0 * h * fd + h * h * ff;
        // I + MQ = [[1 + a, b], [c, 1 + d]] for the information vector.
        let a = ff * qff + mfd * qfd;
        let b = ff * qfd + mfd * qdd;
        let c = mfd * qff + mdd * qfd;
        let d = mfd * qfd + mdd * qdd;
        let zud = self.zd - h * zf;
        *self = Filter {
            n_ff: ff + qdd * det,
            n_fd: mfd - qfd * det,
            n_dd: mdd + qff * det,
            n_det: det,
            inv: inv_new,
            zf: ((1.0 + d) * zf - b * zud) * inv_new,
            zd: ((1.0 + a) * zud - c * zf) * inv_new,
        };
    }
}

/// What one evaluation at a penalty reports.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Eval {
    /// Internal penalty.
    pub(crate) lambda: f64,
    /// `tr H = Σ H_ii`.
    pub(crate) df: f64,
    /// `n - tr H = Σ (1 - H_ii)`: no cancellation when df is close to n.
    pub(crate) n_minus_df: f64,
    /// `Σ w_i (ȳ_i - f_i)²` at the distinct x, on the caller's y scale.
    pub(crate) rss_w: f64,
}

/// The data of the fit on the internal scale and the forward filter's store.
pub(crate) struct System {
    /// Distinct x mapped to [0, 1].
    t: Vec<f64>,
    /// Weights (tie counts).
    w: Vec<f64>,
    /// Tie means, centred and divided by `scale`.
    y: Vec<f64>,
    /// The factor taking `y` back to the caller's scale (centring aside).
    scale: f64,
    /// Forward predicted information at each point (reused across evaluations).
    store: RefCell<Vec<Info>>,
    /// `(π (n - 1))⁴ / Σ w`: λ · ratio = 1 is where the equally spaced approximation
    /// `df ≈ (Σ w / λ)^{1/4} / π + 1` reaches n, the onset of smoothing.
    pub(crate) ratio: f64,
}

impl System {
    /// Builds the system from increasing distinct `t` in [0, 1], weights and centred means.
    /// Needs n >= 3.
    pub(crate) fn new(t: Vec<f64>, w: Vec<f64>, yc: &[f64]) -> System {
        let mut ss = Sum::default();
        let mut sw = 0.0;
        for (a, b) in w.iter().zip(yc) {
            ss.add(a * b * b);
            sw += a;
        }
        // Unit weighted rms keeps information vectors near the size of the weights.
        let rms = (ss.value() / sw).sqrt();
        let scale = if rms > 0.0 && rms.is_finite() {
            rms
        } else {
            1.0
        };
        let y = yc.iter().map(|v| v / scale).collect();
        let ratio = (std::f64::consts::PI * (w.len() - 1) as f64).powi(4) / sw;
        System {
            ratio,
            t,
            w,
            y,
            scale,
            store: RefCell::new(Vec::new()),
        }
    }

    /// Number of distinct points.
    pub(crate) fn n(&self) -> usize {
        self.w.len()
    }

    /// Fit quantities at internal penalty `lambda >= 0`.
    pub(crate) fn eval(&self, lambda: f64) -> Eval {
        let (mut df, mut rest, mut rss) =
            (Blocked::default(), Blocked::default(), Blocked::default());
        self.run(lambda, |i, lev, oml, r| {
            df.add(lev);
            rest.add(oml);
            rss.add(self.w[i] * r * r);
        });
        Eval {
            lambda,
            df: df.value(),
            n_minus_df: rest.value(),
            rss_w: rss.value() * self.scale * self.scale,
        }
    }

    /// [`System::eval`] plus the residuals `ȳ - f` on the caller's scale and, when asked, the
    /// leverages (empty otherwise).
    pub(crate) fn fit(&self, lambda: f64, want_leverages: bool) -> (Eval, Vec<f64>, Vec<f64>) {
        let n = self.n();
        let mut res = vec![0.0; n];
        let mut lev = if want_leverages {
            vec![0.0; n]
        } else {
            Vec::new()
        };
        let (mut df, mut rest, mut rss) = (Sum::default(), Sum::default(), Sum::default());
        self.run(lambda, |i, h, oml, r| {
            df.add(h);
            rest.add(oml);
            rss.add(self.w[i] * r * r);
            res[i] = r * self.scale;
            if want_leverages {
                lev[i] = h;
            }
        });
        let e = Eval {
            lambda,
            df: df.value(),
            n_minus_df: rest.value(),
            rss_w: rss.value() * self.scale * self.scale,
        };
        (e, res, lev)
    }

    /// One forward and one backward pass; `visit(i, H_ii, 1 - H_ii, ȳ_i - f_i)` on the
    /// internal y scale, each point once, in no particular order.
    ///
    /// The two filters run in the same loop (two independent recursions, so the processor
    /// overlaps them): first forward over the left half and backward over the right half,
    /// storing the predicted information; then each continues into the other half, combining
    /// with what is stored there. One store of n entries serves both.
    fn run(&self, lambda: f64, mut visit: impl FnMut(usize, f64, f64, f64)) {
        let n = self.n();
        if lambda == 0.0 {
            // Interpolation: every leverage is 1 and every residual 0.
            for i in 0..n {
                visit(i, 1.0, 0.0, 0.0);
            }
            return;
        }
        let q = 1.0 / lambda.max(LAMBDA_T_MIN);
        let (t, w, y) = (&self.t, &self.w, &self.y);
        let mut store = self.store.borrow_mut();
        // Every entry is written before it is read, so the store is only sized, never cleared.
        store.resize(n, Info::default());
        let mid = n / 2;
        // a: forward, predicted at point i (points < i); b: backward in reflected coordinates,
        // predicted at point j (points > j).
        let (mut a, mut b) = (Filter::flat(), Filter::flat());
        for k in 0..(n - mid) {
            if k < mid {
                store[k] = a.info();
                a.step(w[k], y[k], t[k + 1] - t[k], q);
            }
            let j = n - 1 - k;
            store[j] = b.info();
            b.step(w[j], y[j], t[j] - t[j - 1], q);
        }
        // Now a is predicted at mid and b at mid - 1.
        for k in 0..(n - mid) {
            let i = mid + k;
            let (h, oml, r) = combine(&a.info(), &store[i], w[i], y[i]);
            visit(i, h, oml, r);
            if i + 1 < n {
                a.step(w[i], y[i], t[i + 1] - t[i], q);
            }
            if k < mid {
                let j = mid - 1 - k;
                let (h, oml, r) = combine(&store[j], &b.info(), w[j], y[j]);
                visit(j, h, oml, r);
                if j > 0 {
                    b.step(w[j], y[j], t[j] - t[j - 1], q);
                }
            }
        }
    }
}

/// The leave-one-out posterior at a point from the forward `a` and reflected backward `b`
/// predicted information, then `(H_ii, 1 - H_ii, ȳ_i - f_i)`.
#[inline]
fn combine(a: &Info, b: &Info, w: f64, y: f64) -> (f64, f64, f64) {
    // b's f' parts change sign in the caller's orientation; a.fd, b.fd <= 0 keep every term of
    // the determinant non-negative.
    let sfd = a.fd - b.fd;
    let sdd = a.dd + b.dd;
    let det = a.det + b.det + a.ff * b.dd + a.dd * b.ff + 2.0 * a.fd * b.fd;
    let zf = a.zf + b.zf;
    let zd = a.zd - b.zd;
    // V = sdd / det and m = (sdd zf - sfd zd) / det; with g = 1 / (det + w sdd) = 1 / (det (1 + w V)),
    // H_ii = w sdd g, 1 - H_ii = det g and ȳ - f = (ȳ - m) / (1 + w V) = (ȳ det - det m) g.
    let wv = w * sdd;
    let g = 1.0 / (det + wv);
    (wv * g, det * g, (y * det - (sdd * zf - sfd * zd)) * g)
}

/// Plain sums over blocks of [`Blocked::BLOCK`] terms, the block sums added by [`Sum`]: the
/// error stays near `BLOCK · ε` relative (all terms here are >= 0) at a fraction of the cost
/// of compensating every term.
#[derive(Default)]
struct Blocked {
    part: f64,
    count: usize,
    total: Sum,
}

impl Blocked {
    const BLOCK: usize = 256;

    #[inline]
    fn add(&mut self, v: f64) {
        self.part += v;
        self.count += 1;
        if self.count == Self::BLOCK {
            self.total.add(self.part);
            self.part = 0.0;
            self.count = 0;
        }
    }

    fn value(&self) -> f64 {
        let mut t = Sum {
            s: self.total.s,
            c: self.total.c,
        };
        t.add(self.part);
        t.value()
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
