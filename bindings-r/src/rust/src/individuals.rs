//! Individual variation: residuals from a mean model, subject rankings, picks, samples and
//! unusual subjects (core modules `residuals`, `ranking`, `sample`, `unusual`).
//!
//! Per-row values cross in the caller's row order (`NA` in dropped rows); the core works in
//! panel order, and the panel converts (`Panel::to_input_order`, `Panel::from_input_order`).
//! A ranking stays in Rust memory behind an external pointer, so it can be handed back to
//! `pick_subjects()`, `sample_subjects()` and `unusual_subjects()`; its fields also cross as
//! R values. Ranks and input rows count from 1 in the core already.

use extendr_api::prelude::*;
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Ranking, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel, MAX_DEGREE};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::unusual::unusual;
use trajweave_core::Panel;

use crate::convert::{
    data_frame, field, ids_robj, named_fields, named_list, one_number, one_text, real_slice,
    reals_na, text_ids, usize_counts, value_text, whole_number,
};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::mean_curve::{MAX_SEED, SEED_ALLOWED};
use crate::panel::panel_ref;
use crate::smoother::{build, curve_from_points, curve_robj};

/// How the degree's range is worded (the core's words for a degree above 3).
const DEGREE_ALLOWED: &str = "a polynomial degree from 0 to 3";
const MEAN_ALLOWED: &str = "give a curve (fit_smoother()), a mean curve (mean_curve()), \
     residuals_polynomial(degree) or residuals_by_group(covariate, smoother)";

/// The core mean model of an R spec: `list(kind = "polynomial", degree)`,
/// `list(kind = "by_group", covariate, smoother)` or `list(kind = "curve", method, x, fitted)`.
fn mean_model(spec: &Robj) -> Result<MeanModel, Failure> {
    let fields = named_fields(spec, "mean")?;
    let kind = field(&fields, "kind");
    match one_text(&kind, "mean", MEAN_ALLOWED)?.as_str() {
        "polynomial" => {
            let degree = whole_number(
                &field(&fields, "degree"),
                "degree",
                MAX_DEGREE as f64,
                DEGREE_ALLOWED,
            )?;
            Ok(MeanModel::Polynomial {
                degree: degree as usize,
            })
        }
        "by_group" => Ok(MeanModel::ByGroup {
            covariate: one_text(
                &field(&fields, "covariate"),
                "covariate",
                "give one covariate name as a string",
            )?,
            smoother: build(&field(&fields, "smoother"))?,
        }),
        "curve" => {
            let method = field(&fields, "method");
            let method = one_text(&method, "mean", MEAN_ALLOWED).unwrap_or_else(|_| "curve".into());
            Ok(MeanModel::Curve(curve_from_points(
                &method,
                &field(&fields, "x"),
                &field(&fields, "fitted"),
                "mean",
            )?))
        }
        _ => Err(invalid_option("mean", value_text(&kind), MEAN_ALLOWED)),
    }
}

/// Checks a mean-model spec: `NULL` when the core can use it, else the first refusal.
#[extendr]
fn tw_mean_model_check(mean: Robj) -> Robj {
    respond(mean_model(&mean).map(|_| ().into()))
}

/// Residuals of `panel` from the mean model `mean` (an R spec, see [`mean_model`]) as
/// `list(residuals, fitted, model, coefficients, groups)`, per-row values in the caller's order.
#[extendr]
fn tw_panel_residuals(panel: Robj, mean: Robj) -> Robj {
    respond(run_residuals(&panel, &mean))
}

fn run_residuals(panel: &Robj, mean: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let model = mean_model(mean)?;
    let r = residuals(panel, &model)?;
    let coefficients: Robj = match &r.coefficients {
        Some(c) => c.as_slice().into(),
        None => ().into(),
    };
    let groups: Robj = match &r.groups {
        None => ().into(),
        Some(groups) => {
            let items = groups
                .iter()
                .map(|g| {
                    named_list(
                        ["level", "rows", "curve"].into_iter(),
                        vec![
                            g.level.into(),
                            (g.rows as f64).into(),
                            curve_robj(&g.curve)?,
                        ],
                    )
                })
                .collect::<Result<Vec<_>, Failure>>()?;
            List::from_values(items).into()
        }
    };
    named_list(
        ["residuals", "fitted", "model", "coefficients", "groups"].into_iter(),
        vec![
            reals_na(&panel.to_input_order(&r.residuals)),
            reals_na(&panel.to_input_order(&r.fitted)),
            r.model.as_str().into(),
            coefficients,
            groups,
        ],
    )
}

