//! Covariates: each continuous covariate (more than `group_levels` distinct values) cut into
//! equal-count overlapping intervals, with the trend of the response in each interval drawn as
//! small multiples and its least-squares slope (cluster-robust standard error) tabulated.

use serde_json::json;

use super::{figure, fmt, section, supported_line, value, Context};
use crate::chart::{small_multiples, AtRisk, Layer, Plot};
use crate::html::{paragraph, table, Section};
use crate::palette;
use trajweave_core::covariates::bands::covariate_bands;
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::data::panel::Panel;
use trajweave_core::error::Result;

/// True when the covariate has more than `levels` distinct values (counted no further).
pub(crate) fn is_continuous(values: &[f64], levels: usize) -> bool {
    let mut seen: Vec<f64> = Vec::with_capacity(levels + 1);
    for &v in values {
        let v = v + 0.0;
        if !seen.contains(&v) {
            seen.push(v);
            if seen.len() > levels {
                return true;
            }
        }
    }
    false
}

/// Subjects in follow-up within a covariate interval: each subject's first and last row whose
/// covariate lies in [lower, upper].
fn band_at_risk(panel: &Panel, name: &str, lower: f64, upper: f64) -> AtRisk {
    let t = panel.time();
    let spans: Vec<(f64, f64)> = match panel.covariates().iter().find(|c| c.name == name) {
        Some(c) => (0..panel.n_subjects())
            .filter_map(|i| {
                let mut rows = panel
                    .subject_rows(i)
                    .filter(|&r| c.values[r] >= lower && c.values[r] <= upper);
                let first = rows.next()?;
                let last = rows.next_back().unwrap_or(first);
                Some((t[first], t[last]))
            })
            .collect(),
        None => Vec::new(),
    };
    AtRisk::new("", &spans)
}

/// Names of the panel's continuous covariates.
pub(crate) fn continuous(panel: &Panel, levels: usize) -> Vec<String> {
    panel
        .covariates()
        .iter()
        .filter(|c| is_continuous(&c.values, levels))
        .map(|c| c.name.clone())
        .collect()
}

/// The section, or `None` when the panel has no continuous covariate.
pub(crate) fn build(ctx: &Context, progress: &mut dyn FnMut(&str)) -> Result<Option<Section>> {
    let names = continuous(ctx.panel, ctx.options.group_levels);
    if names.is_empty() {
        return Ok(None);
    }
    let o = ctx.options;
    let mut text = paragraph(&format!(
        "Each covariate with more than {} distinct values is cut into {} equal-count \
         intervals overlapping by a fraction {} (a time-fixed covariate counts subjects, a \
         time-varying one counts rows). In each interval the {} smooth of {} on {} is drawn \
         (solid where at least {} of the interval's subjects are in follow-up, thin dashed \
         where fewer are) with the least-squares line (dashed); slopes have cluster-robust \
         (CR1, by subject) standard errors.",
        o.group_levels,
        o.bands,
        fmt(o.overlap),
        o.smoother,
        ctx.columns.response,
        ctx.columns.time,
        o.min_at_risk
    ));
    let (mut figures, mut numbers, mut skipped) = (Vec::new(), Vec::new(), Vec::new());
    for (k, name) in names.iter().enumerate() {
        progress(&format!("covariate {name}"));
        let fit = covariate_bands(ctx.panel, name, o.bands, o.overlap).and_then(|b| {
            conditional_trends(ctx.panel, name, &b, ctx.smoother, None).map(|c| (b, c))
        });
        let (bands, trends) = match fit {
            Ok(v) => v,
            Err(e) => {
                skipped.push(format!("{name}: {e}"));
                continue;
            }
        };
        let panels: Vec<Plot> = trends
            .trends
            .iter()
            .map(|tr| {
                let ok: Vec<f64> = trends
                    .at
                    .iter()
                    .zip(&tr.fitted)
                    .filter(|(_, f)| f.is_finite())
                    .map(|(a, _)| *a)
                    .collect();
                let ends = [ok.first().copied(), ok.last().copied()];
                let (lx, ly): (Vec<f64>, Vec<f64>) = ends
                    .iter()
                    .flatten()
                    .map(|&a| (a, tr.intercept + tr.slope * a))
                    .unzip();
                let risk = band_at_risk(ctx.panel, name, tr.band.lower, tr.band.upper);
                let ok: Vec<bool> = trends
                    .at
                    .iter()
                    .map(|&a| risk.count(a) >= o.min_at_risk)
                    .collect();
                let mut p = Plot::new(
                    &format!("{} to {}", fmt(tr.band.lower), fmt(tr.band.upper)),
                    &ctx.time_title(),
                    "",
                )
                .tight();
                for l in supported_line(
                    &format!("{} smooth", o.smoother),
                    &trends.at,
                    &tr.fitted,
                    &ok,
                    0,
                ) {
                    p = p.with(l);
                }
                p.with(Layer::Line {
                    name: "least-squares line".into(),
                    x: lx,
                    y: ly,
                    colour: palette::series(1).into(),
                    width: 1.6,
                    dashed: true,
                })
            })
            .collect();
        let svg = small_multiples(
            &format!("{} by intervals of {name}", ctx.columns.response),
            &panels,
            &ctx.response_title(),
            170.0,
        );
        figures.push(figure(
            &format!("fig-covariate-{}", k + 1),
            &format!("Trend by {name}"),
            svg,
            format!(
                "Panels: equal-count intervals of {name} ({} counted); shared y axis.",
                bands.counted
            ),
        ));
        let rows: Vec<Vec<String>> = trends
            .trends
            .iter()
            .map(|tr| {
                vec![
                    format!("{} to {}", fmt(tr.band.lower), fmt(tr.band.upper)),
                    tr.subjects.to_string(),
                    tr.observations.to_string(),
                    fmt(tr.slope),
                    fmt(tr.slope_se),
                ]
            })
            .collect();
        text.push_str(&paragraph(&format!(
            "Slopes {} by interval of {name}:",
            ctx.per_time()
        )));
        text.push_str(&table(
            &[
                name.as_str(),
                "subjects",
                "observations",
                "slope",
                "SE (CR1)",
            ],
            &rows,
        ));
        numbers.push(json!({
            "covariate": name,
            "bands": value(&bands),
            "at": trends.at,
            "trends": value(&trends.trends),
            "se_kind": trends.se_kind,
        }));
    }
    if !skipped.is_empty() {
        text.push_str(&paragraph(&format!("Not drawn: {}.", skipped.join("; "))));
    }
    Ok(Some(section(
        "covariates",
        "Trends by covariate",
        text,
        figures,
        json!({ "covariates": numbers, "skipped": skipped }),
    )))
}

#[cfg(test)]
mod tests {
    #[test]
    fn continuity_rule() {
        assert!(!super::is_continuous(&[0.0, 1.0, 1.0, -0.0], 2));
        assert!(super::is_continuous(&[0.0, 1.0, 2.0], 2));
    }
}
