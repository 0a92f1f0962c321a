//! Data overview: size, follow-up, visits and the spacing of visits.

use serde_json::json;

use super::{figure, fmt, section, value, Context};
use crate::chart::{Histogram, Plot};
use crate::html::Section;
use crate::html::{paragraph, table};
use trajweave_core::data::describe::{describe, Description};
use trajweave_core::error::Result;
use trajweave_core::numeric::quantile::FiveNumbers;

/// Bins aimed at in the histograms.
const BINS: usize = 20;

/// The overview section and the description it was built from.
pub(crate) fn build(ctx: &Context) -> Result<(Section, Description)> {
    let d = describe(ctx.panel, None)?;
    let follow: Vec<f64> = d.per_subject.iter().map(|s| s.last - s.first).collect();
    let visits: Vec<f64> = d.per_subject.iter().map(|s| s.visits as f64).collect();
    let t = ctx.panel.time();
    let gaps: Vec<f64> = (0..ctx.panel.n_subjects())
        .flat_map(|i| t[ctx.panel.subject_rows(i)].windows(2).map(|w| w[1] - w[0]))
        .collect();
    let h_follow = Histogram::of(&follow, BINS);
    let h_visits = Histogram::of(&visits, BINS);
    let h_gaps = (!gaps.is_empty()).then(|| Histogram::of(&gaps, BINS));

    let time_t = ctx.time_title();
    let mut figures = vec![
        figure(
            "fig-follow-up",
            "Follow-up per subject",
            Plot::new(
                "Follow-up per subject",
                &format!("follow-up: last minus first visit, {time_t}"),
                "subjects",
            )
            .with(h_follow.layer("", 0))
            .svg(),
            "Histogram of each subject's follow-up (last visit time minus first). Bin edges \
             are nice numbers; bins include their lower edge, the last bin both edges."
                .into(),
        ),
        figure(
            "fig-visits",
            "Visits per subject",
            Plot::new("Visits per subject", "visits (rows kept)", "subjects")
                .with(h_visits.layer("", 2))
                .svg(),
            "Histogram of the number of visits (rows) per subject.".into(),
        ),
    ];
    if let Some(h) = &h_gaps {
        figures.push(figure(
            "fig-gaps",
            "Gaps between visits",
            Plot::new(
                "Gaps between consecutive visits",
                &format!("gap, {time_t}"),
                "gaps",
            )
            .with(h.layer("", 5))
            .svg(),
            format!(
                "Histogram of the {} gaps between consecutive visits within subjects, pooled \
                 over subjects (a repeated visit time gives a gap of 0).",
                gaps.len()
            ),
        ));
    }
    let row = |name: &str, f: &FiveNumbers| {
        vec![
            name.to_string(),
            fmt(f.min),
            fmt(f.q1),
            fmt(f.median),
            fmt(f.q3),
            fmt(f.max),
        ]
    };
    let mut rows = vec![
        row("visits per subject", &d.visits_per_subject),
        row(&format!("follow-up, {time_t}"), &d.follow_up),
    ];
    if let Some(g) = &d.gaps {
        rows.push(row(&format!("gap between visits, {time_t}"), g));
    }
    // Rows dropped per column, under the data's own column names.
    let by_column: Vec<String> = d
        .dropped_by_column
        .iter()
        .map(|c| {
            let name = match c.column.as_str() {
                "subject" => ctx.columns.subject.as_str(),
                "time" => ctx.columns.time.as_str(),
                "response" => ctx.columns.response.as_str(),
                other => other,
            };
            format!("{name} {}", c.rows)
        })
        .collect();
    let dropped = if by_column.is_empty() {
        format!("{} dropped for a missing value", d.rows_dropped)
    } else {
        format!(
            "{} dropped for a missing value; missing by column: {}",
            d.rows_dropped,
            by_column.join(", ")
        )
    };
    let text = format!(
        "{}{}",
        paragraph(&format!(
            "{} subjects, {} observations of {} ({} rows given, {}); {} from {} to {}. {} \
             subjects have a single visit; {} rows repeat a subject's visit time.",
            d.subjects,
            d.observations,
            ctx.columns.response,
            d.rows_input,
            dropped,
            ctx.columns.time,
            fmt(d.time_range[0]),
            fmt(d.time_range[1]),
            d.single_visit_subjects,
            d.duplicated_rows
        )),
        table(&["", "min", "q1", "median", "q3", "max"], &rows)
    );
    let numbers = json!({
        "subjects": d.subjects,
        "observations": d.observations,
        "rows_input": d.rows_input,
        "rows_dropped": d.rows_dropped,
        "dropped_by_column": value(&d.dropped_by_column),
        "time_range": d.time_range,
        "visits_per_subject": value(&d.visits_per_subject),
        "follow_up": value(&d.follow_up),
        "gaps": value(&d.gaps),
        "gap_count": d.gap_count,
        "single_visit_subjects": d.single_visit_subjects,
        "duplicated_rows": d.duplicated_rows,
        "covariates": value(&d.covariates),
        "histograms": {
            "follow_up": value(&h_follow),
            "visits": value(&h_visits),
            "gaps": value(&h_gaps),
        },
    });
    Ok((
        section("overview", "Data overview", text, figures, numbers),
        d,
    ))
}
