//! What the data hold before any model: size, visits, follow-up, spacing and dropout patterns.
//!
//! Quartiles use the type-7 rule of [`crate::numeric::quantile`]. Follow-up of a subject is its last
//! visit time minus its first; gaps are the differences between consecutive visit times within
//! a subject, pooled over subjects (a duplicated visit contributes a gap of 0). On a time grid a
//! subject's pattern is (Little & Rubin 2002, ch. 1):
//! - `complete`: seen in every bin;
//! - `monotone`: seen in bins 1..L and in none after, with L short of the last bin (dropout);
//! - `intermittent`: any other mix, including a late first bin;
//! - `unobserved`: no visit falls in any bin.

use std::fmt::Write as _;

use serde::Serialize;

use crate::data::grid::TimeGrid;
use crate::data::panel::{MissingCount, Panel, SubjectId};
use crate::error::Result;
use crate::numeric::quantile::FiveNumbers;

/// The description of a panel. Serialises to the JSON every front returns.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Description {
    /// Number of subjects.
    pub subjects: usize,
    /// Number of observations kept.
    pub observations: usize,
    /// Number of rows given.
    pub rows_input: usize,
    /// Rows dropped for a missing cell (only under `missing = "drop"`).
    pub rows_dropped: usize,
    /// Of those, how many had a missing cell in each column (`subject`, `time`, `response`,
    /// then covariates; columns with none left out; a row missing in two columns counts in
    /// both).
    pub dropped_by_column: Vec<MissingCount>,
    /// Earliest and latest visit time.
    pub time_range: [f64; 2],
    /// Visits per subject.
    pub visits_per_subject: FiveNumbers,
    /// Follow-up length per subject (last minus first visit time).
    pub follow_up: FiveNumbers,
    /// Gaps between consecutive visits within subjects; `None` when no subject has two visits.
    pub gaps: Option<FiveNumbers>,
    /// Number of gaps summarised.
    pub gap_count: usize,
    /// Subjects with exactly one visit.
    pub single_visit_subjects: usize,
    /// Rows whose (subject, time) repeats an earlier row's.
    pub duplicated_rows: usize,
    /// The covariates and whether each is constant within subjects.
    pub covariates: Vec<CovariateKind>,
    /// One row per subject, in panel (sorted id) order.
    pub per_subject: Vec<SubjectSummary>,
    /// Bin counts and patterns, when a grid was given.
    pub grid: Option<GridDescription>,
}

/// One subject's visits and follow-up.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SubjectSummary {
    /// The subject.
    pub subject: SubjectId,
    /// Number of visits (rows kept).
    pub visits: usize,
    /// First visit time.
    pub first: f64,
    /// Last visit time.
    pub last: f64,
}

/// A covariate's name and whether it is time-fixed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CovariateKind {
    /// Name.
    pub name: String,
    /// True when constant within every subject.
    pub time_fixed: bool,
}

/// Counts on a time grid.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GridDescription {
    /// The grid used.
    pub grid: TimeGrid,
    /// One entry per bin.
    pub bins: Vec<BinCount>,
    /// Observations falling in no bin.
    pub outside: usize,
    /// Subjects per pattern.
    pub patterns: PatternCounts,
    /// Each subject's pattern, in panel (sorted id) order.
    pub per_subject: Vec<SubjectPattern>,
}

/// Subjects and observations in one bin.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BinCount {
    /// The bin's label.
    pub label: String,
    /// Lower time limit.
    pub lower: f64,
    /// Upper time limit.
    pub upper: f64,
    /// Subjects with at least one visit in the bin.
    pub subjects: usize,
    /// Visits in the bin.
    pub observations: usize,
}

/// How many subjects show each pattern.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
pub struct PatternCounts {
    /// Seen in every bin.
    pub complete: usize,
    /// Dropped out: seen in a run of bins from the first, then never.
    pub monotone: usize,
    /// Any other pattern.
    pub intermittent: usize,
    /// No visit in any bin.
    pub unobserved: usize,
}

/// A subject's visit pattern over the bins.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Pattern {
    /// Seen in every bin.
    Complete,
    /// Seen in bins 1..L only, L short of the last.
    Monotone,
    /// Any other mix.
    Intermittent,
    /// No visit in any bin.
    Unobserved,
}

/// One subject's pattern.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SubjectPattern {
    /// The subject.
    pub subject: SubjectId,
    /// The pattern.
    pub pattern: Pattern,
    /// One character per bin: `x` seen, `.` not seen.
    pub seen: String,
    /// Label of the last bin seen, if any.
    pub last_bin: Option<String>,
}

