//! The main smoother's amount of smoothing, chosen by cross-validation over subjects (Rice &
//! Silverman 1991, JRSS-B 53:233-243; `trajweave_core::trend::tune`): whole subjects are left
//! out, so the score measures how well the curve predicts a new subject and the within-subject
//! correlation cannot reward a curve that follows each subject's wiggles.
//!
//! Leave-one-subject-out up to `tune_subjects` subjects (default 500). Above it, 10 folds of
//! subjects (seeded): each training set then holds 90% of all subjects, so the chosen value
//! suits the full sample size; a subsample of a few hundred subjects would choose the smoothing
//! right for a few hundred (the best bandwidth shrinks with the number of subjects).
//!
//! The candidate grids are fixed multiples of the time range (kernel bandwidth), spans (LOWESS)
//! and degrees of freedom (spline), common practice with no single source; the super smoother
//! chooses its spans by its own local cross-validation and is not tuned here. A value given by
//! hand (`kernel.bandwidth`, `lowess.span`, `spline.df` or `spline.lambda`) is used as given.

use serde::Serialize;

use super::fmt;
use super::ReportOptions;
use trajweave_core::data::panel::Panel;
use trajweave_core::error::Result;
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::trend::tune::{tune_smoother, Tuning};

/// Kernel bandwidth candidates, as fractions of the time range.
const BANDWIDTH_FRACTIONS: [f64; 9] = [0.02, 0.03, 0.05, 0.075, 0.1, 0.15, 0.2, 0.3, 0.4];
/// LOWESS span candidates.
const SPANS: [f64; 9] = [0.1, 0.15, 0.2, 0.3, 0.4, 0.5, 0.65, 0.8, 1.0];
/// Spline degrees-of-freedom candidates.
const DFS: [f64; 9] = [3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 10.0, 12.0, 15.0];
/// Folds above `tune_subjects` subjects.
const FOLDS: usize = 10;
/// CV scores whose relative spread is below this hardly prefer one value.
const FLAT: f64 = 1e-3;

/// The smoothing used by the report's main curve and how it was chosen.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub(crate) struct Choice {
    /// The main smoother with the chosen value set.
    #[serde(skip)]
    pub smoother: Smoother,
    /// "cross-validation", "given" or "not tuned".
    pub how: String,
    /// The cross-validation, when run.
    pub tuning: Option<Tuning>,
    /// Plain-words remarks: the best value at the edge of the grid, flat scores, a failure.
    pub flags: Vec<String>,
}

impl Choice {
    /// One sentence for the page.
    pub fn sentence(&self) -> String {
        let mut s = match &self.tuning {
            Some(t) => format!(
                "The {} of the main smoother ({}) was chosen by {} cross-validation over \
                 subjects among {} candidates: {} (scores below).",
                t.parameter,
                t.family,
                if t.scheme == "k-fold" {
                    format!("{}-fold", t.folds)
                } else {
                    "leave-one-subject-out".to_string()
                },
                t.candidates.len(),
                fmt(t.best)
            ),
            None => format!("The main smoother's settings: {}.", self.how),
        };
        for f in &self.flags {
            s.push(' ');
            s.push_str(f);
            s.push('.');
        }
        s
    }
}

fn time_range(panel: &Panel) -> f64 {
    let t = panel.time();
    let lo = t.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    hi - lo
}

/// The candidates of the main parameter, or why there are none.
fn candidates(
    panel: &Panel,
    s: &Smoother,
    o: &ReportOptions,
) -> std::result::Result<Vec<f64>, String> {
    let fam = s.family();
    let given = match fam {
        "kernel" => o.is_given(fam, "bandwidth"),
        "lowess" => o.is_given(fam, "span"),
        "spline" => o.is_given(fam, "df") || o.is_given(fam, "lambda"),
        _ => false,
    };
    if given {
        return Err("given".into());
    }
    match fam {
        "kernel" => {
            let r = time_range(panel);
            if r > 0.0 && r.is_finite() {
                Ok(BANDWIDTH_FRACTIONS.iter().map(|f| f * r).collect())
            } else {
                Err("not tuned (one distinct time)".into())
            }
        }
        "lowess" => Ok(SPANS.to_vec()),
        "spline" => Ok(DFS.to_vec()),
        _ => Err(
            "not tuned (the super smoother chooses its spans by its own local \
                  cross-validation)"
                .into(),
        ),
    }
}

/// Chooses the main smoother's main parameter (see the module doc).
///
/// # Errors
/// Those of [`Smoother::set`] for the chosen value (not expected: it is one of the
/// candidates). A cross-validation that fails is not an error: the smoother keeps its default
/// and the choice says why.
pub(crate) fn choose(panel: &Panel, main: &Smoother, o: &ReportOptions) -> Result<Choice> {
    let cands = match candidates(panel, main, o) {
        Ok(c) => c,
        Err(how) => {
            return Ok(Choice {
                smoother: main.clone(),
                how,
                tuning: None,
                flags: Vec::new(),
            })
        }
    };
    let folds = (panel.n_subjects() > o.tune_subjects).then_some(FOLDS);
    let t = match tune_smoother(panel, main, None, &cands, folds, o.tune_seed) {
        Ok(t) => t,
        Err(e) => {
            return Ok(Choice {
                smoother: main.clone(),
                how: "its default (cross-validation failed)".into(),
                tuning: None,
                flags: vec![format!("Cross-validation of the smoothing failed: {e}")],
            })
        }
    };
    let mut smoother = main.clone();
    smoother.set(&t.parameter, &OptionValue::Number(t.best))?;
    let mut flags = Vec::new();
    let last = t.candidates.len() - 1;
    if t.best_index == 0 || t.best_index == last {
        flags.push(format!(
            "The best value is the {} candidate, at the edge of the grid, so the choice is \
             bounded by the grid rather than found inside it",
            if t.best_index == 0 {
                "smallest"
            } else {
                "largest"
            }
        ));
    }
    let finite: Vec<f64> = t.scores.iter().copied().filter(|v| v.is_finite()).collect();
    let lo = finite.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = finite.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if lo > 0.0 && (hi - lo) / lo < FLAT {
        flags.push(format!(
            "The scores differ by less than {}% across the grid: the data hardly prefer one \
             value, so the curves of neighbouring values are about as good",
            fmt(100.0 * FLAT)
        ));
    }
    Ok(Choice {
        smoother,
        how: "cross-validation".into(),
        tuning: Some(t),
        flags,
    })
}
