//! Kernel smoothers: Nadaraya-Watson (local constant; Nadaraya 1964, Watson 1964) and local
//! linear (Fan 1992), with a box or a Gaussian kernel.
//!
//! At a point t with bandwidth h and weights w_i = K((x_i - t) / h), the local-constant fit is
//! sum w_i y_i / sum w_i and the local-linear fit is the intercept at t of the weighted
//! least-squares line, (S2 T0 - S1 T1) / (S0 S2 - S1^2) with S_k = sum w_i (x_i - t)^k and
//! T_k = sum w_i (x_i - t)^k y_i. Where the local-linear denominator vanishes (one distinct x
//! in the window) the local-constant fit is used; where no point has weight the fit is NaN.
//!
//! Bandwidth convention (ours, one for both shapes): **h is the standard deviation of the
//! kernel**. The Gaussian kernel is exp(-u^2 / 2); the box kernel is flat on the closed
//! interval |x - t| <= a with half-width a = sqrt(3) h (a uniform density with standard
//! deviation h). So a box and a Gaussian with the same h smooth about equally. R's
//! `ksmooth(bandwidth = b)` puts the kernel's quartiles at +-b/4: its box is our box with
//! h = b / (2 sqrt 3) (half-width b / 2), its normal our Gaussian with h = 0.3706506 b,
//! truncated at 4 of those standard deviations.
//!
//! Box edge (the tie rule): a point at distance exactly a is inside, as in R's `ksmooth`,
//! whose window is closed. Distances are compared with a tolerance,
//! |x - t| <= a + 1e-9 a + 64 eps M (eps the double's machine epsilon, M the largest |x| or
//! |t|), so a point meant to lie on the edge counts as inside whatever the binary rounding of
//! its decimal value: on x = 0.1 k the difference 0.3 - 0.1 is 0.19999999999999998, and R's
//! own comparison of x with t - b/2 then includes or leaves out such points depending on the
//! rounding (measured in tests/reference/kernel_py.py); on integers and binary fractions both
//! rules agree exactly. Two points closer than the tolerance are not told apart at the edge.
//! Default h (common practice, no source for regression): 0.9 min(sd, IQR / 1.349) n^(-1/5) of
//! x (Silverman's rule of thumb for densities).
//!
//! Evaluation:
//! - box: exact, in O(n + m) by a window sliding over sorted x and sorted evaluation points,
//!   with running sums kept in compensated (two-term) arithmetic so long slides lose nothing;
//! - Gaussian, `exact`: every point within `truncation` standard deviations (default 8: a
//!   point left out weighs less than exp(-32) = 1.3e-14 of a point at the centre);
//! - Gaussian, `binned`: each point is split linearly between the two nearest nodes of a grid
//!   of spacing delta = h / `bins_per_bandwidth` (default 32), keeping its exact offset from
//!   the node in the moments (linear binning, Fan & Marron 1994, extended to exact moments);
//!   the fit at every node is then an exact weighted least-squares fit whose weights are the
//!   kernel interpolated linearly between nodes (relative weight error at most
//!   (delta / h)^2 |u^2 - 1| / 8, about 1.2e-4 near the centre at the defaults), and fits at the
//!   nodes are interpolated linearly to the points asked (error at most delta^2 / 8 times the
//!   curvature of the fit). Lines are reproduced exactly;
//! - `auto` (the default): exact when the expected window work (points x window size) is at
//!   most 2e6, else binned. The choice is reported in the settings.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::numeric::quantile::quantile_sorted;
use crate::trend::curve::{
    check_finite, check_xy, distinct_points, sort_by_x, Curve, Diagnostics, OptionValue,
};

/// The kernel's shape.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum KernelShape {
    /// Flat on |u| <= sqrt(3) (a closed window; see the module doc for the edge rule).
    Box,
    /// exp(-u^2 / 2).
    Gaussian,
}

/// How a Gaussian kernel is evaluated (a box is always exact).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Evaluation {
    /// Exact when the work is small, else binned.
    Auto,
    /// Every point within the truncation.
    Exact,
    /// Linear binning onto a fine grid.
    Binned,
}

