//! The validated, sorted panel every estimator reads.
//!
//! Rows are checked once (lengths, no infinite time or covariate, missing cells under the
//! [`Missing`] policy), then stably sorted by (subject, time) so each subject is one contiguous
//! run, addressed by offsets as in a CSR matrix. The permutation is kept:
//! [`Panel::to_input_order`] puts any per-row result back in the caller's row order, with NaN in
//! rows that were dropped, so nothing is silently reordered or lost.
//!
//! A missing cell is a missing subject id, a NaN time, response or covariate, or an infinite
//! response (the response alone, kept from earlier releases: a response of ±inf is as unusable
//! as a gap). Under [`Missing::Error`] the first one, in row order and within a row in the order
//! subject, time, response, covariates, is refused with its column and row; under
//! [`Missing::Drop`] every row holding one is dropped and counted per column
//! ([`Panel::dropped_by_column`]; a row missing in two columns counts in both).

use std::collections::HashMap;
use std::fmt;

use rayon::prelude::*;
use serde::Serialize;

use crate::error::{Error, Result};

/// Subject ids as they arrive from a front end, one per row.
#[derive(Debug, Clone, PartialEq)]
pub enum SubjectIds {
    /// Integer ids; `None` is a missing id.
    Int(Vec<Option<i64>>),
    /// Numeric ids held as floating point (R's default numeric type); NaN is a missing id and a
    /// value with a fractional part is refused.
    Float(Vec<f64>),
    /// Text ids; `None` and blank strings are missing ids.
    Text(Vec<Option<String>>),
}

impl SubjectIds {
    /// Number of rows.
    pub fn len(&self) -> usize {
        match self {
            SubjectIds::Int(v) => v.len(),
            SubjectIds::Float(v) => v.len(),
            SubjectIds::Text(v) => v.len(),
        }
    }

    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// One subject's id. Integer ids sort numerically, text ids by their bytes.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(untagged)]
pub enum SubjectId {
    /// An integer id.
    Int(i64),
    /// A text id.
    Text(String),
}

impl fmt::Display for SubjectId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SubjectId::Int(i) => write!(f, "{i}"),
            SubjectId::Text(s) => f.write_str(s),
        }
    }
}

/// What to do with a row holding a missing cell (a missing subject id, a NaN time, response or
/// covariate, or an infinite response).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Missing {
    /// Refuse the input, naming the first such row (the default).
    #[default]
    Error,
    /// Drop such rows and report how many were dropped.
    Drop,
}

impl std::str::FromStr for Missing {
    type Err = Error;

    /// Parses `"error"` or `"drop"`.
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "error" => Ok(Missing::Error),
            "drop" => Ok(Missing::Drop),
            other => Err(Error::option(
                "missing",
                format!("{other:?}"),
                "use \"error\" (the default) or \"drop\"",
            )),
        }
    }
}

/// How many rows were dropped for a missing cell in one column.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct MissingCount {
    /// The column: `subject`, `time`, `response` or a covariate's name.
    pub column: String,
    /// Rows with a missing cell in that column.
    pub rows: usize,
}

/// A named numeric covariate, one value per row.
#[derive(Debug, Clone, PartialEq)]
pub struct Covariate {
    /// The covariate's name.
    pub name: String,
    /// Its values, in the caller's row order.
    pub values: Vec<f64>,
}

impl Covariate {
    /// A covariate from a name and values.
    pub fn new(name: impl Into<String>, values: Vec<f64>) -> Self {
        Covariate {
            name: name.into(),
            values,
        }
    }
}

/// A covariate as held by a panel: values in panel (sorted) order.
#[derive(Debug, Clone, PartialEq)]
pub struct PanelCovariate {
    /// The covariate's name.
    pub name: String,
    /// Values in panel order.
    pub values: Vec<f64>,
    /// True when the value never changes within a subject.
    pub time_fixed: bool,
}

/// Validated repeated measurements, sorted by (subject, time).
///
/// # Examples
/// ```
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(2), Some(1), Some(2)]);
/// let panel = Panel::new(ids, &[1.0, 0.0, 0.0], &[5.0, 7.0, 6.0], vec![], Missing::Error)?;
/// assert_eq!(panel.n_subjects(), 2);
/// assert_eq!(panel.response(), &[7.0, 6.0, 5.0]); // subject 1, then subject 2 by time
/// // Per-row results go back in the caller's order:
/// assert_eq!(panel.to_input_order(panel.response()), vec![5.0, 7.0, 6.0]);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Panel {
    ids: Vec<SubjectId>,
    offsets: Vec<usize>,
    time: Vec<f64>,
    response: Vec<f64>,
    covariates: Vec<PanelCovariate>,
    order: Vec<usize>,
    /// `position[row]` is the panel row of input row `row`, `usize::MAX` when dropped: the
    /// inverse of `order`, so returning per-row results is a parallel gather.
    position: Vec<usize>,
    n_input: usize,
    dropped_rows: Vec<usize>,
    dropped_by_column: Vec<MissingCount>,
}

