//! A self-contained HTML report of a panel (inline SVG figures and CSS, nothing fetched from
//! elsewhere), with a JSON value holding every number it shows.
//!
//! The same function serves the CLI, Python and R: [`build_report`] takes a [`Panel`], the
//! names of its columns (for labels), [`ReportOptions`] and a progress callback, and returns
//! the page and the numbers; the fronts only write them to files. Nothing here reads or
//! writes files.
//!
//! Parts: [`svg`] (the writer), [`scale`] (ticks), [`palette`], [`chart`] and [`heatmap`]
//! (figures), [`html`] (page assembly), [`options`], and one builder per section in
//! `sections/`. A new section is one more builder returning a [`Section`] and one more line
//! in [`build_report`].

pub mod chart;
pub mod heatmap;
pub mod html;
pub mod options;
pub mod palette;
pub mod scale;
mod sections;
pub mod svg;

use serde::Serialize;
use serde_json::json;

pub use html::{Figure, Section};
pub use options::{ReportOptions, ReportValue, REPORT_OPTION_NAMES};
pub use sections::individuals::{pool_rows, PooledGrid};

use sections::{fmt, Context};
use trajweave_core::correlation::screen::Screening;
use trajweave_core::data::grid::TimeGrid;
use trajweave_core::data::panel::Panel;
use trajweave_core::error::Result;

/// Names and units of the data's columns, used only for labels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportColumns {
    /// The subject id column.
    pub subject: String,
    /// The time column.
    pub time: String,
    /// The response column.
    pub response: String,
    /// Unit of time, plural (e.g. "years"); shown in axis titles and "per year".
    pub time_unit: Option<String>,
    /// Unit of the response (e.g. "mL/min/1.73 m2").
    pub response_unit: Option<String>,
    /// Where the data came from (e.g. a file name), shown in the header.
    pub source: Option<String>,
}

impl Default for ReportColumns {
    fn default() -> Self {
        ReportColumns {
            subject: "subject".into(),
            time: "time".into(),
            response: "response".into(),
            time_unit: None,
            response_unit: None,
            source: None,
        }
    }
}

/// A built report.
#[derive(Debug, Clone, PartialEq)]
pub struct Report {
    /// The HTML document.
    pub html: String,
    /// Every number shown, by section id (`overview`, `trend`, `individuals`, `correlation`,
    /// `variogram`, `screening`, `covariates`, `groups`), with the options and columns used and the summary text.
    pub json: serde_json::Value,
}

impl Report {
    /// The numbers as indented JSON text with every object's keys sorted, and a final newline:
    /// the same bytes from every front (a front whose JSON library keeps insertion order, as
    /// the R package's does, would otherwise order keys differently).
    pub fn json_text(&self) -> String {
        fn sorted(v: &serde_json::Value) -> serde_json::Value {
            match v {
                serde_json::Value::Object(m) => {
                    let mut keys: Vec<&String> = m.keys().collect();
                    keys.sort();
                    let mut out = serde_json::Map::new();
                    for k in keys {
                        out.insert(k.clone(), sorted(&m[k]));
                    }
                    serde_json::Value::Object(out)
                }
                serde_json::Value::Array(a) => {
                    serde_json::Value::Array(a.iter().map(sorted).collect())
                }
                other => other.clone(),
            }
        }
        // Serialising a Value cannot fail (its keys are strings).
        serde_json::to_string_pretty(&sorted(&self.json)).unwrap_or_default() + "\n"
    }
}

/// Bins aimed at when the grid edges are chosen automatically.
pub const AUTO_BINS: usize = 10;

/// The time grid of the heat map and dropout cohorts: the given edges, or Heckbert's nice
/// ticks spanning the time range with about [`AUTO_BINS`] bins.
///
/// # Examples
/// ```
/// use trajweave_report::{report_grid, ReportOptions};
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let p = Panel::new(SubjectIds::Int(vec![Some(1), Some(1)]), &[0.0, 9.3], &[1.0, 2.0], vec![], Missing::Error)?;
/// // Heckbert's ticks for [0, 9.3] aiming at 11: step 1, so bins [0, 1), ..., [9, 10].
/// assert_eq!(report_grid(&p, &ReportOptions::default())?.n_bins(), 10);
/// # Ok(()) }
/// ```
///
/// # Errors
/// Those of [`TimeGrid::edges`].
pub fn report_grid(panel: &Panel, options: &ReportOptions) -> Result<TimeGrid> {
    match &options.grid_edges {
        Some(e) => TimeGrid::edges(e.clone()),
        None => {
            let (lo, hi) = scale::extent(panel.time()).unwrap_or((0.0, 1.0));
            TimeGrid::edges(scale::Ticks::loose(lo, hi, AUTO_BINS + 1).values)
        }
    }
}

