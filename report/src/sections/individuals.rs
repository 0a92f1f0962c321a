//! Individuals: residuals from the mean curve, subjects ranked by a residual summary, the
//! subjects at chosen quantiles drawn over the residual cloud, a spread sample of whole
//! trajectories, unusual subjects, and the trajectory heat map of every subject.

use serde::Serialize;
use serde_json::json;

use super::{figure, fmt, section, value, Context};
use crate::chart::{cloud, line, Plot};
use crate::heatmap::HeatMap;
use crate::html::{paragraph, table, Section};
use crate::palette::{self, Ramp};
use trajweave_core::error::Result;
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Ranking};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::trajectory_grid::{trajectory_grid, TrajectoryGrid};
use trajweave_core::individuals::unusual::{unusual, Unusual};
use trajweave_core::numeric::quantile::quantile_sorted;
use trajweave_core::trend::mean_curve::MeanCurve;

/// Unusual subjects listed at most, in the table and the summary.
pub(crate) const LISTED: usize = 10;

/// The heat map's rows: subjects, or equal-count runs of consecutive subjects.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PooledGrid {
    /// How rows were formed, in words.
    pub rule: String,
    /// Row labels, top to bottom.
    pub rows: Vec<String>,
    /// Subjects in each row.
    pub subjects_per_row: Vec<usize>,
    /// Bin labels.
    pub bins: Vec<String>,
    /// Row-major cell values (visit-weighted mean residual; NaN when empty).
    pub values: Vec<f64>,
    /// Row-major visits per cell.
    pub counts: Vec<u64>,
}

/// Pools the subjects-by-bins grid into at most `max_rows` rows: with S subjects and R =
/// min(S, max_rows) rows, row g holds display rows floor(g S / R) .. floor((g + 1) S / R) (equal
/// counts, order kept); its cell is the mean over all visits of its subjects in that bin, that
/// is sum(mean x count) / sum(count), and its count their sum.
///
/// # Examples
/// ```
/// use trajweave_report::pool_rows;
/// use trajweave_core::individuals::trajectory_grid::TrajectoryGrid;
/// use trajweave_core::SubjectId;
/// let g = TrajectoryGrid {
///     bins: vec!["b".into()],
///     subjects: vec![SubjectId::Int(1), SubjectId::Int(2)],
///     order_values: vec![1.0, 2.0],
///     values: vec![1.0, 4.0],
///     counts: vec![1, 2],
/// };
/// assert_eq!(pool_rows(&g, 1).values, vec![3.0]); // (1 x 1 + 4 x 2) / 3
/// ```
pub fn pool_rows(g: &TrajectoryGrid, max_rows: usize) -> PooledGrid {
    let (s, k) = (g.subjects.len(), g.bins.len());
    let r = s.min(max_rows.max(1));
    let mut out = PooledGrid {
        rule: if r == s {
            "one row per subject".into()
        } else {
            format!(
                "{s} subjects pooled into {r} rows of consecutive subjects in display order \
                 (row g holds subjects floor(g S / R) + 1 to floor((g + 1) S / R)); each cell \
                 is the mean of all visits of the row's subjects in the bin"
            )
        },
        rows: Vec::with_capacity(r),
        subjects_per_row: Vec::with_capacity(r),
        bins: g.bins.clone(),
        values: vec![f64::NAN; r * k],
        counts: vec![0; r * k],
    };
    for row in 0..r {
        let (a, b) = (row * s / r, (row + 1) * s / r);
        for i in a..b {
            for c in 0..k {
                // `get`: a grid built by hand may be shorter than subjects x bins.
                let n = u64::from(g.counts.get(i * k + c).copied().unwrap_or(0));
                let v = g.values.get(i * k + c).copied().unwrap_or(f64::NAN);
                if n > 0 {
                    let cell = row * k + c;
                    let prev = if out.counts[cell] == 0 {
                        0.0
                    } else {
                        out.values[cell]
                    };
                    out.values[cell] = prev + v * n as f64;
                    out.counts[cell] += n;
                }
            }
        }
        for c in 0..k {
            let cell = row * k + c;
            if out.counts[cell] > 0 {
                out.values[cell] /= out.counts[cell] as f64;
            }
        }
        out.rows.push(if r == s {
            g.subjects
                .get(a)
                .map_or_else(String::new, ToString::to_string)
        } else {
            format!("{}-{}", a + 1, b)
        });
        out.subjects_per_row.push(b - a);
    }
    out
}

