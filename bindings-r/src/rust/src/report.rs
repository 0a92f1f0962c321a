//! The report (core module `report`): the same renderer as the CLI's `report`; R writes the
//! files. Options come as names and a list of values: a number or numbers, a text or texts.

use extendr_api::prelude::*;
use trajweave_report::{build_report, ReportColumns, ReportOptions, ReportValue};

use crate::convert::{named_list, one_text, optional_text, strings, value_text};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::panel::panel_ref;

const TEXT_ALLOWED: &str = "give one string";

/// `list(html, json)` of the report on `panel`.
#[extendr]
#[allow(clippy::too_many_arguments)] // one argument per label of the R function
fn tw_report(
    panel: Robj,
    subject: Robj,
    time: Robj,
    response: Robj,
    time_unit: Robj,
    response_unit: Robj,
    source: Robj,
    names: Robj,
    values: Robj,
) -> Robj {
    respond(run_report(
        &panel,
        [&subject, &time, &response],
        [&time_unit, &response_unit, &source],
        &names,
        &values,
    ))
}

fn report_value(name: &str, v: &Robj) -> Result<ReportValue, Failure> {
    match v.rtype() {
        Rtype::Doubles | Rtype::Integers => {
            let x: Vec<f64> = match v.as_real_vector() {
                Some(x) => x,
                None => v
                    .as_integer_vector()
                    .map(|i| i.into_iter().map(f64::from).collect())
                    .unwrap_or_default(),
            };
            Ok(match x.as_slice() {
                [one] => ReportValue::Number(*one),
                _ => ReportValue::Numbers(x),
            })
        }
        Rtype::Strings => {
            let s: Vec<String> = strings(v, name)?
                .into_iter()
                .map(|s| s.unwrap_or_default())
                .collect();
            Ok(match s.as_slice() {
                [one] => ReportValue::Text(one.clone()),
                _ => ReportValue::Texts(s),
            })
        }
        Rtype::Logicals => Err(invalid_option(
            name,
            value_text(v),
            "give numbers or text (write TRUE/FALSE options as 1/0)",
        )),
        _ => Err(invalid_option(name, value_text(v), "give numbers or text")),
    }
}

fn run_report(
    panel: &Robj,
    labels: [&Robj; 3],
    extra: [&Robj; 3],
    names: &Robj,
    values: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let mut o = ReportOptions::default();
    let names: Vec<String> = if names.is_null() {
        Vec::new()
    } else {
        strings(names, "...")?
            .into_iter()
            .map(|s| s.unwrap_or_default())
            .collect()
    };
    let list = List::try_from(values.clone())
        .map_err(|_| invalid_option("...", value_text(values), "name each report option"))?;
    for (name, v) in names.iter().zip(list.values()) {
        o.set(name, &report_value(name, &v)?)?;
    }
    let columns = ReportColumns {
        subject: one_text(labels[0], "columns", TEXT_ALLOWED)?,
        time: one_text(labels[1], "columns", TEXT_ALLOWED)?,
        response: one_text(labels[2], "columns", TEXT_ALLOWED)?,
        time_unit: optional_text(extra[0], "time_unit", TEXT_ALLOWED)?,
        response_unit: optional_text(extra[1], "response_unit", TEXT_ALLOWED)?,
        source: optional_text(extra[2], "source", TEXT_ALLOWED)?,
    };
    let r = build_report(panel, &columns, &o, &mut |_| {})?;
    let json = r.json_text();
    named_list(
        ["html", "json"].into_iter(),
        vec![r.html.into(), json.into()],
    )
}

extendr_module! {
    mod report;
    fn tw_report;
}
