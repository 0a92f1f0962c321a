//! Covariance screening: candidate within-subject covariance structures fitted by maximum
//! likelihood to the main curve's residuals of a seeded subsample of subjects, ranked by AIC,
//! with a one-line reading of the ranking.

use serde_json::json;

use super::{fmt, section, value, Context};
use crate::html::{paragraph, table, Section};
use trajweave_core::correlation::screen::{
    implied_correlation, screen_structures, ScreenOptions, Screening, Structure, StructureFit,
    MAX_BINS,
};
use trajweave_core::data::grid::TimeGrid;
use trajweave_core::data::panel::{Missing, Panel, SubjectIds};
use trajweave_core::error::Result;
use trajweave_core::individuals::sample::{sample_subjects, Strategy};

/// Most parameters listed in the table's parameter column (the JSON has them all).
const LISTED_PARAMETERS: usize = 6;

/// A structure's name in words.
pub(crate) fn words(name: &str) -> String {
    match name {
        "independence" => "independence".into(),
        "exchangeable" => "exchangeable (random intercept + error)".into(),
        "exponential" => "exponential serial".into(),
        "gaussian" => "gaussian serial".into(),
        "intercept_exponential_error" => "random intercept + exponential serial + error".into(),
        "intercept_slope_error" => "random intercept and slope + error".into(),
        "intercept_slope_exponential_error" => {
            "random intercept and slope + exponential serial + error".into()
        }
        "toeplitz" => "toeplitz (banded by bin lag)".into(),
        "unstructured" => "unstructured (by bin)".into(),
        other => other.replace('_', " "),
    }
}

/// The subjects the screening is fitted to: all of them when there are at most `k`, else `k`
/// drawn uniformly without replacement from `seed` (the [`Strategy::Random`] sample), as a
/// panel of their rows (ids replaced by their panel index; the time, response and order are
/// kept) with their residuals.
///
/// # Errors
/// Those of [`sample_subjects`] and [`Panel::new`] (neither expected for a valid panel).
pub(crate) fn subsample(
    panel: &Panel,
    residuals: &[f64],
    k: usize,
    seed: u64,
) -> Result<Option<(Panel, Vec<f64>)>> {
    if panel.n_subjects() <= k {
        return Ok(None);
    }
    let s = sample_subjects(panel, None, k, seed, Strategy::Random)?;
    let (t, y) = (panel.time(), panel.response());
    let (mut ids, mut ts, mut ys, mut rs) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for &i in &s.subject_index {
        for row in panel.subject_rows(i) {
            ids.push(Some(i as i64));
            ts.push(t[row]);
            ys.push(y[row]);
            rs.push(residuals.get(row).copied().unwrap_or(f64::NAN));
        }
    }
    // Rows go in by subject then time, an order the new panel keeps (its sort is stable).
    let sub = Panel::new(SubjectIds::Int(ids), &ts, &ys, vec![], Missing::Error)?;
    Ok(Some((sub, rs)))
}

/// Why the grid cannot carry the toeplitz and unstructured structures on this panel, or
/// `None` when it can: at most [`MAX_BINS`] bins, every visit in a bin, at most one visit per
/// subject per bin (the conditions of [`screen_structures`]).
pub(crate) fn grid_refusal(panel: &Panel, grid: &TimeGrid) -> Option<String> {
    let k = grid.n_bins();
    if k > MAX_BINS {
        return Some(format!(
            "the report grid has {k} bins, more than {MAX_BINS}"
        ));
    }
    let t = panel.time();
    let (mut outside, mut doubled) = (0usize, 0usize);
    let mut seen = vec![usize::MAX; k];
    for i in 0..panel.n_subjects() {
        for row in panel.subject_rows(i) {
            match grid.bin_of(t[row]) {
                None => outside += 1,
                Some(b) => match seen.get_mut(b) {
                    Some(s) if *s == i => doubled += 1,
                    Some(s) => *s = i,
                    None => outside += 1,
                },
            }
        }
    }
    match (outside, doubled) {
        (0, 0) => None,
        (o, d) => Some(format!(
            "on the report grid {o} visits fall outside every bin and {d} share a bin with \
             another visit of the same subject; both structures need every visit in a bin and \
             at most one per subject per bin (set grid_edges to the visit schedule to allow \
             them)"
        )),
    }
}

