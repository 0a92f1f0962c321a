//! Unusual subjects and observations, flagged by robust z-scores.
//!
//! Subjects: over the m ranked subjects' summaries v_i, center = median(v), MAD =
//! median |v_i - center|, scale = 1.4826 MAD (the MAD scaled to estimate a normal standard
//! deviation; Hampel 1974, JASA 69:383-393; the constant of R's `mad()`), and the robust z is
//! (v_i - center) / scale. A subject is unusual when |z| > `subject_threshold` (default 3.5,
//! the cut-off of Iglewicz & Hoaglin 1993, "How to detect and handle outliers").
//!
//! Observations: residuals of a mean model are centred at 0 by construction, so each is
//! standardised about 0: observation_scale = 1.4826 median |r| over all residuals, and
//! standardised = r / observation_scale. An observation is unusual when |standardised| >
//! `observation_threshold` (default 3.5).
//!
//! When a MAD is 0 (more than half the values equal), the scale falls back to
//! sqrt(pi / 2) times the mean absolute deviation from the same centre (which estimates a
//! normal standard deviation the same way); when that is 0 too every value equals the centre,
//! every z is 0 and nothing is flagged. Both lists are ordered by |z| decreasing, ties in panel
//! order. Medians are found by selection, O(n).

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::{Panel, SubjectId};
use crate::error::{Error, Result};
use crate::individuals::ranking::{check_ranking, check_residuals, Ranking};
use crate::numeric::quantile::quantile_sorted;

/// Consistency constant of the MAD for the normal: 1 / Phi^-1(3/4).
pub const MAD_SCALE: f64 = 1.482_602_218_505_602;
/// sqrt(pi / 2): the consistency constant of the mean absolute deviation for the normal.
pub const MEAN_AD_SCALE: f64 = 1.253_314_137_315_500_3;
/// The default threshold on |robust z| for subjects and observations.
pub const DEFAULT_THRESHOLD: f64 = 3.5;

/// An unusual subject.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UnusualSubject {
    /// The subject.
    pub subject: SubjectId,
    /// Its summary.
    pub value: f64,
    /// (value - center) / scale.
    pub robust_z: f64,
}

/// An unusual observation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UnusualObservation {
    /// Its subject.
    pub subject: SubjectId,
    /// Its time.
    pub time: f64,
    /// Its response.
    pub response: f64,
    /// Its residual.
    pub residual: f64,
    /// residual / observation_scale.
    pub standardised: f64,
    /// The caller's input row, counted from 1.
    pub row: usize,
}

/// Subjects and observations far from the rest.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Unusual {
    /// The threshold on |robust z| for subjects.
    pub threshold: f64,
    /// Median of the subjects' summaries.
    pub center: f64,
    /// 1.4826 MAD of the summaries (or the fallback, see the module doc).
    pub scale: f64,
    /// Subjects with |robust z| > threshold, |z| decreasing.
    pub subjects: Vec<UnusualSubject>,
    /// The threshold on |standardised| for observations.
    pub observation_threshold: f64,
    /// 1.4826 median |residual| (or the fallback).
    pub observation_scale: f64,
    /// Observations with |standardised| > observation_threshold, |standardised| decreasing.
    pub observations: Vec<UnusualObservation>,
}

/// Median of |v - center| scaled to a normal SD, with the mean-deviation fallback.
fn robust_scale(v: &[f64], center: f64) -> f64 {
    let mut dev: Vec<f64> = v.par_iter().map(|x| (x - center).abs()).collect();
    let mad = median_select(&mut dev);
    if mad > 0.0 {
        return MAD_SCALE * mad;
    }
    // Fixed blocks added in order: the same sum for any thread count.
    let sum: f64 = dev
        .par_chunks(1 << 14)
        .map(|c| c.iter().sum::<f64>())
        .collect::<Vec<f64>>()
        .iter()
        .sum();
    MEAN_AD_SCALE * sum / v.len() as f64
}

/// The type-7 median by selection (reorders `v`).
fn median_select(v: &mut [f64]) -> f64 {
    let n = v.len();
    if n == 0 {
        return f64::NAN;
    }
    let (_, &mut upper, _) = v.select_nth_unstable_by(n / 2, f64::total_cmp);
    if n % 2 == 1 {
        return upper;
    }
    let lower = v[..n / 2].iter().copied().fold(f64::NEG_INFINITY, f64::max);
    quantile_sorted(&[lower, upper], 0.5)
}

