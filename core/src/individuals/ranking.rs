//! Subjects ranked by a summary of their residuals, and the subjects at chosen quantiles of that
//! ranking (Diggle, Heagerty, Liang & Zeger 2002, ch. 3: show a few individual trajectories
//! picked by rank rather than at random).
//!
//! Summaries of subject i's residuals r_1..r_n (in time order) at times t_1..t_n ([`Summary`]):
//! - `median`, `quantile(p)`: the type-7 sample quantile (Hyndman & Fan 1996, R's default);
//! - `mean`: sum r / n;
//! - `rms`: sqrt(sum r^2 / n);
//! - `max_abs`: max |r|;
//! - `slope`: the least-squares slope of r on t, sum (t - tbar)(r - rbar) / sum (t - tbar)^2;
//!   undefined (the subject is listed as unranked) with fewer than two distinct times.
//!
//! Ranks: subjects with a defined summary are sorted by it, smallest first; equal values are
//! ordered by subject id (the panel's order), so ranks are ordinal, 1..m, with no ties shared.
//!
//! Quantile to rank ([`pick_subjects`]): among m ranked subjects, quantile q picks rank
//! 1 + floor(q (m - 1) + 1/2) (q (m - 1) rounded half up), so q = 0 is the smallest summary,
//! q = 1 the largest and q = 0.5 the median subject (the upper one of the middle two when m is
//! even).
//!
//! Summaries are computed in parallel over subjects, each subject's arithmetic in one thread in
//! time order, so results do not depend on the thread count. Cost O(n log n_i) for the
//! quantiles and O(m log m) for the ranking.

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::{Panel, SubjectId};
use crate::error::{Error, Result};
use crate::numeric::quantile::quantile_sorted;

/// The summary of a subject's residuals that subjects are ranked by.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", content = "p", rename_all = "snake_case")]
pub enum Summary {
    /// Median (type-7 quantile at 1/2).
    Median,
    /// Mean.
    Mean,
    /// Type-7 quantile at p, 0 <= p <= 1.
    Quantile(f64),
    /// Root mean square.
    Rms,
    /// Largest absolute residual.
    MaxAbs,
    /// Least-squares slope of the residual on time.
    Slope,
}

/// The summary names, as every front spells them.
pub const SUMMARIES: &str =
    "\"median\", \"mean\", \"quantile\" (with p), \"rms\", \"max_abs\" or \"slope\"";

impl Summary {
    /// The summary called `name`; `p` is the probability of `"quantile"` and must be absent for
    /// the others.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::individuals::ranking::Summary;
    /// # fn main() -> trajweave_core::Result<()> {
    /// assert_eq!(Summary::parse("quantile", Some(0.9))?, Summary::Quantile(0.9));
    /// assert_eq!(Summary::parse("max_abs", None)?, Summary::MaxAbs);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name, a quantile without p or with p outside
    /// [0, 1], or a p given to another summary.
    pub fn parse(name: &str, p: Option<f64>) -> Result<Summary> {
        let s = match name {
            "median" => Summary::Median,
            "mean" => Summary::Mean,
            "rms" => Summary::Rms,
            "max_abs" => Summary::MaxAbs,
            "slope" => Summary::Slope,
            "quantile" => {
                return match p {
                    Some(p) if (0.0..=1.0).contains(&p) => Ok(Summary::Quantile(p)),
                    Some(p) => Err(Error::option("p", p, "a probability in [0, 1]")),
                    None => Err(Error::option(
                        "p",
                        "none",
                        "the \"quantile\" summary needs p, a probability in [0, 1]",
                    )),
                }
            }
            other => {
                return Err(Error::option(
                    "summary",
                    format!("{other:?}"),
                    &format!("use {SUMMARIES}"),
                ))
            }
        };
        match p {
            None => Ok(s),
            Some(p) => Err(Error::option(
                "p",
                p,
                &format!("p is used only by the \"quantile\" summary, not by {name:?}"),
            )),
        }
    }

