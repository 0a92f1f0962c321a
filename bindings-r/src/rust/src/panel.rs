//! `panel()`: R vectors to a core [`Panel`], held by R through an external pointer.

use extendr_api::prelude::*;
use trajweave_core::{Covariate, Missing, Panel, SubjectIds};

use crate::convert::{list_values, named_list, real_slice, strings, value_text};
use crate::error::{invalid_option, respond, Failure, Outcome};

/// Builds a panel. `subject` is an integer, double or character vector (the R wrapper turns
/// factors into text); `time`, `response` and each covariate are double vectors;
/// `covariate_names` is a character vector as long as the `covariate_values` list.
#[extendr]
fn tw_panel(
    subject: Robj,
    time: Robj,
    response: Robj,
    covariate_names: Robj,
    covariate_values: Robj,
    missing: Robj,
) -> Robj {
    respond(build(
        &subject,
        &time,
        &response,
        &covariate_names,
        &covariate_values,
        &missing,
    ))
}

fn build(
    subject: &Robj,
    time: &Robj,
    response: &Robj,
    covariate_names: &Robj,
    covariate_values: &Robj,
    missing: &Robj,
) -> Outcome {
    let missing = missing_policy(missing)?;
    let ids = subject_ids(subject)?;
    let names = strings(covariate_names, "covariates")?;
    let values = list_values(covariate_values, "covariates")?;
    let covariates = names
        .into_iter()
        .zip(&values)
        .map(|(name, v)| {
            let name = name.unwrap_or_default();
            let v = real_slice(v, &name)?.to_vec();
            Ok(Covariate::new(name, v))
        })
        .collect::<Result<Vec<_>, Failure>>()?;
    let panel = Panel::new(
        ids,
        real_slice(time, "time")?,
        real_slice(response, "response")?,
        covariates,
        missing,
    )?;
    Ok(ExternalPtr::new(panel).into())
}

fn missing_policy(x: &Robj) -> Result<Missing, Failure> {
    match x.as_str() {
        Some(s) if x.rtype() == Rtype::Strings && !x.is_na() => Ok(s.parse()?),
        // Same wording as the core's refusal of an unknown text.
        _ => Err(invalid_option(
            "missing",
            value_text(x),
            "use \"error\" (the default) or \"drop\"",
        )),
    }
}

fn subject_ids(x: &Robj) -> Result<SubjectIds, Failure> {
    match x.rtype() {
        Rtype::Integers if x.class().is_none() => {
            let v = if x.is_empty() {
                &[][..]
            } else {
                x.as_integer_slice().unwrap_or(&[])
            };
            // R's integer NA is i32::MIN.
            Ok(SubjectIds::Int(
                v.iter()
                    .map(|&i| (i != i32::MIN).then_some(i64::from(i)))
                    .collect(),
            ))
        }
        Rtype::Doubles => Ok(SubjectIds::Float(real_slice(x, "subject")?.to_vec())),
        // The R wrapper has made the text UTF-8 and refused what cannot be.
        Rtype::Strings => Ok(SubjectIds::Text(strings(x, "subject")?)),
        _ => Err(invalid_option(
            "subject",
            value_text(x),
            "give integer, numeric, character or factor ids",
        )),
    }
}

/// The panel behind an R external pointer, or an error a user can act on (a pointer that did
/// not survive `saveRDS()` or a new session reads as C `NULL`).
pub fn panel_ref(x: &Robj) -> Result<&Panel, Failure> {
    <&ExternalPtr<Panel>>::try_from(x)
        .ok()
        .and_then(|p| p.try_addr().ok())
        .ok_or_else(|| {
            invalid_option(
                "panel",
                "an empty or foreign pointer".into(),
                "build the panel in this R session with panel() or panel_from_frame(); \
                 panels do not survive saveRDS() or a restart",
            )
        })
}

/// Sizes for the print method.
#[extendr]
fn tw_panel_info(panel: Robj) -> Robj {
    respond(info(&panel))
}

fn info(x: &Robj) -> Outcome {
    let p = panel_ref(x)?;
    let covariates: Vec<&str> = p.covariates().iter().map(|c| c.name.as_str()).collect();
    named_list(
        [
            "subjects",
            "observations",
            "rows_input",
            "rows_dropped",
            "covariates",
            "subject_ids",
            "binary",
            "dropped_by_column",
        ]
        .into_iter(),
        vec![
            (p.n_subjects() as f64).into(),
            (p.n_obs() as f64).into(),
            (p.n_input_rows() as f64).into(),
            (p.dropped_rows().len() as f64).into(),
            Strings::from_values(covariates).into(),
            crate::convert::ids_robj(p.ids(), crate::convert::text_ids(p)),
            p.is_binary().into(),
            dropped_by_column(p),
        ],
    )
}

/// Rows dropped per column with a missing cell, as a named double vector.
fn dropped_by_column(p: &Panel) -> Robj {
    let counts = p.dropped_by_column();
    let mut values: Robj = counts
        .iter()
        .map(|c| c.rows as f64)
        .collect::<Vec<f64>>()
        .into();
    let names: Vec<&str> = counts.iter().map(|c| c.column.as_str()).collect();
    // Setting names on a fresh vector cannot fail; an empty vector keeps none.
    if !names.is_empty() {
        let _ = values.set_names(names);
    }
    values
}

extendr_module! {
    mod panel;
    fn tw_panel;
    fn tw_panel_info;
}
