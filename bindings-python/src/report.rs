//! The report: the same renderer as the CLI's `report`; Python writes the files.

use pyo3::prelude::*;
use trajweave_report::{build_report, ReportColumns, ReportOptions, ReportValue};

use crate::errors::IntoPy;
use crate::panel::NativePanel;

/// A report option as Python gives it.
#[derive(FromPyObject)]
pub enum RawReportValue {
    Number(f64),
    Text(String),
    Numbers(Vec<f64>),
    Texts(Vec<String>),
}

/// (html, json) of the report on `panel` with `options` set in the order given.
#[allow(clippy::too_many_arguments)] // the report's column labels, one for one
#[pyfunction]
#[pyo3(signature = (panel, subject, time, response, time_unit=None, response_unit=None, source=None, options=Vec::new()))]
pub fn panel_report(
    py: Python<'_>,
    panel: &NativePanel,
    subject: String,
    time: String,
    response: String,
    time_unit: Option<String>,
    response_unit: Option<String>,
    source: Option<String>,
    options: Vec<(String, RawReportValue)>,
) -> PyResult<(String, String)> {
    let mut o = ReportOptions::default();
    for (name, value) in options {
        let v = match value {
            RawReportValue::Number(x) => ReportValue::Number(x),
            RawReportValue::Text(s) => ReportValue::Text(s),
            RawReportValue::Numbers(v) => ReportValue::Numbers(v),
            RawReportValue::Texts(v) => ReportValue::Texts(v),
        };
        o.set(&name, &v).py_err()?;
    }
    let columns = ReportColumns {
        subject,
        time,
        response,
        time_unit,
        response_unit,
        source,
    };
    let r = py
        .detach(|| build_report(&panel.inner, &columns, &o, &mut |_| {}))
        .py_err()?;
    let json = r.json_text();
    Ok((r.html, json))
}