/// Builds the report of `panel`.
///
/// `progress` is told the name of each step as it starts (for a progress bar).
///
/// # Examples
/// ```
/// use trajweave_report::{build_report, ReportColumns, ReportOptions, ReportValue};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let panel = simulate(&SimulateOptions { subjects: 60, ..Default::default() })?.to_panel()?;
/// let mut o = ReportOptions::default();
/// o.set("bootstrap_reps", &ReportValue::Number(20.0))?;
/// let cols = ReportColumns { time: "years".into(), response: "egfr".into(), ..Default::default() };
/// let mut steps = Vec::new();
/// let r = build_report(&panel, &cols, &o, &mut |s| steps.push(s.to_string()))?;
/// assert!(r.html.starts_with("<!DOCTYPE html>"));
/// assert_eq!(r.json["sections"]["overview"]["subjects"], 60);
/// assert!(steps.contains(&"describe".to_string()));
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`crate::Error::InvalidOption`] for options that do not fit together (an unknown main
/// smoother, a "quantile" summary without `summary_p`) or grid edges refused by
/// [`TimeGrid::edges`]; errors of the main mean curve, the residuals and the ranking (the
/// core of the report). A covariate, group or extra smoother that cannot be fitted is not an
/// error: the section says why it is not drawn and the JSON lists it under `skipped`.
pub fn build_report(
    panel: &Panel,
    columns: &ReportColumns,
    options: &ReportOptions,
    progress: &mut dyn FnMut(&str),
) -> Result<Report> {
    let given = options.main_smoother()?;
    options.ranking_summary()?;
    options.variogram()?;
    options.variogram_fit()?;
    progress("choosing the smoothing");
    let smoothing = sections::smoothing::choose(panel, given, options)?;
    let ctx = Context {
        panel,
        columns,
        options,
        smoother: &smoothing.smoother,
        smoothing: &smoothing,
        grid: report_grid(panel, options)?,
    };
    progress("describe");
    let (overview, description) = sections::overview::build(&ctx)?;
    let (trend, trend_numbers) = sections::trend::build(&ctx, progress)?;
    let main = &trend_numbers.main;
    let (individuals, flags, resid) = sections::individuals::build(&ctx, main, progress)?;
    let (variogram, vario) = sections::variogram::build(&ctx, &resid, progress)?;
    // The screening before the correlation: its best unflagged structure's implied
    // correlation is drawn beside the lag correlation.
    let (screening, screened) = sections::screening::build(&ctx, &resid, progress)?;
    let implied = screened
        .as_ref()
        .and_then(|s| sections::screening::implied_line(&ctx, s));
    let correlation = sections::correlation::build(&ctx, &resid, implied.as_ref(), progress);
    let mut all = vec![
        overview,
        trend,
        individuals,
        correlation,
        variogram,
        screening,
    ];
    all.extend(sections::covariates::build(&ctx, progress)?);
    all.push(sections::groups::build(&ctx, progress)?);

    progress("assemble");
    let per = ctx.per_time();
    let listed: Vec<String> = flags
        .subjects
        .iter()
        .take(5)
        .map(|u| u.subject.to_string())
        .collect();
    let unusual_text = match flags.subjects.len() {
        0 => "No subject's residual summary is unusual".to_string(),
        n => format!(
            "{n} subject{} {} an unusual residual {} (|robust z| > {}){}",
            if n == 1 { "" } else { "s" },
            if n == 1 { "has" } else { "have" },
            flags_summary_name(options),
            fmt(options.unusual_threshold),
            if listed.is_empty() {
                String::new()
            } else {
                format!(", led by {} {}", columns.subject, listed.join(", "))
            }
        ),
    };
    let unit = columns.time_unit.as_deref().unwrap_or("time units");
    let structure_text = format!(
        "{}{}",
        screening_summary(screened.as_ref(), unit),
        variogram_summary(&vario, unit)
    );
    let change_text = match (&trend_numbers.change, &trend_numbers.change_error) {
        (Some(c), _) if options.bootstrap_reps > 0 => format!(
            "changes on average by {} {} over the central {}% of observation times ({} to {} \
             {}; {}% subject-bootstrap interval {} to {})",
            fmt(c.estimate),
            per,
            fmt(100.0 * c.central),
            fmt(c.from),
            fmt(c.to),
            columns.time,
            fmt(100.0 * c.level),
            fmt(c.lower),
            fmt(c.upper),
        ),
        (Some(c), _) => format!(
            "changes on average by {} {} over the central {}% of observation times ({} to {} \
             {}; no interval, bootstrap_reps is 0)",
            fmt(c.estimate),
            per,
            fmt(100.0 * c.central),
            fmt(c.from),
            fmt(c.to),
            columns.time,
        ),
        (None, e) => format!(
            "has no average change to report ({})",
            e.as_deref().unwrap_or("not computed")
        ),
    };
    let binary = trajweave_core::trend::curve::is_binary(panel.response());
    let what = if binary {
        format!(
            "The response {} takes two values, so the mean curve is a proportion; it",
            columns.response
        )
    } else {
        "The mean curve".to_string()
    };
    let summary = format!(
        "{} subjects with {} observations of {}; follow-up per subject has median {} (range \
         {} to {}) and visits per subject median {}. {} ({}, smoothing {}) {}. {}.{}",
        description.subjects,
        description.observations,
        columns.response,
        fmt(description.follow_up.median),
        fmt(description.follow_up.min),
        fmt(description.follow_up.max),
        fmt(description.visits_per_subject.median),
        what,
        options.smoother,
        match &smoothing.tuning {
            Some(_) => "chosen by subject cross-validation".to_string(),
            None => smoothing.how.clone(),
        },
        change_text,
        unusual_text,
        structure_text,
    );
    let mut meta = vec![format!(
        "Columns: subject {}, time {}, response {}",
        columns.subject, columns.time, columns.response
    )];
    if let Some(src) = &columns.source {
        meta.insert(0, format!("Data: {src}"));
    }
    let html = html::page(&options.title, &meta, &summary, &all);
    let mut by_id = serde_json::Map::new();
    for s in &all {
        by_id.insert(s.id.clone(), s.numbers.clone());
    }
    let json = json!({
        "title": options.title,
        "columns": sections::value(columns),
        "options": sections::value(options),
        "summary": summary,
        "figures": all.iter().flat_map(|s| s.figures.iter().map(|f| f.id.clone())).collect::<Vec<_>>(),
        "sections": by_id,
    });
    Ok(Report { html, json })
}

/// The screening's reading for the summary: the best unflagged structure with its variance
/// components, and what ranked above it but is flagged; nothing from a flagged fit as a finding.
fn screening_summary(screened: Option<&Screening>, unit: &str) -> String {
    let Some(s) = screened else {
        return String::new();
    };
    let Some(best) = sections::screening::best_unflagged(s) else {
        return " Covariance screening: every fitted structure carries a flag (a parameter at \
                a boundary or no convergence), so no structure is suggested (see that section)."
            .into();
    };
    let get = |name: &str| {
        best.parameter_names
            .iter()
            .position(|n| n == name)
            .map(|k| best.parameters[k])
    };
    let mut parts = Vec::new();
    match (get("intercept_variance"), get("slope_variance")) {
        (Some(v0), Some(v1)) => {
            parts.push(format!(
                "between-subject variance {} at time {} and slope variance {} per {} squared \
                 (intercept-slope correlation {})",
                fmt(v0),
                fmt(s.time_origin),
                fmt(v1),
                unit.trim_end_matches('s'),
                fmt(get("intercept_slope_correlation").unwrap_or(f64::NAN))
            ));
        }
        (Some(v0), None) => parts.push(format!("between-subject variance {}", fmt(v0))),
        _ => {}
    }
    if let (Some(sv), Some(r)) = (get("serial_variance").or(get("variance")), get("range")) {
        parts.push(format!(
            "serial variance {} with range {} {unit}",
            fmt(sv),
            fmt(r)
        ));
    }
    if let Some(e) = get("error_variance") {
        parts.push(format!("measurement-error variance {}", fmt(e)));
    }
    let flagged_above: Vec<String> = s
        .fits
        .iter()
        .take_while(|f| f.flagged)
        .map(|f| sections::screening::words(&f.structure))
        .collect();
    format!(
        " Covariance screening (maximum likelihood on the residuals of {} subjects, ranked by \
         AIC) reads {} as best{}{}.",
        s.subjects,
        sections::screening::words(&best.structure),
        if parts.is_empty() {
            String::new()
        } else {
            format!(": {}", parts.join(", "))
        },
        if flagged_above.is_empty() {
            String::new()
        } else {
            format!(
                "; {} ranked higher but sat at a boundary or did not converge, so it is not \
                 read (see that section)",
                flagged_above.join(", ")
            )
        }
    )
}

/// The variogram's reading for the summary: the components of the fit the comparison reads,
/// or in plain words why none is read.
fn variogram_summary(v: &sections::variogram::Outcome, unit: &str) -> String {
    let Some(c) = &v.comparison else {
        return String::new();
    };
    match &v.chosen {
        Some(f) if f.random_slope => format!(
            " The variogram keeps rising with the lag, as a random slope makes it: the fit with \
             a random slope is read (slope variance {} per {} squared, serial range {} {unit}).",
            fmt(f.slope_variance),
            unit.trim_end_matches('s'),
            fmt(f.range)
        ),
        Some(f) => {
            let sh = sections::variogram::Shares::of(f);
            format!(
                " The stationary variogram fit splits the residual variance into {}% between \
                 subjects, {}% serial correlation (range {} {unit}) and {}% measurement error.",
                fmt(100.0 * sh.intercept),
                fmt(100.0 * sh.serial),
                fmt(f.range),
                fmt(100.0 * sh.error)
            )
        }
        None => format!(
            " No variogram fit is read, since both carry flags: {}",
            c.stationary.reading
        ),
    }
}

fn flags_summary_name(options: &ReportOptions) -> String {
    options
        .ranking_summary()
        .map_or_else(|_| options.summary.clone(), |s| s.name().to_string())
}
