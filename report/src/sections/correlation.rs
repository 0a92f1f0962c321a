//! Binned residual correlation: the within-subject correlation of the main curve's residuals
//! between the report's time bins (a heat map on the diverging ramp over [-1, 1], each cell
//! with its subject count), and the correlation by bin lag against the mean gap, with the
//! correlation implied by the structure the covariance screening reads as best (unflagged)
//! beside it when there is one.

use serde_json::json;

use super::screening::Implied;
use super::{figure, fmt, section, value, Context};
use crate::chart::{line, Layer, Plot};
use crate::heatmap::HeatMap;
use crate::html::{paragraph, table, Section};
use crate::palette::{self, Ramp};
use trajweave_core::correlation::binned::{binned_correlation, BinnedCorrelation};

/// Most bins for which the heat map writes the value and count in each cell (beyond this the
/// cells are too small to read; the JSON still has every number).
pub(crate) const CELL_TEXT_BINS: usize = 16;

/// Pairs of distinct bins (upper triangle) without a correlation.
pub(crate) fn empty_pairs(c: &BinnedCorrelation) -> usize {
    let k = c.bins.len();
    (0..k)
        .flat_map(|a| (a + 1..k).map(move |b| (a, b)))
        .filter(|&(a, b)| !c.correlation.get(a * k + b).is_some_and(|r| r.is_finite()))
        .count()
}

