//! Groups: mean curves per level of each categorical covariate (at most `group_levels`
//! distinct values), and per dropout cohort (subjects grouped by the time bin of their last
//! visit).

use serde_json::json;

use super::covariates::is_continuous;
use super::{figure, fmt, section, supported_line, value, Context};
use crate::chart::{AtRisk, Plot};
use crate::html::{paragraph, table, Section};
use trajweave_core::covariates::groups::{dropout_curves, group_curves, GroupCurves};
use trajweave_core::error::Result;

/// The follow-up span of each subject within each group: rows whose covariate equals the
/// group's level, or (dropout cohorts, `level` None) the subjects whose last visit is in the
/// cohort's bin.
fn group_spans(ctx: &Context, g: &GroupCurves) -> Vec<AtRisk> {
    let p = ctx.panel;
    let t = p.time();
    let cov = p.covariates().iter().find(|c| c.name == g.by);
    g.groups
        .iter()
        .map(|c| {
            let spans: Vec<(f64, f64)> = (0..p.n_subjects())
                .filter_map(|i| {
                    let rows = p.subject_rows(i);
                    match (c.level, cov) {
                        (Some(v), Some(cv)) => {
                            let ts: Vec<f64> =
                                rows.filter(|&r| cv.values[r] == v).map(|r| t[r]).collect();
                            Some((*ts.first()?, *ts.last()?))
                        }
                        _ => {
                            let (a, b) = (t[rows.start], t[rows.end - 1]);
                            let bin = ctx.grid.bin_of(b)?;
                            (ctx.grid.label(bin) == c.label).then_some((a, b))
                        }
                    }
                })
                .collect();
            AtRisk::new("", &spans)
        })
        .collect()
}

/// Per group: the grid points where at least `min_at_risk` of its subjects are in follow-up.
fn supported(ctx: &Context, g: &GroupCurves, risk: &[AtRisk]) -> Vec<Vec<bool>> {
    risk.iter()
        .map(|r| {
            g.at.iter()
                .map(|&a| r.count(a) >= ctx.options.min_at_risk)
                .collect()
        })
        .collect()
}

fn plot(title: &str, ctx: &Context, g: &GroupCurves, prefix: &str, ok: &[Vec<bool>]) -> String {
    let mut p = Plot::new(title, &ctx.time_title(), &ctx.response_title()).tight();
    p.width = 760.0;
    for (j, c) in g.groups.iter().enumerate() {
        let name = format!("{prefix}{} ({} subjects)", c.label, c.subjects);
        for l in supported_line(&name, &g.at, &c.fitted, &ok[j], j) {
            p = p.with(l);
        }
    }
    p.svg()
}

fn rows(g: &GroupCurves, ok: &[Vec<bool>]) -> Vec<Vec<String>> {
    g.groups
        .iter()
        .zip(ok)
        .map(|(c, ok)| {
            let solid: Vec<(f64, f64)> =
                g.at.iter()
                    .zip(&c.fitted)
                    .zip(ok)
                    .filter(|((_, f), s)| f.is_finite() && **s)
                    .map(|((a, f), _)| (*a, *f))
                    .collect();
            let (span, first, last) = match (solid.first(), solid.last()) {
                (Some(a), Some(b)) => (format!("{} to {}", fmt(a.0), fmt(b.0)), fmt(a.1), fmt(b.1)),
                _ => ("- (too few in follow-up)".into(), "-".into(), "-".into()),
            };
            vec![
                c.label.clone(),
                c.subjects.to_string(),
                c.observations.to_string(),
                span,
                first,
                last,
            ]
        })
        .collect()
}

/// The section (always present: the dropout cohorts need no covariate).
pub(crate) fn build(ctx: &Context, progress: &mut dyn FnMut(&str)) -> Result<Section> {
    let o = ctx.options;
    let header = [
        "group",
        "subjects",
        "observations",
        "solid over",
        "first solid value",
        "last solid value",
    ];
    let mut text = paragraph(&format!(
        "Mean curves ({}) fitted to each group's rows alone, drawn only over the group's own \
         time range: solid where at least {} of the group's subjects are in follow-up, dashed \
         where fewer are (the ends of a group's curve rest on few subjects and swing). No \
         band is drawn per group; the table gives the span each curve is supported over.",
        o.smoother, o.min_at_risk
    ));
    let (mut figures, mut numbers, mut skipped) = (Vec::new(), Vec::new(), Vec::new());
    let categorical: Vec<String> = ctx
        .panel
        .covariates()
        .iter()
        .filter(|c| !is_continuous(&c.values, o.group_levels))
        .map(|c| c.name.clone())
        .collect();
    for (k, name) in categorical.iter().enumerate() {
        progress(&format!("groups by {name}"));
        match group_curves(ctx.panel, name, ctx.smoother, None) {
            Ok(g) => {
                let title = format!("Mean {} by {name}", ctx.columns.response);
                let ok = supported(ctx, &g, &group_spans(ctx, &g));
                figures.push(figure(
                    &format!("fig-group-{}", k + 1),
                    &title,
                    plot(&title, ctx, &g, &format!("{name} = "), &ok),
                    format!(
                        "One curve per value of {name}; solid where at least {} of its \
                         subjects are in follow-up.",
                        o.min_at_risk
                    ),
                ));
                text.push_str(&paragraph(&format!("Groups by {name}:")));
                text.push_str(&table(&header, &rows(&g, &ok)));
                numbers.push(value(&strip(&g)));
            }
            Err(e) => skipped.push(format!("{name}: {e}")),
        }
    }
    progress("dropout cohorts");
    let dropout = match dropout_curves(ctx.panel, &ctx.grid, ctx.smoother, None) {
        Ok(d) => {
            let title = format!("Mean {} by dropout cohort", ctx.columns.response);
            let ok = supported(ctx, &d, &group_spans(ctx, &d));
            figures.push(figure(
                "fig-dropout",
                &title,
                plot(&title, ctx, &d, "last visit in ", &ok),
                format!(
                    "Subjects grouped by the time bin of their last visit; a cohort that left \
                     early ends early. {} subjects had their last visit outside every bin.",
                    d.left_out
                ),
            ));
            text.push_str(&paragraph(
                "Dropout cohorts (by the bin of the last visit):",
            ));
            text.push_str(&table(&header, &rows(&d, &ok)));
            value(&strip(&d))
        }
        Err(e) => {
            skipped.push(format!("dropout cohorts: {e}"));
            serde_json::Value::Null
        }
    };
    if !skipped.is_empty() {
        text.push_str(&paragraph(&format!("Not drawn: {}.", skipped.join("; "))));
    }
    Ok(section(
        "groups",
        "Groups and dropout cohorts",
        text,
        figures,
        json!({ "groups": numbers, "dropout": dropout, "grid": value(&ctx.grid), "skipped": skipped }),
    ))
}

/// The curves as shown: grid values, without each fit's own (possibly long) point list.
fn strip(g: &GroupCurves) -> serde_json::Value {
    json!({
        "by": g.by,
        "at": g.at,
        "left_out": g.left_out,
        "groups": g.groups.iter().map(|c| json!({
            "label": c.label,
            "level": c.level,
            "subjects": c.subjects,
            "observations": c.observations,
            "fitted": value(&c.fitted),
            "settings": c.curve.settings,
        })).collect::<Vec<_>>(),
    })
}
