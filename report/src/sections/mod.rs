//! The report's sections. Each builder takes the shared [`Context`], calls the estimators and
//! returns a [`Section`] with its figures and every number shown; later sections (for
//! example correlation ones) are added the same way, as one more function and one more line in
//! [`super::build_report`].

pub(crate) mod correlation;
pub(crate) mod covariates;
pub(crate) mod groups;
pub(crate) mod individuals;
pub(crate) mod overview;
pub(crate) mod screening;
pub(crate) mod smoothing;
pub(crate) mod trend;
pub(crate) mod variogram;

use super::chart::{line, AtRisk, Layer};
use super::html::{Figure, Section};
use super::options::ReportOptions;
use super::ReportColumns;
use trajweave_core::data::grid::TimeGrid;
use trajweave_core::data::panel::Panel;
use trajweave_core::trend::smoother::Smoother;

/// What every section builder reads.
pub(crate) struct Context<'a> {
    pub panel: &'a Panel,
    pub columns: &'a ReportColumns,
    pub options: &'a ReportOptions,
    /// The main smoother, with its smoothing as chosen.
    pub smoother: &'a Smoother,
    /// How that smoothing was chosen.
    pub smoothing: &'a smoothing::Choice,
    /// Time bins of the heat map and the dropout cohorts.
    pub grid: TimeGrid,
}

impl Context<'_> {
    /// "years (years)"-style axis titles: the column name, with its unit when given.
    pub fn time_title(&self) -> String {
        titled(&self.columns.time, self.columns.time_unit.as_deref())
    }

    pub fn response_title(&self) -> String {
        titled(
            &self.columns.response,
            self.columns.response_unit.as_deref(),
        )
    }

    /// "per year"-style wording of the time unit.
    pub fn per_time(&self) -> String {
        match self.columns.time_unit.as_deref() {
            Some(u) => format!("per {}", u.trim_end_matches('s')),
            None => format!("per unit of {}", self.columns.time),
        }
    }
}

fn titled(name: &str, unit: Option<&str>) -> String {
    match unit {
        Some(u) if !u.is_empty() && u != name => format!("{name} ({u})"),
        _ => name.to_string(),
    }
}

/// Each subject's (first, last) visit time.
pub(crate) fn follow_up_spans(panel: &Panel) -> Vec<(f64, f64)> {
    let t = panel.time();
    (0..panel.n_subjects())
        .filter_map(|i| {
            let r = panel.subject_rows(i);
            (!r.is_empty()).then(|| (t[r.start], t[r.end - 1]))
        })
        .collect()
}

/// The numbers-at-risk row of a time axis: subjects in follow-up (first <= t <= last visit).
pub(crate) fn at_risk(panel: &Panel) -> AtRisk {
    AtRisk::new("subjects in follow-up", &follow_up_spans(panel))
}

/// A curve drawn solid where `supported` and dashed (thinner, not in the legend) elsewhere;
/// the two parts share their end points so the line is unbroken.
pub(crate) fn supported_line(
    name: &str,
    x: &[f64],
    y: &[f64],
    supported: &[bool],
    i: usize,
) -> Vec<Layer> {
    let n = x.len().min(y.len()).min(supported.len());
    // The dashed part reaches one point into the solid part, so the two join.
    let unsupported_or_next = |k: usize| {
        !supported[k] || (k > 0 && !supported[k - 1]) || (k + 1 < n && !supported[k + 1])
    };
    let part = |keep: &dyn Fn(usize) -> bool| -> Vec<f64> {
        (0..n)
            .map(|k| if keep(k) { y[k] } else { f64::NAN })
            .collect()
    };
    let mut solid = line(name, &x[..n], &part(&|k| supported[k]), i);
    let mut faint = line("", &x[..n], &part(&unsupported_or_next), i);
    if let Layer::Line { dashed, width, .. } = &mut faint {
        *dashed = true;
        *width = 1.2;
    }
    if supported[..n].iter().all(|&s| !s) {
        // Nothing is supported: the whole curve dashed, still in the legend.
        if let Layer::Line { name: nm, .. } = &mut faint {
            *nm = format!("{name} (fewer than the minimum in follow-up)");
        }
        return vec![faint];
    }
    if let Layer::Line { dashed, .. } = &mut solid {
        *dashed = false;
    }
    vec![faint, solid]
}

/// A figure from its parts.
pub(crate) fn figure(id: &str, title: &str, svg: String, caption: String) -> Figure {
    Figure {
        id: id.into(),
        title: title.into(),
        svg,
        caption,
    }
}

/// A section from its parts.
pub(crate) fn section(
    id: &str,
    title: &str,
    text_html: String,
    figures: Vec<Figure>,
    numbers: serde_json::Value,
) -> Section {
    Section {
        id: id.into(),
        title: title.into(),
        text_html,
        figures,
        numbers,
    }
}

/// A number for prose: 3 significant digits at most, no exponent for ordinary sizes.
pub(crate) fn fmt(x: f64) -> String {
    if !x.is_finite() {
        return "NA".into();
    }
    let a = x.abs();
    let decimals = if a >= 100.0 || a == 0.0 {
        0
    } else if a >= 10.0 {
        1
    } else if a >= 1.0 {
        2
    } else {
        (2.0 - a.log10().floor()).min(8.0) as usize
    };
    let s = super::scale::format_fixed(x, decimals);
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A serde value of a result (results derive Serialize; a failure would be a bug, so it
/// becomes Null rather than a panic).
pub(crate) fn value<T: serde::Serialize>(v: &T) -> serde_json::Value {
    serde_json::to_value(v).unwrap_or(serde_json::Value::Null)
}

#[cfg(test)]
mod tests {
    #[test]
    fn prose_numbers() {
        assert_eq!(super::fmt(1234.6), "1235");
        assert_eq!(super::fmt(-1.2345), "-1.23");
        assert_eq!(super::fmt(0.012345), "0.0123");
        assert_eq!(super::fmt(0.0), "0");
        assert_eq!(super::fmt(0.05), "0.05");
        assert_eq!(super::fmt(95.0), "95");
    }
}
