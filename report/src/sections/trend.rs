//! The mean trend: the data (dots, or a binned density above the threshold), the main
//! smoother's mean curve with its subject-bootstrap band (solid where enough subjects are in
//! follow-up, dashed elsewhere), the other smoothers' curves, the numbers in follow-up under
//! the time axis, and the average change per time unit of each curve with its
//! subject-bootstrap interval (`trajweave_core::trend::change`).

use serde_json::json;

use super::{at_risk, figure, fmt, section, supported_line, value, Context};
use crate::chart::{cloud, line, Layer, Plot};
use crate::html::{paragraph, table, Section};
use crate::palette;
use trajweave_core::error::Result;
use trajweave_core::trend::change::{average_change, Change, ChangeOptions};
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions, MeanCurve};

/// Above this many observations the comparison smoothers' changes get no interval (their
/// bootstrap would dominate the report's time); the main smoother's always does.
pub(crate) const COMPARISON_INTERVAL_MAX_ROWS: usize = 200_000;

/// The main curve and its average change, for the summary.
pub(crate) struct Trend {
    pub main: MeanCurve,
    pub change: Option<Change>,
    /// Why the change could not be computed.
    pub change_error: Option<String>,
}

/// How a family's smoothing was set, in words (a rule of thumb is named as such).
fn how_set(ctx: &Context, fam: &str) -> String {
    if fam == ctx.options.smoother {
        return match &ctx.smoothing.tuning {
            Some(_) => "subject cross-validation".into(),
            None => ctx.smoothing.how.clone(),
        };
    }
    let given = |opt: &str| ctx.options.is_given(fam, opt);
    match fam {
        "kernel" if !given("bandwidth") => {
            "rule of thumb (a density bandwidth that treats observations as independent)".into()
        }
        "lowess" if !given("span") => "default span 2/3 (a convention, not chosen)".into(),
        "spline" if !given("df") && !given("lambda") => {
            "GCV (treats observations as independent)".into()
        }
        "super" => "its own local cross-validation".into(),
        _ => "given".into(),
    }
}

fn change_options(ctx: &Context, with_interval: bool) -> Result<ChangeOptions> {
    let o = ctx.options;
    let reps = if with_interval && o.bootstrap_reps > 0 {
        o.bootstrap_reps
    } else {
        // The fewest replicates accepted; the interval is not shown.
        10
    };
    let c = ChangeOptions {
        bootstrap: BootstrapOptions {
            reps,
            level: o.bootstrap_level,
            seed: o.bootstrap_seed,
        },
        ..ChangeOptions::default()
    };
    c.validate()?;
    Ok(c)
}