/// Describes a panel, optionally on a time grid.
///
/// # Examples
/// ```
/// use trajweave_core::{describe, Missing, Panel, SubjectIds, TimeGrid};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(1), Some(2), Some(2)]);
/// let t = [0.0, 1.0, 2.0, 0.0, 1.0];
/// let panel = Panel::new(ids, &t, &[9.0, 8.0, 7.0, 9.0, 9.5], vec![], Missing::Error)?;
/// let grid = TimeGrid::schedule(vec![0.0, 1.0, 2.0], 0.2)?;
/// let d = describe(&panel, Some(&grid))?;
/// assert_eq!(d.visits_per_subject.median, 2.5);
/// let g = d.grid.unwrap();
/// assert_eq!((g.patterns.complete, g.patterns.monotone), (1, 1));
/// # Ok(()) }
/// ```
///
/// # Errors
/// None at present for a valid panel; the `Result` leaves room for options that can fail.
pub fn describe(panel: &Panel, grid: Option<&TimeGrid>) -> Result<Description> {
    let t = panel.time();
    let n_subj = panel.n_subjects();
    let mut visits = Vec::with_capacity(n_subj);
    let mut follow = Vec::with_capacity(n_subj);
    let mut gaps = Vec::with_capacity(panel.n_obs().saturating_sub(n_subj));
    let mut duplicated = 0;
    let mut per_subject = Vec::with_capacity(n_subj);
    for i in 0..n_subj {
        let ts = &t[panel.subject_rows(i)];
        per_subject.push(SubjectSummary {
            subject: panel.ids()[i].clone(),
            visits: ts.len(),
            first: ts[0],
            last: ts[ts.len() - 1],
        });
        visits.push(ts.len() as f64);
        follow.push(ts[ts.len() - 1] - ts[0]);
        for w in ts.windows(2) {
            gaps.push(w[1] - w[0]);
            duplicated += usize::from(w[1] == w[0]);
        }
    }
    let single = visits.iter().filter(|&&v| v == 1.0).count();
    let gap_count = gaps.len();
    // A panel is never empty, so the first two summaries always exist.
    let summary = |v: Vec<f64>| FiveNumbers::of(v).unwrap_or(NAN5);
    let time_min = t.iter().copied().fold(f64::INFINITY, f64::min);
    let time_max = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Ok(Description {
        subjects: n_subj,
        observations: panel.n_obs(),
        rows_input: panel.n_input_rows(),
        rows_dropped: panel.dropped_rows().len(),
        dropped_by_column: panel.dropped_by_column().to_vec(),
        time_range: [time_min, time_max],
        visits_per_subject: summary(visits),
        follow_up: summary(follow),
        gaps: FiveNumbers::of(gaps),
        gap_count,
        single_visit_subjects: single,
        duplicated_rows: duplicated,
        covariates: panel
            .covariates()
            .iter()
            .map(|c| CovariateKind {
                name: c.name.clone(),
                time_fixed: c.time_fixed,
            })
            .collect(),
        per_subject,
        grid: grid.map(|g| describe_grid(panel, g)),
    })
}

const NAN5: FiveNumbers = FiveNumbers {
    min: f64::NAN,
    q1: f64::NAN,
    median: f64::NAN,
    q3: f64::NAN,
    max: f64::NAN,
};

fn describe_grid(panel: &Panel, grid: &TimeGrid) -> GridDescription {
    let k = grid.n_bins();
    let mut bin_subjects = vec![0usize; k];
    let mut bin_obs = vec![0usize; k];
    let mut outside = 0;
    let mut counts = PatternCounts::default();
    let mut per_subject = Vec::with_capacity(panel.n_subjects());
    let mut seen = vec![false; k];
    for (i, id) in panel.ids().iter().enumerate() {
        seen.iter_mut().for_each(|s| *s = false);
        for &t in &panel.time()[panel.subject_rows(i)] {
            match grid.bin_of(t) {
                Some(b) => {
                    bin_obs[b] += 1;
                    seen[b] = true;
                }
                None => outside += 1,
            }
        }
        for (b, &s) in seen.iter().enumerate() {
            bin_subjects[b] += usize::from(s);
        }
        let pattern = classify(&seen);
        match pattern {
            Pattern::Complete => counts.complete += 1,
            Pattern::Monotone => counts.monotone += 1,
            Pattern::Intermittent => counts.intermittent += 1,
            Pattern::Unobserved => counts.unobserved += 1,
        }
        per_subject.push(SubjectPattern {
            subject: id.clone(),
            pattern,
            seen: seen.iter().map(|&s| if s { 'x' } else { '.' }).collect(),
            last_bin: seen.iter().rposition(|&s| s).map(|b| grid.label(b)),
        });
    }
    let bins = (0..k)
        .map(|b| {
            let (lower, upper) = grid.limits(b);
            BinCount {
                label: grid.label(b),
                lower,
                upper,
                subjects: bin_subjects[b],
                observations: bin_obs[b],
            }
        })
        .collect();
    GridDescription {
        grid: grid.clone(),
        bins,
        outside,
        patterns: counts,
        per_subject,
    }
}