/// Settings of the kernel smoother.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct KernelOptions {
    /// Standard deviation of the kernel; `None` for the rule-of-thumb default.
    pub bandwidth: Option<f64>,
    /// Box or Gaussian.
    pub shape: KernelShape,
    /// 0 (local constant) or 1 (local linear).
    pub degree: u8,
    /// Gaussian only: points farther than this many bandwidths are left out (> 0).
    pub truncation: f64,
    /// Gaussian only: exact, binned or auto.
    pub evaluation: Evaluation,
    /// Gaussian binned only: grid points per bandwidth (4 to 1024).
    pub bins_per_bandwidth: usize,
}

impl Default for KernelOptions {
    fn default() -> Self {
        KernelOptions {
            bandwidth: None,
            shape: KernelShape::Gaussian,
            degree: 1,
            truncation: 8.0,
            evaluation: Evaluation::Auto,
            bins_per_bandwidth: 32,
        }
    }
}

const NAMES: &str = "bandwidth, shape, degree, truncation, evaluation, bins_per_bandwidth";
const SQRT3: f64 = 1.732_050_807_568_877_2;
/// Window work above which `auto` bins a Gaussian.
const AUTO_EXACT_WORK: f64 = 2e6;
/// Box edge tolerance relative to the half-width (module doc).
const BOX_EDGE_REL: f64 = 1e-9;
/// Box edge tolerance in units of round-off of the largest |x| or |t| (module doc).
const BOX_EDGE_ULPS: f64 = 64.0;

impl KernelOptions {
    /// Sets one option by name, as the fronts pass it.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::curve::OptionValue;
    /// use trajweave_core::trend::kernel::{KernelOptions, KernelShape};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = KernelOptions::default();
    /// o.set("shape", &OptionValue::Text("box".into()))?;
    /// o.set("bandwidth", &OptionValue::Number(0.5))?;
    /// assert_eq!(o.shape, KernelShape::Box);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name or a value out of range.
    pub fn set(&mut self, name: &str, value: &OptionValue) -> Result<()> {
        match name {
            "bandwidth" => {
                let h = value.number(name, "a bandwidth > 0 (the kernel's standard deviation)")?;
                self.bandwidth = Some(h);
            }
            "shape" => {
                self.shape = match value.text(name, "\"box\" or \"gaussian\"")? {
                    "box" => KernelShape::Box,
                    "gaussian" => KernelShape::Gaussian,
                    _ => return Err(Error::option(name, value, "\"box\" or \"gaussian\"")),
                }
            }
            "degree" => {
                let d = value.number(name, "0 (local constant) or 1 (local linear)")?;
                if d != 0.0 && d != 1.0 {
                    return Err(Error::option(
                        name,
                        value,
                        "0 (local constant) or 1 (local linear)",
                    ));
                }
                self.degree = d as u8;
            }
            "truncation" => self.truncation = value.number(name, "a number of bandwidths > 0")?,
            "evaluation" => {
                let allowed = "\"auto\", \"exact\" or \"binned\"";
                self.evaluation = match value.text(name, allowed)? {
                    "auto" => Evaluation::Auto,
                    "exact" => Evaluation::Exact,
                    "binned" => Evaluation::Binned,
                    _ => return Err(Error::option(name, value, allowed)),
                }
            }
            "bins_per_bandwidth" => {
                let b = value.number(name, "a whole number from 4 to 1024")?;
                if b.fract() != 0.0 || !(4.0..=1024.0).contains(&b) {
                    return Err(Error::option(name, value, "a whole number from 4 to 1024"));
                }
                self.bins_per_bandwidth = b as usize;
            }
            other => {
                return Err(Error::option(
                    "kernel option",
                    format!("{other:?}"),
                    &format!("use one of: {NAMES}"),
                ))
            }
        }
        self.validate()
    }

