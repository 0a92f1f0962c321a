//! The mean trend: the data (dots, or a binned density above the threshold), the main
//! smoother's mean curve with its subject-bootstrap band, and the other smoothers' curves.

use serde_json::json;

use super::{figure, fmt, section, value, Context};
use crate::chart::{cloud, line, Layer, Plot};
use crate::html::{paragraph, table, Section};
use crate::palette;
use trajweave_core::error::Result;
use trajweave_core::trend::mean_curve::{mean_curve, MeanCurve};

/// The mean curve's average change per time unit over the grid: (last - first fitted value)
/// / (last - first grid time); NaN for a one-point grid.
pub(crate) fn change_per_time(m: &MeanCurve) -> f64 {
    match (m.at.first(), m.at.last(), m.fitted.first(), m.fitted.last()) {
        (Some(&a), Some(&b), Some(&fa), Some(&fb)) if b > a => (fb - fa) / (b - a),
        _ => f64::NAN,
    }
}

/// The section and the main mean curve (reused by the individuals and summary).
pub(crate) fn build(ctx: &Context, progress: &mut dyn FnMut(&str)) -> Result<(Section, MeanCurve)> {
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

    let (t, y) = (ctx.panel.time(), ctx.panel.response());
    let mut plot = Plot::new(
        &format!("Mean {} over {}", ctx.columns.response, ctx.columns.time),
        &ctx.time_title(),
        &ctx.response_title(),
    );
    plot.width = 760.0;
    plot.height = 420.0;
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
            let mut l = line(fam, &m.at, &m.fitted, k + 1);
            if let Layer::Line { dashed, width, .. } = &mut l {
                *dashed = true;
                *width = 1.6;
            }
            plot = plot.with(l);
        }
    }
    plot = plot.with(line(
        &format!("{} (main)", o.smoother),
        &main.at,
        &main.fitted,
        0,
    ));

    let change = change_per_time(&main);
    let per = ctx.per_time();
    let mut rows = vec![smoother_row(&o.smoother, &main, &per)];
    let mut skipped = Vec::new();
    for (fam, fit) in &others {
        match fit {
            Ok(m) => rows.push(smoother_row(fam, m, &per)),
            Err(e) => skipped.push(format!("{fam}: {e}")),
        }
    }
    let mut text = paragraph(&format!(
        "The mean curve ({}) goes from {} at {} {} to {} at {}, an average change of {} {}. \
         The shaded band is the pointwise {} of {} subject-bootstrap replicates (whole \
         subjects resampled, so the band reflects between-subject variation); dashed lines \
         are the other smoothers, drawn for comparison.",
        o.smoother,
        fmt(main.fitted.first().copied().unwrap_or(f64::NAN)),
        ctx.columns.time,
        fmt(main.at.first().copied().unwrap_or(f64::NAN)),
        fmt(main.fitted.last().copied().unwrap_or(f64::NAN)),
        fmt(main.at.last().copied().unwrap_or(f64::NAN)),
        fmt(change),
        per,
        main.band
            .as_ref()
            .map_or("band (not drawn)".to_string(), |b| format!(
                "{}% interval",
                fmt(b.bootstrap.level * 100.0)
            )),
        o.bootstrap_reps,
    ));
    text.push_str(&table(
        &[
            "smoother",
            "df",
            "span",
            "bandwidth",
            "change per time unit",
        ],
        &rows,
    ));
    if !skipped.is_empty() {
        text.push_str(&paragraph(&format!(
            "Not drawn (the fit failed): {}.",
            skipped.join("; ")
        )));
    }
    let curve_numbers = |fam: &str, m: &MeanCurve| {
        json!({
            "smoother": fam,
            "settings": m.curve.settings,
            "diagnostics": value(&m.curve.diagnostics),
            "at": m.at,
            "fitted": m.fitted,
            "band": value(&m.band),
            "change_per_time": change_per_time(m),
        })
    };
    let mut curves = vec![curve_numbers(&o.smoother, &main)];
    curves.extend(
        others
            .iter()
            .filter_map(|(f, m)| m.as_ref().ok().map(|m| curve_numbers(f, m))),
    );
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
        "curves": curves,
        "skipped": skipped,
        "data_cloud": points_shown,
    });
    let caption = format!(
        "Observations ({}), the mean curve of the main smoother with its band, and the other \
         smoothers at their default or given settings.",
        if t.len() > o.density_threshold {
            format!(
                "{} points, above {}: drawn as a binned density, cell colour by log count",
                t.len(),
                o.density_threshold
            )
        } else {
            format!("{} points", t.len())
        }
    );
    let fig = figure("fig-mean-trend", "Mean trend", plot.svg(), caption);
    Ok((
        section("trend", "Mean trend", text, vec![fig], numbers),
        main,
    ))
}

fn smoother_row(fam: &str, m: &MeanCurve, per: &str) -> Vec<String> {
    let d = &m.curve.diagnostics;
    let opt = |v: Option<f64>| v.map_or("-".to_string(), fmt);
    vec![
        fam.to_string(),
        opt(d.df),
        opt(d.span),
        opt(d.bandwidth),
        format!("{} {per}", fmt(change_per_time(m))),
    ]
}