impl Panel {
    /// Builds a panel from one subject id, time and response per row, plus optional numeric
    /// covariates (time-fixed or time-varying; which one is detected).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::{Covariate, Missing, Panel, SubjectIds};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let ids = SubjectIds::Int(vec![Some(1), Some(1), None, Some(2)]);
    /// let age = Covariate::new("age", vec![50.0, f64::NAN, 60.0, 70.0]);
    /// let p = Panel::new(ids, &[0.0, 1.0, 0.0, 0.0], &[5.0, 6.0, 7.0, 8.0], vec![age], Missing::Drop)?;
    /// assert_eq!(p.dropped_rows(), &[1, 2]);
    /// let counts: Vec<(&str, usize)> =
    ///     p.dropped_by_column().iter().map(|c| (c.column.as_str(), c.rows)).collect();
    /// assert_eq!(counts, vec![("subject", 1), ("age", 1)]);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] when lengths differ; under [`Missing::Error`],
    /// [`Error::Missing`] for the first missing cell (its column and row) and
    /// [`Error::NonFinite`] for an infinite response; in both policies [`Error::NonFinite`] for
    /// an infinite time or covariate; [`Error::InvalidValue`] for a fractional numeric subject
    /// id; [`Error::InvalidOption`] for a blank or repeated covariate name; [`Error::Empty`]
    /// when no rows are given or none are left after dropping.
    pub fn new(
        subjects: SubjectIds,
        time: &[f64],
        response: &[f64],
        covariates: Vec<Covariate>,
        missing: Missing,
    ) -> Result<Panel> {
        let n = subjects.len();
        check_len("time", time.len(), n)?;
        check_len("response", response.len(), n)?;
        check_covariate_names(&covariates)?;
        for c in &covariates {
            check_len(&c.name, c.values.len(), n)?;
        }
        if n == 0 {
            return Err(Error::Empty {
                stage: "in the input".into(),
                fix: "give at least one row".into(),
            });
        }
        let (keys, ids) = subject_keys(&subjects)?;

        // Missing cells per column, in the order subject, time, response, covariates.
        let mut counts = vec![0usize; 3 + covariates.len()];
        let mut kept = Vec::with_capacity(n);
        let mut dropped_rows = Vec::new();
        for row in 0..n {
            let mut row_missing = false;
            let mut mark = |col: usize, argument: &str| -> Result<()> {
                if missing == Missing::Error {
                    return Err(missing_cell(argument, row));
                }
                counts[col] += 1;
                row_missing = true;
                Ok(())
            };
            if keys[row].is_none() {
                mark(0, "subject")?;
            }
            let t = time[row];
            if t.is_nan() {
                mark(1, "time")?;
            } else if !t.is_finite() {
                return Err(non_finite("time", row, t));
            }
            let y = response[row];
            if y.is_nan() {
                mark(2, "response")?;
            } else if !y.is_finite() {
                if missing == Missing::Error {
                    return Err(non_finite("response", row, y));
                }
                mark(2, "response")?;
            }
            for (k, c) in covariates.iter().enumerate() {
                let v = c.values[row];
                if v.is_nan() {
                    mark(3 + k, &c.name)?;
                } else if !v.is_finite() {
                    return Err(non_finite(&c.name, row, v));
                }
            }
            if row_missing {
                dropped_rows.push(row);
            } else {
                kept.push(row);
            }
        }
        let dropped_by_column: Vec<MissingCount> = ["subject", "time", "response"]
            .into_iter()
            .chain(covariates.iter().map(|c| c.name.as_str()))
            .zip(&counts)
            .filter(|(_, &rows)| rows > 0)
            .map(|(column, &rows)| MissingCount {
                column: column.to_string(),
                rows,
            })
            .collect();
        if kept.is_empty() {
            let by_column: Vec<String> = dropped_by_column
                .iter()
                .map(|c| format!("`{}` {}", c.column, c.rows))
                .collect();
            return Err(Error::Empty {
                stage: format!(
                    "after dropping {} rows with a missing value (by column: {})",
                    dropped_rows.len(),
                    by_column.join(", ")
                ),
                fix: "every row has a missing value in a column used; check those columns".into(),
            });
        }
        let keys: Vec<u64> = keys.into_iter().map(|k| k.unwrap_or(0)).collect();

        // `+ 0.0` turns -0.0 into 0.0 so the two count as the same visit time.
        let t_of = |row: usize| time[row] + 0.0;
        // Sort on order-keeping integer images of (subject, time), the row last: every key is
        // distinct, so the parallel unstable sort has one result, the stable order (rows with
        // equal subject and time keep their input order).
        let mut sorted: Vec<(u64, u64, usize)> = kept
            .par_iter()
            .map(|&row| (keys[row], time_key(t_of(row)), row))
            .collect();
        sorted.par_sort_unstable();
        let kept: Vec<usize> = sorted.iter().map(|k| k.2).collect();

        let mut offsets = vec![0];
        let mut run_ids = Vec::new();
        for (pos, k) in sorted.iter().enumerate() {
            if pos == 0 || k.0 != sorted[pos - 1].0 {
                if pos > 0 {
                    offsets.push(pos);
                }
                run_ids.push(ids.id(k.0));
            }
        }
        drop(sorted);
        offsets.push(kept.len());

        let covariates = covariates
            .into_iter()
            .map(|c| {
                let values: Vec<f64> = kept.iter().map(|&r| c.values[r]).collect();
                let time_fixed = offsets
                    .windows(2)
                    .all(|w| values[w[0]..w[1]].iter().all(|&v| v == values[w[0]]));
                PanelCovariate {
                    name: c.name,
                    values,
                    time_fixed,
                }
            })
            .collect();

        Ok(Panel {
            ids: run_ids,
            offsets,
            time: kept.iter().map(|&r| t_of(r)).collect(),
            response: kept.iter().map(|&r| response[r]).collect(),
            covariates,
            position: inverse(&kept, n),
            order: kept,
            n_input: n,
            dropped_rows,
            dropped_by_column,
        })
    }

