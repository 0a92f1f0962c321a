//! Variogram of the main curve's residuals: the binned estimates with their pair counts, the
//! fitted model, the process variance, and the variance split into random intercept (nu^2),
//! serial (sigma^2) and measurement error (tau^2).

use serde::Serialize;
use serde_json::json;

use super::{figure, fmt, section, value, Context};
use crate::chart::{line, Layer, Plot};
use crate::html::{paragraph, table, Section};
use crate::palette;
use trajweave_core::correlation::variogram::fit::{
    compare_variogram_fits, Estimate, Preference, VariogramComparison, VariogramFit,
};
use trajweave_core::correlation::variogram::{variogram, Variogram};
use trajweave_core::error::Result;

/// Most lag bins whose points carry their pair count as a label.
pub(crate) const LABELLED_BINS: usize = 30;

/// Shares of the variance components in their sum nu^2 + sigma^2 + tau^2 (which is the
/// process variance unless nu^2 was clamped at 0).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub(crate) struct Shares {
    /// nu^2 + sigma^2 + tau^2.
    pub total: f64,
    /// nu^2 / total.
    pub intercept: f64,
    /// sigma^2 / total.
    pub serial: f64,
    /// tau^2 / total.
    pub error: f64,
}

impl Shares {
    pub(crate) fn of(f: &VariogramFit) -> Shares {
        let total = f.intercept_variance + f.serial_variance + f.error_variance;
        let share = |x: f64| if total > 0.0 { x / total } else { f64::NAN };
        Shares {
            total,
            intercept: share(f.intercept_variance),
            serial: share(f.serial_variance),
            error: share(f.error_variance),
        }
    }
}

/// The fitted variogram at each bin's mean lag (NaN for an empty bin).
pub(crate) fn fitted_at(vg: &Variogram, f: &VariogramFit) -> Vec<f64> {
    vg.lag.iter().map(|&u| f.variogram_at(u)).collect()
}

/// The two fits, the comparison's verdict and the fit it prefers (none when both are
/// flagged).
pub(crate) struct Outcome {
    pub comparison: Option<VariogramComparison>,
    pub chosen: Option<VariogramFit>,
}

/// A fit's name in words.
pub(crate) fn fit_name(f: &VariogramFit) -> String {
    if f.random_slope {
        format!("{} + random slope", f.model.name())
    } else {
        format!("{} (stationary)", f.model.name())
    }
}

fn percent(x: f64) -> String {
    format!("{}%", fmt(100.0 * x))
}

