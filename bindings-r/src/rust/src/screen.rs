//! Covariance-structure screening of residuals (core module `screen`).
//!
//! Each candidate's maximised log-likelihood, AIC, BIC and `flagged` cross as a data.frame
//! (best first, `-Inf` kept for a candidate whose matrix was never positive definite), its
//! parameters as a named list of named numeric vectors (`NA` where the core has NaN), its
//! per-parameter boundary flags as a named list of named logical vectors and its flags in
//! words as a named list of character vectors. The grid that toeplitz and unstructured need is
//! given by edges, or a schedule with a tolerance (`NULL` for none). The implied correlation
//! by lag crosses as a numeric vector (`NA` where a time is in no bin).

use extendr_api::prelude::*;
use trajweave_core::correlation::screen::{
    implied_correlation, screen_structures, structure_loglik, ScreenOptions, Structure,
};
use trajweave_core::TimeGrid;

use crate::convert::{
    data_frame, named_list, one_number, optional_real, optional_reals, real_slice, reals_na,
    strings, usize_counts, value_text,
};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::individuals::panel_residuals;
use crate::panel::panel_ref;

fn names_allowed() -> String {
    let names: Vec<&str> = Structure::ALL.iter().map(|s| s.name()).collect();
    format!("use one of: {}", names.join(", "))
}

/// The grid from `edges`, or `schedule` with `tolerance`; `None` when none is given.
fn grid(edges: &Robj, schedule: &Robj, tolerance: &Robj) -> Result<Option<TimeGrid>, Failure> {
    Ok(TimeGrid::from_options(
        optional_reals(edges, "edges")?,
        optional_reals(schedule, "schedule")?,
        optional_real(tolerance, "tolerance")?,
    )?)
}

/// Fits the `candidates` (names; `NULL`: all) to `residuals` (one per input row, the caller's
/// order) as `list(fits, parameters, at_boundary, flags, skipped, subjects, observations,
/// time_origin)`.
#[extendr]
#[allow(clippy::too_many_arguments)] // one argument per option of the R function
fn tw_screen_structures(
    panel: Robj,
    residuals: Robj,
    candidates: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
    max_iterations: Robj,
    convergence: Robj,
) -> Robj {
    respond(run_screen(
        &panel,
        &residuals,
        &candidates,
        &edges,
        &schedule,
        &tolerance,
        &max_iterations,
        &convergence,
    ))
}

#[allow(clippy::too_many_arguments)]
fn run_screen(
    panel: &Robj,
    values: &Robj,
    candidates: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
    max_iterations: &Robj,
    convergence: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let names = if candidates.is_null() {
        None
    } else {
        let given = strings(candidates, "candidates")?;
        // NA is not a name; refuse it with the list of names, as the core refuses a wrong one.
        let names: Option<Vec<String>> = given.into_iter().collect();
        Some(names.ok_or_else(|| invalid_option("candidates", "NA".into(), &names_allowed()))?)
    };
    let options = ScreenOptions::from_front(
        names.as_deref(),
        grid(edges, schedule, tolerance)?,
        Some(one_number(max_iterations, "max_iterations")?),
        Some(one_number(convergence, "convergence")?),
    )?;
    let r = panel_residuals(panel, values)?;
    let s = screen_structures(panel, &r, &options)?;
    let f = &s.fits;
    let fits = data_frame(
        [
            "structure",
            "n_parameters",
            "loglik",
            "aic",
            "bic",
            "delta_aic",
            "delta_bic",
            "iterations",
            "converged",
            "flagged",
            "note",
        ]
        .into_iter(),
        vec![
            f.iter().map(|x| x.structure.as_str()).collect_robj(),
            usize_counts(f.iter().map(|x| &x.n_parameters)),
            f.iter().map(|x| x.loglik).collect_robj(),
            f.iter().map(|x| x.aic).collect_robj(),
            f.iter().map(|x| x.bic).collect_robj(),
            f.iter().map(|x| x.delta_aic).collect_robj(),
            f.iter().map(|x| x.delta_bic).collect_robj(),
            usize_counts(f.iter().map(|x| &x.iterations)),
            f.iter().map(|x| x.converged).collect_robj(),
            f.iter().map(|x| x.flagged).collect_robj(),
            f.iter().map(|x| x.note.as_deref()).collect_robj(),
        ],
        f.len(),
    )?;
    let parameters = f
        .iter()
        .map(|x| {
            let mut v = reals_na(&x.parameters);
            v.set_names(x.parameter_names.iter().map(String::as_str))?;
            Ok(v)
        })
        .collect::<Result<Vec<_>, Failure>>()?;
    let parameters = named_list(f.iter().map(|x| x.structure.as_str()), parameters)?;
    let at_boundary = f
        .iter()
        .map(|x| {
            let mut v: Robj = x.at_boundary.iter().copied().collect_robj();
            v.set_names(x.parameter_names.iter().map(String::as_str))?;
            Ok(v)
        })
        .collect::<Result<Vec<_>, Failure>>()?;
    let at_boundary = named_list(f.iter().map(|x| x.structure.as_str()), at_boundary)?;
    let flags = f
        .iter()
        .map(|x| Strings::from_values(x.flags.iter().map(String::as_str)).into())
        .collect::<Vec<Robj>>();
    let flags = named_list(f.iter().map(|x| x.structure.as_str()), flags)?;
    let skipped = data_frame(
        ["structure", "reason"].into_iter(),
        vec![
            s.skipped
                .iter()
                .map(|x| x.structure.as_str())
                .collect_robj(),
            s.skipped.iter().map(|x| x.reason.as_str()).collect_robj(),
        ],
        s.skipped.len(),
    )?;
    named_list(
        [
            "fits",
            "parameters",
            "at_boundary",
            "flags",
            "skipped",
            "subjects",
            "observations",
            "time_origin",
        ]
        .into_iter(),
        vec![
            fits,
            parameters,
            at_boundary,
            flags,
            skipped,
            (s.subjects as f64).into(),
            (s.observations as f64).into(),
            s.time_origin.into(),
        ],
    )
}