/// The one-line reading of a ranking: the best structure (by AIC) that carries no flag, what
/// was ranked above it and flagged, the next unflagged one, and exchangeable when it is neither.
/// `None` when every fit is flagged.
pub(crate) fn reading(s: &Screening) -> Option<String> {
    let pos = s.fits.iter().position(|f| !f.flagged);
    let mut parts = Vec::new();
    let above: Vec<String> = s.fits[..pos.unwrap_or(s.fits.len())]
        .iter()
        .map(|f| format!("{} ({})", words(&f.structure), f.flags.join("; ")))
        .collect();
    let best = pos.map(|k| &s.fits[k]);
    if let Some(b) = best {
        parts.push(format!(
            "{} fits best among the fits without flags (smallest AIC)",
            words(&b.structure)
        ));
    }
    if !above.is_empty() {
        parts.push(format!(
            "{} ranked {} by AIC but {} flagged, so {} not read as a finding",
            above.join(", "),
            if best.is_some() { "higher" } else { "first" },
            if above.len() == 1 { "is" } else { "are" },
            if above.len() == 1 {
                "it is"
            } else {
                "they are"
            },
        ));
    }
    let b = best?;
    if let Some(next) = s.fits.iter().skip(pos? + 1).find(|f| !f.flagged) {
        parts.push(format!(
            "the next, {}, is {} AIC units worse",
            words(&next.structure),
            fmt(next.delta_aic - b.delta_aic)
        ));
    }
    if let Some(e) = s
        .fits
        .iter()
        .find(|f| f.structure == Structure::Exchangeable.name() && f.structure != b.structure)
    {
        parts.push(format!(
            "an exchangeable structure is {} AIC units worse",
            fmt(e.delta_aic - b.delta_aic)
        ));
    }
    Some(parts.join("; "))
}

/// The correlation implied by a fitted structure between a measurement at `time` and one
/// `lag` later, for the correlation-by-lag figure.
pub(crate) struct Implied {
    /// Legend text.
    pub name: String,
    /// The structure's name.
    pub structure: String,
    /// The first time of each pair.
    pub time: f64,
    pub lag: Vec<f64>,
    pub correlation: Vec<f64>,
}

/// The line implied by the best unflagged structure, at the median observation time (the
/// random-slope structures depend on both times; the others on the lag only), for lags from 0
/// to the last observation time; `None` without an unflagged fit.
pub(crate) fn implied_line(ctx: &Context, s: &Screening) -> Option<Implied> {
    let f = best_unflagged(s)?;
    let structure = Structure::parse(&f.structure).ok()?;
    let mut t = ctx.panel.time().to_vec();
    t.sort_by(f64::total_cmp);
    let median = trajweave_core::numeric::quantile::quantile_sorted(&t, 0.5);
    let last = *t.last()?;
    let span = (last - median).max(0.0);
    let lag: Vec<f64> = (0..=100).map(|k| span * k as f64 / 100.0).collect();
    let grid = structure.needs_grid().then_some(&ctx.grid);
    let correlation = implied_correlation(structure, &f.parameters, median, &lag, grid).ok()?;
    let slope = f.structure.contains("slope");
    Some(Implied {
        name: format!(
            "implied by {}{}",
            words(&f.structure),
            if slope {
                format!(", from time {}", fmt(median))
            } else {
                String::new()
            }
        ),
        structure: f.structure.clone(),
        time: median,
        lag,
        correlation,
    })
}

/// The best fit without flags, if any.
pub(crate) fn best_unflagged(s: &Screening) -> Option<&StructureFit> {
    s.fits.iter().find(|f| !f.flagged)
}