/// The section and the fit (for the summary and the lag-correlation figure). A variogram or
/// fit that cannot be estimated is said in the text, not an error.
///
/// # Errors
/// Only those of the report's variogram options (checked before any work by `build_report`).
pub(crate) fn build(
    ctx: &Context,
    residuals: &[f64],
    progress: &mut dyn FnMut(&str),
) -> Result<(Section, Outcome)> {
    progress("variogram");
    let o = ctx.options;
    let vo = o.variogram()?;
    let (model, estimate) = o.variogram_fit()?;
    let mut text = paragraph(&format!(
        "Empirical variogram (Diggle 1988) of the residuals from the mean curve ({}): for \
         every pair of visits of one subject, half the squared difference of their residuals against the \
         time between them, averaged within {} {} lag bins from 0 to the maximum lag (bins \
         with fewer than {} pairs give no estimate). The process variance, the mean over \
         pairs of visits of different subjects, is the level a variogram of residuals with \
         no between-subject variation would reach. Two models with {} serial correlation are fitted to the {} estimates \
         by Cressie's weighted least squares: the stationary gamma(u) = tau^2 + sigma^2 (1 - \
         rho(u / phi)), and the same plus omega^2 u^2 / 2, the rise a random slope of \
         variance omega^2 adds (whatever its covariance with the intercept); nu^2, the rest \
         of the process variance, is the between-subject variance. A fit with a parameter at \
         a boundary (a range at its cap, a variance at 0) or without convergence is flagged \
         and not read.",
        o.smoother,
        o.lag_bins,
        o.lag_kind.replace('_', "-"),
        vo.min_pairs,
        model.name(),
        match estimate {
            Estimate::Classical => "classical",
            Estimate::Robust => "robust (Cressie-Hawkins)",
        },
    ));
    let mut skipped = Vec::new();
    let vg = match variogram(ctx.panel, residuals, &vo) {
        Ok(v) => v,
        Err(e) => {
            skipped.push(format!("variogram: {e}"));
            text.push_str(&paragraph(&format!("Not drawn: {e}.")));
            let numbers = json!({
                "options": value(&vo), "model": model.name(), "estimate": value(&estimate),
                "variogram": null, "fit": null, "skipped": skipped,
            });
            return Ok((
                section("variogram", "Variogram", text, Vec::new(), numbers),
                Outcome {
                    comparison: None,
                    chosen: None,
                },
            ));
        }
    };
    let comparison = match compare_variogram_fits(&vg, model, estimate) {
        Ok(c) => Some(c),
        Err(e) => {
            skipped.push(format!("variogram fit: {e}"));
            None
        }
    };
    let chosen = comparison.as_ref().and_then(|c| match c.preferred {
        Preference::Stationary => Some(c.stationary.clone()),
        Preference::RandomSlope => Some(c.random_slope.clone()),
        Preference::Neither => None,
    });
    // The stationary fit stays under "fit" in the numbers; both are under "comparison".
    let fit = comparison.as_ref().map(|c| c.stationary.clone());

    let mut p = Plot::new(
        &format!("Variogram of the residuals of {}", ctx.columns.response),
        &format!("lag: time between the two visits, {}", ctx.time_title()),
        &format!("half squared difference, ({})^2", ctx.response_title()),
    );
    p.width = 760.0;
    p.height = 420.0;
    p = p.with(Layer::Line {
        name: format!("process variance {}", fmt(vg.process_variance)),
        x: vec![0.0, vg.max_lag],
        y: vec![vg.process_variance; 2],
        colour: palette::SERIES[6].into(),
        width: 1.4,
        dashed: true,
    });
    if let Some(c) = &comparison {
        for (k, f) in [&c.stationary, &c.random_slope].into_iter().enumerate() {
            // By kind, not by value: a random-slope fit holds NaN curves, never equal to
            // themselves.
            let read = chosen
                .as_ref()
                .is_some_and(|c| c.random_slope == f.random_slope);
            let mut l = line(
                &format!(
                    "{} fit{}",
                    fit_name(f),
                    if read {
                        " (read)"
                    } else if f.flagged {
                        " (flagged)"
                    } else {
                        " (not preferred)"
                    }
                ),
                &f.curve_lag,
                &f.curve_variogram,
                1 + 2 * k,
            );
            if let Layer::Line { dashed, width, .. } = &mut l {
                *dashed = !read;
                *width = if read { 2.0 } else { 1.4 };
            }
            p = p.with(l);
        }
    }
    // Pair counts written over the points while there is room for them.
    let labelled = vg.lag.len() <= LABELLED_BINS;
    let mut thin = line("", &vg.lag, &vg.classical, 0);
    if let Layer::Line { width, .. } = &mut thin {
        *width = 1.0;
    }
    p = p.with(thin).with(Layer::Markers {
        name: format!(
            "classical estimate per lag bin{}",
            if labelled { " (label: pairs)" } else { "" }
        ),
        x: vg.lag.clone(),
        y: vg.classical.clone(),
        colour: palette::series(0).into(),
        radius: 3.5,
        labels: if labelled {
            vg.pairs.iter().map(|n| n.to_string()).collect()
        } else {
            Vec::new()
        },
    });
    if estimate == Estimate::Robust {
        p = p.with(Layer::Markers {
            name: "robust estimate (fitted)".into(),
            x: vg.lag.clone(),
            y: vg.robust.clone(),
            colour: palette::series(2).into(),
            radius: 2.5,
            labels: Vec::new(),
        });
    }
    let mut edges = vg.lower.clone();
    edges.extend(vg.upper.last().copied());
    let bars = Plot {
        height: 200.0,
        width: 760.0,
        ..Plot::new(
            "Pairs of visits per lag bin",
            &format!("lag, {}", ctx.time_title()),
            "pairs",
        )
    }
    .with(Layer::Bars {
        name: String::new(),
        edges,
        counts: vg.pairs.iter().map(|&n| n as f64).collect(),
        colour: palette::series(5).into(),
    });
    let figures = vec![
        figure(
            "fig-variogram",
            "Variogram",
            p.svg(),
            format!(
                "Points: the classical estimate of each lag bin at the mean lag of its pairs \
                 (joined by a thin line; bins with fewer than {} pairs are left out){}; the \
                 pair counts are also in the strip below and the table. {}Dashed: the process \
                 variance. {} within-subject pairs in the bins, {} beyond the maximum lag {}.",
                vg.min_pairs,
                if labelled {
                    ", labelled with their pair counts"
                } else {
                    ""
                },
                if comparison.is_some() {
                    "Lines: the stationary and the random-slope model (the one read solid, \
                     a flagged or not preferred one dashed). "
                } else {
                    ""
                },
                vg.pairs_in_bins,
                vg.pairs_outside,
                fmt(vg.max_lag)
            ),
        ),
        figure(
            "fig-variogram-pairs",
            "Pairs per lag bin",
            bars.svg(),
            "Number of within-subject pairs of visits in each lag bin (the weight of the bin in \
             the fit)."
                .into(),
        ),
    ];

    let fitted = chosen.as_ref().or(fit.as_ref()).map(|f| fitted_at(&vg, f));
    let bin_rows: Vec<Vec<String>> = (0..vg.lag.len())
        .map(|j| {
            vec![
                format!("{} to {}", fmt(vg.lower[j]), fmt(vg.upper[j])),
                fmt(vg.lag[j]),
                vg.pairs[j].to_string(),
                fmt(vg.classical[j]),
                fmt(vg.robust[j]),
                fitted
                    .as_ref()
                    .and_then(|v| v.get(j))
                    .map_or("-".into(), |x| fmt(*x)),
            ]
        })
        .collect();
    let shares = chosen.as_ref().map(Shares::of);
    if let Some(c) = &comparison {
        text.push_str(&fits_text(
            ctx,
            c,
            chosen.as_ref(),
            shares.as_ref(),
            vg.max_lag,
        ));
    }
    if !skipped.is_empty() {
        text.push_str(&paragraph(&format!("Not drawn: {}.", skipped.join("; "))));
    }
    text.push_str(&table(
        &[
            "lag bin",
            "mean lag",
            "pairs",
            "classical",
            "robust",
            "fitted",
        ],
        &bin_rows,
    ));
    let numbers = json!({
        "options": value(&vo),
        "model": model.name(),
        "estimate": value(&estimate),
        "variogram": value(&vg),
        "fit": value(&fit),
        "comparison": value(&comparison),
        "chosen": value(&chosen),
        "fitted_at_bins": value(&fitted),
        "shares": value(&shares),
        "skipped": skipped,
    });
    Ok((
        section("variogram", "Variogram", text, figures, numbers),
        Outcome { comparison, chosen },
    ))
}

