//! Groups: mean curves per level of each categorical covariate (at most `group_levels`
//! distinct values), and per dropout cohort (subjects grouped by the time bin of their last
//! visit).

use serde_json::json;

use super::covariates::is_continuous;
use super::{figure, fmt, section, value, Context};
use crate::chart::{line, Plot};
use crate::html::{paragraph, table, Section};
use trajweave_core::covariates::groups::{dropout_curves, group_curves, GroupCurves};
use trajweave_core::error::Result;

fn plot(title: &str, ctx: &Context, g: &GroupCurves, prefix: &str) -> String {
    let mut p = Plot::new(title, &ctx.time_title(), &ctx.response_title());
    p.width = 760.0;
    for (j, c) in g.groups.iter().enumerate() {
        let name = format!("{prefix}{} ({} subjects)", c.label, c.subjects);
        p = p.with(line(&name, &g.at, &c.fitted, j));
    }
    p.svg()
}

fn rows(g: &GroupCurves) -> Vec<Vec<String>> {
    g.groups
        .iter()
        .map(|c| {
            let first = g.at.iter().zip(&c.fitted).find(|(_, f)| f.is_finite());
            let last =
                g.at.iter()
                    .zip(&c.fitted)
                    .rev()
                    .find(|(_, f)| f.is_finite());
            let show = |p: Option<(&f64, &f64)>| p.map_or("-".into(), |(_, f)| fmt(*f));
            vec![
                c.label.clone(),
                c.subjects.to_string(),
                c.observations.to_string(),
                show(first),
                show(last),
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
        "first fitted",
        "last fitted",
    ];
    let mut text = paragraph(&format!(
        "Mean curves ({}) fitted to each group's rows alone, drawn only over the group's own \
         time range.",
        o.smoother
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
                figures.push(figure(
                    &format!("fig-group-{}", k + 1),
                    &title,
                    plot(&title, ctx, &g, &format!("{name} = ")),
                    format!("One curve per value of {name}."),
                ));
                text.push_str(&paragraph(&format!("Groups by {name}:")));
                text.push_str(&table(&header, &rows(&g)));
                numbers.push(value(&strip(&g)));
            }
            Err(e) => skipped.push(format!("{name}: {e}")),
        }
    }
    progress("dropout cohorts");
    let dropout = match dropout_curves(ctx.panel, &ctx.grid, ctx.smoother, None) {
        Ok(d) => {
            let title = format!("Mean {} by dropout cohort", ctx.columns.response);
            figures.push(figure(
                "fig-dropout",
                &title,
                plot(&title, ctx, &d, "last visit in "),
                format!(
                    "Subjects grouped by the time bin of their last visit; a cohort that left \
                     early ends early. {} subjects had their last visit outside every bin.",
                    d.left_out
                ),
            ));
            text.push_str(&paragraph(
                "Dropout cohorts (by the bin of the last visit):",
            ));
            text.push_str(&table(&header, &rows(&d)));
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