/// Residuals in the caller's row order (a double vector, the R wrapper has applied
/// `as.double()`), put in panel order and checked by the core.
pub fn panel_residuals(panel: &Panel, values: &Robj) -> Result<Vec<f64>, Failure> {
    Ok(panel.from_input_order("residuals", real_slice(values, "residuals")?)?)
}

/// The ranking behind an R external pointer, or an error a user can act on.
fn ranking_ref(x: &Robj) -> Result<&Ranking, Failure> {
    <&ExternalPtr<Ranking>>::try_from(x)
        .ok()
        .and_then(|p| p.try_addr().ok())
        .ok_or_else(|| {
            invalid_option(
                "ranking",
                "an empty or foreign pointer".into(),
                "pass a ranking made by rank_subjects() in this R session; \
                 rankings do not survive saveRDS() or a restart",
            )
        })
}

/// Ranks the subjects of `panel` by `summary` (one name) of `residuals` (one per input row);
/// `p` is the quantile summary's probability (`NULL` otherwise).
#[extendr]
fn tw_rank_subjects(panel: Robj, residuals: Robj, summary: Robj, p: Robj) -> Robj {
    respond(run_rank(&panel, &residuals, &summary, &p))
}

fn run_rank(panel: &Robj, values: &Robj, summary: &Robj, p: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let name = one_text(
        summary,
        "summary",
        &format!("use {}", trajweave_core::individuals::ranking::SUMMARIES),
    )?;
    let p = if p.is_null() {
        None
    } else {
        Some(one_number(p, "p")?)
    };
    let summary = Summary::parse(&name, p)?;
    let r = panel_residuals(panel, values)?;
    let ranking = rank_subjects(panel, &r, summary)?;
    let text = text_ids(panel);
    let p: Robj = match ranking.summary {
        Summary::Quantile(p) => p.into(),
        _ => ().into(),
    };
    let fields = vec![
        ranking.summary.name().into(),
        p,
        ids_robj(&ranking.subjects, text),
        ranking.values.as_slice().into(),
        usize_counts(ranking.ranks.iter()),
        usize_counts(ranking.observations.iter()),
        ids_robj(&ranking.unranked, text),
    ];
    let mut all = vec![ExternalPtr::new(ranking).into()];
    all.extend(fields);
    named_list(
        [
            "pointer",
            "summary",
            "p",
            "subjects",
            "values",
            "ranks",
            "observations",
            "unranked",
        ]
        .into_iter(),
        all,
    )
}

/// The subject at each of `quantiles` of `ranking`, as `list(picks, trajectories)`: a
/// data.frame (quantile, subject, rank, value) and one data.frame (time, response, residual)
/// per pick.
#[extendr]
fn tw_pick_subjects(panel: Robj, residuals: Robj, ranking: Robj, quantiles: Robj) -> Robj {
    respond(run_pick(&panel, &residuals, &ranking, &quantiles))
}

fn run_pick(panel: &Robj, values: &Robj, ranking: &Robj, quantiles: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let ranking = ranking_ref(ranking)?;
    let quantiles = real_slice(quantiles, "quantiles")?;
    let r = panel_residuals(panel, values)?;
    let picks = pick_subjects(panel, &r, ranking, quantiles)?;
    let subjects: Vec<_> = picks.iter().map(|p| p.subject.clone()).collect();
    let table = data_frame(
        ["quantile", "subject", "rank", "value"].into_iter(),
        vec![
            picks.iter().map(|p| p.quantile).collect_robj(),
            ids_robj(&subjects, text_ids(panel)),
            picks.iter().map(|p| p.rank as f64).collect_robj(),
            picks.iter().map(|p| p.value).collect_robj(),
        ],
        picks.len(),
    )?;
    let trajectories = picks
        .iter()
        .map(|p| {
            data_frame(
                ["time", "response", "residual"].into_iter(),
                vec![
                    p.time.as_slice().into(),
                    p.response.as_slice().into(),
                    p.residual.as_slice().into(),
                ],
                p.time.len(),
            )
        })
        .collect::<Result<Vec<_>, Failure>>()?;
    named_list(
        ["picks", "trajectories"].into_iter(),
        vec![table, List::from_values(trajectories).into()],
    )
}