/// The table of both fits with their flags, the verdict, and the components of the fit read.
fn fits_text(
    ctx: &Context,
    c: &VariogramComparison,
    chosen: Option<&VariogramFit>,
    shares: Option<&Shares>,
    max_lag: f64,
) -> String {
    let unit = ctx.columns.time_unit.as_deref().unwrap_or("time units");
    let rows: Vec<Vec<String>> = [&c.stationary, &c.random_slope]
        .into_iter()
        .map(|f| {
            vec![
                fit_name(f),
                fmt(f.error_variance),
                fmt(f.serial_variance),
                fmt(f.range),
                if f.random_slope {
                    fmt(f.slope_variance)
                } else {
                    "-".into()
                },
                fmt(f.criterion),
                if f.flags.is_empty() {
                    "none".into()
                } else {
                    f.flags.join("; ")
                },
            ]
        })
        .collect();
    let mut text = table(
        &[
            "model",
            "tau^2",
            "sigma^2",
            &format!("range phi ({unit})"),
            "omega^2 (slope)",
            "criterion",
            "flags",
        ],
        &rows,
    );
    text.push_str(&paragraph(&format!("Which fit is read: {}.", c.reason)));
    match (chosen, shares) {
        (Some(f), Some(s)) => {
            let at = if f.random_slope {
                format!(" at the mean visit time {} {}", fmt(f.intercept_time), unit)
            } else {
                String::new()
            };
            text.push_str(&paragraph(&format!(
                "Read fit ({}): between subjects nu^2 = {}{at}, serial sigma^2 = {} (range {} \
                 {unit}), measurement error tau^2 = {}{}. Of their sum {} (process variance \
                 {}), {} is between subjects, {} serial and {} measurement error{}.",
                fit_name(f),
                fmt(f.intercept_variance),
                fmt(f.serial_variance),
                fmt(f.range),
                fmt(f.error_variance),
                if f.random_slope {
                    format!(
                        ", slope variance omega^2 = {} per {unit} squared",
                        fmt(f.slope_variance)
                    )
                } else {
                    String::new()
                },
                fmt(s.total),
                fmt(f.process_variance),
                percent(s.intercept),
                percent(s.serial),
                percent(s.error),
                if f.random_slope {
                    String::new()
                } else {
                    format!(
                        "; two measurements close in time are expected to correlate {}, and {} \
                         at a lag of {}",
                        fmt(f.curve_correlation.first().copied().unwrap_or(f64::NAN)),
                        fmt(f.curve_correlation.last().copied().unwrap_or(f64::NAN)),
                        fmt(max_lag)
                    )
                }
            )));
        }
        _ => text.push_str(&paragraph(&format!(
            "No fit is read: both carry flags, so no variance share or range is quoted. {}",
            c.stationary.reading
        ))),
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use trajweave_core::correlation::variogram::fit::{fit_variogram, VariogramModel};

    #[test]
    fn shares_and_fitted_values_by_hand() {
        let vg = Variogram::for_fit(
            vec![1.0, 2.0, 3.0],
            vec![40, 40, 40],
            vec![2.0, 3.0, 3.5],
            vec![2.0, 3.0, 3.5],
            3.0,
            6.0,
        )
        .unwrap();
        let mut f = fit_variogram(&vg, VariogramModel::Exponential, Estimate::Classical).unwrap();
        // Components set by hand: 1 + 2 + 3 = 6, shares 1/6, 2/6, 3/6.
        (
            f.intercept_variance,
            f.serial_variance,
            f.error_variance,
            f.range,
        ) = (1.0, 2.0, 3.0, 2.0);
        let s = Shares::of(&f);
        assert_eq!((s.total, s.intercept, s.error), (6.0, 1.0 / 6.0, 0.5));
        // 3 + 2 (1 - exp(-1 / 2)) at lag 1, by the closed form.
        let want = 3.0 + 2.0 * (1.0 - (-0.5f64).exp());
        assert!((fitted_at(&vg, &f)[0] - want).abs() < 1e-15);
    }
}