    /// Checks every range.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the first option out of range.
    pub fn validate(&self) -> Result<()> {
        if let Some(h) = self.bandwidth {
            if !(h.is_finite() && h > 0.0) {
                return Err(Error::option(
                    "bandwidth",
                    h,
                    "a bandwidth > 0 (the kernel's standard deviation)",
                ));
            }
        }
        if self.degree > 1 {
            return Err(Error::option(
                "degree",
                self.degree,
                "0 (local constant) or 1 (local linear)",
            ));
        }
        if !(self.truncation.is_finite() && self.truncation > 0.0) {
            return Err(Error::option(
                "truncation",
                self.truncation,
                "a number of bandwidths > 0",
            ));
        }
        if !(4..=1024).contains(&self.bins_per_bandwidth) {
            return Err(Error::option(
                "bins_per_bandwidth",
                self.bins_per_bandwidth,
                "a whole number from 4 to 1024",
            ));
        }
        Ok(())
    }
}

/// The rule-of-thumb bandwidth 0.9 min(sd, IQR / 1.349) n^(-1/5) of sorted x (common
/// practice); falls back to the range / 10 when both spreads are zero.
pub fn default_bandwidth(sorted_x: &[f64]) -> f64 {
    let n = sorted_x.len() as f64;
    let mean = sorted_x.iter().sum::<f64>() / n;
    let sd = (sorted_x
        .iter()
        .map(|v| (v - mean) * (v - mean))
        .sum::<f64>()
        / (n - 1.0).max(1.0))
    .sqrt();
    let iqr = quantile_sorted(sorted_x, 0.75) - quantile_sorted(sorted_x, 0.25);
    let spread = match (sd > 0.0, iqr > 0.0) {
        (true, true) => sd.min(iqr / 1.349),
        (true, false) => sd,
        _ => (sorted_x[sorted_x.len() - 1] - sorted_x[0]) / 10.0,
    };
    0.9 * spread * n.powf(-0.2)
}

/// Fits the kernel smoother at the distinct x values.
///
/// # Examples
/// ```
/// use trajweave_core::trend::kernel::{kernel_smooth, KernelOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let x = [0.0, 1.0, 2.0, 3.0];
/// let y = [1.0, 3.0, 5.0, 7.0];
/// let c = kernel_smooth(&x, &y, &KernelOptions { bandwidth: Some(1.0), ..Default::default() })?;
/// // A local-linear fit reproduces a straight line exactly.
/// assert!((c.fitted[2] - 5.0).abs() < 1e-12);
/// # Ok(()) }
/// ```
///
/// # Errors
/// Those of [`KernelOptions::validate`] and of [`crate::trend::curve::check_xy`].
pub fn kernel_smooth(x: &[f64], y: &[f64], options: &KernelOptions) -> Result<Curve> {
    let (xs, ys, h, evaluation) = prepare(x, y, options)?;
    let (ux, _) = distinct_points(&xs, &xs);
    let fitted = evaluate(&xs, &ys, &ux, h, options, evaluation);
    Ok(curve(ux, fitted, xs.len(), h, options, evaluation))
}

/// Fits the kernel smoother at the points `at` (any order; the result follows `at`).
///
/// # Errors
/// Those of [`kernel_smooth`], and [`Error::NonFinite`] for a non-finite point in `at`.
pub fn kernel_smooth_at(
    x: &[f64],
    y: &[f64],
    at: &[f64],
    options: &KernelOptions,
) -> Result<Vec<f64>> {
    check_finite("at", at)?;
    let (xs, ys, h, evaluation) = prepare(x, y, options)?;
    let mut order: Vec<usize> = (0..at.len()).collect();
    order.sort_by(|&a, &b| at[a].total_cmp(&at[b]));
    let sorted_at: Vec<f64> = order.iter().map(|&i| at[i]).collect();
    let fits = evaluate(&xs, &ys, &sorted_at, h, options, evaluation);
    let mut out = vec![f64::NAN; at.len()];
    for (k, &i) in order.iter().enumerate() {
        out[i] = fits[k];
    }
    Ok(out)
}