fn check_threshold(name: &str, t: f64) -> Result<()> {
    if t.is_finite() && t > 0.0 {
        Ok(())
    } else {
        Err(Error::option(
            name,
            t,
            "a threshold on |robust z| > 0 (the default is 3.5)",
        ))
    }
}

fn z(x: f64, center: f64, scale: f64) -> f64 {
    if scale > 0.0 {
        (x - center) / scale
    } else {
        0.0
    }
}

/// Flags subjects whose summary, and observations whose residual, lie far from the rest.
///
/// # Examples
/// ```
/// use trajweave_core::individuals::ranking::{rank_subjects, Summary};
/// use trajweave_core::individuals::unusual::unusual;
/// use trajweave_core::{Missing, Panel, SubjectId, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int((1..=6).map(Some).collect());
/// let panel = Panel::new(ids, &[0.0; 6], &[0.0; 6], vec![], Missing::Error)?;
/// let res = [-1.0, 0.5, 0.0, 1.0, -0.5, 40.0];
/// let ranking = rank_subjects(&panel, &res, Summary::Mean)?;
/// let u = unusual(&panel, &res, &ranking, 3.5, 3.5)?;
/// assert_eq!(u.subjects[0].subject, SubjectId::Int(6));
/// assert_eq!(u.observations[0].row, 6);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for a threshold that is not a finite number > 0 or a ranking not
/// made from this panel; those of [`crate::individuals::ranking::rank_subjects`] for the residuals.
pub fn unusual(
    panel: &Panel,
    residuals: &[f64],
    ranking: &Ranking,
    subject_threshold: f64,
    observation_threshold: f64,
) -> Result<Unusual> {
    check_threshold("subject_threshold", subject_threshold)?;
    check_threshold("observation_threshold", observation_threshold)?;
    check_residuals(panel, residuals)?;
    check_ranking(panel, ranking, &[])?;

    let v = &ranking.values;
    let center = median_select(&mut v.clone());
    let scale = robust_scale(v, center);
    let mut subjects: Vec<(usize, UnusualSubject)> = v
        .iter()
        .enumerate()
        .filter_map(|(pos, &value)| {
            let robust_z = z(value, center, scale);
            (robust_z.abs() > subject_threshold).then(|| {
                let subject = ranking.subjects[pos].clone();
                let i = ranking.subject_index[pos];
                (
                    i,
                    UnusualSubject {
                        subject,
                        value,
                        robust_z,
                    },
                )
            })
        })
        .collect();
    let flagged_pos: Vec<usize> = v
        .iter()
        .enumerate()
        .filter(|(_, &value)| z(value, center, scale).abs() > subject_threshold)
        .map(|(pos, _)| pos)
        .collect();
    check_ranking(panel, ranking, &flagged_pos)?;
    subjects.sort_by(|a, b| {
        b.1.robust_z
            .abs()
            .total_cmp(&a.1.robust_z.abs())
            .then(a.0.cmp(&b.0))
    });

    let observation_scale = robust_scale(residuals, 0.0);
    let flagged: Vec<usize> = residuals
        .par_chunks(1 << 14)
        .enumerate()
        .flat_map_iter(|(b, c)| {
            c.iter().enumerate().filter_map(move |(j, &r)| {
                (z(r, 0.0, observation_scale).abs() > observation_threshold)
                    .then_some(b * (1 << 14) + j)
            })
        })
        .collect();
    let offsets = panel.offsets();
    let mut observations: Vec<(usize, UnusualObservation)> = flagged
        .into_iter()
        .map(|k| {
            // The subject holding panel row k: the last offset <= k.
            let i = offsets.partition_point(|&o| o <= k) - 1;
            let residual = residuals[k];
            (
                k,
                UnusualObservation {
                    subject: panel.ids()[i].clone(),
                    time: panel.time()[k],
                    response: panel.response()[k],
                    residual,
                    standardised: z(residual, 0.0, observation_scale),
                    row: panel.order()[k] + 1,
                },
            )
        })
        .collect();
    observations.sort_by(|a, b| {
        b.1.standardised
            .abs()
            .total_cmp(&a.1.standardised.abs())
            .then(a.0.cmp(&b.0))
    });
    Ok(Unusual {
        threshold: subject_threshold,
        center,
        scale,
        subjects: subjects.into_iter().map(|(_, s)| s).collect(),
        observation_threshold,
        observation_scale,
        observations: observations.into_iter().map(|(_, o)| o).collect(),
    })
}
