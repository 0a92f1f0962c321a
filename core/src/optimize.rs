//! Nelder-Mead simplex minimisation (Nelder & Mead 1965) with the standard coefficients
//! (reflection 1, expansion 2, contraction 1/2, shrink 1/2; Lagarias et al. 1998, SIAM J.
//! Optim. 9:112-147). Non-finite function values count as +infinity, so a caller can refuse
//! parameters (e.g. a matrix that is not positive definite) by returning NaN or infinity.

/// The outcome of a minimisation.
#[derive(Debug, Clone, PartialEq)]
pub struct Minimum {
    /// The best point found.
    pub x: Vec<f64>,
    /// The function there.
    pub value: f64,
    /// Iterations used.
    pub iterations: usize,
    /// Whether the stopping rule was met before the iteration cap.
    pub converged: bool,
}

/// Minimises `f` from `start`, with initial simplex steps `step` per coordinate. Stops when
/// the spread of the simplex values is at most `tolerance` x (|best| + tolerance) and the
/// simplex is smaller than `tolerance` x (1 + |x|) in every coordinate, or after
/// `max_iterations`.
///
/// # Examples
/// ```
/// use trajweave_core::optimize::nelder_mead;
/// // Rosenbrock's function, minimum at (1, 1).
/// let f = |x: &[f64]| (1.0 - x[0]).powi(2) + 100.0 * (x[1] - x[0] * x[0]).powi(2);
/// let m = nelder_mead(f, &[-1.2, 1.0], &[0.5, 0.5], 1e-12, 5000);
/// assert!(m.converged && (m.x[0] - 1.0).abs() < 1e-5 && (m.x[1] - 1.0).abs() < 1e-5);
/// ```
pub fn nelder_mead(
    mut f: impl FnMut(&[f64]) -> f64,
    start: &[f64],
    step: &[f64],
    tolerance: f64,
    max_iterations: usize,
) -> Minimum {
    let n = start.len();
    let mut eval = |x: &[f64]| {
        let v = f(x);
        if v.is_finite() {
            v
        } else {
            f64::INFINITY
        }
    };
    let mut simplex: Vec<Vec<f64>> = vec![start.to_vec()];
    for i in 0..n {
        let mut x = start.to_vec();
        x[i] += step[i];
        simplex.push(x);
    }
    let mut values: Vec<f64> = simplex.iter().map(|x| eval(x)).collect();
    let mut iterations = 0;
    let mut converged = false;
    while iterations < max_iterations {
        // Order best to worst (ties by position, so the run is reproducible).
        let mut idx: Vec<usize> = (0..=n).collect();
        idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
        simplex = idx.iter().map(|&i| simplex[i].clone()).collect();
        values = idx.iter().map(|&i| values[i]).collect();
        let (best, worst) = (values[0], values[n]);
        let flat = worst - best <= tolerance * (best.abs() + tolerance);
        let small = (0..n).all(|j| {
            simplex
                .iter()
                .all(|x| (x[j] - simplex[0][j]).abs() <= tolerance * (1.0 + simplex[0][j].abs()))
        });
        if best.is_finite() && flat && small {
            converged = true;
            break;
        }
        iterations += 1;
        let centroid: Vec<f64> = (0..n)
            .map(|j| simplex[..n].iter().map(|x| x[j]).sum::<f64>() / n as f64)
            .collect();
        let toward = |t: f64| -> Vec<f64> {
            (0..n)
                .map(|j| centroid[j] + t * (simplex[n][j] - centroid[j]))
                .collect()
        };
        let reflected = toward(-1.0);
        let fr = eval(&reflected);
        if fr < values[0] {
            let expanded = toward(-2.0);
            let fe = eval(&expanded);
            if fe < fr {
                simplex[n] = expanded;
                values[n] = fe;
            } else {
                simplex[n] = reflected;
                values[n] = fr;
            }
            continue;
        }
        if fr < values[n - 1] {
            simplex[n] = reflected;
            values[n] = fr;
            continue;
        }
        // Contract outside (toward the reflection) or inside (toward the worst point).
        let (contracted, limit) = if fr < values[n] {
            (toward(-0.5), fr)
        } else {
            (toward(0.5), values[n])
        };
        let fc = eval(&contracted);
        if fc < limit {
            simplex[n] = contracted;
            values[n] = fc;
            continue;
        }
        for i in 1..=n {
            let x: Vec<f64> = (0..n)
                .map(|j| simplex[0][j] + 0.5 * (simplex[i][j] - simplex[0][j]))
                .collect();
            values[i] = eval(&x);
            simplex[i] = x;
        }
    }
    let best = (0..=n)
        .min_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)))
        .unwrap_or(0);
    Minimum {
        x: simplex[best].clone(),
        value: values[best],
        iterations,
        converged,
    }
}