/// The section. `implied` is the correlation implied by the screening's best unflagged
/// structure, drawn beside the lag correlation; a correlation that cannot be estimated is said
/// in the text, not an error.
pub(crate) fn build(
    ctx: &Context,
    residuals: &[f64],
    implied: Option<&Implied>,
    progress: &mut dyn FnMut(&str),
) -> Section {
    progress("binned residual correlation");
    let o = ctx.options;
    let options = o.correlation();
    let intro = paragraph(&format!(
        "Within-subject correlation of the residuals from the mean curve ({}) between the \
         report's time bins: for each pair of bins, the Pearson correlation over the subjects \
         with a visit in both (a subject with several visits in a bin contributes the one \
         nearest the bin's centre). Cells with fewer than {} such subjects, or with no spread, \
         are left empty. Intervals (JSON only) are Fisher-z {}% limits.",
        o.smoother,
        options.min_count,
        fmt(options.level * 100.0)
    ));
    let c = match binned_correlation(ctx.panel, residuals, &ctx.grid, &options) {
        Ok(c) => c,
        Err(e) => {
            let reason = e.to_string();
            return section(
                "correlation",
                "Residual correlation between time bins",
                format!("{intro}{}", paragraph(&format!("Not drawn: {reason}."))),
                Vec::new(),
                json!({
                    "grid": value(&ctx.grid),
                    "options": value(&options),
                    "correlation": null,
                    "skipped": [reason],
                }),
            );
        }
    };
    let k = c.bins.len();
    let empty = empty_pairs(&c);
    let cell_text = k <= CELL_TEXT_BINS;
    let heat = HeatMap {
        title: "Residual correlation between time bins".into(),
        x_title: format!("time bin, {}", ctx.time_title()),
        y_title: "time bin".into(),
        columns: c.bins.clone(),
        rows: c.bins.clone(),
        values: c.correlation.clone(),
        counts: Some(c.counts.clone()),
        ramp: Ramp::Diverging,
        domain: (-1.0, 1.0),
        cell_text,
        key_title: "correlation".into(),
    };
    let mut figures = vec![figure(
        "fig-correlation",
        "Binned residual correlation",
        heat.svg(),
        format!(
            "Colour: correlation on a diverging ramp from -1 (blue) through 0 (light grey) to \
             1 (red).{} Empty cells (grey{}) have fewer than {} subjects seen in both bins \
             or no spread: {empty} of the {} pairs of distinct bins. The diagonal is 1 by \
             definition; its n is the subjects seen in the bin. {} visits fell outside every \
             bin and {} were not used (another visit of the subject was nearer the bin's \
             centre).",
            if cell_text {
                " Each cell shows the correlation and the number of subjects behind it (n=)."
            } else {
                " With more than 16 bins the cells carry no text; the JSON has every value and \
                 count."
            },
            if cell_text { ", marked -" } else { "" },
            c.min_count,
            k * (k - 1) / 2,
            c.visits_outside,
            c.visits_unused
        ),
    )];

    let lags = &c.lags;
    let mut p = Plot::new(
        "Residual correlation by gap between bins",
        &format!("gap between bin centres, {}", ctx.time_title()),
        "correlation",
    );
    p.width = 700.0;
    let longest = lags
        .gap
        .iter()
        .copied()
        .filter(|g| g.is_finite())
        .fold(0.0, f64::max);
    p = p.with(Layer::Line {
        name: String::new(),
        x: vec![0.0, longest],
        y: vec![0.0, 0.0],
        colour: palette::GREY.into(),
        width: 1.0,
        dashed: true,
    });
    if let Some(f) = implied {
        let mut l = line(&f.name, &f.lag, &f.correlation, 1);
        if let Layer::Line { dashed, width, .. } = &mut l {
            *dashed = true;
            *width = 1.6;
        }
        p = p.with(l);
    }
    p = p
        .with(line(
            "binned correlation, subject-weighted mean at each bin lag",
            &lags.gap,
            &lags.correlation,
            0,
        ))
        .with(Layer::Markers {
            name: String::new(),
            x: lags.gap.clone(),
            y: lags.correlation.clone(),
            colour: palette::series(0).into(),
            radius: 3.5,
            labels: Vec::new(),
        });
    figures.push(figure(
        "fig-lag-correlation",
        "Correlation by lag",
        p.svg(),
        format!(
            "For each lag L (bins apart), the cells (a, a + L) that have a correlation, \
             averaged with their subject counts as weights, at the same weighted mean of the \
             gap between the bin centres.{}",
            match implied {
                Some(f) if f.structure.contains("slope") => format!(
                    " Dashed: the correlation of a measurement at time {} with one u later \
                     implied by the structure the screening reads as best ({}); with a random \
                     slope it depends on both times, not on u alone.",
                    fmt(f.time),
                    f.structure
                ),
                Some(f) => format!(
                    " Dashed: the correlation of two measurements u apart implied by the \
                     structure the screening reads as best ({}).",
                    f.structure
                ),
                None => String::new(),
            }
        ),
    ));

    let lag_rows: Vec<Vec<String>> = (0..lags.lag.len())
        .map(|j| {
            vec![
                lags.lag[j].to_string(),
                fmt(lags.gap[j]),
                fmt(lags.correlation[j]),
                lags.pairs[j].to_string(),
                lags.cells[j].to_string(),
            ]
        })
        .collect();
    let shown: Vec<usize> = (0..lags.lag.len())
        .filter(|&j| lags.correlation[j].is_finite())
        .collect();
    let mut text = intro;
    if let (Some(&a), Some(&b)) = (shown.first(), shown.last()) {
        text.push_str(&paragraph(&format!(
            "Residuals {} apart (bin lag {}) correlate {} on average; at the longest lag with a \
             value ({} apart, bin lag {}) the correlation is {}.",
            fmt(lags.gap[a]),
            lags.lag[a],
            fmt(lags.correlation[a]),
            fmt(lags.gap[b]),
            lags.lag[b],
            fmt(lags.correlation[b])
        )));
    }
    text.push_str(&table(
        &[
            "bin lag",
            "mean gap",
            "correlation",
            "subjects (summed)",
            "cells",
        ],
        &lag_rows,
    ));
    let numbers = json!({
        "grid": value(&ctx.grid),
        "options": value(&options),
        "correlation": value(&c),
        "empty_pairs": empty,
        "skipped": Vec::<String>::new(),
    });
    section(
        "correlation",
        "Residual correlation between time bins",
        text,
        figures,
        numbers,
    )
}

#[cfg(test)]
mod tests {
    use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
    use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};

    #[test]
    fn empty_pairs_by_hand() {
        // Three subjects seen in bins 0 and 1 only: the pair (0, 1) has a correlation, the
        // pairs (0, 2) and (1, 2) share no subject, so 2 of the 3 pairs are empty.
        let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2), Some(3), Some(3)]);
        let t = [0.5, 1.5, 0.5, 1.5, 0.5, 1.5];
        let r = [1.0, 2.0, -1.0, -1.5, 0.0, 0.5];
        let p = Panel::new(ids, &t, &r, vec![], Missing::Error).unwrap();
        let grid = TimeGrid::edges(vec![0.0, 1.0, 2.0, 3.0]).unwrap();
        let c = binned_correlation(&p, &r, &grid, &CorrelationOptions::default()).unwrap();
        assert_eq!(super::empty_pairs(&c), 2);
    }
}
