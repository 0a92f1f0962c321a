//! Errors of the command line: the core's, placed in the file, plus file and CSV problems.

use std::fmt;

use trajweave_core::Error;

/// What can stop a command.
#[derive(Debug)]
pub enum CliError {
    /// A core error; for input read from a file, the file line and column it points at.
    Core {
        file: Option<String>,
        line: Option<u64>,
        column: Option<String>,
        error: Box<Error>,
    },
    /// A cell that should hold a number does not.
    Cell {
        file: String,
        line: u64,
        column: String,
        value: String,
    },
    /// A column option names a column the file lacks.
    Column {
        file: String,
        option: String,
        name: String,
        available: Vec<String>,
    },
    /// The file is not well-formed CSV.
    Csv {
        file: String,
        line: Option<u64>,
        message: String,
    },
    /// The file cannot be read or written.
    Io { file: String, message: String },
}

impl CliError {
    pub fn io(file: &str, message: String) -> Self {
        CliError::Io {
            file: file.to_string(),
            message,
        }
    }

    pub fn csv(file: &str, e: &csv::Error) -> Self {
        let line = e.position().map(|p| p.line());
        let message = match e.kind() {
            csv::ErrorKind::UnequalLengths {
                expected_len, len, ..
            } => {
                format!("this row has {len} fields but the header has {expected_len}")
            }
            _ => e.to_string(),
        };
        CliError::Csv {
            file: file.to_string(),
            line,
            message,
        }
    }

    /// The stable kind name, as in the bindings (core kinds, plus `csv` and `io`).
    pub fn kind(&self) -> &'static str {
        match self {
            CliError::Core { error, .. } => error.kind(),
            CliError::Cell { .. } => "invalid_value",
            CliError::Column { .. } => "invalid_option",
            CliError::Csv { .. } => "csv",
            CliError::Io { .. } => "io",
        }
    }
}

impl From<Error> for CliError {
    fn from(error: Error) -> Self {
        CliError::Core {
            file: None,
            line: None,
            column: None,
            error: Box::new(error),
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CliError::Core { file, line, column, error } => {
                match (file, line, column) {
                    (Some(file), Some(line), Some(col)) => {
                        write!(f, "{file} line {line}, column `{col}`: ")?
                    }
                    (Some(file), Some(line), None) => write!(f, "{file} line {line}: ")?,
                    (Some(file), None, _) => write!(f, "{file}: ")?,
                    _ => {}
                }
                write!(f, "{error}")
            }
            CliError::Cell { file, line, column, value } => write!(
                f,
                "{file} line {line}, column `{column}`: {value:?} is not a number; use a number, or leave the cell blank (or NA) for a missing value"
            ),
            CliError::Column { file, option, name, available } => write!(
                f,
                "{option} {name:?}: {file} has no such column; its columns are {}",
                available.join(", ")
            ),
            CliError::Csv { file, line: Some(line), message } => {
                write!(f, "{file} line {line}: not valid CSV: {message}")
            }
            CliError::Csv { file, line: None, message } => {
                write!(f, "{file}: not valid CSV: {message}")
            }
            CliError::Io { file, message } => write!(f, "{file}: {message}"),
        }
    }
}