fn prepare(
    x: &[f64],
    y: &[f64],
    o: &KernelOptions,
) -> Result<(Vec<f64>, Vec<f64>, f64, Evaluation)> {
    o.validate()?;
    check_xy(x, y, "a kernel smoother", 1)?;
    let (xs, ys) = sort_by_x(x, y);
    let h = o.bandwidth.unwrap_or_else(|| default_bandwidth(&xs));
    let evaluation = match (o.shape, o.evaluation) {
        (KernelShape::Box, _) => Evaluation::Exact,
        (KernelShape::Gaussian, Evaluation::Auto) => {
            let range = xs[xs.len() - 1] - xs[0];
            let share = if range > 0.0 {
                (2.0 * o.truncation * h / range).min(1.0)
            } else {
                1.0
            };
            let n = xs.len() as f64;
            if n * n * share <= AUTO_EXACT_WORK {
                Evaluation::Exact
            } else {
                Evaluation::Binned
            }
        }
        (KernelShape::Gaussian, e) => e,
    };
    Ok((xs, ys, h, evaluation))
}

fn curve(
    x: Vec<f64>,
    fitted: Vec<f64>,
    n: usize,
    h: f64,
    o: &KernelOptions,
    e: Evaluation,
) -> Curve {
    let mut used = o.clone();
    used.bandwidth = Some(h);
    used.evaluation = e;
    let settings = serde_json::to_value(&used).unwrap_or(serde_json::Value::Null);
    let mut d = Diagnostics::new(n);
    d.bandwidth = Some(h);
    Curve::new("kernel", x, fitted, settings, d)
}

fn evaluate(
    xs: &[f64],
    ys: &[f64],
    at: &[f64],
    h: f64,
    o: &KernelOptions,
    e: Evaluation,
) -> Vec<f64> {
    match (o.shape, e) {
        (KernelShape::Box, _) => box_smooth(xs, ys, at, SQRT3 * h, o.degree),
        (KernelShape::Gaussian, Evaluation::Binned) => gaussian_binned(xs, ys, at, h, o),
        (KernelShape::Gaussian, _) => gaussian_exact(xs, ys, at, h, o.truncation * h, o.degree),
    }
}

/// The fit from weighted sums about t: local linear when its denominator is usable.
fn local_fit(s0: f64, s1: f64, s2: f64, t0: f64, t1: f64, degree: u8) -> f64 {
    if s0 <= 0.0 {
        return f64::NAN;
    }
    if degree == 1 {
        let det = s0 * s2 - s1 * s1;
        // Relative test: the spread of x in the window must be more than round-off.
        if det > 1e-12 * s0 * s2 && det > 0.0 {
            return (s2 * t0 - s1 * t1) / det;
        }
    }
    t0 / s0
}

/// Four running sums kept as two doubles each, so adding and removing many terms loses
/// nothing: each addition's rounding error is recovered exactly by Knuth's branch-free TwoSum
/// and carried along. The lanes are independent, so the compiler can update them together.
#[derive(Clone, Copy, Default)]
struct Sums {
    hi: [f64; 4],
    lo: [f64; 4],
}

impl Sums {
    fn add(&mut self, v: [f64; 4]) {
        for ((hi, lo), v) in self.hi.iter_mut().zip(&mut self.lo).zip(v) {
            let s = *hi + v;
            let bv = s - *hi;
            *lo += (*hi - (s - bv)) + (v - bv);
            *hi = s;
        }
    }
    fn value(&self, k: usize) -> f64 {
        self.hi[k] + self.lo[k]
    }
}

/// The half-width of the box widened by the edge tolerance of the module doc, for data `xs`
/// (sorted) and evaluation points `at`.
fn box_reach(xs: &[f64], at: &[f64], a: f64) -> f64 {
    let magnitude = at
        .iter()
        .chain([&xs[0], &xs[xs.len() - 1]])
        .fold(0.0f64, |m, v| m.max(v.abs()));
    a + BOX_EDGE_REL * a + BOX_EDGE_ULPS * f64::EPSILON * magnitude
}