    /// Number of subjects.
    pub fn n_subjects(&self) -> usize {
        self.ids.len()
    }

    /// Number of observations kept (rows after any dropping).
    pub fn n_obs(&self) -> usize {
        self.time.len()
    }

    /// Number of rows the caller gave.
    pub fn n_input_rows(&self) -> usize {
        self.n_input
    }

    /// Input rows (counted from 0) dropped under [`Missing::Drop`], in input order.
    pub fn dropped_rows(&self) -> &[usize] {
        &self.dropped_rows
    }

    /// Rows dropped under [`Missing::Drop`] for a missing cell, per column (`subject`, `time`,
    /// `response`, then covariates in the order given; columns with none left out). A row
    /// missing in two columns counts in both, so the counts can add up to more than
    /// [`Panel::dropped_rows`].
    pub fn dropped_by_column(&self) -> &[MissingCount] {
        &self.dropped_by_column
    }

    /// Subject ids in panel order (sorted).
    pub fn ids(&self) -> &[SubjectId] {
        &self.ids
    }

    /// Run boundaries: subject `i` holds panel rows `offsets[i]..offsets[i + 1]`.
    pub fn offsets(&self) -> &[usize] {
        &self.offsets
    }

    /// The panel rows of subject `i` (in panel order).
    pub fn subject_rows(&self, i: usize) -> std::ops::Range<usize> {
        self.offsets[i]..self.offsets[i + 1]
    }

    /// Times in panel order.
    pub fn time(&self) -> &[f64] {
        &self.time
    }

    /// Responses in panel order.
    pub fn response(&self) -> &[f64] {
        &self.response
    }

    /// Whether the response holds exactly two distinct values (a binary outcome such as 0/1),
    /// which changes LOWESS's default robustness iterations (see
    /// [`crate::trend::lowess`]).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::{Missing, Panel, SubjectIds};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let p = Panel::new(SubjectIds::Int(vec![Some(1), Some(1), Some(2)]), &[0.0, 1.0, 0.0], &[0.0, 1.0, 0.0], vec![], Missing::Error)?;
    /// assert!(p.is_binary());
    /// # Ok(()) }
    /// ```
    pub fn is_binary(&self) -> bool {
        crate::trend::curve::is_binary(&self.response)
    }

    /// Covariates, values in panel order.
    pub fn covariates(&self) -> &[PanelCovariate] {
        &self.covariates
    }

    /// `order()[k]` is the input row (counted from 0) of panel row `k`.
    pub fn order(&self) -> &[usize] {
        &self.order
    }