/// The section and the reading (for the summary). A screening that cannot be fitted is said
/// in the text, not an error.
pub(crate) fn build(
    ctx: &Context,
    residuals: &[f64],
    progress: &mut dyn FnMut(&str),
) -> Result<(Section, Option<Screening>)> {
    progress("covariance screening");
    let o = ctx.options;
    let drawn = subsample(ctx.panel, residuals, o.screen_subjects, o.screen_seed)?;
    let (panel, resid) = match &drawn {
        Some((p, r)) => (p, r.as_slice()),
        None => (ctx.panel, residuals),
    };
    let refusal = grid_refusal(panel, &ctx.grid);
    let options = ScreenOptions {
        candidates: Structure::ALL
            .iter()
            .copied()
            .filter(|s| refusal.is_none() || !s.needs_grid())
            .collect(),
        grid: refusal.is_none().then(|| ctx.grid.clone()),
        ..ScreenOptions::default()
    };
    let mut text = paragraph(&format!(
        "Candidate covariance structures for the residuals from the mean curve ({}), each \
         fitted by maximum likelihood to the residuals taken as Gaussian with mean zero \
         (the mean curve is not re-estimated: a screen for structures worth fitting in a \
         mixed model or GEE, not a final choice), ranked by AIC = -2 log-likelihood + 2 \
         parameters (Akaike 1974); BIC uses the number of observations. {}",
        o.smoother,
        match &drawn {
            Some((p, _)) => format!(
                "For speed the screening uses a seeded random subsample of {} of the {} \
                 subjects ({} observations; screen_subjects = {}, screen_seed = {}).",
                p.n_subjects(),
                ctx.panel.n_subjects(),
                p.n_obs(),
                o.screen_subjects,
                o.screen_seed
            ),
            None => format!(
                "All {} subjects are used (no more than screen_subjects = {}).",
                ctx.panel.n_subjects(),
                o.screen_subjects
            ),
        }
    ));
    let subsample_numbers = json!({
        "subjects": panel.n_subjects(),
        "observations": panel.n_obs(),
        "of_subjects": ctx.panel.n_subjects(),
        "subsampled": drawn.is_some(),
        "seed": o.screen_seed,
    });
    let screening = match screen_structures(panel, resid, &options) {
        Ok(s) => s,
        Err(e) => {
            text.push_str(&paragraph(&format!("Not fitted: {e}.")));
            let numbers = json!({
                "options": value(&options),
                "subsample": subsample_numbers,
                "grid_structures": refusal,
                "screening": null,
                "reading": null,
                "skipped": [e.to_string()],
            });
            return Ok((
                section(
                    "screening",
                    "Covariance screening",
                    text,
                    Vec::new(),
                    numbers,
                ),
                None,
            ));
        }
    };
    let line = reading(&screening);
    match &line {
        Some(l) => text.push_str(&paragraph(&format!("Reading: {l}."))),
        None => text.push_str(&paragraph(
            "Reading: every fit carries a flag (a parameter at a boundary or no convergence), \
             so no structure is suggested.",
        )),
    }
    let rows: Vec<Vec<String>> = screening
        .fits
        .iter()
        .map(|f| {
            let params = if f.parameters.len() > LISTED_PARAMETERS {
                format!("{} parameters (in the JSON)", f.parameters.len())
            } else {
                f.parameter_names
                    .iter()
                    .zip(&f.parameters)
                    .map(|(n, x)| format!("{n} = {}", fmt(*x)))
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            vec![
                words(&f.structure),
                params,
                fmt(f.loglik),
                fmt(f.aic),
                fmt(f.bic),
                fmt(f.delta_aic),
                if f.flags.is_empty() {
                    "-".into()
                } else {
                    format!("FLAGGED: {}", f.flags.join("; "))
                },
            ]
        })
        .collect();
    text.push_str(&table(
        &[
            "structure",
            "parameters",
            "log-likelihood",
            "AIC",
            "BIC",
            "delta AIC",
            "flags",
        ],
        &rows,
    ));
    let notes: Vec<String> = screening
        .fits
        .iter()
        .filter_map(|f| {
            let mut n = f.note.clone().map(|n| format!("{}: {n}", f.structure));
            if !f.converged {
                n = Some(format!(
                    "{}: the optimiser stopped at its iteration cap{}",
                    f.structure,
                    n.map_or(String::new(), |x| format!(" ({x})"))
                ));
            }
            n
        })
        .collect();
    if !notes.is_empty() {
        text.push_str(&paragraph(&format!("Notes: {}.", notes.join("; "))));
    }
    let mut not_fitted: Vec<String> = screening
        .skipped
        .iter()
        .map(|s| format!("{}: {}", s.structure, s.reason))
        .collect();
    if let Some(r) = &refusal {
        not_fitted.push(format!("toeplitz and unstructured: {r}"));
    }
    if !not_fitted.is_empty() {
        text.push_str(&paragraph(&format!(
            "Not fitted: {}.",
            not_fitted.join("; ")
        )));
    }
    let numbers = json!({
        "options": value(&options),
        "subsample": subsample_numbers,
        "grid_structures": refusal,
        "screening": value(&screening),
        "reading": line,
        "skipped": not_fitted,
    });
    Ok((
        section(
            "screening",
            "Covariance screening",
            text,
            Vec::new(),
            numbers,
        ),
        Some(screening),
    ))
}
