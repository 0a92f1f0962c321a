//! The one error type of the core.
//!
//! Every front (CLI, Python, R) maps these variants with one exhaustive `match`, so the same bad
//! input gives the same kind of error and the same message everywhere. Rows are counted from 1
//! in messages, as in a spreadsheet or an R data.frame; the `row` fields hold that same number.

use thiserror::Error;

/// Everything that can go wrong when building a panel or running an estimator.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum Error {
    /// Two inputs that must have one entry per row have different lengths.
    #[error("`{argument}` has {found} values but `{reference}` has {expected}: give one value per row in each")]
    LengthMismatch {
        /// The argument whose length is wrong.
        argument: String,
        /// The argument whose length sets the row count.
        reference: String,
        /// The row count.
        expected: usize,
        /// The length found.
        found: usize,
    },
    /// A value that must be finite (a time or a covariate) is NaN or infinite.
    #[error("`{argument}` is not finite at row {row} (value {value}): remove the row or give a finite value")]
    NonFinite {
        /// The argument holding the value.
        argument: String,
        /// The row, counted from 1.
        row: usize,
        /// The offending value, as text (`NaN`, `inf`, `-inf`).
        value: String,
    },
    /// A value that must be present (a subject id, or a response under `missing = "error"`) is missing.
    #[error("`{argument}` is missing at row {row}: {fix}")]
    Missing {
        /// The argument holding the value.
        argument: String,
        /// The row, counted from 1.
        row: usize,
        /// What the caller can do about it.
        fix: String,
    },
    /// A value has the wrong type (for example a subject id of 1.5).
    #[error("`{argument}` has an unusable value at row {row} ({value}): {expected}")]
    InvalidValue {
        /// The argument holding the value.
        argument: String,
        /// The row, counted from 1.
        row: usize,
        /// The offending value, as text.
        value: String,
        /// What is accepted.
        expected: String,
    },
    /// An option is outside its allowed range or set.
    #[error("`{argument}` = {value} is not allowed: {allowed}")]
    InvalidOption {
        /// The option's name.
        argument: String,
        /// The value given, as text.
        value: String,
        /// The allowed range or set of values.
        allowed: String,
    },
    /// Nothing is left to work on (no rows at all, or none after dropping).
    #[error("no rows left {stage}: {fix}")]
    Empty {
        /// Where the rows ran out, for example "after dropping 12 rows with a missing `response`".
        stage: String,
        /// What the caller can do about it.
        fix: String,
    },
    /// The data are too thin for the estimate asked.
    #[error("too few {what} for {estimate}: need at least {needed}, found {found}")]
    TooFew {
        /// What is counted (subjects, pairs, distinct times).
        what: String,
        /// The estimate that needs them.
        estimate: String,
        /// The minimum needed.
        needed: usize,
        /// The number found.
        found: usize,
    },
}

impl Error {
    /// A short, stable name for the kind of error, shared by every front
    /// (`length_mismatch`, `non_finite`, `missing`, `invalid_value`, `invalid_option`, `empty`,
    /// `too_few`).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::Error;
    /// let e = Error::InvalidOption {
    ///     argument: "missing".into(),
    ///     value: "\"skip\"".into(),
    ///     allowed: "\"error\" or \"drop\"".into(),
    /// };
    /// assert_eq!(e.kind(), "invalid_option");
    /// ```
    pub fn kind(&self) -> &'static str {
        match self {
            Error::LengthMismatch { .. } => "length_mismatch",
            Error::NonFinite { .. } => "non_finite",
            Error::Missing { .. } => "missing",
            Error::InvalidValue { .. } => "invalid_value",
            Error::InvalidOption { .. } => "invalid_option",
            Error::Empty { .. } => "empty",
            Error::TooFew { .. } => "too_few",
        }
    }

    /// The input row (counted from 1) the error points at, when it points at one.
    pub fn row(&self) -> Option<usize> {
        match self {
            Error::NonFinite { row, .. }
            | Error::Missing { row, .. }
            | Error::InvalidValue { row, .. } => Some(*row),
            _ => None,
        }
    }

    /// The argument (or column) the error names, when it names one.
    pub fn argument(&self) -> Option<&str> {
        match self {
            Error::LengthMismatch { argument, .. }
            | Error::NonFinite { argument, .. }
            | Error::Missing { argument, .. }
            | Error::InvalidValue { argument, .. }
            | Error::InvalidOption { argument, .. } => Some(argument),
            Error::Empty { .. } | Error::TooFew { .. } => None,
        }
    }

    /// A [`Error::TooFew`] from a fit of part of the data, told which part (`estimate` gains
    /// " in {part}"); other errors unchanged.
    pub(crate) fn within(self, part: &str) -> Error {
        match self {
            Error::TooFew {
                what,
                estimate,
                needed,
                found,
            } => Error::TooFew {
                what,
                estimate: format!("{estimate} in {part}"),
                needed,
                found,
            },
            other => other,
        }
    }

    /// An [`Error::InvalidOption`]: `argument` was given `value`, which is not `allowed`.
    /// Public so the report crate words its option errors as core does.
    pub fn option(argument: &str, value: impl std::fmt::Display, allowed: &str) -> Self {
        Error::InvalidOption {
            argument: argument.to_string(),
            value: value.to_string(),
            allowed: allowed.to_string(),
        }
    }
}

/// `v` as a whole number in `min..=max`, or an [`Error::InvalidOption`] naming `argument`.
/// Fronts pass numbers as doubles (R has no integer literal by default), so every count and
/// seed is checked here once.
pub(crate) fn whole_number(argument: &str, v: f64, min: u64, max: u64) -> Result<u64> {
    if v.fract() == 0.0 && v >= min as f64 && v <= max as f64 {
        Ok(v as u64)
    } else {
        Err(Error::option(
            argument,
            v,
            &format!("a whole number from {min} to {max}"),
        ))
    }
}

/// Largest seed every front can pass exactly (2^53 - 1).
pub const MAX_SEED: u64 = 9_007_199_254_740_991;

/// Shorthand for results of this crate.
pub type Result<T> = std::result::Result<T, Error>;