    /// Puts a per-row result (in panel order) back in the caller's row order; dropped rows get
    /// NaN, so the result has one entry per input row.
    ///
    /// # Panics
    /// Never for `values` of length [`Panel::n_obs`]; extra values are ignored and missing ones
    /// read as NaN.
    pub fn to_input_order(&self, values: &[f64]) -> Vec<f64> {
        self.position
            .par_iter()
            .map(|&k| values.get(k).copied().unwrap_or(f64::NAN))
            .collect()
    }
}

impl Panel {
    /// The inverse of [`Panel::to_input_order`]: per-row values in the caller's row order (one
    /// per input row, dropped rows included and ignored) put in panel order.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::{Missing, Panel, SubjectIds};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let ids = SubjectIds::Int(vec![Some(2), Some(1)]);
    /// let p = Panel::new(ids, &[0.0, 0.0], &[5.0, 7.0], vec![], Missing::Error)?;
    /// assert_eq!(p.from_input_order("residuals", &[0.5, -0.5])?, vec![-0.5, 0.5]);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] unless there is one value per input row; [`Error::NonFinite`]
    /// for a non-finite value in a kept row (row counted from 1 in the caller's order).
    pub fn from_input_order(&self, argument: &str, values: &[f64]) -> Result<Vec<f64>> {
        if values.len() != self.n_input {
            return Err(Error::LengthMismatch {
                argument: argument.to_string(),
                reference: "the panel's rows".into(),
                expected: self.n_input,
                found: values.len(),
            });
        }
        self.order
            .par_iter()
            .map(|&row| {
                let v = values[row];
                if v.is_finite() {
                    Ok(v)
                } else {
                    Err(non_finite(argument, row, v))
                }
            })
            .collect()
    }
}

/// The inverse of a permutation of the kept rows; dropped rows map to `usize::MAX`.
fn inverse(order: &[usize], n_input: usize) -> Vec<usize> {
    let mut position = vec![usize::MAX; n_input];
    for (k, &row) in order.iter().enumerate() {
        position[row] = k;
    }
    position
}

fn check_len(argument: &str, found: usize, expected: usize) -> Result<()> {
    if found == expected {
        return Ok(());
    }
    Err(Error::LengthMismatch {
        argument: argument.to_string(),
        reference: "subject".into(),
        expected,
        found,
    })
}

fn check_covariate_names(covariates: &[Covariate]) -> Result<()> {
    for (k, c) in covariates.iter().enumerate() {
        if c.name.trim().is_empty() {
            return Err(Error::option(
                "covariates",
                format!("a covariate named {:?}", c.name),
                "give every covariate a non-blank name",
            ));
        }
        if covariates[..k].iter().any(|d| d.name == c.name) {
            return Err(Error::option(
                "covariates",
                format!("two covariates named {:?}", c.name),
                "give each covariate its own name",
            ));
        }
    }
    Ok(())
}

fn non_finite(argument: &str, row: usize, value: f64) -> Error {
    Error::NonFinite {
        argument: argument.to_string(),
        row: row + 1,
        value: format!("{value}"),
    }
}

/// A missing cell under [`Missing::Error`]: the column, the row and both ways out.
fn missing_cell(argument: &str, row: usize) -> Error {
    Error::Missing {
        argument: argument.to_string(),
        row: row + 1,
        fix: "pass missing = \"drop\" to drop such rows, or fill them in".into(),
    }
}

/// How to turn a row's subject key back into its id.
enum Ids {
    /// The key is the integer id, sign bit flipped.
    Int,
    /// The key is the rank among these distinct texts.
    Text(Vec<String>),
}

impl Ids {
    fn id(&self, key: u64) -> SubjectId {
        match self {
            Ids::Int => SubjectId::Int((key ^ SIGN) as i64),
            Ids::Text(t) => SubjectId::Text(t[key as usize].clone()),
        }
    }
}

const SIGN: u64 = 1 << 63;

/// Order-keeping integer image of a finite time (already normalised so -0 is 0).
fn time_key(t: f64) -> u64 {
    let b = t.to_bits();
    if b & SIGN != 0 {
        !b
    } else {
        b | SIGN
    }
}