    /// The summary's name, as [`Summary::parse`] reads it.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::individuals::ranking::Summary;
    /// assert_eq!(Summary::Quantile(0.1).name(), "quantile");
    /// ```
    pub fn name(&self) -> &'static str {
        match self {
            Summary::Median => "median",
            Summary::Mean => "mean",
            Summary::Quantile(_) => "quantile",
            Summary::Rms => "rms",
            Summary::MaxAbs => "max_abs",
            Summary::Slope => "slope",
        }
    }

    /// The summary of residuals `r` at times `t` (time order), `None` where undefined.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::individuals::ranking::Summary;
    /// assert_eq!(Summary::Slope.of(&[0.0, 2.0], &[1.0, 2.0]), Some(0.5));
    /// assert_eq!(Summary::Slope.of(&[1.0, 1.0], &[1.0, 2.0]), None); // one distinct time
    /// assert_eq!(Summary::Rms.of(&[0.0, 1.0], &[3.0, -4.0]), Some(12.5f64.sqrt()));
    /// ```
    pub fn of(&self, t: &[f64], r: &[f64]) -> Option<f64> {
        self.of_with(t, r, &mut Vec::new())
    }

    /// [`Summary::of`] with a scratch buffer for the quantiles (no allocation per subject).
    fn of_with(&self, t: &[f64], r: &[f64], buf: &mut Vec<f64>) -> Option<f64> {
        let n = r.len() as f64;
        if r.is_empty() {
            return None;
        }
        match *self {
            Summary::Median => Some(quantile_of(r, 0.5, buf)),
            Summary::Quantile(p) => Some(quantile_of(r, p, buf)),
            Summary::Mean => Some(r.iter().sum::<f64>() / n),
            Summary::Rms => Some((r.iter().map(|v| v * v).sum::<f64>() / n).sqrt()),
            Summary::MaxAbs => Some(r.iter().fold(0.0, |m: f64, v| m.max(v.abs()))),
            Summary::Slope => {
                let (tbar, rbar) = (t.iter().sum::<f64>() / n, r.iter().sum::<f64>() / n);
                let (mut stt, mut str_) = (0.0, 0.0);
                for (a, b) in t.iter().zip(r) {
                    stt += (a - tbar) * (a - tbar);
                    str_ += (a - tbar) * (b - rbar);
                }
                // Times are sorted, so equal first and last means one distinct time.
                (t[t.len() - 1] > t[0] && stt > 0.0).then(|| str_ / stt)
            }
        }
    }
}

fn quantile_of(r: &[f64], p: f64, buf: &mut Vec<f64>) -> f64 {
    buf.clear();
    buf.extend_from_slice(r);
    buf.sort_unstable_by(f64::total_cmp);
    quantile_sorted(buf, p)
}

/// Subjects in rank order of a summary of their residuals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ranking {
    /// The summary ranked by.
    pub summary: Summary,
    /// Ranked subjects, smallest summary first.
    pub subjects: Vec<SubjectId>,
    /// Each ranked subject's summary.
    pub values: Vec<f64>,
    /// Each ranked subject's rank, 1-based (ordinal: 1..m).
    pub ranks: Vec<usize>,
    /// Each ranked subject's number of observations.
    pub observations: Vec<usize>,
    /// Subjects whose summary is undefined (e.g. a slope with one distinct time), panel order.
    pub unranked: Vec<SubjectId>,
    /// The panel subject index (see [`Panel::subject_rows`]) of each ranked subject.
    pub subject_index: Vec<usize>,
}

/// The first index holding a non-finite value. Blocks are scanned in parallel; rayon's
/// per-item `position_first` costs far more than the test itself.
pub(crate) fn first_non_finite(v: &[f64]) -> Option<usize> {
    const CHUNK: usize = 1 << 14;
    let b = v
        .par_chunks(CHUNK)
        .position_first(|c| c.iter().any(|x| !x.is_finite()))?;
    let start = b * CHUNK;
    v[start..]
        .iter()
        .position(|x| !x.is_finite())
        .map(|k| start + k)
}