/// Box kernel on the closed window |x - t| <= a (with the edge tolerance of the module doc),
/// exact: the window slides over sorted x as t increases (`at` sorted). Sums of x, x^2, y and
/// x y are kept about the data's mid-range so the shift to each t cancels little; the count is
/// the window's length.
fn box_smooth(xs: &[f64], ys: &[f64], at: &[f64], a: f64, degree: u8) -> Vec<f64> {
    let reach = box_reach(xs, at, a);
    let c = 0.5 * (xs[0] + xs[xs.len() - 1]);
    let (mut lo, mut hi) = (0usize, 0usize);
    let mut sums = Sums::default();
    let terms = |i: usize, sign: f64| {
        let (u, v) = (xs[i] - c, ys[i]);
        [sign * u, sign * u * u, sign * v, sign * u * v]
    };
    at.iter()
        .map(|&t| {
            while hi < xs.len() && xs[hi] - t <= reach {
                sums.add(terms(hi, 1.0));
                hi += 1;
            }
            while lo < hi && t - xs[lo] > reach {
                sums.add(terms(lo, -1.0));
                lo += 1;
            }
            let n = (hi - lo) as f64;
            if n == 0.0 {
                return f64::NAN;
            }
            let d = t - c; // shift the sums from c to t
            let (m1, m2, t0, t1) = (sums.value(0), sums.value(1), sums.value(2), sums.value(3));
            let s1 = m1 - d * n;
            let s2 = m2 - 2.0 * d * m1 + d * d * n;
            local_fit(n, s1, s2, t0, t1 - d * t0, degree)
        })
        .collect()
}

/// Gaussian kernel, every point within `cut` of t.
fn gaussian_exact(xs: &[f64], ys: &[f64], at: &[f64], h: f64, cut: f64, degree: u8) -> Vec<f64> {
    let mut lo = 0usize;
    let inv = 1.0 / h;
    at.iter()
        .map(|&t| {
            while lo < xs.len() && xs[lo] < t - cut {
                lo += 1;
            }
            let (mut s0, mut s1, mut s2, mut t0, mut t1) = (0.0, 0.0, 0.0, 0.0, 0.0);
            for (&x, &y) in xs[lo..].iter().zip(&ys[lo..]) {
                let d = x - t;
                if d > cut {
                    break;
                }
                let u = d * inv;
                let w = (-0.5 * u * u).exp();
                s0 += w;
                s1 += w * d;
                s2 += w * d * d;
                t0 += w * y;
                t1 += w * d * y;
            }
            local_fit(s0, s1, s2, t0, t1, degree)
        })
        .collect()
}

