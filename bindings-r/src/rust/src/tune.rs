//! `tune_smoother()`: the core's cross-validation over subjects. Scores go back as a
//! data.frame (one row per candidate) and the best index counted from 1, as R counts.

use extendr_api::prelude::*;
use trajweave_core::trend::tune::tune_smoother;

use crate::convert::{data_frame, named_list, optional_text, real_slice, reals_na, whole_number};
use crate::error::{respond, Outcome};
use crate::mean_curve::{MAX_SEED, SEED_ALLOWED};
use crate::panel::panel_ref;
use crate::smoother::build;

/// Scores each candidate value of `parameter` (`NULL`: the family's main parameter) for
/// `smoother` (an R spec) on `panel`, with `folds` folds (`NULL`: leave one subject out) and
/// `seed` for the fold shuffle.
#[extendr]
fn tw_tune_smoother(
    smoother: Robj,
    panel: Robj,
    candidates: Robj,
    parameter: Robj,
    folds: Robj,
    seed: Robj,
) -> Robj {
    respond(run(
        &smoother,
        &panel,
        &candidates,
        &parameter,
        &folds,
        &seed,
    ))
}

fn run(
    smoother: &Robj,
    panel: &Robj,
    candidates: &Robj,
    parameter: &Robj,
    folds: &Robj,
    seed: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let candidates = real_slice(candidates, "candidates")?;
    let parameter = optional_text(
        parameter,
        "parameter",
        "give one option name as a string, or NULL for the family's main parameter",
    )?;
    let folds = if folds.is_null() {
        None
    } else {
        // The core's wording for folds out of range; a fraction or a negative number is out
        // of range too.
        let allowed = format!(
            "a whole number from 2 to the number of subjects ({})",
            panel.n_subjects()
        );
        Some(whole_number(folds, "folds", 1e15, &allowed)? as usize)
    };
    let seed = whole_number(seed, "seed", MAX_SEED, SEED_ALLOWED)?;
    let t = tune_smoother(
        panel,
        &smoother,
        parameter.as_deref(),
        candidates,
        folds,
        seed,
    )?;
    let n = t.candidates.len();
    let gcv = match &t.gcv {
        Some(g) => reals_na(g),
        None => reals_na(&vec![f64::NAN; n]),
    };
    let scores = data_frame(
        ["candidate", "score", "gcv"].into_iter(),
        vec![t.candidates.as_slice().into(), reals_na(&t.scores), gcv],
        n,
    )?;
    named_list(
        [
            "family",
            "parameter",
            "scheme",
            "folds",
            "best",
            "best_index",
            "scores",
        ]
        .into_iter(),
        vec![
            t.family.as_str().into(),
            t.parameter.as_str().into(),
            t.scheme.as_str().into(),
            (t.folds as f64).into(),
            t.best.into(),
            // Counted from 1, as R indexes.
            ((t.best_index + 1) as f64).into(),
            scores,
        ],
    )
}

extendr_module! {
    mod tune;
    fn tw_tune_smoother;
}