/// Checks residuals against a panel: one finite value per observation.
pub(crate) fn check_residuals(panel: &Panel, residuals: &[f64]) -> Result<()> {
    if residuals.len() != panel.n_obs() {
        return Err(Error::LengthMismatch {
            argument: "residuals".into(),
            reference: "response".into(),
            expected: panel.n_obs(),
            found: residuals.len(),
        });
    }
    if let Some(k) = first_non_finite(residuals) {
        return Err(Error::NonFinite {
            argument: "residuals".into(),
            row: panel.order()[k] + 1,
            value: format!("{}", residuals[k]),
        });
    }
    Ok(())
}

/// Ranks subjects by a summary of their residuals.
///
/// # Examples
/// ```
/// use trajweave_core::individuals::ranking::{rank_subjects, Summary};
/// use trajweave_core::{Missing, Panel, SubjectId, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(3)]);
/// let panel = Panel::new(ids, &[0.0, 1.0, 0.0, 0.0], &[0.0; 4], vec![], Missing::Error)?;
/// let r = rank_subjects(&panel, &[1.0, 3.0, -1.0, 5.0], Summary::Mean)?;
/// assert_eq!(r.subjects, vec![SubjectId::Int(2), SubjectId::Int(1), SubjectId::Int(3)]);
/// assert_eq!(r.values, vec![-1.0, 2.0, 5.0]);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] when `residuals` is not one value per panel observation;
/// [`Error::NonFinite`] for a non-finite residual, naming the caller's input row (counted from
/// 1, through [`Panel::order`]); [`Error::TooFew`] when no subject has a defined summary.
pub fn rank_subjects(panel: &Panel, residuals: &[f64], summary: Summary) -> Result<Ranking> {
    check_residuals(panel, residuals)?;
    if let Summary::Quantile(p) = summary {
        if !(0.0..=1.0).contains(&p) {
            return Err(Error::option("p", p, "a probability in [0, 1]"));
        }
    }
    let t = panel.time();
    let values: Vec<Option<f64>> = (0..panel.n_subjects())
        .into_par_iter()
        .map_init(Vec::new, |buf, i| {
            let rows = panel.subject_rows(i);
            summary.of_with(&t[rows.clone()], &residuals[rows], buf)
        })
        .collect();
    let mut ranked: Vec<(f64, usize)> = values
        .iter()
        .enumerate()
        .filter_map(|(i, v)| v.map(|v| (v, i)))
        .collect();
    if ranked.is_empty() {
        return Err(Error::TooFew {
            what: "subjects with a defined summary".into(),
            estimate: format!("a ranking by {}", summary.name()),
            needed: 1,
            found: 0,
        });
    }
    // A total order (value, then panel index), so the unstable parallel sort has one result.
    ranked.par_sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let ids = panel.ids();
    let unranked = values
        .iter()
        .enumerate()
        .filter(|(_, v)| v.is_none())
        .map(|(i, _)| ids[i].clone())
        .collect();
    Ok(Ranking {
        summary,
        subjects: ranked.iter().map(|&(_, i)| ids[i].clone()).collect(),
        values: ranked.iter().map(|&(v, _)| v).collect(),
        ranks: (1..=ranked.len()).collect(),
        observations: ranked
            .iter()
            .map(|&(_, i)| panel.subject_rows(i).len())
            .collect(),
        unranked,
        subject_index: ranked.iter().map(|&(_, i)| i).collect(),
    })
}