/// Rank of each subject (panel order) as an ordering value; unranked subjects after the
/// ranked ones.
pub(crate) fn rank_order(ranking: &Ranking, n_subjects: usize) -> Vec<f64> {
    let m = ranking.subject_index.len();
    let mut order = vec![(m + 1) as f64; n_subjects];
    for (pos, &i) in ranking.subject_index.iter().enumerate() {
        if let Some(o) = order.get_mut(i) {
            *o = (pos + 1) as f64;
        }
    }
    order
}

/// The section, the unusual-subject flags (for the summary) and the residuals (panel order,
/// for the correlation-structure sections).
pub(crate) fn build(
    ctx: &Context,
    main: &MeanCurve,
    progress: &mut dyn FnMut(&str),
) -> Result<(Section, Unusual, Vec<f64>)> {
    let (o, panel) = (ctx.options, ctx.panel);
    progress("residuals and ranking");
    let res = residuals(panel, &MeanModel::Curve(main.curve.clone()))?;
    let summary = o.ranking_summary()?;
    let ranking = rank_subjects(panel, &res.residuals, summary)?;
    let picks = pick_subjects(panel, &res.residuals, &ranking, &o.quantiles)?;
    progress("sample and unusual subjects");
    let k = o.sample_size.min(ranking.subjects.len());
    let sample = sample_subjects(panel, Some(&ranking), k, o.sample_seed, Strategy::Spread)?;
    let flags = unusual(
        panel,
        &res.residuals,
        &ranking,
        o.unusual_threshold,
        o.unusual_threshold,
    )?;
    progress("trajectory heat map");
    let order = rank_order(&ranking, panel.n_subjects());
    let grid = trajectory_grid(panel, &res.residuals, &ctx.grid, &order)?;
    let pooled = pool_rows(&grid, o.heatmap_rows);

    let (t, y) = (panel.time(), panel.response());
    let sname = format!("{} of residuals", summary.name());
    // Residuals and picks.
    let mut p1 = Plot::new(
        &format!("Residuals from the mean curve, subjects at quantiles of their {sname}"),
        &ctx.time_title(),
        &format!("residual, {}", ctx.response_title()),
    );
    p1.width = 760.0;
    p1.height = 420.0;
    p1 = p1.with(cloud("residuals", t, &res.residuals, o.density_threshold));
    for (j, p) in picks.iter().enumerate() {
        let name = format!("q {}: subject {}", fmt(p.quantile), p.subject);
        p1 = p1.with(line(&name, &p.time, &p.residual, j));
    }
    // Spread sample of trajectories over the mean curve.
    let mut p2 = Plot::new(
        &format!(
            "{} subjects spread over the ranking and follow-up",
            sample.subjects.len()
        ),
        &ctx.time_title(),
        &ctx.response_title(),
    );
    p2.width = 760.0;
    for (j, &i) in sample.subject_index.iter().enumerate() {
        let rows = panel.subject_rows(i);
        let mut l = line("", &t[rows.clone()], &y[rows], j);
        if let crate::chart::Layer::Line { width, .. } = &mut l {
            *width = 1.3;
        }
        p2 = p2.with(l);
    }
    p2 = p2.with(crate::chart::Layer::Line {
        name: format!("mean curve ({})", o.smoother),
        x: main.at.clone(),
        y: main.fitted.clone(),
        colour: palette::SERIES[6].into(),
        width: 3.0,
        dashed: false,
    });
    // Heat map, colour domain symmetric at the 95th percentile of |cell|.
    let mut abs: Vec<f64> = pooled
        .values
        .iter()
        .filter(|v| v.is_finite())
        .map(|v| v.abs())
        .collect();
    abs.sort_unstable_by(f64::total_cmp);
    let lim = if abs.is_empty() {
        1.0
    } else {
        quantile_sorted(&abs, 0.95)
    };
    let lim = if lim > 0.0 { lim } else { 1.0 };
    let heat = HeatMap {
        title: format!("Every subject's residuals by time bin, ordered by {sname}"),
        x_title: format!("time bin, {}", ctx.time_title()),
        y_title: if pooled.rows.len() < grid.subjects.len() {
            "subjects by rank (pooled rows)".into()
        } else {
            format!("{} by rank", ctx.columns.subject)
        },
        columns: pooled.bins.clone(),
        rows: pooled.rows.clone(),
        values: pooled.values.clone(),
        counts: None,
        ramp: Ramp::Diverging,
        domain: (-lim, lim),
        cell_text: false,
        key_title: "mean residual".into(),
    };

    let pick_rows: Vec<Vec<String>> = picks
        .iter()
        .map(|p| {
            vec![
                fmt(p.quantile),
                p.subject.to_string(),
                p.rank.to_string(),
                fmt(p.value),
                p.time.len().to_string(),
            ]
        })
        .collect();
    let flag_rows: Vec<Vec<String>> = flags
        .subjects
        .iter()
        .take(LISTED)
        .map(|u| vec![u.subject.to_string(), fmt(u.value), fmt(u.robust_z)])
        .collect();
    let mut text = paragraph(&format!(
        "Residuals are {} minus the mean curve ({}). Subjects are ranked by the {} of their \
         residuals ({} ranked, {} without a defined value); the table lists the subjects at \
         the chosen quantiles of that ranking. {} subjects have |robust z| > {} (median and \
         1.4826 MAD of the summaries); {} single observations do.",
        ctx.columns.response,
        o.smoother,
        summary.name(),
        ranking.subjects.len(),
        ranking.unranked.len(),
        flags.subjects.len(),
        fmt(o.unusual_threshold),
        flags.observations.len()
    ));
    text.push_str(&table(
        &[
            "quantile",
            ctx.columns.subject.as_str(),
            "rank",
            "summary",
            "visits",
        ],
        &pick_rows,
    ));
    if !flag_rows.is_empty() {
        text.push_str(&paragraph(&format!(
            "Unusual subjects (largest |z| first, at most {LISTED}):"
        )));
        text.push_str(&table(
            &[ctx.columns.subject.as_str(), "summary", "robust z"],
            &flag_rows,
        ));
    }
    let figures = vec![
        figure(
            "fig-picks",
            "Subjects at quantiles",
            p1.svg(),
            format!(
                "Residual cloud ({}) with the residual trajectories of the subjects at the \
                 quantiles {:?} of the ranking by {sname}.",
                if t.len() > o.density_threshold {
                    "binned density"
                } else {
                    "dots"
                },
                o.quantiles
            ),
        ),
        figure(
            "fig-sample",
            "Spread sample",
            p2.svg(),
            format!(
                "{} trajectories drawn one per equal-count stratum of the ranking, covering \
                 follow-up lengths (seed {}), over the mean curve.",
                sample.subjects.len(),
                o.sample_seed
            ),
        ),
        figure(
            "fig-heatmap",
            "Trajectory heat map",
            heat.svg(),
            format!(
                "Rows: {}. Columns: time bins. Colour: mean residual, blue below the mean \
                 curve and red above, the ends at +/- {} (the 95th percentile of |cell|); grey: \
                 no visit.",
                pooled.rule,
                fmt(lim)
            ),
        ),
    ];
    let numbers = json!({
        "model": res.model,
        "summary": value(&summary),
        "ranked": ranking.subjects.len(),
        "unranked": value(&ranking.unranked),
        "picks": value(&picks),
        "sample": value(&sample),
        "unusual": {
            "threshold": flags.threshold,
            "center": flags.center,
            "scale": flags.scale,
            "subjects": value(&flags.subjects),
            "observation_scale": flags.observation_scale,
            "observations_flagged": flags.observations.len(),
        },
        "heatmap": value(&pooled),
        "heatmap_colour_limit": lim,
    });
    Ok((
        section(
            "individuals",
            "Individual trajectories",
            text,
            figures,
            numbers,
        ),
        flags,
        res.residuals,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use trajweave_core::data::panel::SubjectId;

    #[test]
    fn pooling_by_hand() {
        // 3 subjects x 1 bin pooled into 2 rows: rows hold subjects {1} and {2, 3}
        // (floor(0 * 3 / 2) = 0, floor(3 / 2) = 1, floor(6 / 2) = 3). Row 2's cell is
        // (2 x 1 + 5 x 3) / (1 + 3) = 4.25, by hand; an empty cell stays out of the mean.
        let g = TrajectoryGrid {
            bins: vec!["b".into()],
            subjects: (1..=3).map(SubjectId::Int).collect(),
            order_values: vec![1.0, 2.0, 3.0],
            values: vec![7.0, 2.0, 5.0],
            counts: vec![2, 1, 3],
        };
        let p = pool_rows(&g, 2);
        assert_eq!(p.subjects_per_row, vec![1, 2]);
        assert_eq!(p.values, vec![7.0, 4.25]);
        assert_eq!(p.counts, vec![2, 4]);
        assert_eq!(p.rows, vec!["1-1", "2-3"]);
        let same = pool_rows(&g, 300);
        assert_eq!(same.values, g.values);
        assert_eq!(same.rows, vec!["1", "2", "3"]);
    }
}