/// Gaussian kernel by linear binning onto a grid of spacing h / bins_per_bandwidth. Each point
/// is split between its two nearest nodes with its exact offset from the node kept in the
/// moments, so every point weighs the kernel linearly interpolated between nodes: the fit is an
/// exact weighted least-squares fit for a slightly perturbed kernel (lines are reproduced
/// exactly). Fits at the nodes are interpolated linearly to the points asked.
fn gaussian_binned(xs: &[f64], ys: &[f64], at: &[f64], h: f64, o: &KernelOptions) -> Vec<f64> {
    let (x0, x1) = (xs[0], xs[xs.len() - 1]);
    let delta = h / o.bins_per_bandwidth as f64;
    if x1 - x0 < delta {
        return gaussian_exact(xs, ys, at, h, o.truncation * h, o.degree);
    }
    let m = ((x1 - x0) / delta).ceil() as usize + 1;
    // Per node: split weight, and its moments in u = x - node: sum w, w u, w u^2, w y, w u y.
    let mut nodes = vec![[0.0f64; 5]; m];
    for (&x, &y) in xs.iter().zip(ys) {
        let p = (x - x0) / delta;
        let j = (p.floor() as usize).min(m - 2);
        let f = p - j as f64;
        for (node, w, u) in [(j, 1.0 - f, f * delta), (j + 1, f, (f - 1.0) * delta)] {
            let s = &mut nodes[node];
            s[0] += w;
            s[1] += w * u;
            s[2] += w * u * u;
            s[3] += w * y;
            s[4] += w * u * y;
        }
    }
    let taps = (o.truncation * o.bins_per_bandwidth as f64).floor() as usize;
    let kern: Vec<f64> = (0..=taps)
        .map(|k| {
            let u = k as f64 / o.bins_per_bandwidth as f64;
            (-0.5 * u * u).exp()
        })
        .collect();
    let fits: Vec<f64> = (0..m)
        .map(|g| {
            let (mut s0, mut s1, mut s2, mut t0, mut t1) = (0.0, 0.0, 0.0, 0.0, 0.0);
            for j in g.saturating_sub(taps)..=(g + taps).min(m - 1) {
                let w = kern[j.abs_diff(g)];
                let d = (j as f64 - g as f64) * delta; // node j relative to node g
                let [c, cu, cuu, sy, suy] = nodes[j];
                s0 += w * c;
                s1 += w * (cu + d * c);
                s2 += w * (cuu + 2.0 * d * cu + d * d * c);
                t0 += w * sy;
                t1 += w * (suy + d * sy);
            }
            local_fit(s0, s1, s2, t0, t1, o.degree)
        })
        .collect();
    at.iter()
        .map(|&t| {
            let p = ((t - x0) / delta).clamp(0.0, (m - 1) as f64);
            let j = (p.floor() as usize).min(m - 2);
            let f = p - j as f64;
            (1.0 - f) * fits[j] + f * fits[j + 1]
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn direct(x: &[f64], y: &[f64], t: f64, h: f64, shape: KernelShape, degree: u8) -> f64 {
        // The definition, term by term (module doc formula).
        let w: Vec<f64> = x
            .iter()
            .map(|&xi| {
                let u = (xi - t) / h;
                match shape {
                    KernelShape::Box => f64::from(u8::from(u.abs() <= SQRT3)),
                    KernelShape::Gaussian => (-0.5 * u * u).exp(),
                }
            })
            .collect();
        let s = |k: i32| {
            x.iter()
                .zip(&w)
                .map(|(xi, wi)| wi * (xi - t).powi(k))
                .sum::<f64>()
        };
        let ty = |k: i32| {
            x.iter()
                .zip(&w)
                .zip(y)
                .map(|((xi, wi), yi)| wi * (xi - t).powi(k) * yi)
                .sum::<f64>()
        };
        local_fit(s(0), s(1), s(2), ty(0), ty(1), degree)
    }

    #[test]
    fn sliding_box_equals_definition() {
        let x: Vec<f64> = (0..200)
            .map(|i| ((i * 37) % 200) as f64 * 0.05 + 100.0)
            .collect();
        let y: Vec<f64> = x.iter().map(|v| (v * 0.7).sin() + 0.01 * v).collect();
        for degree in [0, 1] {
            let o = KernelOptions {
                bandwidth: Some(0.3),
                shape: KernelShape::Box,
                degree,
                ..Default::default()
            };
            let c = kernel_smooth(&x, &y, &o).unwrap();
            for (t, f) in c.x.iter().zip(&c.fitted) {
                let want = direct(&x, &y, *t, 0.3, KernelShape::Box, degree);
                assert!((f - want).abs() < 1e-12, "{t}: {f} vs {want}");
            }
        }
    }

    #[test]
    fn local_linear_reproduces_lines() {
        let x: Vec<f64> = (0..50).map(|i| (i as f64).sqrt()).collect();
        let y: Vec<f64> = x.iter().map(|v| 2.0 - 3.0 * v).collect();
        for shape in [KernelShape::Box, KernelShape::Gaussian] {
            for evaluation in [Evaluation::Exact, Evaluation::Binned] {
                let o = KernelOptions {
                    bandwidth: Some(0.4),
                    shape,
                    evaluation,
                    ..Default::default()
                };
                let c = kernel_smooth(&x, &y, &o).unwrap();
                for (t, f) in c.x.iter().zip(&c.fitted) {
                    assert!(
                        (f - (2.0 - 3.0 * t)).abs() < 1e-9,
                        "{shape:?} {evaluation:?} at {t}"
                    );
                }
            }
        }
    }

    #[test]
    fn option_errors() {
        let mut o = KernelOptions::default();
        let e = o
            .set("shape", &OptionValue::Text("tri".into()))
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "`shape` = \"tri\" is not allowed: \"box\" or \"gaussian\""
        );
        let e = o.set("bandwidth", &OptionValue::Number(0.0)).unwrap_err();
        assert_eq!(
            e.to_string(),
            "`bandwidth` = 0 is not allowed: a bandwidth > 0 (the kernel's standard deviation)"
        );
        let e = o.set("span", &OptionValue::Number(0.5)).unwrap_err();
        assert!(e
            .to_string()
            .starts_with("`kernel option` = \"span\" is not allowed: use one of: bandwidth"));
    }
}