/// `k` subjects drawn by `strategy` from `seed`, among the ranked subjects of `ranking` when it
/// is not `NULL`.
#[extendr]
fn tw_sample_subjects(panel: Robj, k: Robj, seed: Robj, strategy: Robj, ranking: Robj) -> Robj {
    respond(run_sample(&panel, &k, &seed, &strategy, &ranking))
}

fn run_sample(panel: &Robj, k: &Robj, seed: &Robj, strategy: &Robj, ranking: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let k = whole_number(k, "k", 1e15, "a number of subjects of at least 1")? as usize;
    let seed = whole_number(seed, "seed", MAX_SEED, SEED_ALLOWED)?;
    let strategy = Strategy::parse(&one_text(
        strategy,
        "strategy",
        "use \"random\" or \"spread\"",
    )?)?;
    let ranking = if ranking.is_null() {
        None
    } else {
        Some(ranking_ref(ranking)?)
    };
    let s = sample_subjects(panel, ranking, k, seed, strategy)?;
    let strategy = match s.strategy {
        Strategy::Random => "random",
        Strategy::Spread => "spread",
    };
    named_list(
        ["strategy", "seed", "subjects"].into_iter(),
        vec![
            strategy.into(),
            (s.seed as f64).into(),
            ids_robj(&s.subjects, text_ids(panel)),
        ],
    )
}

/// Subjects whose summary (in `ranking`), and observations whose residual, lie beyond robust
/// z thresholds.
#[extendr]
fn tw_unusual_subjects(
    panel: Robj,
    residuals: Robj,
    ranking: Robj,
    subject_threshold: Robj,
    observation_threshold: Robj,
) -> Robj {
    respond(run_unusual(
        &panel,
        &residuals,
        &ranking,
        &subject_threshold,
        &observation_threshold,
    ))
}

fn run_unusual(
    panel: &Robj,
    values: &Robj,
    ranking: &Robj,
    subject_threshold: &Robj,
    observation_threshold: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let ranking = ranking_ref(ranking)?;
    let subject_threshold = one_number(subject_threshold, "subject_threshold")?;
    let observation_threshold = one_number(observation_threshold, "observation_threshold")?;
    let r = panel_residuals(panel, values)?;
    let u = unusual(panel, &r, ranking, subject_threshold, observation_threshold)?;
    let text = text_ids(panel);
    let ids: Vec<_> = u.subjects.iter().map(|s| s.subject.clone()).collect();
    let subjects = data_frame(
        ["subject", "value", "robust_z"].into_iter(),
        vec![
            ids_robj(&ids, text),
            u.subjects.iter().map(|s| s.value).collect_robj(),
            u.subjects.iter().map(|s| s.robust_z).collect_robj(),
        ],
        u.subjects.len(),
    )?;
    let o = &u.observations;
    let ids: Vec<_> = o.iter().map(|s| s.subject.clone()).collect();
    let observations = data_frame(
        [
            "subject",
            "time",
            "response",
            "residual",
            "standardised",
            "row",
        ]
        .into_iter(),
        vec![
            ids_robj(&ids, text),
            o.iter().map(|s| s.time).collect_robj(),
            o.iter().map(|s| s.response).collect_robj(),
            o.iter().map(|s| s.residual).collect_robj(),
            o.iter().map(|s| s.standardised).collect_robj(),
            o.iter().map(|s| s.row as f64).collect_robj(),
        ],
        o.len(),
    )?;
    named_list(
        [
            "threshold",
            "center",
            "scale",
            "subjects",
            "observation_threshold",
            "observation_scale",
            "observations",
        ]
        .into_iter(),
        vec![
            u.threshold.into(),
            u.center.into(),
            u.scale.into(),
            subjects,
            u.observation_threshold.into(),
            u.observation_scale.into(),
            observations,
        ],
    )
}

extendr_module! {
    mod individuals;
    fn tw_mean_model_check;
    fn tw_panel_residuals;
    fn tw_rank_subjects;
    fn tw_pick_subjects;
    fn tw_sample_subjects;
    fn tw_unusual_subjects;
}