/// Per row, an integer whose order is that of its subject id (integer ids directly, text ids
/// by their rank among the distinct texts), `None` for a missing id, and how to turn a key back
/// into the id.
fn subject_keys(subjects: &SubjectIds) -> Result<(Vec<Option<u64>>, Ids)> {
    let int_key = |i: i64| (i as u64) ^ SIGN;
    match subjects {
        SubjectIds::Int(v) => Ok((v.iter().map(|id| id.map(int_key)).collect(), Ids::Int)),
        SubjectIds::Float(v) => {
            let keys = v
                .iter()
                .enumerate()
                .map(|(row, &x)| float_id(row, x).map(|id| id.map(int_key)))
                .collect::<Result<Vec<Option<u64>>>>()?;
            Ok((keys, Ids::Int))
        }
        SubjectIds::Text(v) => {
            let texts: Vec<Option<&str>> = v
                .iter()
                .map(|id| match id {
                    Some(s) if !s.trim().is_empty() => Some(s.as_str()),
                    _ => None,
                })
                .collect();
            let mut distinct: Vec<&str> = texts.iter().flatten().copied().collect();
            distinct.sort_unstable();
            distinct.dedup();
            let rank: HashMap<&str, u64> = distinct
                .iter()
                .enumerate()
                .map(|(i, &k)| (k, i as u64))
                .collect();
            let keys = texts.iter().map(|k| k.map(|k| rank[k])).collect();
            Ok((
                keys,
                Ids::Text(distinct.into_iter().map(String::from).collect()),
            ))
        }
    }
}

/// A numeric id as an integer; NaN is a missing id (`None`).
fn float_id(row: usize, x: f64) -> Result<Option<i64>> {
    if x.is_nan() {
        return Ok(None);
    }
    // 2^53: beyond it not every integer is representable, so ids could merge.
    if !x.is_finite() || x.fract() != 0.0 || x.abs() > 9_007_199_254_740_992.0 {
        return Err(Error::InvalidValue {
            argument: "subject".into(),
            row: row + 1,
            value: format!("{x}"),
            expected: "numeric subject ids must be whole numbers; use integers or text".into(),
        });
    }
    Ok(Some(x as i64))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ints(v: &[i64]) -> SubjectIds {
        SubjectIds::Int(v.iter().map(|&x| Some(x)).collect())
    }

    #[test]
    fn sorts_stably_and_restores_order() {
        let p = Panel::new(
            ints(&[3, 1, 3, 1, 3]),
            &[2.0, 1.0, 0.0, 0.0, 2.0],
            &[10.0, 11.0, 12.0, 13.0, 14.0],
            vec![Covariate::new("age", vec![50.0, 60.0, 50.0, 60.0, 50.0])],
            Missing::Error,
        )
        .unwrap();
        assert_eq!(p.ids(), &[SubjectId::Int(1), SubjectId::Int(3)]);
        assert_eq!(p.offsets(), &[0, 2, 5]);
        assert_eq!(p.time(), &[0.0, 1.0, 0.0, 2.0, 2.0]);
        // Duplicated (3, 2.0): input row 0 stays before input row 4.
        assert_eq!(p.order(), &[3, 1, 2, 0, 4]);
        assert!(p.covariates()[0].time_fixed);
        assert_eq!(
            p.to_input_order(p.response()),
            vec![10.0, 11.0, 12.0, 13.0, 14.0]
        );
    }

    #[test]
    fn drop_reports_and_fills_nan() {
        let p = Panel::new(
            ints(&[1, 1, 2]),
            &[0.0, 1.0, 0.0],
            &[1.0, f64::NAN, f64::INFINITY],
            vec![],
            Missing::Drop,
        )
        .unwrap();
        assert_eq!(p.dropped_rows(), &[1, 2]);
        let back = p.to_input_order(p.response());
        assert_eq!(back[0], 1.0);
        assert!(back[1].is_nan() && back[2].is_nan());
    }

    #[test]
    fn text_ids_sort_by_bytes_and_blank_is_missing() {
        let ids = SubjectIds::Text(vec![Some("b".into()), Some("a".into())]);
        let p = Panel::new(ids, &[0.0, 0.0], &[1.0, 2.0], vec![], Missing::Error).unwrap();
        assert_eq!(p.ids()[0], SubjectId::Text("a".into()));
        let ids = SubjectIds::Text(vec![Some("b".into()), Some("  ".into())]);
        let e = Panel::new(ids, &[0.0, 0.0], &[1.0, 2.0], vec![], Missing::Error).unwrap_err();
        assert_eq!(e.kind(), "missing");
        assert_eq!(e.row(), Some(2));
    }

    #[test]
    fn time_varying_covariate_detected() {
        let p = Panel::new(
            ints(&[1, 1]),
            &[0.0, 1.0],
            &[1.0, 2.0],
            vec![Covariate::new("dose", vec![1.0, 2.0])],
            Missing::Error,
        )
        .unwrap();
        assert!(!p.covariates()[0].time_fixed);
    }
}