fn classify(seen: &[bool]) -> Pattern {
    let n_seen = seen.iter().filter(|&&s| s).count();
    if n_seen == 0 {
        Pattern::Unobserved
    } else if n_seen == seen.len() {
        Pattern::Complete
    } else if seen[..n_seen].iter().all(|&s| s) {
        Pattern::Monotone
    } else {
        Pattern::Intermittent
    }
}

impl Description {
    /// The description as a readable plain-text table (what the CLI prints by default, and what
    /// Python's `str()` and R's `print()` show).
    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let num = |x: f64| format_number(x);
        let five = |f: &FiveNumbers| {
            format!(
                "min {}  q1 {}  median {}  q3 {}  max {}",
                num(f.min),
                num(f.q1),
                num(f.median),
                num(f.q3),
                num(f.max)
            )
        };
        let _ = writeln!(s, "subjects               {}", self.subjects);
        let _ = writeln!(
            s,
            "observations           {} (of {} rows; {} dropped)",
            self.observations, self.rows_input, self.rows_dropped
        );
        if !self.dropped_by_column.is_empty() {
            let by: Vec<String> = self
                .dropped_by_column
                .iter()
                .map(|c| format!("{} {}", c.column, c.rows))
                .collect();
            let _ = writeln!(s, "missing, by column     {}", by.join(", "));
        }
        let _ = writeln!(
            s,
            "time range             {} to {}",
            num(self.time_range[0]),
            num(self.time_range[1])
        );
        let _ = writeln!(
            s,
            "visits per subject     {}",
            five(&self.visits_per_subject)
        );
        let _ = writeln!(s, "follow-up per subject  {}", five(&self.follow_up));
        match &self.gaps {
            Some(g) => {
                let _ = writeln!(
                    s,
                    "gaps between visits    {} ({} gaps)",
                    five(g),
                    self.gap_count
                );
            }
            None => {
                let _ = writeln!(s, "gaps between visits    none (no subject has two visits)");
            }
        }
        let _ = writeln!(s, "one-visit subjects     {}", self.single_visit_subjects);
        let _ = writeln!(s, "duplicated visits      {}", self.duplicated_rows);
        for c in &self.covariates {
            let kind = if c.time_fixed {
                "time-fixed"
            } else {
                "time-varying"
            };
            let _ = writeln!(s, "covariate              {} ({kind})", c.name);
        }
        if let Some(g) = &self.grid {
            let _ = writeln!(s, "\n{:<18} {:>10} {:>12}", "bin", "subjects", "visits");
            for b in &g.bins {
                let _ = writeln!(
                    s,
                    "{:<18} {:>10} {:>12}",
                    b.label, b.subjects, b.observations
                );
            }
            let _ = writeln!(
                s,
                "{:<18} {:>10} {:>12}",
                "outside every bin", "", g.outside
            );
            let p = &g.patterns;
            let _ = writeln!(
                s,
                "\npatterns               complete {}  monotone {}  intermittent {}  unobserved {}",
                p.complete, p.monotone, p.intermittent, p.unobserved
            );
        }
        s
    }
}

/// Up to four decimals, trailing zeros trimmed: readable, not a storage format (JSON keeps
/// every digit).
fn format_number(x: f64) -> String {
    if x.is_nan() {
        return "NA".into();
    }
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn patterns_by_hand() {
        // Worked by hand: bins 3.
        assert_eq!(classify(&[true, true, true]), Pattern::Complete);
        assert_eq!(classify(&[true, true, false]), Pattern::Monotone);
        assert_eq!(classify(&[true, false, true]), Pattern::Intermittent);
        assert_eq!(classify(&[false, true, true]), Pattern::Intermittent);
        assert_eq!(classify(&[false, false, false]), Pattern::Unobserved);
    }

    #[test]
    fn number_format() {
        assert_eq!(format_number(2.5), "2.5");
        assert_eq!(format_number(3.0), "3");
        assert_eq!(format_number(1.0 / 3.0), "0.3333");
        assert_eq!(format_number(-0.00001), "0");
    }
}