/// The subject at one quantile of a ranking, with its trajectory.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pick {
    /// The quantile asked for.
    pub quantile: f64,
    /// The subject picked.
    pub subject: SubjectId,
    /// Its rank, 1-based.
    pub rank: usize,
    /// Its summary.
    pub value: f64,
    /// Its visit times, increasing.
    pub time: Vec<f64>,
    /// Its responses.
    pub response: Vec<f64>,
    /// Its residuals.
    pub residual: Vec<f64>,
}

/// Checks that a ranking fits this panel: consistent lengths, indices in range, and the ids
/// at the positions `used` equal the panel's (checking every id would cost a random access per
/// subject; the entries an output reports are the ones that must be right).
pub(crate) fn check_ranking(panel: &Panel, ranking: &Ranking, used: &[usize]) -> Result<()> {
    let ids = panel.ids();
    let m = ranking.subjects.len();
    let consistent = ranking.subject_index.len() == m
        && ranking.values.len() == m
        && m + ranking.unranked.len() == ids.len()
        && ranking.subject_index.iter().all(|&i| i < ids.len())
        && used
            .iter()
            .all(|&pos| pos < m && ids[ranking.subject_index[pos]] == ranking.subjects[pos]);
    if consistent {
        Ok(())
    } else {
        Err(Error::option(
            "ranking",
            "a ranking of other subjects",
            "pass the ranking rank_subjects made from this panel",
        ))
    }
}

/// The subjects at the given quantiles of a ranking (rank = 1 + round-half-up(q (m - 1))), with
/// their times, responses and residuals.
///
/// # Examples
/// ```
/// use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Summary};
/// use trajweave_core::{Missing, Panel, SubjectId, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(2), Some(3)]);
/// let panel = Panel::new(ids, &[0.0; 3], &[0.0; 3], vec![], Missing::Error)?;
/// let res = [0.5, -2.0, 9.0];
/// let ranking = rank_subjects(&panel, &res, Summary::Median)?;
/// let picks = pick_subjects(&panel, &res, &ranking, &[0.0, 0.5, 1.0])?;
/// assert_eq!(picks[1].subject, SubjectId::Int(1)); // the median subject
/// assert_eq!(picks[2].residual, vec![9.0]);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for no quantiles, a quantile outside [0, 1], or a ranking not made
/// from this panel; those of [`rank_subjects`] for the residuals.
pub fn pick_subjects(
    panel: &Panel,
    residuals: &[f64],
    ranking: &Ranking,
    quantiles: &[f64],
) -> Result<Vec<Pick>> {
    check_residuals(panel, residuals)?;
    if quantiles.is_empty() {
        return Err(Error::option(
            "quantiles",
            "none",
            "give at least one quantile in [0, 1]",
        ));
    }
    if let Some(&q) = quantiles.iter().find(|q| !(0.0..=1.0).contains(*q)) {
        return Err(Error::option("quantiles", q, "quantiles in [0, 1]"));
    }
    let m = ranking.subjects.len();
    if m == 0 {
        return Err(Error::TooFew {
            what: "ranked subjects".into(),
            estimate: "picking subjects".into(),
            needed: 1,
            found: 0,
        });
    }
    let positions: Vec<usize> = quantiles.iter().map(|&q| rank_position(q, m)).collect();
    check_ranking(panel, ranking, &positions)?;
    Ok(quantiles
        .iter()
        .map(|&q| {
            let pos = rank_position(q, m);
            let i = ranking.subject_index[pos];
            let rows = panel.subject_rows(i);
            Pick {
                quantile: q,
                subject: ranking.subjects[pos].clone(),
                rank: pos + 1,
                value: ranking.values[pos],
                time: panel.time()[rows.clone()].to_vec(),
                response: panel.response()[rows.clone()].to_vec(),
                residual: residuals[rows].to_vec(),
            }
        })
        .collect())
}

/// Position (from 0) of quantile q among m ranked subjects: floor(q (m - 1) + 1/2).
pub(crate) fn rank_position(q: f64, m: usize) -> usize {
    ((q * (m - 1) as f64 + 0.5).floor() as usize).min(m - 1)
}