/// The section and the main curve with its change (reused by the individuals and summary).
pub(crate) fn build(ctx: &Context, progress: &mut dyn FnMut(&str)) -> Result<(Section, Trend)> {
    let o = ctx.options;
    progress("mean curve and bootstrap band");
    let main = mean_curve(ctx.panel, ctx.smoother, None, o.bootstrap()?.as_ref())?;
    let mut others: Vec<(String, std::result::Result<MeanCurve, String>)> = Vec::new();
    for fam in o.smoothers.iter().filter(|f| **f != o.smoother) {
        progress(&format!("mean curve ({fam})"));
        let fit = match o.family(fam) {
            Some(s) => mean_curve(ctx.panel, s, Some(&main.at), None).map_err(|e| e.to_string()),
            None => Err(format!("unknown smoother {fam:?}")),
        };
        others.push((fam.clone(), fit));
    }
    progress("average change per time unit");
    let intervals = o.bootstrap_reps > 0;
    let main_change = average_change(ctx.panel, ctx.smoother, &change_options(ctx, true)?);
    let small = ctx.panel.n_obs() <= COMPARISON_INTERVAL_MAX_ROWS;
    let mut changes: Vec<(String, std::result::Result<Change, String>)> = Vec::new();
    for (fam, fit) in &others {
        if fit.is_err() {
            continue;
        }
        let c = match o.family(fam) {
            Some(s) => change_options(ctx, small)
                .and_then(|co| average_change(ctx.panel, s, &co))
                .map_err(|e| e.to_string()),
            None => Err(format!("unknown smoother {fam:?}")),
        };
        changes.push((fam.clone(), c));
    }
    let risk = at_risk(ctx.panel);
    let supported: Vec<bool> = main
        .at
        .iter()
        .map(|&a| risk.count(a) >= o.min_at_risk)
        .collect();

    let (t, y) = (ctx.panel.time(), ctx.panel.response());
    let mut plot = Plot::new(
        &format!("Mean {} over {}", ctx.columns.response, ctx.columns.time),
        &ctx.time_title(),
        &ctx.response_title(),
    )
    .tight();
    plot.width = 760.0;
    plot.height = 454.0;
    plot.at_risk = Some(risk.clone());
    plot = plot.with(cloud("observations", t, y, o.density_threshold));
    if let Some(b) = &main.band {
        plot = plot.with(Layer::Band {
            name: format!("{}% subject-bootstrap band", fmt(b.bootstrap.level * 100.0)),
            x: main.at.clone(),
            lower: b.lower.clone(),
            upper: b.upper.clone(),
            colour: palette::series(0).into(),
        });
    }
    for (k, (fam, fit)) in others.iter().enumerate() {
        if let Ok(m) = fit {
            // Drawn only where the main curve is drawn solid.
            let y: Vec<f64> = m
                .fitted
                .iter()
                .zip(&supported)
                .map(|(v, ok)| if *ok { *v } else { f64::NAN })
                .collect();
            let mut l = line(fam, &m.at, &y, k + 1);
            if let Layer::Line { dashed, width, .. } = &mut l {
                *dashed = true;
                *width = 1.6;
            }
            plot = plot.with(l);
        }
    }
    for l in supported_line(
        &format!("{} (main)", o.smoother),
        &main.at,
        &main.fitted,
        &supported,
        0,
    ) {
        plot = plot.with(l);
    }

    let per = ctx.per_time();
    let main_change = main_change.map_err(|e| e.to_string());
    let mut rows = vec![smoother_row(
        ctx,
        &o.smoother,
        &main,
        &main_change,
        intervals,
    )];
    let mut skipped = Vec::new();
    for (fam, fit) in &others {
        match fit {
            Ok(m) => {
                let c = changes
                    .iter()
                    .find(|(f, _)| f == fam)
                    .map(|(_, c)| c.clone())
                    .unwrap_or_else(|| Err("not computed".into()));
                rows.push(smoother_row(ctx, fam, m, &c, intervals && small));
            }
            Err(e) => skipped.push(format!("{fam}: {e}")),
        }
    }
    let level = fmt(o.bootstrap_level * 100.0);
    let change_text = match &main_change {
        Ok(c) if intervals => format!(
            "Over the central {}% of observation times ({} to {} {}), the mean curve changes \
             on average by {} {per} ({level}% subject-bootstrap interval {} to {}); the \
             least-squares slope of all observations is {} ({} to {}).",
            fmt(100.0 * c.central),
            fmt(c.from),
            fmt(c.to),
            ctx.columns.time,
            fmt(c.estimate),
            fmt(c.lower),
            fmt(c.upper),
            fmt(c.ols_slope),
            fmt(c.ols_lower),
            fmt(c.ols_upper),
        ),
        Ok(c) => format!(
            "Over the central {}% of observation times ({} to {} {}), the mean curve changes \
             on average by {} {per} (no interval: bootstrap_reps is 0).",
            fmt(100.0 * c.central),
            fmt(c.from),
            fmt(c.to),
            ctx.columns.time,
            fmt(c.estimate),
        ),
        Err(e) => format!("The average change could not be computed: {e}."),
    };
    let mut text = paragraph(&format!(
        "{} {change_text} The shaded band is the pointwise {} of {} subject-bootstrap \
         replicates (whole subjects resampled, so the band reflects between-subject \
         variation). The curve is solid where at least {} subjects are in follow-up (between \
         their first and last visit; counts under the axis) and dashed where fewer are; dashed \
         coloured lines are the other smoothers, drawn for comparison where the main curve is \
         solid.",
        ctx.smoothing.sentence(),
        main.band
            .as_ref()
            .map_or("band (not drawn)".to_string(), |b| format!(
                "{}% interval",
                fmt(b.bootstrap.level * 100.0)
            )),
        o.bootstrap_reps,
        o.min_at_risk,
    ));
    if let Some(tn) = &ctx.smoothing.tuning {
        let score_rows: Vec<Vec<String>> = tn
            .candidates
            .iter()
            .zip(&tn.scores)
            .enumerate()
            .map(|(k, (c, v))| {
                vec![
                    fmt(*c),
                    format!("{v:.4}"),
                    if k == tn.best_index {
                        "chosen".into()
                    } else {
                        String::new()
                    },
                ]
            })
            .collect();
        text.push_str(&paragraph(&format!(
            "Cross-validation of the {} (mean squared prediction error of left-out subjects):",
            tn.parameter
        )));
        text.push_str(&table(
            &[tn.parameter.as_str(), "CV score", ""],
            &score_rows,
        ));
    }
    text.push_str(&table(
        &[
            "smoother",
            "smoothing set by",
            "df",
            "span",
            "bandwidth",
            &format!("average change {per} ({level}% interval)"),
        ],
        &rows,
    ));
    if !small && intervals {
        text.push_str(&paragraph(&format!(
            "Intervals of the comparison smoothers' changes are not computed above {} \
             observations, to bound the report's time; the main smoother's is.",
            COMPARISON_INTERVAL_MAX_ROWS
        )));
    }
    if !skipped.is_empty() {
        text.push_str(&paragraph(&format!(
            "Not drawn (the fit failed): {}.",
            skipped.join("; ")
        )));
    }
    let change_value = |c: &std::result::Result<Change, String>| match c {
        Ok(c) => value(c),
        Err(e) => json!({ "error": e }),
    };
    let curve_numbers = |fam: &str, m: &MeanCurve, c: serde_json::Value| {
        json!({
            "smoother": fam,
            "settings": m.curve.settings,
            "diagnostics": value(&m.curve.diagnostics),
            "warnings": m.curve.warnings,
            "at": m.at,
            "fitted": m.fitted,
            "band": value(&m.band),
            "average_change": c,
        })
    };
    let mut curves = vec![curve_numbers(
        &o.smoother,
        &main,
        change_value(&main_change),
    )];
    curves.extend(others.iter().filter_map(|(f, m)| {
        m.as_ref().ok().map(|m| {
            let c = changes
                .iter()
                .find(|(g, _)| g == f)
                .map_or(serde_json::Value::Null, |(_, c)| change_value(c));
            curve_numbers(f, m, c)
        })
    }));
    let points_shown = if t.len() > o.density_threshold {
        match &plot.layers[0] {
            Layer::Density { density, .. } => value(density),
            _ => serde_json::Value::Null,
        }
    } else {
        json!({"points": t.len(), "drawn_as": "dots (the observations themselves)"})
    };
    let numbers = json!({
        "main_smoother": o.smoother,
        "smoothing": value(ctx.smoothing),
        "curves": curves,
        "skipped": skipped,
        "data_cloud": points_shown,
        "min_at_risk": o.min_at_risk,
        "at_risk": main.at.iter().map(|&a| risk.count(a)).collect::<Vec<_>>(),
    });
    let caption = format!(
        "Observations ({}), the mean curve of the main smoother with its band (solid where at \
         least {} subjects are in follow-up), the other smoothers, and the subjects in \
         follow-up at each tick of the time axis.",
        if t.len() > o.density_threshold {
            format!(
                "{} points, above {}: drawn as a binned density, cell colour by log count",
                t.len(),
                o.density_threshold
            )
        } else {
            format!("{} points", t.len())
        },
        o.min_at_risk
    );
    let fig = figure("fig-mean-trend", "Mean trend", plot.svg(), caption);
    let change = main_change.as_ref().ok().cloned();
    let change_error = main_change.err();
    Ok((
        section("trend", "Mean trend", text, vec![fig], numbers),
        Trend {
            main,
            change,
            change_error,
        },
    ))
}

fn smoother_row(
    ctx: &Context,
    fam: &str,
    m: &MeanCurve,
    c: &std::result::Result<Change, String>,
    interval: bool,
) -> Vec<String> {
    let d = &m.curve.diagnostics;
    let opt = |v: Option<f64>| v.map_or("-".to_string(), fmt);
    let change = match c {
        Ok(c) if interval => format!("{} ({} to {})", fmt(c.estimate), fmt(c.lower), fmt(c.upper)),
        Ok(c) => fmt(c.estimate),
        Err(e) => format!("not computed: {e}"),
    };
    let name = if fam == ctx.options.smoother {
        format!("{fam} (main)")
    } else {
        fam.to_string()
    };
    vec![
        name,
        how_set(ctx, fam),
        opt(d.df),
        opt(d.span),
        opt(d.bandwidth),
        change,
    ]
}