/// The log-likelihood of `residuals` (one per input row) under `structure` (one name) at
/// `parameters`.
#[extendr]
fn tw_structure_loglik(
    panel: Robj,
    residuals: Robj,
    structure: Robj,
    parameters: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
) -> Robj {
    respond(run_loglik(
        &panel,
        &residuals,
        &structure,
        &parameters,
        &edges,
        &schedule,
        &tolerance,
    ))
}

fn run_loglik(
    panel: &Robj,
    values: &Robj,
    structure: &Robj,
    parameters: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let structure = one_structure(structure)?;
    let parameters = real_slice(parameters, "parameters")?;
    let grid = grid(edges, schedule, tolerance)?;
    let r = panel_residuals(panel, values)?;
    Ok(structure_loglik(panel, &r, structure, parameters, grid.as_ref())?.into())
}

/// One structure name; matched here rather than by Structure::parse, whose error names
/// `candidates`.
fn one_structure(structure: &Robj) -> Result<Structure, Failure> {
    match strings(structure, "structure")?.as_slice() {
        [Some(name)] => Structure::ALL
            .iter()
            .copied()
            .find(|s| s.name() == name)
            .ok_or_else(|| invalid_option("structure", format!("{name:?}"), &names_allowed())),
        _ => Err(invalid_option(
            "structure",
            value_text(structure),
            &format!("give one structure name; {}", names_allowed()),
        )),
    }
}

/// The correlation `structure` at `parameters` implies between measurements at `time` and
/// `time + lags`.
#[extendr]
fn tw_implied_correlation(
    structure: Robj,
    parameters: Robj,
    time: Robj,
    lags: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
) -> Robj {
    respond(run_implied(
        &structure,
        &parameters,
        &time,
        &lags,
        &edges,
        &schedule,
        &tolerance,
    ))
}

fn run_implied(
    structure: &Robj,
    parameters: &Robj,
    time: &Robj,
    lags: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
) -> Outcome {
    let structure = one_structure(structure)?;
    let parameters = real_slice(parameters, "parameters")?;
    let time = one_number(time, "time")?;
    let lags = real_slice(lags, "lags")?;
    let grid = grid(edges, schedule, tolerance)?;
    let c = implied_correlation(structure, parameters, time, lags, grid.as_ref())?;
    Ok(reals_na(&c))
}

extendr_module! {
    mod screen;
    fn tw_screen_structures;
    fn tw_structure_loglik;
    fn tw_implied_correlation;
}
