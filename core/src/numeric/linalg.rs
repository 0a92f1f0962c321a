//! Small dense Cholesky routines for per-subject covariance matrices (row-major, n x n).

/// A pivot at or below this fraction of its diagonal entry counts as not positive definite:
/// exactly singular matrices (duplicated visit times under a pure serial structure) give such
/// pivots by rounding instead of exact zeros.
const PIVOT_REL: f64 = 1e-12;

/// Cholesky factor L (lower triangle, in place) of the symmetric matrix `a`; returns
/// log det A, or `None` when A is not positive definite.
pub(crate) fn cholesky(a: &mut [f64], n: usize) -> Option<f64> {
    let mut logdet = 0.0;
    for j in 0..n {
        let diag = a[j * n + j];
        let mut d = diag;
        for k in 0..j {
            d -= a[j * n + k] * a[j * n + k];
        }
        if d.is_nan() || d <= PIVOT_REL * diag.abs() || !d.is_finite() {
            return None;
        }
        let ljj = d.sqrt();
        a[j * n + j] = ljj;
        logdet += 2.0 * ljj.ln();
        for i in j + 1..n {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= a[i * n + k] * a[j * n + k];
            }
            a[i * n + j] = s / ljj;
        }
    }
    Some(logdet)
}

/// Solves L z = b in place (forward substitution) with the factor of [`cholesky`].
pub(crate) fn forward(l: &[f64], n: usize, b: &mut [f64]) {
    for i in 0..n {
        let mut s = b[i];
        for k in 0..i {
            s -= l[i * n + k] * b[k];
        }
        b[i] = s / l[i * n + i];
    }
}

/// Solves L' x = z in place (back substitution).
pub(crate) fn backward(l: &[f64], n: usize, b: &mut [f64]) {
    for i in (0..n).rev() {
        let mut s = b[i];
        for k in i + 1..n {
            s -= l[k * n + i] * b[k];
        }
        b[i] = s / l[i * n + i];
    }
}

/// A^-1 (full, symmetric) from the factor L of A.
pub(crate) fn inverse(l: &[f64], n: usize) -> Vec<f64> {
    let mut inv = vec![0.0; n * n];
    let mut col = vec![0.0; n];
    for j in 0..n {
        col.iter_mut().for_each(|c| *c = 0.0);
        col[j] = 1.0;
        forward(l, n, &mut col);
        backward(l, n, &mut col);
        for i in 0..n {
            inv[i * n + j] = col[i];
        }
    }
    inv
}

/// True when the symmetric matrix `a` is positive definite.
pub(crate) fn is_positive_definite(a: &[f64], n: usize) -> bool {
    let mut work = a.to_vec();
    cholesky(&mut work, n).is_some()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factor_solve_and_inverse_of_a_known_matrix() {
        // A = [[4, 2], [2, 3]]: det 8, A^-1 = [[3, -2], [-2, 4]] / 8 (by hand).
        let mut a = vec![4.0, 2.0, 2.0, 3.0];
        let logdet = cholesky(&mut a, 2).unwrap();
        assert!((logdet - 8f64.ln()).abs() < 1e-15);
        let inv = inverse(&a, 2);
        let want = [3.0 / 8.0, -0.25, -0.25, 0.5];
        for (x, y) in inv.iter().zip(want) {
            assert!((x - y).abs() < 1e-15);
        }
        assert!(!is_positive_definite(&[1.0, 1.0, 1.0, 1.0], 2));
    }
}
