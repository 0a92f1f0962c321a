//! Choosing the amount of smoothing by cross-validation over subjects (Rice & Silverman 1991,
//! JRSS-B 53:233-243).
//!
//! For each candidate value of one parameter (span, bandwidth, df...), the subjects are split
//! into folds (each subject its own fold by default: leave-one-subject-out); for each fold the
//! smoother is fitted to the other subjects and evaluated at the left-out subject's visit
//! times ([`crate::trend::curve::Curve::predict`]), and the score is the mean squared prediction error
//! over all observations. The candidate with the smallest score is the best (the first on a
//! tie). With K folds, subjects are shuffled by the seeded generator and dealt round-robin.
//!
//! Why not leave out single observations: within a subject, residuals are correlated, so the
//! left-out point is well predicted by the same subject's neighbouring visits that stay in the
//! fit. Ordinary cross-validation then rewards a curve that follows each subject's serial
//! wiggles and picks too little smoothing (Rice & Silverman 1991, sec. 3). Leaving out whole
//! subjects removes that help, so the score measures how well the curve predicts a new
//! subject, which is what a population mean curve is for.
//!
//! For splines the GCV score of each candidate's full-data fit is shown beside (GCV treats
//! observations as independent, so it shares ordinary CV's tendency to undersmooth).

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::numeric::rng::Rng;
use crate::trend::curve::OptionValue;
use crate::trend::smoother::Smoother;

/// The result of [`tune_smoother`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tuning {
    /// The smoother's family.
    pub family: String,
    /// The parameter varied.
    pub parameter: String,
    /// The candidate values, as given.
    pub candidates: Vec<f64>,
    /// Mean squared prediction error of each candidate (NaN where a fit failed).
    pub scores: Vec<f64>,
    /// The best candidate value.
    pub best: f64,
    /// Its index in `candidates`.
    pub best_index: usize,
    /// Number of folds used.
    pub folds: usize,
    /// `leave-one-subject-out` or `k-fold`.
    pub scheme: String,
    /// GCV of each candidate's fit to all the data, when the smoother reports one.
    pub gcv: Option<Vec<f64>>,
}

/// Scores each candidate value of `parameter` (the family's main parameter when `None`) by
/// cross-validation over subjects; `folds` `None` leaves one subject out at a time.
///
/// # Examples
/// ```
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::trend::tune::tune_smoother;
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let panel = simulate(&SimulateOptions { subjects: 40, ..Default::default() })?.to_panel()?;
/// let t = tune_smoother(&panel, &Smoother::new("kernel")?, None, &[0.2, 0.5, 1.0], Some(5), 1)?;
/// assert_eq!(t.scores.len(), 3);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for no candidates, an unusable candidate or folds outside
/// 2..=subjects; [`Error::TooFew`] with fewer than two subjects or when no candidate can be
/// fitted.
pub fn tune_smoother(
    panel: &Panel,
    smoother: &Smoother,
    parameter: Option<&str>,
    candidates: &[f64],
    folds: Option<usize>,
    seed: u64,
) -> Result<Tuning> {
    let parameter = parameter.unwrap_or(smoother.main_parameter());
    if candidates.is_empty() {
        return Err(Error::option(
            "candidates",
            "none",
            "give at least one candidate value",
        ));
    }
    let s = panel.n_subjects();
    if s < 2 {
        return Err(Error::TooFew {
            what: "subjects".into(),
            estimate: "cross-validation over subjects".into(),
            needed: 2,
            found: s,
        });
    }
    let k = folds.unwrap_or(s);
    if !(2..=s).contains(&k) {
        return Err(Error::option(
            "folds",
            k,
            &format!("a whole number from 2 to the number of subjects ({s})"),
        ));
    }
    // Response-dependent defaults fixed once on all the data, so every fold fits one method.
    let smoother = smoother.for_response(panel.response());
    let smoothers = candidates
        .iter()
        .map(|&v| {
            let mut c = smoother.clone();
            c.set(parameter, &OptionValue::Number(v)).map(|_| c)
        })
        .collect::<Result<Vec<_>>>()?;
    let fold_of = assign_folds(s, k, folds.is_none(), seed);

    let (t, y) = (panel.time(), panel.response());
    // One task per (candidate, fold); each returns its squared-error sum, gathered in order.
    let tasks: Vec<(usize, usize)> = (0..smoothers.len())
        .flat_map(|c| (0..k).map(move |f| (c, f)))
        .collect();
    let sse: Vec<Option<f64>> = tasks
        .par_iter()
        .map(|&(c, f)| {
            let (mut tx, mut ty) = (Vec::new(), Vec::new());
            for i in (0..s).filter(|&i| fold_of[i] != f) {
                tx.extend_from_slice(&t[panel.subject_rows(i)]);
                ty.extend_from_slice(&y[panel.subject_rows(i)]);
            }
            let curve = smoothers[c].fit(&tx, &ty).ok()?;
            let mut sum = 0.0;
            for i in (0..s).filter(|&i| fold_of[i] == f) {
                let rows = panel.subject_rows(i);
                let pred = curve.predict(&t[rows.clone()]);
                sum += pred
                    .iter()
                    .zip(&y[rows])
                    .map(|(p, v)| (p - v) * (p - v))
                    .sum::<f64>();
            }
            Some(sum)
        })
        .collect();
    let n = panel.n_obs() as f64;
    let scores: Vec<f64> = (0..smoothers.len())
        .map(|c| {
            let parts = &sse[c * k..(c + 1) * k];
            if parts.iter().any(Option::is_none) {
                f64::NAN
            } else {
                parts.iter().flatten().sum::<f64>() / n
            }
        })
        .collect();
    let best_index = (0..scores.len())
        .filter(|&i| !scores[i].is_nan())
        .min_by(|&a, &b| scores[a].total_cmp(&scores[b]))
        .ok_or_else(|| Error::TooFew {
            what: "candidates that could be fitted".into(),
            estimate: "cross-validation".into(),
            needed: 1,
            found: 0,
        })?;
    let gcv: Vec<Option<f64>> = smoothers
        .par_iter()
        .map(|sm| sm.fit(t, y).ok().and_then(|c| c.diagnostics.gcv))
        .collect();
    let gcv = gcv
        .iter()
        .any(Option::is_some)
        .then(|| gcv.iter().map(|g| g.unwrap_or(f64::NAN)).collect());
    Ok(Tuning {
        family: smoother.family().to_string(),
        parameter: parameter.to_string(),
        candidates: candidates.to_vec(),
        scores,
        best: candidates[best_index],
        best_index,
        folds: k,
        scheme: if folds.is_none() {
            "leave-one-subject-out"
        } else {
            "k-fold"
        }
        .to_string(),
        gcv,
    })
}

/// Fold of each subject: its own index when leaving one out, else a seeded shuffle dealt
/// round-robin into k folds.
fn assign_folds(s: usize, k: usize, one_out: bool, seed: u64) -> Vec<usize> {
    if one_out {
        return (0..s).collect();
    }
    let mut perm: Vec<usize> = (0..s).collect();
    let mut rng = Rng::new(seed, u64::MAX);
    for i in (1..s).rev() {
        let j = ((rng.uniform() * (i + 1) as f64) as usize).min(i);
        perm.swap(i, j);
    }
    let mut fold = vec![0; s];
    for (pos, &subject) in perm.iter().enumerate() {
        fold[subject] = pos % k;
    }
    fold
}
